import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, DEMO, signedIn, type TestApp } from './helpers';

describe('analyses and their members', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => t.close());

  it('lists only the analyses a person is a member of, with their role', async () => {
    const contact = await signedIn(t.app, DEMO.contact2);
    const res = await contact.get('/api/analyses');
    expect(res.body.map((a: { slug: string; role: string }) => [a.slug, a.role])).toEqual([['vireon-search', 'contact']]);
    const outsider = await signedIn(t.app, DEMO.outsider);
    expect((await outsider.get('/api/analyses')).body).toEqual([]);
  });

  it('lists every analysis for an admin, with no role where they are not a member', async () => {
    const admin = await signedIn(t.app, DEMO.admin);
    const res = await admin.get('/api/analyses');
    expect(res.body.map((a: { slug: string; role: null }) => [a.slug, a.role])).toEqual([
      ['cascade-modes', null],
      ['cascade-rate', null],
      ['vireon-search', null],
      ['vireon-pilot', null],
    ]);
  });

  it('tells each role on the overview what it may do there', async () => {
    const perms = async (email: string) => (await (await signedIn(t.app, email)).get('/api/analyses/vireon-search')).body.permissions;
    // a reader reads, and asks and answers questions (review committees read, and ask)
    expect(await perms(DEMO.reader)).toEqual(['analysis.read', 'question.raise', 'question.answer']);
    expect(await perms(DEMO.contact)).toEqual(expect.arrayContaining(['entry.editOwn', 'variation.upload']));
    expect(await perms(DEMO.contact)).not.toContain('entry.review');
    expect(await perms(DEMO.convener)).toEqual(expect.arrayContaining(['entry.review', 'members.manage', 'blinding.decide']));
    expect(await perms(DEMO.analyst)).toEqual(expect.arrayContaining(['model.edit', 'fit.run', 'blinding.request']));
  });

  it('counts the demo register by review state', async () => {
    const reader = await signedIn(t.app, DEMO.reader);
    const { counts } = (await reader.get('/api/analyses/vireon-search')).body;
    expect(counts.entries).toBe(40);
    expect(Object.values(counts.entriesByState).reduce((a: number, b) => a + (b as number), 0)).toBe(40);
  });

  it('lets a convener add an existing account with a role, and refuses an unknown e-mail', async () => {
    const convener = await signedIn(t.app, DEMO.convener);
    const added = await convener.send('post', '/api/analyses/cascade-rate/members', { email: DEMO.contact2, role: 'contact' });
    expect(added.status).toBe(201);
    expect(added.body).toMatchObject({ email: DEMO.contact2, role: 'contact' });
    const again = await convener.send('post', '/api/analyses/cascade-rate/members', { email: DEMO.contact2, role: 'reader' });
    expect(again.status).toBe(409);
    const unknown = await convener.send('post', '/api/analyses/cascade-rate/members', { email: 'ghost@lantern.example', role: 'reader' });
    expect(unknown.status).toBe(404);
    expect(unknown.body.error.message).toMatch(/ghost@lantern.example/);
  });
});

describe('blinding in the model response', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => t.close());

  it('withholds signal-region observed counts of a blinded analysis from every role, and sends control regions', async () => {
    for (const email of [DEMO.reader, DEMO.analyst, DEMO.convener, DEMO.admin]) {
      const client = await signedIn(t.app, email);
      const res = await client.get('/api/analyses/vireon-search/model');
      const sr = res.body.regions.filter((r: { role: string }) => r.role === 'signal');
      expect(sr.length).toBeGreaterThan(0);
      for (const r of sr) expect(r).toMatchObject({ observed: null, withheld: true });
      const cr = res.body.regions.find((r: { role: string }) => r.role === 'control');
      expect(cr.observed.length).toBe(cr.edges.length - 1);
    }
  });

  it('sends signal-region counts once the analysis is unblinded', async () => {
    const client = await signedIn(t.app, DEMO.reader);
    const res = await client.get('/api/analyses/cascade-rate/model');
    const sr = res.body.regions.find((r: { role: string }) => r.role === 'signal');
    expect(sr.withheld).toBe(false);
    expect(sr.observed).toHaveLength(sr.edges.length - 1);
  });
});

describe('who a user is in an analysis, kept in memory', () => {
  it('follows every change to memberships and analyses made in the database, whichever path made it', async () => {
    const t = await createTestApp();
    try {
      const reader = await signedIn(t.app, DEMO.reader);
      const A = '/api/analyses/cascade-rate';
      expect((await reader.get(A)).body.role).toBe('reader');
      // writes that bypass the services: the triggers announce them all the same
      await t.database.client.query(`update memberships set role = 'analyst' where user_id = (select id from users where email = $1) and analysis_id = (select id from analyses where slug = 'cascade-rate')`, [DEMO.reader]);
      expect((await reader.get(A)).body.role).toBe('analyst');
      await t.database.client.query(`update analyses set blinding = 'blinded' where slug = 'cascade-rate'`);
      expect((await reader.get(A)).body.analysis.blinding).toBe('blinded');
      await t.database.client.query(`delete from memberships where user_id = (select id from users where email = $1)`, [DEMO.reader]);
      expect((await reader.get(A)).status).toBe(403);
      expect((await reader.get('/api/analyses/fresh-one')).status).toBe(404);
      await t.database.client.query(`insert into analyses (slug, name) values ('fresh-one', 'Fresh')`);
      expect((await reader.get('/api/analyses/fresh-one')).status).toBe(403);
    } finally {
      await t.close();
    }
  });
});
