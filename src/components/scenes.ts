/** The decorative scenes SceneIllustration can draw. */
export type SceneName =
  | 'stack'
  | 'matrix'
  | 'roster'
  | 'seal'
  | 'console'
  | 'lost'
  | 'lock'
  | 'signal'
  | 'mail'
  | 'book'
  | 'gauge';
