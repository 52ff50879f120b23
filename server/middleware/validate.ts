import type { RequestHandler } from 'express';
import type { ZodType, core } from 'zod';
import type { FieldProblem } from '../../shared/errors';
import { HttpError } from './errors';

export function zodIssuesToFields(issues: core.$ZodIssue[]): FieldProblem[] {
  return issues.map((issue) => {
    const field = issue.path.map(String).join('.') || '(body)';
    return { field, message: `${field}: ${issue.message}` };
  });
}

/** Validates body, query and params with zod; puts the parsed values on req.valid; 400 lists every bad field. */
export function validate(schemas: { body?: ZodType; query?: ZodType; params?: ZodType }): RequestHandler {
  return (req, _res, next) => {
    const fields: FieldProblem[] = [];
    const valid: Express.Request['valid'] = { body: req.body, query: req.query, params: req.params };
    for (const part of ['params', 'query', 'body'] as const) {
      const schema = schemas[part];
      if (!schema) continue;
      const parsed = schema.safeParse(part === 'body' ? (req.body ?? {}) : req[part]);
      if (parsed.success) valid[part] = parsed.data;
      else fields.push(...zodIssuesToFields(parsed.error.issues));
    }
    if (fields.length) {
      next(new HttpError(400, 'invalid_input', `The request has ${fields.length} problem${fields.length > 1 ? 's' : ''}: ${fields.map((f) => f.message).join('; ')}`, fields));
      return;
    }
    req.valid = valid;
    next();
  };
}
