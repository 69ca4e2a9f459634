import type { ApiError } from '@shared/schemas/api';

/** An issue the server found in one field of a request body. */
export type FieldIssue = { path: (string | number)[]; message: string };

/**
 * A request that failed. `status` is the HTTP status, or 0 when the server could not be reached.
 * `message` is the server's own explanation whenever it sent one.
 */
export class ApiRequestError extends Error {
  readonly status: number;
  readonly code: string | undefined;
  readonly issues: FieldIssue[];

  constructor(status: number, message: string, code?: string, issues: FieldIssue[] = []) {
    super(message);
    this.name = 'ApiRequestError';
    this.status = status;
    this.code = code;
    this.issues = issues;
  }

  get isNetwork(): boolean {
    return this.status === 0;
  }
  get isUnauthenticated(): boolean {
    return this.status === 401;
  }
  get isForbidden(): boolean {
    return this.status === 403 && this.code !== 'csrf';
  }
  get isNotFound(): boolean {
    return this.status === 404;
  }

  /** The first message for a top-level field, e.g. `fieldMessage('email')`. */
  fieldMessage(field: string): string | undefined {
    return this.issues.find((i) => String(i.path[0]) === field)?.message;
  }
}

export function isApiRequestError(e: unknown): e is ApiRequestError {
  return e instanceof ApiRequestError;
}

type Method = 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE';
const STATE_CHANGING: ReadonlySet<Method> = new Set(['POST', 'PATCH', 'PUT', 'DELETE']);

// ---- CSRF token: fetched once, shared by concurrent requests, dropped when the session changes.
let csrfToken: string | null = null;
let csrfPending: Promise<string> | null = null;
let csrfIssuedCount = 0;

/** How many tokens the server has handed out in response headers; tells callers whether one arrived. */
export function csrfTokensIssued(): number {
  return csrfIssuedCount;
}

async function fetchCsrfToken(): Promise<string> {
  const body = await send<{ token: string }>('GET', '/api/auth/csrf');
  return body.token;
}

export function getCsrfToken(): Promise<string> {
  if (csrfToken) return Promise.resolve(csrfToken);
  if (!csrfPending) {
    csrfPending = fetchCsrfToken()
      .then((t) => {
        csrfToken = t;
        return t;
      })
      .finally(() => {
        csrfPending = null;
      });
  }
  return csrfPending;
}

/** Forget the CSRF token; call after sign-in and sign-out, when the server issues a new one. */
export function resetCsrfToken(): void {
  csrfToken = null;
  csrfPending = null;
}

// ---- listeners: the app reacts to a lost session in one place.
type UnauthenticatedListener = () => void;
const unauthenticatedListeners = new Set<UnauthenticatedListener>();
export function onUnauthenticated(listener: UnauthenticatedListener): () => void {
  unauthenticatedListeners.add(listener);
  return () => {
    unauthenticatedListeners.delete(listener);
  };
}

function statusMessage(status: number): string {
  if (status === 401) return 'You are signed out. Sign in to continue.';
  if (status === 403) return 'Your role does not allow this.';
  if (status === 404) return 'Not found.';
  if (status === 413) return 'The request is too large.';
  if (status === 429) return 'Too many attempts. Wait a minute and try again.';
  if (status >= 500) return 'The server ran into a problem. Try again in a moment.';
  return `The request failed (HTTP ${status}).`;
}

async function send<T>(method: Method, url: string, body?: unknown, headers: Record<string, string> = {}): Promise<T> {
  let res: Response;
  try {
    // A FormData body goes as multipart; the browser writes its Content-Type with the boundary.
    const multipart = body instanceof FormData;
    res = await fetch(url, {
      method,
      credentials: 'same-origin',
      headers: { Accept: 'application/json', ...(body !== undefined && !multipart ? { 'Content-Type': 'application/json' } : {}), ...headers },
      body: body === undefined ? undefined : multipart ? body : JSON.stringify(body),
    });
  } catch {
    throw new ApiRequestError(0, 'Could not reach the Plumbline server. Check your connection and try again.', 'network');
  }

  // The server hands out the new session's token with the sign-in response.
  const issued = res.ok ? res.headers.get('x-csrf-token') : null;
  if (issued) {
    csrfToken = issued;
    csrfIssuedCount += 1;
  }

  if (res.status === 204) return undefined as T;
  const text = await res.text();
  let parsed: unknown = undefined;
  if (text) {
    try {
      parsed = JSON.parse(text);
    } catch {
      parsed = undefined;
    }
  }
  if (!res.ok) {
    const err = (parsed as Partial<ApiError> | undefined)?.error;
    throw new ApiRequestError(res.status, err?.message || statusMessage(res.status), err?.code, err?.issues ?? []);
  }
  return parsed as T;
}

/**
 * Call the API. State-changing requests carry the session's CSRF token; when the server
 * rejects the token (403, code 'csrf') a fresh one is fetched and the request retried once.
 * A 401 from any endpoint but the session probe tells the listeners that the session is gone.
 */
export async function apiRequest<T>(method: Method, url: string, body?: unknown): Promise<T> {
  try {
    if (!STATE_CHANGING.has(method)) return await send<T>(method, url, body);
    try {
      return await send<T>(method, url, body, { 'x-csrf-token': await getCsrfToken() });
    } catch (e) {
      if (!(isApiRequestError(e) && e.status === 403 && e.code === 'csrf')) throw e;
      resetCsrfToken();
      return await send<T>(method, url, body, { 'x-csrf-token': await getCsrfToken() });
    }
  } catch (e) {
    if (isApiRequestError(e) && e.status === 401 && url !== '/api/auth/me' && url !== '/api/auth/sign-in') {
      unauthenticatedListeners.forEach((l) => l());
    }
    throw e;
  }
}

export const api = {
  get: <T>(url: string) => apiRequest<T>('GET', url),
  post: <T>(url: string, body?: unknown) => apiRequest<T>('POST', url, body ?? {}),
  patch: <T>(url: string, body: unknown) => apiRequest<T>('PATCH', url, body),
  put: <T>(url: string, body: unknown) => apiRequest<T>('PUT', url, body),
  delete: <T = void>(url: string) => apiRequest<T>('DELETE', url),
  /** A multipart POST (file uploads): the same CSRF header and error handling as every mutation. */
  upload: <T>(url: string, form: FormData) => apiRequest<T>('POST', url, form),
};

/** The path of an analysis-scoped endpoint, with the slug and every further segment encoded. */
export function analysisPath(slug: string, ...segments: (string | number)[]): string {
  return ['/api/analyses', slug, ...segments].map((s, i) => (i === 0 ? s : encodeURIComponent(String(s)))).join('/');
}
