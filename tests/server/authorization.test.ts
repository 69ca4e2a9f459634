import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { hashPassword } from '../../server/auth/passwords';
import { users } from '../../server/db/schema';
import { Client, createTestApp, DEMO, PASSWORD, signedIn, type TestApp } from './helpers';

/**
 * Walks every API route with every role and signed out, and checks the status the
 * permission table promises. A route added without a row here fails the first test.
 */

type Who = 'signedOut' | 'reader' | 'contact' | 'analyst' | 'convener' | 'admin' | 'outsider';
const WHO: Who[] = ['signedOut', 'reader', 'contact', 'analyst', 'convener', 'admin', 'outsider'];
const EMAIL: Record<Exclude<Who, 'signedOut'>, string> = {
  reader: DEMO.reader,
  contact: DEMO.contact,
  analyst: DEMO.analyst,
  convener: DEMO.convener,
  admin: DEMO.admin,
  outsider: DEMO.outsider,
};

type Call = { path: string; body?: unknown };
type Row = {
  /** builds the concrete request; may create what the call needs first */
  call: (t: TestApp, who: Who, n: number) => Promise<Call> | Call;
  expect: Record<Who, number>;
  /** the call ends or replaces the session */
  resetsSession?: boolean;
};

const SLUG = 'vireon-search';
const all = (status: number): Record<Who, number> => ({ signedOut: status, reader: status, contact: status, analyst: status, convener: status, admin: status, outsider: status });
const signedInOnly = (ok: number) => ({ ...all(ok), signedOut: 401 });
const adminOnly = (ok: number) => ({ ...all(403), signedOut: 401, admin: ok });
const members = (ok: number) => ({ signedOut: 401, reader: ok, contact: ok, analyst: ok, convener: ok, admin: ok, outsider: 403 });
const managers = (ok: number) => ({ signedOut: 401, reader: 403, contact: 403, analyst: 403, convener: ok, admin: ok, outsider: 403 });

let created = 0;
async function freshUser(t: TestApp) {
  created += 1;
  const email = `person${created}@lantern.example`;
  const [u] = await t.database.db.insert(users).values({ email, name: `Person ${created}`, passwordHash: await hashPassword(PASSWORD) }).returning();
  return u;
}
async function freshMember(t: TestApp) {
  const u = await freshUser(t);
  const admin = await signedIn(t.app, DEMO.admin);
  const res = await admin.send('post', `/api/analyses/${SLUG}/members`, { email: u.email, role: 'reader' });
  expect(res.status).toBe(201);
  return u;
}

export const MATRIX: Record<string, Row> = {
  'GET /api/auth/csrf': { call: () => ({ path: '/api/auth/csrf' }), expect: all(200) },
  'POST /api/auth/sign-in': {
    call: (_t, who) => ({ path: '/api/auth/sign-in', body: { email: who === 'signedOut' ? DEMO.reader : EMAIL[who], password: PASSWORD } }),
    expect: all(200),
    resetsSession: true,
  },
  'POST /api/auth/sign-out': { call: () => ({ path: '/api/auth/sign-out' }), expect: all(204), resetsSession: true },
  'GET /api/auth/me': { call: () => ({ path: '/api/auth/me' }), expect: signedInOnly(200) },
  'GET /api/users': { call: () => ({ path: '/api/users' }), expect: adminOnly(200) },
  'POST /api/users': {
    call: (_t, who, n) => ({ path: '/api/users', body: { email: `new-${who}-${n}@lantern.example`, name: 'New Person', password: 'a-long-password' } }),
    expect: adminOnly(201),
  },
  'GET /api/analyses': { call: () => ({ path: '/api/analyses' }), expect: signedInOnly(200) },
  'POST /api/analyses': { call: (_t, who, n) => ({ path: '/api/analyses', body: { slug: `new-${who.toLowerCase()}-${n}`, name: 'New analysis' } }), expect: adminOnly(201) },
  'GET /api/analyses/:slug': { call: () => ({ path: `/api/analyses/${SLUG}` }), expect: members(200) },
  'GET /api/analyses/:slug/members': { call: () => ({ path: `/api/analyses/${SLUG}/members` }), expect: members(200) },
  'POST /api/analyses/:slug/members': {
    call: async (t) => ({ path: `/api/analyses/${SLUG}/members`, body: { email: (await freshUser(t)).email, role: 'reader' } }),
    expect: managers(201),
  },
  'PATCH /api/analyses/:slug/members/:userId': {
    call: async (t) => ({ path: `/api/analyses/${SLUG}/members/${(await freshMember(t)).id}`, body: { role: 'analyst' } }),
    expect: managers(200),
  },
  'DELETE /api/analyses/:slug/members/:userId': {
    call: async (t) => ({ path: `/api/analyses/${SLUG}/members/${(await freshMember(t)).id}` }),
    expect: managers(204),
  },
  'GET /api/analyses/:slug/model': { call: () => ({ path: `/api/analyses/${SLUG}/model` }), expect: members(200) },
  'GET /api/analyses/:slug/entries': { call: () => ({ path: `/api/analyses/${SLUG}/entries` }), expect: members(200) },
  'GET /api/outbox': { call: () => ({ path: '/api/outbox' }), expect: adminOnly(200) },
};

describe('authorisation of every API route', () => {
  let t: TestApp;
  const clients = new Map<Who, Client>();
  const clientFor = async (who: Who) => {
    if (!clients.has(who)) clients.set(who, who === 'signedOut' ? new Client(t.app) : await signedIn(t.app, EMAIL[who]));
    return clients.get(who)!;
  };

  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => t.close());

  it('has an expected-status row for every route the app serves, and no row for a route it does not', () => {
    const served = t.routes.map((r) => `${r.method.toUpperCase()} ${r.path}`).sort();
    expect(served).toEqual(Object.keys(MATRIX).sort());
  });

  for (const [name, row] of Object.entries(MATRIX)) {
    const [method, template] = name.split(' ');
    it.each(WHO)(`${name} answers %s with the status the permission table gives`, async (who) => {
      const client = await clientFor(who);
      const { path, body } = await row.call(t, who, WHO.indexOf(who));
      expect(path.startsWith(template.split('/:')[0])).toBe(true);
      const res = method === 'GET' ? await client.get(path) : await client.send(method.toLowerCase() as 'post', path, body);
      expect({ who, status: res.status }).toEqual({ who, status: row.expect[who] });
      if (res.status === 401 || res.status === 403) {
        expect(res.headers['content-type']).toMatch(/json/);
        expect(res.body.error.message).toEqual(expect.any(String));
      }
      if (row.resetsSession) clients.delete(who);
    });
  }
});
