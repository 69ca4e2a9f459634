import request from 'supertest';
import type { Express } from 'express';
import { createApp, type App } from '../../server/app';
import { testConfig, type Config } from '../../server/config';
import { openDatabase, type Database } from '../../server/db/client';
import { hashPassword } from '../../server/auth/passwords';
import { createMailer, type Mailer } from '../../server/mail/mailer';
import { outboxStore } from '../../server/db/outbox.repository';
import { createFitRunner, type FitRunner } from '../../server/runs/fit-runner';
import { createToyRunner, type ToyRunner } from '../../server/runs/toy-runner';
import { createHypothesisScanRunner, type HypothesisScanRunner } from '../../server/runs/hypothesis-scan-runner';
import { users } from '../../server/db/schema';
import { seedDemo } from '../../server/seed/demo';
import { DEMO_PASSWORD } from '../../server/seed/scenario';

export const DEMO = {
  admin: 'admin@lantern.example',
  convener: 'mira@lantern.example',
  analyst: 'otto@lantern.example',
  contact: 'juno@lantern.example',
  contact2: 'pim@lantern.example',
  reader: 'rafe@lantern.example',
  outsider: 'outsider@lantern.example',
} as const;
export const PASSWORD = DEMO_PASSWORD;

export type TestApp = App & { database: Database; mailer: Mailer; fits: FitRunner; toys: ToyRunner; scans: HypothesisScanRunner; close: () => Promise<void> };

/** A real app on an in-memory PGlite with migrations applied and the demo seeded (plus one account that belongs to no analysis). */
export async function createTestApp(overrides: Partial<Config> = {}): Promise<TestApp> {
  const database = await openDatabase();
  await seedDemo(database.db);
  await database.db.insert(users).values({ email: DEMO.outsider, name: 'Ona Outsider', passwordHash: await hashPassword(PASSWORD) });
  const config = testConfig(overrides);
  const mailer = await createMailer(outboxStore(database.db), config, () => {});
  const fits = createFitRunner(database.db, () => {}, { threads: 2 });
  const toys = createToyRunner(database.db, () => {}, { threads: 2 });
  const scans = createHypothesisScanRunner(database.db, () => {}, { threads: 2 });
  const app = createApp(database, config, { mailer, fits, toys, scans, log: process.env.TEST_LOG ? console.error : () => {} });
  return {
    ...app,
    database,
    mailer,
    fits,
    toys,
    scans,
    close: async () => {
      await scans.close();
      await toys.close();
      await fits.close();
      await mailer.close();
      await database.close();
    },
  };
}

/** A cookie-keeping client that sends a fresh CSRF token with every state-changing request. */
export class Client {
  readonly agent: ReturnType<typeof request.agent>;
  private token = '';
  constructor(app: Express) {
    this.agent = request.agent(app);
  }
  async csrf() {
    const res = await this.agent.get('/api/auth/csrf');
    this.token = res.body.token;
    return this.token;
  }
  get(path: string) {
    return this.agent.get(path);
  }
  async send(method: 'post' | 'patch' | 'put' | 'delete', path: string, body?: unknown) {
    await this.csrf();
    const req = this.agent[method](path).set('x-csrf-token', this.token);
    return body === undefined ? req : req.send(body as object);
  }
  /** A multipart upload (field "file", plus form fields) with the CSRF token. */
  async upload(path: string, file: { name: string; content: string | Buffer }, fields: Record<string, string> = {}) {
    await this.csrf();
    let req = this.agent.post(path).set('x-csrf-token', this.token);
    for (const [k, v] of Object.entries(fields)) req = req.field(k, v);
    return req.attach('file', Buffer.isBuffer(file.content) ? file.content : Buffer.from(file.content), file.name);
  }
  async signIn(email: string, password = PASSWORD) {
    return this.send('post', '/api/auth/sign-in', { email, password });
  }
}

export async function signedIn(app: Express, email: string) {
  const client = new Client(app);
  const res = await client.signIn(email);
  if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status} ${JSON.stringify(res.body)}`);
  return client;
}

/**
 * Everything a refused request must leave untouched: row counts of every table that requests
 * write, and the full contents of the register and model tables.
 */
export async function dbSnapshot(t: TestApp): Promise<string> {
  const { rows } = await t.database.client.query<{ snapshot: string }>(`
    select json_build_object(
      'effects', (select json_agg(e order by e.id) from effects e),
      'entries', (select json_agg(json_build_object('id', n.id, 'state', n.state, 'version', n.version, 'label', n.label, 'owner', n.owner_id, 'group', n.group_id) order by n.id) from entries n),
      'templates', (select json_agg(t order by t.id) from templates t),
      'regions', (select json_agg(r order by r.id) from regions r),
      'processes', (select json_agg(p order by p.id) from processes p),
      'groups', (select json_agg(g order by g.id) from groups g),
      'uploads', (select count(*) from uploads),
      'revisions', (select count(*) from revisions),
      'memberships', (select count(*) from memberships),
      'users', (select count(*) from users),
      'analyses', (select json_agg(json_build_object('id', a.id, 'blinding', a.blinding, 'hypothesis_parameter', a.hypothesis_parameter) order by a.id) from analyses a),
      'signal_hypotheses', (select json_agg(h order by h.id) from signal_hypotheses h),
      'floating_norms', (select json_agg(f order by f.id) from floating_norms f),
      'parameters_of_interest', (select json_agg(q order by q.id) from parameters_of_interest q),
      'questions', (select json_agg(json_build_object('id', q.id, 'state', q.state) order by q.id) from questions q),
      'answers', (select count(*) from answers),
      'blinding_events', (select count(*) from blinding_events)
    )::text as snapshot`);
  return rows[0].snapshot;
}
