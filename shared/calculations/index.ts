export * from './ids';
export * from './choices';
export * from './schemas';
export * from './meta';
export { inputJsonSchema } from './jsonSchema';
export { AMBIENT_O2_PCT } from './limits';
export { issuesToProblems } from './problems';
export type { FieldMeta } from './fields';
