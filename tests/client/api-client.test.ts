import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { api, ApiRequestError, onUnauthenticated, resetCsrfToken } from '../../src/lib/api-client';

type Call = { url: string; method: string; headers: Record<string, string> };

function json(status: number, body: unknown, headers: Record<string, string> = {}): Response {
  return new Response(body === undefined ? null : JSON.stringify(body), { status, headers: { 'content-type': 'application/json', ...headers } });
}

/** A fake server: answers from a queue per "METHOD url", and records every request. */
function fakeServer(routes: Record<string, Array<() => Response>>) {
  const calls: Call[] = [];
  const fetchMock = vi.fn(async (url: string, init: RequestInit = {}) => {
    const method = init.method ?? 'GET';
    calls.push({ url, method, headers: (init.headers ?? {}) as Record<string, string> });
    const queue = routes[`${method} ${url}`];
    if (!queue || queue.length === 0) throw new Error(`unexpected ${method} ${url}`);
    return (queue.length > 1 ? queue.shift()! : queue[0])();
  });
  vi.stubGlobal('fetch', fetchMock);
  return calls;
}

const csrfError = () => json(403, { error: { message: 'The security token is missing.', code: 'csrf' } });

beforeEach(() => resetCsrfToken());
afterEach(() => vi.unstubAllGlobals());

describe('the API client', () => {
  it('sends the session CSRF token with every state-changing request, fetching it once', async () => {
    const calls = fakeServer({
      'GET /api/auth/csrf': [() => json(200, { token: 't1' })],
      'POST /api/analyses': [() => json(201, { slug: 'a' })],
      'DELETE /api/analyses/a/members/3': [() => new Response(null, { status: 204 })],
    });
    await api.post('/api/analyses', { slug: 'a' });
    await api.delete('/api/analyses/a/members/3');
    expect(calls.filter((c) => c.url === '/api/auth/csrf')).toHaveLength(1);
    expect(calls.find((c) => c.method === 'POST')!.headers['x-csrf-token']).toBe('t1');
    expect(calls.find((c) => c.method === 'DELETE')!.headers['x-csrf-token']).toBe('t1');
  });

  it('sends no token with reads', async () => {
    const calls = fakeServer({ 'GET /api/analyses': [() => json(200, [])] });
    await api.get('/api/analyses');
    expect(calls).toHaveLength(1);
    expect(calls[0].headers['x-csrf-token']).toBeUndefined();
  });

  it('fetches a new token and retries once when the server rejects the token', async () => {
    const calls = fakeServer({
      'GET /api/auth/csrf': [() => json(200, { token: 'old' }), () => json(200, { token: 'new' })],
      'POST /api/users': [csrfError, () => json(201, { id: 7 })],
    });
    await expect(api.post('/api/users', { email: 'x@y.example' })).resolves.toEqual({ id: 7 });
    const posts = calls.filter((c) => c.method === 'POST');
    expect(posts.map((c) => c.headers['x-csrf-token'])).toEqual(['old', 'new']);
  });

  it('gives up after one retry and reports the refusal', async () => {
    const calls = fakeServer({
      'GET /api/auth/csrf': [() => json(200, { token: 't' })],
      'POST /api/users': [csrfError],
    });
    const err = await api.post('/api/users', {}).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(ApiRequestError);
    expect((err as ApiRequestError).code).toBe('csrf');
    expect(calls.filter((c) => c.method === 'POST')).toHaveLength(2);
  });

  it('keeps the token the sign-in response carries', async () => {
    const calls = fakeServer({
      'GET /api/auth/csrf': [() => json(200, { token: 'anonymous' })],
      'POST /api/auth/sign-in': [() => json(200, { user: {} }, { 'x-csrf-token': 'signed-in' })],
      'POST /api/analyses': [() => json(201, {})],
    });
    await api.post('/api/auth/sign-in', { email: 'a@b.example', password: 'p' });
    await api.post('/api/analyses', {});
    expect(calls.find((c) => c.url === '/api/analyses')!.headers['x-csrf-token']).toBe('signed-in');
  });

  it('passes on the server message, code and field issues of a refusal', async () => {
    fakeServer({
      'GET /api/auth/csrf': [() => json(200, { token: 't' })],
      'POST /api/analyses': [() => json(400, { error: { message: 'The request is not valid.', code: 'bad_request', issues: [{ path: ['slug'], message: 'must be lower-case' }] } })],
    });
    const err = (await api.post('/api/analyses', { slug: 'A' }).catch((e: unknown) => e)) as ApiRequestError;
    expect(err.status).toBe(400);
    expect(err.message).toBe('The request is not valid.');
    expect(err.fieldMessage('slug')).toBe('must be lower-case');
  });

  it('tells the app when the session is gone, except for the session probe itself', async () => {
    fakeServer({
      'GET /api/analyses': [() => json(401, { error: { message: 'Sign in first.' } })],
      'GET /api/auth/me': [() => json(401, { error: { message: 'Sign in first.' } })],
    });
    const heard = vi.fn();
    const stop = onUnauthenticated(heard);
    await api.get('/api/auth/me').catch(() => undefined);
    expect(heard).not.toHaveBeenCalled();
    await api.get('/api/analyses').catch(() => undefined);
    expect(heard).toHaveBeenCalledTimes(1);
    stop();
  });

  it('reports an unreachable server as a network error with status 0', async () => {
    vi.stubGlobal('fetch', vi.fn(async () => Promise.reject(new TypeError('Failed to fetch'))));
    const err = (await api.get('/api/analyses').catch((e: unknown) => e)) as ApiRequestError;
    expect(err.isNetwork).toBe(true);
    expect(err.message).toMatch(/could not reach/i);
  });
});
