import type { ErrorRequestHandler, RequestHandler } from 'express';
import type { FieldProblem } from '../../shared/errors';

/** An error that knows its HTTP status and public code; thrown by services and middleware. */
export class HttpError extends Error {
  constructor(
    public readonly status: number,
    public readonly code: string,
    message: string,
    public readonly fields?: FieldProblem[],
  ) {
    super(message);
    this.name = 'HttpError';
  }
}

export const badRequest = (message: string, fields?: FieldProblem[]) =>
  new HttpError(400, 'bad_request', message, fields);
export const notFound = (what = 'Resource') => new HttpError(404, 'not_found', `${what} not found.`);
export const forbidden = (message = 'Your role does not allow this.') =>
  new HttpError(403, 'forbidden', message);
export const unauthorized = (message = 'Sign in first.') => new HttpError(401, 'unauthorized', message);
export const conflict = (message: string) => new HttpError(409, 'conflict', message);

export const apiNotFound: RequestHandler = (req, _res, next) => {
  next(new HttpError(404, 'not_found', `No API route for ${req.method} ${req.path}.`));
};

const DB_DOWN_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', '57P01', '57P02', '57P03', '08006', '08001', '08003']);

/** True when the error means PostgreSQL could not be reached, so the answer is 503, not 500. */
export function isDatabaseUnavailable(error: unknown): boolean {
  const e = error as { code?: string; name?: string; message?: string; errors?: unknown[] } | undefined;
  if (!e) return false;
  if (e.code && DB_DOWN_CODES.has(e.code)) return true;
  if (e.name === 'KnexTimeoutError') return true;
  if (typeof e.message === 'string' && /Connection terminated|connection.*(refused|closed)|terminating connection/i.test(e.message)) return true;
  return Array.isArray(e.errors) && e.errors.some(isDatabaseUnavailable);
}

/** Turns anything thrown into the one error shape. Unknown errors are logged and never leak details. */
export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  const error = err as Record<string, unknown> & Error;
  let status = 500;
  let body: { code: string; message: string; fields?: FieldProblem[] };

  if (err instanceof HttpError) {
    status = err.status;
    body = { code: err.code, message: err.message, fields: err.fields };
  } else if (error?.name === 'InputError' && Array.isArray(error.fields)) {
    const fields = (error.fields as FieldProblem[]).map((f) => ({ ...f, field: f.field.startsWith('inputs') ? f.field : `inputs.${f.field}` }));
    status = 400;
    body = { code: 'invalid_input', message: error.message, fields };
  } else if (error?.name === 'AnswerFormatError' && Array.isArray(error.fields)) {
    const fields = (error.fields as FieldProblem[]).map((f) => ({ ...f, field: f.field.startsWith('answers') ? f.field : `answers.${f.field}` }));
    status = 400;
    body = { code: 'invalid_answer_format', message: error.message, fields };
  } else if (error instanceof URIError && error.status === 400) {
    // Express's router could not percent-decode a route parameter.
    status = 400;
    body = { code: 'bad_request', message: 'The address has a part that is not valid percent-encoding.', fields: [{ field: 'params', message: 'Malformed percent-encoding in the address.' }] };
  } else if (error?.type === 'entity.parse.failed') {
    status = 400;
    body = { code: 'malformed_json', message: 'The request body is not valid JSON.' };
  } else if (error?.code === 'Z_DATA_ERROR' || error?.code === 'Z_BUF_ERROR') {
    // A body whose Content-Encoding (gzip, deflate, br) does not match its bytes.
    status = 400;
    body = { code: 'malformed_body', message: 'The request body could not be decompressed as its Content-Encoding says.' };
  } else if (error?.type === 'charset.unsupported' || error?.type === 'encoding.unsupported') {
    status = 415;
    body = { code: 'unsupported_body', message: 'Send the request body as uncompressed UTF-8 JSON.' };
  } else if (error?.type === 'request.aborted') {
    status = 400;
    body = { code: 'aborted', message: 'The request body did not arrive in full; nothing was saved.' };
  } else if (error?.type === 'entity.too.large' || error?.code === 'LIMIT_FILE_SIZE') {
    status = 413;
    body = { code: 'too_large', message: 'The request body or upload is larger than this route accepts.' };
  } else if (error?.code === 'EBADCSRFTOKEN' || error?.message === 'invalid csrf token') {
    status = 403;
    body = { code: 'csrf_invalid', message: 'The security token is missing or out of date; reload the page and try again.' };
  } else if (isDatabaseUnavailable(err)) {
    status = 503;
    body = { code: 'unavailable', message: 'The service is briefly unavailable; nothing was saved. Try again in a moment.' };
  } else {
    req.log?.error({ err }, 'unhandled error');
    body = { code: 'internal', message: 'Something went wrong on our side; nothing was saved.' };
  }
  if (status === 429) res.setHeader('Retry-After', '60');
  if (!body.fields) delete body.fields;
  res.status(status).json({ error: body });
};
