/** The one error shape every API response uses: `{ error: { code, message, fields? } }`. */
export interface FieldProblem {
  /** Dotted path of the bad field, e.g. `inputs.stackTemp_F` or `answers.velocity_fps`. */
  field: string;
  /** A plain sentence naming the field and the problem. */
  message: string;
}

export interface ApiErrorBody {
  error: {
    code: string;
    message: string;
    fields?: FieldProblem[];
  };
}
