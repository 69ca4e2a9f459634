import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { count, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../server/app';
import { testConfig } from '../../server/config';
import { openDatabase, DataDirLockedError } from '../../server/db/client';
import { analyses, users } from '../../server/db/schema';
import { seedDemo } from '../../server/seed/demo';
import { createMailer } from '../../server/mail/mailer';
import { outboxStore } from '../../server/db/outbox.repository';
import { createToyRunner } from '../../server/runs/toy-runner';
import { createHypothesisScanRunner } from '../../server/runs/hypothesis-scan-runner';
import { createFitRunner } from '../../server/runs/fit-runner';
import { Client, createTestApp, DEMO, signedIn, type TestApp } from './helpers';

const sessionCookie = (res: request.Response) => ([] as string[]).concat(res.headers['set-cookie'] ?? []).find((c) => c.startsWith('plumbline.sid='));

describe('signing in', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => t.close());

  it('signs in with the right password and returns the user with their analyses and roles', async () => {
    const res = await new Client(t.app).signIn(DEMO.contact);
    expect(res.status).toBe(200);
    expect(res.body.user).toMatchObject({ email: DEMO.contact, isAdmin: false });
    expect(res.body.memberships).toEqual(expect.arrayContaining([{ slug: 'vireon-search', name: expect.any(String), role: 'contact' }]));
    expect(res.body.user.passwordHash).toBeUndefined();
  });

  it('refuses a wrong password and an unknown e-mail with the same 401 message', async () => {
    const wrong = await new Client(t.app).signIn(DEMO.contact, 'not-the-password');
    const unknown = await new Client(t.app).signIn('nobody@lantern.example');
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(401);
    expect(wrong.body.error.message).toBe(unknown.body.error.message);
    expect(wrong.body.error.message).toMatch(/e-mail and password/);
  });

  it('issues a new session id at sign-in, so a planted session cannot be taken over', async () => {
    const client = new Client(t.app);
    const first = await client.agent.get('/api/auth/csrf');
    const before = sessionCookie(first)!.split(';')[0];
    const res = await client.signIn(DEMO.reader);
    const after = sessionCookie(res)!.split(';')[0];
    expect(after).not.toBe(before);
  });

  it('sets the session cookie httpOnly and SameSite', async () => {
    const res = await new Client(t.app).signIn(DEMO.reader);
    expect(sessionCookie(res)).toMatch(/HttpOnly/);
    expect(sessionCookie(res)).toMatch(/SameSite=Lax/);
  });

  it('destroys the session at sign-out: the old cookie no longer signs anyone in', async () => {
    const client = new Client(t.app);
    const cookie = sessionCookie(await client.signIn(DEMO.reader))!.split(';')[0];
    const sessions = async () => (await t.database.client.query<{ n: number }>('select count(*)::int as n from session')).rows[0].n;
    const before = await sessions();
    expect((await request(t.app).get('/api/auth/me').set('cookie', cookie)).status).toBe(200);
    const out = await client.send('post', '/api/auth/sign-out');
    expect(out.status).toBe(204);
    // the old cookie, replayed as a thief would, signs no one in: the stored session is gone
    expect((await request(t.app).get('/api/auth/me').set('cookie', cookie)).status).toBe(401);
    expect(await sessions()).toBe(before - 1);
  });

  it('sees a change to the signed-in person at the next request: a new name, admin rights given and taken, the account gone', async () => {
    const client = new Client(t.app);
    await client.signIn(DEMO.reader);
    const me = async () => (await client.get('/api/auth/me')).body.user;
    const before = await me();
    expect(before).toMatchObject({ email: DEMO.reader, isAdmin: false });
    // written straight to the database, as another tool or a migration would
    await t.database.db.update(users).set({ name: 'Renamed Reader', isAdmin: true }).where(eq(users.id, before.id));
    expect(await me()).toMatchObject({ name: 'Renamed Reader', isAdmin: true });
    expect((await client.get('/api/users')).status).toBe(200);
    await t.database.db.update(users).set({ name: before.name, isAdmin: false }).where(eq(users.id, before.id));
    expect(await me()).toMatchObject({ name: before.name, isAdmin: false });
    expect((await client.get('/api/users')).status).toBe(403);
  });

  it('sends security headers', async () => {
    const res = await request(t.app).get('/api/auth/csrf');
    expect(res.headers['content-security-policy']).toContain("default-src 'self'");
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['x-powered-by']).toBeUndefined();
  });
});

