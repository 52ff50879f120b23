import type { ErrorRequestHandler } from 'express';

export type StripeErrorType = 'invalid_request_error' | 'card_error' | 'api_error' | 'idempotency_error';

/** An error the fake answers in Stripe's own shape: `{ error: { type, code, message, param } }`. */
export class StripeFakeError extends Error {
  constructor(
    public readonly status: number,
    public readonly type: StripeErrorType,
    message: string,
    public readonly code?: string,
    public readonly param?: string,
  ) {
    super(message);
    this.name = 'StripeFakeError';
  }

  toBody() {
    return {
      error: {
        type: this.type,
        message: this.message,
        ...(this.code ? { code: this.code } : {}),
        ...(this.param ? { param: this.param } : {}),
      },
    };
  }
}

export const missingParam = (param: string) =>
  new StripeFakeError(400, 'invalid_request_error', `Missing required param: ${param}.`, 'parameter_missing', param);

export const invalidParam = (param: string, message: string, code = 'parameter_invalid') =>
  new StripeFakeError(400, 'invalid_request_error', message, code, param);

export const unknownParam = (param: string) =>
  new StripeFakeError(
    400,
    'invalid_request_error',
    `Received unknown parameter: ${param}. The local Stripe fake does not model it.`,
    'parameter_unknown',
    param,
  );

/** Stripe names the object kind in the message, e.g. "No such customer: 'cus_123'". */
export const noSuch = (kind: string, id: string, param = 'id') =>
  new StripeFakeError(404, 'invalid_request_error', `No such ${kind}: '${id}'`, 'resource_missing', param);

export const badRequest = (message: string, param?: string) =>
  new StripeFakeError(400, 'invalid_request_error', message, undefined, param);

/** Turns anything thrown inside /v1 into a Stripe-shaped JSON error. */
export const stripeErrorHandler: ErrorRequestHandler = (err, _req, res, _next) => {
  if (err instanceof StripeFakeError) {
    res.status(err.status).json(err.toBody());
    return;
  }
  // body-parser errors carry a status (e.g. 400 for a malformed body, 413 for a huge one).
  const status = typeof err?.status === 'number' && err.status < 500 ? err.status : 500;
  const type: StripeErrorType = status < 500 ? 'invalid_request_error' : 'api_error';
  const message = status < 500 ? String(err?.message ?? 'Invalid request.') : 'The local Stripe fake failed.';
  if (status >= 500) console.error('[stripe-fake]', err);
  res.status(status).json({ error: { type, message } });
};
