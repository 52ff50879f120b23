import type { FieldProblem } from '../../shared/errors';

/** Bad calculation input: every bad field with a plain sentence naming it. The route answers 400. */
export class InputError extends Error {
  readonly fields: FieldProblem[];

  constructor(fields: readonly FieldProblem[], options?: { cause?: unknown }) {
    const list =
      fields.length > 0 ? fields.map((f) => ({ field: f.field, message: f.message })) : [{ field: 'inputs', message: 'inputs are not valid for this calculation' }];
    super(list.map((f) => f.message).join(' '), options);
    this.name = 'InputError';
    this.fields = list;
  }
}

export function inputError(field: string, message: string): InputError {
  return new InputError([{ field, message: `${field} ${message}` }]);
}