describe('bad requests get a 4xx JSON message and write nothing', () => {
  let t: TestApp;
  let admin: Client;
  const analysisCount = async () => (await t.database.db.select({ n: count() }).from(analyses))[0].n;
  beforeAll(async () => {
    t = await createTestApp({ BODY_LIMIT_BYTES: 4096 });
    admin = await signedIn(t.app, DEMO.admin);
  });
  afterAll(async () => t.close());

  it('refuses a state-changing request without a CSRF token', async () => {
    const before = await analysisCount();
    const res = await admin.agent.post('/api/analyses').send({ slug: 'no-token', name: 'No token' });
    expect(res.status).toBe(403);
    expect(res.body.error).toMatchObject({ code: 'csrf', message: expect.stringMatching(/security token/) });
    expect(await analysisCount()).toBe(before);
  });

  it('refuses a CSRF token from another session', async () => {
    const other = new Client(t.app);
    const foreign = await other.csrf();
    const res = await admin.agent.post('/api/analyses').set('x-csrf-token', foreign).send({ slug: 'foreign-token', name: 'x' });
    expect(res.status).toBe(403);
  });

  it('refuses malformed JSON with a message about the syntax', async () => {
    const token = await admin.csrf();
    const res = await admin.agent.post('/api/analyses').set('x-csrf-token', token).set('content-type', 'application/json').send('{"slug": "broken",');
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/not valid JSON/);
  });

  it('refuses unknown fields, naming them', async () => {
    const before = await analysisCount();
    const res = await admin.send('post', '/api/analyses', { slug: 'extra-field', name: 'Extra', colour: 'red' });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/colour/);
    expect(await analysisCount()).toBe(before);
  });

  it('refuses a field of the wrong form, giving its path', async () => {
    const res = await admin.send('post', '/api/analyses', { slug: 'Not A Slug!', name: 'x' });
    expect(res.status).toBe(400);
    expect(res.body.error.issues[0].path).toEqual(['slug']);
    expect(res.body.error.message).toMatch(/slug: must be lower-case/);
  });

  it('refuses a body over the size limit with 413', async () => {
    const before = await analysisCount();
    const res = await admin.send('post', '/api/analyses', { slug: 'huge', name: 'x', description: 'x'.repeat(10_000) });
    expect(res.status).toBe(413);
    expect(res.body.error.message).toMatch(/too large/);
    expect(await analysisCount()).toBe(before);
  });

  it('refuses an account with a short password or a taken e-mail', async () => {
    const before = (await t.database.db.select({ n: count() }).from(users))[0].n;
    const short = await admin.send('post', '/api/users', { email: 'short@lantern.example', name: 'S', password: 'short' });
    expect(short.status).toBe(400);
    expect(short.body.error.message).toMatch(/password: must be at least 10 characters/);
    const taken = await admin.send('post', '/api/users', { email: DEMO.reader, name: 'Again', password: 'long-enough-pw' });
    expect(taken.status).toBe(409);
    expect((await t.database.db.select({ n: count() }).from(users))[0].n).toBe(before);
  });

  it('answers an unknown API route with a 404 that names it', async () => {
    const res = await admin.get('/api/nothing-here');
    expect(res.status).toBe(404);
    expect(res.body.error.message).toContain('GET /api/nothing-here');
  });

  it('keeps the last convener: demoting them is refused', async () => {
    const members = (await admin.get('/api/analyses/vireon-search/members')).body as { userId: number; role: string }[];
    const convener = members.find((m) => m.role === 'convener')!;
    const res = await admin.send('patch', `/api/analyses/vireon-search/members/${convener.userId}`, { role: 'reader' });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/only convener/);
  });
});

