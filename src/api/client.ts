import type { ApiErrorBody, FieldProblem } from '../../shared/errors';

/** Every failed API call ends up as one of these, whatever went wrong on the way. */
export class ApiError extends Error {
  readonly status: number;
  readonly code: string;
  readonly fields: FieldProblem[];

  constructor(status: number, code: string, message: string, fields: FieldProblem[] = []) {
    super(message);
    this.name = 'ApiError';
    this.status = status;
    this.code = code;
    this.fields = fields;
  }

  /** True when the service itself is down or unreachable, as opposed to refusing the request. */
  get isServiceProblem(): boolean {
    return this.status === 0 || this.status >= 500;
  }

  /** The message for one field, if the server named it. */
  fieldMessage(field: string): string | undefined {
    return this.fields.find((f) => f.field === field)?.message;
  }
}

type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
type UnauthorizedListener = (path: string) => void;

const CSRF_PATH = '/api/auth/csrf';

let csrfToken: Promise<string> | null = null;
const unauthorizedListeners = new Set<UnauthorizedListener>();

function isErrorBody(value: unknown): value is ApiErrorBody {
  if (typeof value !== 'object' || value === null || !('error' in value)) return false;
  const error = (value as { error: unknown }).error;
  return (
    typeof error === 'object' &&
    error !== null &&
    typeof (error as { code?: unknown }).code === 'string' &&
    typeof (error as { message?: unknown }).message === 'string'
  );
}

async function readBody(response: Response): Promise<unknown> {
  if (response.status === 204 || response.status === 205) return undefined;
  const text = await response.text();
  if (!text) return undefined;
  const type = response.headers.get('content-type') ?? '';
  if (!type.includes('json')) return text;
  try {
    return JSON.parse(text);
  } catch {
    return text;
  }
}

function fallbackError(status: number): ApiError {
  if (status === 429) {
    return new ApiError(429, 'rate_limited', 'Too many attempts. Wait a few minutes, then try again.');
  }
  if (status >= 500) {
    // A proxy in front of a stopped server answers with HTML, not our error shape.
    return new ApiError(status, 'service_unavailable', 'The Plumewright service is not answering right now.');
  }
  return new ApiError(status, `http_${status}`, `The request failed (HTTP ${status}).`);
}

async function send(method: Method, path: string, body: BodyInit | undefined, headers: Record<string, string>) {
  try {
    return await fetch(path, { method, credentials: 'same-origin', headers, body });
  } catch {
    throw new ApiError(0, 'network_error', 'Could not reach the Plumewright service. Check your connection.');
  }
}

function fetchCsrfToken(): Promise<string> {
  if (!csrfToken) {
    csrfToken = (async () => {
      const response = await send('GET', CSRF_PATH, undefined, { accept: 'application/json' });
      const data = await readBody(response);
      if (!response.ok) throw isErrorBody(data) ? toApiError(response.status, data) : fallbackError(response.status);
      const token = (data as { csrfToken?: unknown } | undefined)?.csrfToken;
      if (typeof token !== 'string' || !token) {
        throw new ApiError(response.status, 'csrf_missing', 'The service did not hand out a form token.');
      }
      return token;
    })();
    // A failed fetch must not poison the cache for the next attempt.
    csrfToken.catch(() => {
      csrfToken = null;
    });
  }
  return csrfToken;
}

function toApiError(status: number, body: ApiErrorBody): ApiError {
  return new ApiError(status, body.error.code, body.error.message, body.error.fields ?? []);
}

async function request<T>(method: Method, path: string, body?: unknown, isRetry = false): Promise<T> {
  const headers: Record<string, string> = { accept: 'application/json' };
  let payload: BodyInit | undefined;
  if (body instanceof FormData) {
    // The browser must write the multipart boundary itself, so no content-type here.
    payload = body;
  } else if (body !== undefined) {
    headers['content-type'] = 'application/json';
    payload = JSON.stringify(body);
  }
  if (method !== 'GET') headers['x-csrf-token'] = await fetchCsrfToken();

  const response = await send(method, path, payload, headers);
  const data = await readBody(response);
  if (response.ok) return data as T;

  const error = isErrorBody(data) ? toApiError(response.status, data) : fallbackError(response.status);
  if (response.status === 403 && error.code === 'csrf_invalid' && !isRetry) {
    // The token outlives neither a session change nor a server restart; fetch a new one once.
    refreshCsrf();
    return request<T>(method, path, body, true);
  }
  if (response.status === 401) unauthorizedListeners.forEach((listener) => listener(path));
  throw error;
}

/** Forget the cached CSRF token; the next state-changing request fetches a fresh one. */
export function refreshCsrf(): void {
  csrfToken = null;
}

/** Called with the request path whenever the server answers 401, so the shell can ask to sign in again. */
export function onUnauthorized(listener: UnauthorizedListener): () => void {
  unauthorizedListeners.add(listener);
  return () => unauthorizedListeners.delete(listener);
}

export const api = {
  get: <T>(path: string) => request<T>('GET', path),
  post: <T>(path: string, body?: unknown) => request<T>('POST', path, body ?? {}),
  put: <T>(path: string, body?: unknown) => request<T>('PUT', path, body ?? {}),
  patch: <T>(path: string, body?: unknown) => request<T>('PATCH', path, body ?? {}),
  del: <T = void>(path: string) => request<T>('DELETE', path),
  upload: <T>(path: string, formData: FormData) => request<T>('POST', path, formData),
  refreshCsrf,
};
