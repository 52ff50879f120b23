import type { Request, RequestHandler } from 'express';

/** An error shaped as body-parser's, so errorHandler answers it the same way. */
function bodyError(status: number, type: string, message: string) {
  return Object.assign(new Error(message), { status, statusCode: status, type, expose: true });
}

const JSON_TYPES = new Set(['application/json', 'application/json; charset=utf-8', 'application/json;charset=utf-8']);

/**
 * JSON bodies with a fast path for the usual request (a plain `application/json` UTF-8 body of a
 * stated length within the limit, not compressed): read and parsed here with body-parser's rules
 * (an empty body is `{}`, strict: the text must start with `{` or `[`, a byte-order mark is dropped,
 * errors carry body-parser's `type`). Anything else — another content type or charset, a compressed
 * or chunked body, one over the limit — goes to body-parser's own `express.json` as before.
 */
export function jsonBody(limitBytes: number, fallback: RequestHandler): RequestHandler {
  return (req, res, next) => {
    const headers = req.headers;
    const type = headers['content-type'];
    const length = headers['content-length'];
    if (
      type === undefined || length === undefined || headers['transfer-encoding'] !== undefined || headers['content-encoding'] !== undefined ||
      !JSON_TYPES.has(type.toLowerCase()) || req.readableEnded || 'body' in req
    ) {
      return fallback(req, res, next);
    }
    const expected = Number(length);
    if (!Number.isSafeInteger(expected) || expected < 0 || expected > limitBytes) return fallback(req, res, next);
    readJson(req, expected, next);
  };
}

function readJson(req: Request, expected: number, next: (err?: unknown) => void) {
  const chunks: Buffer[] = [];
  let received = 0;
  let settled = false;
  const finish = (error?: unknown) => {
    if (settled) return;
    settled = true;
    req.removeListener('data', onData);
    req.removeListener('end', onEnd);
    req.removeListener('error', onAbort);
    req.removeListener('close', onAbort);
    next(error);
  };
  const onData = (chunk: Buffer) => {
    chunks.push(chunk);
    received += chunk.length;
  };
  const onAbort = () => finish(bodyError(400, 'request.aborted', 'request aborted'));
  const onEnd = () => {
    if (received !== expected) return finish(bodyError(400, 'request.size.invalid', 'request size did not match content length'));
    let text = (chunks.length === 1 ? chunks[0] : Buffer.concat(chunks, received)).toString('utf8');
    if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
    if (text.length === 0) {
      req.body = {};
      return finish();
    }
    const first = /\S/.exec(text)?.[0];
    if (first !== '{' && first !== '[') return finish(bodyError(400, 'entity.parse.failed', 'Unexpected token in JSON body'));
    try {
      req.body = JSON.parse(text) as unknown;
    } catch (error) {
      return finish(Object.assign(error as Error, { status: 400, statusCode: 400, type: 'entity.parse.failed', expose: true }));
    }
    finish();
  };
  req.on('data', onData);
  req.on('end', onEnd);
  req.on('error', onAbort);
  req.on('close', onAbort);
}