describe('sign-in rate limit', () => {
  it('answers 429 once an address has used up its failed sign-ins, and then refuses even the right password', async () => {
    const t = await createTestApp({ SIGN_IN_LIMIT: 3 });
    const statuses: number[] = [];
    for (let i = 0; i < 4; i++) statuses.push((await new Client(t.app).signIn(DEMO.reader, 'wrong-password')).status);
    expect(statuses).toEqual([401, 401, 401, 429]);
    const right = await new Client(t.app).signIn(DEMO.reader);
    expect(right.status).toBe(429);
    expect(right.body.error.message).toMatch(/Too many failed sign-ins from this address \(3 in 15 minutes\)/);
    await t.close();
  });

  it('never counts a successful sign-in against the limit of failures', async () => {
    const t = await createTestApp({ SIGN_IN_LIMIT: 3 });
    const statuses: number[] = [];
    for (let i = 0; i < 12; i++) statuses.push((await new Client(t.app).signIn(DEMO.reader)).status);
    expect(statuses).toEqual(Array(12).fill(200));
    expect((await new Client(t.app).signIn(DEMO.reader, 'wrong-password')).status).toBe(401);
    await t.close();
  });

  it('keeps a separate, higher cap on every attempt from one address', async () => {
    const t = await createTestApp({ SIGN_IN_LIMIT: 3, SIGN_IN_ATTEMPT_LIMIT: 5 });
    const statuses: number[] = [];
    for (let i = 0; i < 6; i++) statuses.push((await new Client(t.app).signIn(DEMO.reader)).status);
    expect(statuses).toEqual([200, 200, 200, 200, 200, 429]);
    await t.close();
  });
});

describe('a data folder', () => {
  it('keeps sessions across a restart of the server', async () => {
    const dir = mkdtempSync(path.join(os.tmpdir(), 'plumbline-'));
    try {
      const config = testConfig();
      let database = await openDatabase(dir);
      await seedDemo(database.db);
      let mailer = await createMailer(outboxStore(database.db), config, () => {});
      let fits = createFitRunner(database.db, () => {}, { threads: 1 });
      const client = await signedIn(createApp(database, config, { mailer, fits, toys: createToyRunner(database.db, () => {}), scans: createHypothesisScanRunner(database.db, () => {}), log: () => {} }).app, DEMO.reader);
      const cookie = (await client.get('/api/auth/me')).request.cookies;
      await fits.close();
      await mailer.close();
      await database.close();

      database = await openDatabase(dir);
      mailer = await createMailer(outboxStore(database.db), config, () => {});
      fits = createFitRunner(database.db, () => {}, { threads: 1 });
      const res = await request(createApp(database, config, { mailer, fits, toys: createToyRunner(database.db, () => {}), scans: createHypothesisScanRunner(database.db, () => {}), log: () => {} }).app).get('/api/auth/me').set('Cookie', cookie);
      expect(res.status).toBe(200);
      expect(res.body.user.email).toBe(DEMO.reader);
      await fits.close();
      await mailer.close();
      await database.close();
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('cannot be opened by a second server while the first holds it', async () => {
    const dir = mkdtempSync(path.join(os.tmpdir(), 'plumbline-'));
    const first = await openDatabase(dir);
    // the lock names a live process other than this one
    const { writeFileSync } = await import('node:fs');
    writeFileSync(path.join(dir, 'plumbline.lock'), String(process.ppid));
    await expect(openDatabase(dir)).rejects.toThrow(DataDirLockedError);
    await expect(openDatabase(dir)).rejects.toThrow(/Another Plumbline server/);
    await first.close();
    rmSync(dir, { recursive: true, force: true });
  });
});

describe('an error inside the server', () => {
  it('answers 500 with a plain message and logs the detail; the response holds no stack trace or SQL', async () => {
    const logged: string[] = [];
    const t = await createTestApp();
    try {
      const app = createApp(t.database, t.ctx.config, { mailer: t.mailer, fits: t.fits, toys: t.toys, scans: t.scans, log: (line) => logged.push(line) }).app;
      const analyst = await signedIn(app, DEMO.analyst);
      // a table gone from under the server: the query fails inside the driver
      await t.database.client.exec('alter table entries rename to entries_gone');
      const res = await analyst.get('/api/analyses/cascade-rate/entries/halo_norm');
      expect(res.status).toBe(500);
      expect(res.body.error).toEqual({ message: expect.stringMatching(/went wrong on the server/), code: 'internal' });
      expect(res.text).not.toMatch(/entries_gone|entries|select|relation|\bat\s|\.ts:\d+|node_modules/i);
      expect(logged.join('\n')).toMatch(/entries/);
    } finally {
      await t.close();
    }
  });
});
