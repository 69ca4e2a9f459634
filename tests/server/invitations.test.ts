import { desc } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { outbox } from '../../server/db/schema';
import { Client, createTestApp, DEMO, signedIn, type TestApp } from './helpers';

describe('inviting people to an analysis', () => {
  let t: TestApp;
  let convener: Client;
  const lastMail = async () => {
    await t.mailer.idle();
    return (await t.database.db.select().from(outbox).orderBy(desc(outbox.id)).limit(1))[0];
  };
  beforeAll(async () => {
    t = await createTestApp();
    convener = await signedIn(t.app, DEMO.convener);
  });
  afterAll(async () => t.close());

  it('adds an existing account at once and tells them by e-mail', async () => {
    const res = await convener.send('post', '/api/analyses/cascade-rate/invitations', { email: DEMO.contact2, role: 'contact' });
    expect(res.body).toEqual({ outcome: 'added', email: DEMO.contact2 });
    expect(await lastMail()).toMatchObject({ to: DEMO.contact2, subject: 'You were added to "Cascade production rate"', delivered: true });
  });

  it('mails a one-time link to a new address; following it creates the account, the membership, and signs in', async () => {
    const res = await convener.send('post', '/api/analyses/vireon-search/invitations', { email: 'Nell@Lantern.example', role: 'analyst' });
    expect(res.body).toEqual({ outcome: 'invited', email: 'nell@lantern.example' });
    const mail = await lastMail();
    expect(mail).toMatchObject({ to: 'nell@lantern.example', subject: 'Invitation to "Vireon search in flare pairs" on Plumbline' });
    const token = mail.body.match(/\/invite\/([\w-]+)/)![1];

    const guest = new Client(t.app);
    expect((await guest.get(`/api/invitations/${token}`)).body).toEqual({ analysis: 'Vireon search in flare pairs', analysisSlug: 'vireon-search', email: 'nell@lantern.example', role: 'analyst', invitedBy: 'Mira Quellbright' });
    const short = await guest.send('post', `/api/invitations/${token}/accept`, { name: 'Nell', password: 'short' });
    expect(short.status).toBe(400);
    const accepted = await guest.send('post', `/api/invitations/${token}/accept`, { name: 'Nell Amberley', password: 'a-long-password' });
    expect(accepted.status).toBe(201);
    expect(accepted.body.memberships).toEqual([{ slug: 'vireon-search', name: 'Vireon search in flare pairs', role: 'analyst' }]);
    expect((await guest.get('/api/analyses/vireon-search')).body.role).toBe('analyst');

    const reused = await new Client(t.app).get(`/api/invitations/${token}`);
    expect(reused.status).toBe(404);
    expect((await new Client(t.app).signIn('nell@lantern.example', 'a-long-password')).status).toBe(200);
  });

  it('shows the admin every message in the outbox', async () => {
    const admin = await signedIn(t.app, DEMO.admin);
    const res = await admin.get('/api/outbox');
    expect(res.body.map((m: { subject: string }) => m.subject)).toEqual(['Invitation to "Vireon search in flare pairs" on Plumbline', 'You were added to "Cascade production rate"']);
    expect(res.body[0]).toMatchObject({ analysis: 'Vireon search in flare pairs', delivered: true, error: null });
  });
});
