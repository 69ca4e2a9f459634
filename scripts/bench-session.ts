/**
 * A signed-in person for the benchmarks: keeps the session cookie and the CSRF token, throws on
 * any answer of 400 or more with its text, and retries once a read whose kept-alive connection the
 * server closed as it left.
 */
export class Session {
  cookie = '';
  csrf = '';
  constructor(readonly base: string) {}
  async fetch(path: string, init: RequestInit = {}) {
    const go = () => fetch(this.base + path, { ...init, headers: { ...(init.headers ?? {}), cookie: this.cookie } });
    const res = await go().catch((e: Error) => ((init.method ?? 'GET') === 'GET' ? go() : Promise.reject(e)));
    const set = res.headers.get('set-cookie');
    if (set) this.cookie = set.split(';')[0];
    const token = res.headers.get('x-csrf-token');
    if (token) this.csrf = token;
    return res;
  }
  async token() {
    if (!this.csrf) this.csrf = (await (await this.fetch('/api/auth/csrf')).json()).token as string;
    return this.csrf;
  }
  async get(path: string) {
    const res = await this.fetch(path);
    if (res.status >= 400) throw new Error(`GET ${path}: ${res.status} ${await res.text()}`);
    return res.json();
  }
  async send(method: string, path: string, body?: unknown) {
    const res = await this.fetch(path, { method, headers: { 'content-type': 'application/json', 'x-csrf-token': await this.token() }, body: JSON.stringify(body ?? {}) });
    if (res.status >= 400) throw new Error(`${method} ${path}: ${res.status} ${await res.text()}`);
    return res.status === 204 ? null : res.json();
  }
  async upload(path: string, name: string, content: string) {
    const form = new FormData();
    form.append('file', new Blob([content]), name);
    const res = await this.fetch(path, { method: 'POST', headers: { 'x-csrf-token': await this.token() }, body: form });
    if (res.status >= 400) throw new Error(`POST ${path}: ${res.status} ${await res.text()}`);
    return res.json();
  }
}
