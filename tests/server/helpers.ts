import request from 'supertest';
import type { Express } from 'express';
import { createApp, type App } from '../../server/app';
import { testConfig, type Config } from '../../server/config';
import { openDatabase, type Database } from '../../server/db/client';
import { hashPassword } from '../../server/auth/passwords';
import { createMailer, type Mailer } from '../../server/mail/mailer';
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

export type TestApp = App & { database: Database; mailer: Mailer; close: () => Promise<void> };

/** A real app on an in-memory PGlite with migrations applied and the demo seeded (plus one account that belongs to no analysis). */
export async function createTestApp(overrides: Partial<Config> = {}): Promise<TestApp> {
  const database = await openDatabase();
  await seedDemo(database.db);
  await database.db.insert(users).values({ email: DEMO.outsider, name: 'Ona Outsider', passwordHash: await hashPassword(PASSWORD) });
  const config = testConfig(overrides);
  const mailer = await createMailer(database.db, config, () => {});
  const app = createApp(database, config, { mailer, log: () => {} });
  return {
    ...app,
    database,
    mailer,
    close: async () => {
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
