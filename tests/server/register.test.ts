import { desc } from 'drizzle-orm';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { outbox } from '../../server/db/schema';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';

const A = '/api/analyses/vireon-search';

describe('register entries and their review', () => {
  let t: TestApp;
  let analyst: Client;
  let contact: Client;
  let convener: Client;
  let reader: Client;
  let juno: number;
  /** mail sent since the last call, as (recipient, subject) pairs */
  let seen = 0;
  async function mail() {
    await t.mailer.idle();
    const rows = await t.database.db.select().from(outbox).orderBy(desc(outbox.id));
    const fresh = rows.filter((r) => r.id > seen);
    seen = Math.max(seen, ...rows.map((r) => r.id));
    return fresh.map((r) => ({ to: r.to, subject: r.subject, body: r.body, delivered: r.delivered }));
  }

  beforeAll(async () => {
    t = await createTestApp();
    [analyst, contact, convener, reader] = await Promise.all([DEMO.analyst, DEMO.contact, DEMO.convener, DEMO.reader].map((e) => signedIn(t.app, e)));
    juno = (await contact.get('/api/auth/me')).body.user.id;
  });
  beforeEach(async () => {
    await mail();
  });
  afterAll(async () => t.close());

  it('lets an analyst create an entry with an owner and a new group; it starts as a draft with a revision', async () => {
    const res = await analyst.send('post', `${A}/entries`, {
      key: 'flare_timing',
      label: 'Flare timing calibration',
      group: 'timing',
      ownerId: juno,
      description: 'Offset of the flare arrival time.',
      justification: 'Timing scan of 2026.',
      references: ['https://notes.lantern.example/ltn/2001'],
    });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ key: 'flare_timing', state: 'draft', group: 'timing', owner: { email: DEMO.contact }, version: 1, effects: [] });
    expect(res.body.revisions).toEqual([expect.objectContaining({ action: 'created', author: expect.objectContaining({ name: 'Otto Brannholm' }) })]);
    expect(res.body.can).toMatchObject({ edit: true, upload: true, submit: true, accept: false });
  });

  it('refuses a duplicate key and an owner who is not a member, writing nothing', async () => {
    const before = await dbSnapshot(t);
    const dup = await analyst.send('post', `${A}/entries`, { key: 'lumi', label: 'Again' });
    expect(dup.status).toBe(409);
    expect(dup.body.error.message).toMatch(/already has an entry with the key "lumi"/);
    const admin = (await (await signedIn(t.app, DEMO.admin)).get('/api/auth/me')).body.user.id;
    const stranger = await analyst.send('post', `${A}/entries`, { key: 'new_one', label: 'New', ownerId: admin });
    expect(stranger.status).toBe(422);
    expect(stranger.body.error.issues[0].path).toEqual(['ownerId']);
    expect(await dbSnapshot(t)).toBe(before);
  });

  it('shows each role what it may do with an entry', async () => {
    const can = async (c: Client, key: string) => (await c.get(`${A}/entries/${key}`)).body.can;
    expect(await can(contact, 'flare_escale')).toMatchObject({ edit: true, upload: true, reassign: false, accept: false });
    expect(await can(contact, 'cascade_fake')).toMatchObject({ edit: false, upload: false });
    expect(await can(convener, 'flare_iso')).toMatchObject({ edit: false, accept: true, sendBack: true, retire: true });
    expect(await can(reader, 'flare_escale')).toEqual({ edit: false, upload: false, submit: false, accept: false, sendBack: false, retire: false, reopen: false, reassign: false });
  });

  it('lets the owner edit metadata but not reassign the entry or edit another contact\u2019s entry', async () => {
    const entry = (await contact.get(`${A}/entries/flare_timing`)).body;
    const ok = await contact.send('patch', `${A}/entries/flare_timing`, { justification: 'Timing scan of 2026, version 2.', version: entry.version });
    expect(ok.status).toBe(200);
    expect(ok.body.revisions[0]).toMatchObject({ action: 'edited', summary: 'Changed justification.', author: { name: 'Juno Feldspire' } });
    expect(ok.body.revisions[0].before.justification).toBe('Timing scan of 2026.');
    const reassign = await contact.send('patch', `${A}/entries/flare_timing`, { ownerId: null, version: ok.body.version });
    expect(reassign.status).toBe(403);
    const foreign = await contact.send('patch', `${A}/entries/cascade_fake`, { label: 'Mine now', version: 1 });
    expect(foreign.status).toBe(403);
  });

  it('refuses an edit made from a stale version, naming both versions', async () => {
    const before = await dbSnapshot(t);
    const res = await analyst.send('patch', `${A}/entries/flare_timing`, { label: 'Stale', version: 1 });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/Someone else changed "flare_timing".*version 2, yours 1/);
    expect(await dbSnapshot(t)).toBe(before);
  });

  it('walks the review: submit e-mails the conveners, send back needs a comment and e-mails the owner, accept e-mails the owner', async () => {
    const submitted = await contact.send('post', `${A}/entries/flare_timing/review`, { action: 'submit' });
    expect(submitted.status).toBe(200);
    expect(submitted.body.state).toBe('submitted');
    expect(await mail()).toEqual([{ to: DEMO.convener, subject: '[vireon-search] flare_timing awaits review', body: expect.stringContaining('/a/vireon-search/entries/flare_timing'), delivered: true }]);

    const noComment = await convener.send('post', `${A}/entries/flare_timing/review`, { action: 'send_back' });
    expect(noComment.status).toBe(400);
    expect(noComment.body.error.message).toMatch(/needs a comment/);

    const back = await convener.send('post', `${A}/entries/flare_timing/review`, { action: 'send_back', comment: 'Please add the timing scan plot.' });
    expect(back.body.state).toBe('sent_back');
    const [sentBack] = await mail();
    expect(sentBack).toMatchObject({ to: DEMO.contact, subject: '[vireon-search] flare_timing was sent back' });
    expect(sentBack.body).toContain('Please add the timing scan plot.');

    await contact.send('post', `${A}/entries/flare_timing/review`, { action: 'submit' });
    await mail();
    const accepted = await convener.send('post', `${A}/entries/flare_timing/review`, { action: 'accept' });
    expect(accepted.body.state).toBe('accepted');
    expect((await mail()).map((m) => [m.to, m.subject])).toEqual([[DEMO.contact, '[vireon-search] flare_timing was accepted']]);
    expect(accepted.body.revisions.slice(0, 4).map((r: { action: string }) => r.action)).toEqual(['review.accept', 'review.submit', 'review.send_back', 'review.submit']);
  });

  it('refuses review steps out of order or by the wrong role', async () => {
    const again = await convener.send('post', `${A}/entries/flare_timing/review`, { action: 'accept' });
    expect(again.status).toBe(409);
    expect(again.body.error.message).toMatch(/"flare_timing" is accepted; "accept" applies only to an entry that is submitted/);
    const byContact = await contact.send('post', `${A}/entries/flare_iso/review`, { action: 'accept' });
    expect(byContact.status).toBe(403);
  });

  it('returns an accepted entry to review when it is edited, and tells the conveners', async () => {
    const entry = (await contact.get(`${A}/entries/flare_timing`)).body;
    const res = await contact.send('patch', `${A}/entries/flare_timing`, { description: 'Offset and drift of the flare arrival time.', version: entry.version });
    expect(res.body.state).toBe('submitted');
    expect(res.body.revisions[0].summary).toMatch(/returns to review/);
    expect((await mail()).map((m) => m.subject)).toEqual(['[vireon-search] flare_timing awaits review']);
  });

  it('retires and reopens an entry; a retired entry is read-only and left out of the model export', async () => {
    expect((await analyst.send('post', `${A}/entries/flare_timing/review`, { action: 'retire' })).body.state).toBe('retired');
    // the owner has the right to edit: the entry's state refuses it (rights first, then state)
    const locked = await contact.send('patch', `${A}/entries/flare_timing`, { label: 'x', version: 99 });
    expect(locked.status).toBe(409);
    expect(locked.body.error.message).toMatch(/retired/);
    const exported = (await analyst.get(`${A}/exchange`)).body;
    expect(exported.systematics.map((s: { key: string }) => s.key)).not.toContain('flare_timing');
    expect((await analyst.send('post', `${A}/entries/flare_timing/review`, { action: 'reopen' })).body.state).toBe('draft');
  });

  it('removes an effect with a revision, and refuses a reader', async () => {
    const entry = (await contact.get(`${A}/entries/flare_escale`)).body;
    const target = entry.effects[0];
    expect((await reader.send('delete', `${A}/entries/flare_escale/effects/${target.id}`)).status).toBe(403);
    const res = await contact.send('delete', `${A}/entries/flare_escale/effects/${target.id}`);
    expect(res.status).toBe(200);
    expect(res.body.effects).toHaveLength(entry.effects.length - 1);
    expect(res.body.revisions[0]).toMatchObject({ action: 'effect.removed', summary: expect.stringContaining(`region "${target.region}", process "${target.process}"`) });
    expect(res.body.state).toBe('submitted');
  });

  it('moves entries between groups, renames and deletes groups, keeping every entry', async () => {
    const created = await analyst.send('post', `${A}/groups`, { name: 'timing and tracking' });
    expect(created.status).toBe(201);
    const dup = await analyst.send('post', `${A}/groups`, { name: 'theory' });
    expect(dup.status).toBe(409);
    const moved = await analyst.send('put', `${A}/entries/vertex_eff/group`, { groupId: created.body.id });
    expect(moved.body.groups.find((g: { id: number }) => g.id === created.body.id).entries).toEqual(['vertex_eff']);
    const renamed = await analyst.send('patch', `${A}/groups/${created.body.id}`, { name: 'vertexing' });
    expect(renamed.body.name).toBe('vertexing');
    expect((await analyst.get(`${A}/entries/vertex_eff`)).body.revisions[0]).toMatchObject({ action: 'group.changed', summary: 'Moved from "tracking" to "timing and tracking".' });
    expect((await analyst.send('delete', `${A}/groups/${created.body.id}`)).status).toBe(204);
    const view = (await analyst.get(`${A}/groups`)).body;
    expect(view.ungrouped).toContain('vertex_eff');
    const all = [...view.ungrouped, ...view.groups.flatMap((g: { entries: string[] }) => g.entries)];
    expect(all).toHaveLength(41);
  });
});

describe('the register copy kept in memory', () => {
  it('shows every change made in the database, whichever path made it', async () => {
    const t = await createTestApp();
    try {
      const reader = await signedIn(t.app, DEMO.reader);
      const entry = async (key: string) => ((await reader.get(`${A}/entries`)).body as { key: string; label: string; group: string | null; owner: { name: string } | null; regions: string[] }[]).find((e) => e.key === key)!;
      const before = await entry('flare_escale');
      expect(before).toBeTruthy();
      // writes that bypass the services: the triggers raise the stamp all the same
      await t.database.client.query(`update entries set label = 'Renamed in the database' where key = 'flare_escale'`);
      expect((await entry('flare_escale')).label).toBe('Renamed in the database');
      await t.database.client.query(`update groups set name = 'renamed group' where id = (select group_id from entries where key = 'flare_escale')`);
      expect((await entry('flare_escale')).group).toBe('renamed group');
      await t.database.client.query(`update users set name = 'Someone Else' where name = $1`, [before.owner!.name]);
      expect((await entry('flare_escale')).owner!.name).toBe('Someone Else');
      await t.database.client.query(`delete from effects where entry_id = (select id from entries where key = 'flare_escale')`);
      expect((await entry('flare_escale')).regions).toEqual([]);
      await t.database.client.query(`delete from entries where key = 'flare_escale'`);
      expect(await entry('flare_escale')).toBeUndefined();
    } finally {
      await t.close();
    }
  });
});

describe('the lists of questions kept in memory', () => {
  it('show every answer and every change of a question, whichever path made it', async () => {
    const t = await createTestApp();
    try {
      const reader = await signedIn(t.app, DEMO.reader);
      const convener = await signedIn(t.app, DEMO.convener);
      const [key] = (await reader.get(`${A}/entries`)).body.map((e: { key: string }) => e.key) as string[];
      const raised = await convener.send('post', `${A}/questions`, { entry: key, title: 'Why so narrow?', body: 'Show where it comes from.' });
      expect(raised.status).toBe(201);
      const listed = async () => ((await reader.get(`${A}/questions`)).body as { id: number; answers: number; state: string; title: string }[]).find((q) => q.id === raised.body.id)!;
      expect(await listed()).toMatchObject({ answers: 0, state: 'open' });
      expect((await convener.send('post', `${A}/questions/${raised.body.id}/answers`, { body: 'The control region.' })).status).toBe(201);
      expect(await listed()).toMatchObject({ answers: 1, state: 'answered' });
      // written in the database: an answer, then a question's title
      await t.database.client.query(`insert into answers (question_id, author_id, body) select id, author_id, 'Another.' from questions where id = $1`, [raised.body.id]);
      expect((await listed()).answers).toBe(2);
      await t.database.client.query(`delete from answers where question_id = $1`, [raised.body.id]);
      expect((await listed()).answers).toBe(0);
      await t.database.client.query(`update questions set title = 'Retitled' where id = $1`, [raised.body.id]);
      expect((await listed()).title).toBe('Retitled');
      // the asker's new address, changed in the database, is where the next answer's notice goes
      await t.database.client.query(`update users set email = 'asker-moved@lantern.example' where email = $1`, [DEMO.convener]);
      expect((await reader.send('post', `${A}/questions/${raised.body.id}/answers`, { body: 'From a reader.' })).status).toBe(201);
      await t.mailer.idle();
      const sent = (await t.database.db.select().from(outbox)).map((m) => m.to);
      expect(sent).toContain('asker-moved@lantern.example');
      expect(sent).not.toContain(DEMO.convener);
    } finally {
      await t.close();
    }
  });
});

describe('the entry pages kept in memory', () => {
  it('shows every change to an entry, its history, its group and the names on it, whichever path made it, and each page its own entry', async () => {
    const t = await createTestApp();
    try {
      const reader = await signedIn(t.app, DEMO.reader);
      const analyst = await signedIn(t.app, DEMO.analyst);
      type Page = { key: string; label: string; group: string | null; owner: { name: string } | null; revisions: { summary: string; author: { name: string } | null }[] };
      const page = async (key: string) => {
        const res = await reader.get(`${A}/entries/${key}`);
        return res.status === 200 ? (res.body as Page) : res.status;
      };
      const [first, other] = (await reader.get(`${A}/entries`)).body.map((e: { key: string }) => e.key) as string[];
      const before = (await page(first)) as Page;
      const otherBefore = (await page(other)) as Page;
      // an edit through the API: its own page shows it and its new revision, the other page is unchanged
      const v = (await analyst.get(`${A}/entries/${first}`)).body.version;
      expect((await analyst.send('patch', `${A}/entries/${first}`, { label: 'Edited label', version: v })).status).toBe(200);
      const edited = (await page(first)) as Page;
      expect(edited.label).toBe('Edited label');
      expect(edited.revisions.length).toBe(before.revisions.length + 1);
      expect(await page(other)).toEqual(otherBefore);
      // writes that bypass the services: the triggers announce them all the same
      await t.database.client.query(`update entries set label = 'Renamed in the database' where key = $1`, [other]);
      expect(((await page(other)) as Page).label).toBe('Renamed in the database');
      await t.database.client.query(`insert into revisions (analysis_id, entry_id, action, summary) select analysis_id, id, 'edited', 'Written in the database.' from entries where key = $1`, [first]);
      expect(((await page(first)) as Page).revisions[0].summary).toBe('Written in the database.');
      await t.database.client.query(`update groups set name = 'renamed group' where id = (select group_id from entries where key = $1)`, [first]);
      expect(((await page(first)) as Page).group).toBe('renamed group');
      // an impact check written and then finished shows on its entry's page
      const fit = await t.database.client.query<{ id: number }>(`select id from fits order by id limit 1`);
      await t.database.client.query(
        `insert into impact_checks (analysis_id, entry_id, kind, fit_id, state) select analysis_id, id, 'upload', $2, 'running' from entries where key = $1`,
        [first, fit.rows[0]?.id ?? null],
      );
      expect(((await page(first)) as Page & { impactCheck: { state: string } | null }).impactCheck?.state).toBe('running');
      await t.database.client.query(`update impact_checks set state = 'failed', failure = 'Stopped.' where entry_id = (select id from entries where key = $1)`, [first]);
      expect(((await page(first)) as Page & { impactCheck: { state: string; failure: string } | null }).impactCheck).toMatchObject({ state: 'failed', failure: 'Stopped.' });
      const author = edited.revisions[0].author!.name;
      await t.database.client.query(`update users set name = 'Another Name' where name = $1`, [author]);
      expect(((await page(first)) as Page).revisions[1].author!.name).toBe('Another Name');
      if (otherBefore.owner) {
        await t.database.client.query(`update users set name = 'Owner Renamed' where name = $1`, [otherBefore.owner.name]);
        expect(((await page(other)) as Page).owner!.name).toBe('Owner Renamed');
      }
      await t.database.client.query(`update entries set key = 'moved_key' where key = $1`, [other]);
      expect(await page(other)).toBe(404);
      expect(((await page('moved_key')) as Page).label).toBe('Renamed in the database');
      await t.database.client.query(`delete from entries where key = $1`, [first]);
      expect(await page(first)).toBe(404);
    } finally {
      await t.close();
    }
  });
});

describe('the model copy kept in memory', () => {
  it('shows every change to regions, processes, floating normalisations, templates and effects, whichever path made it', async () => {
    const t = await createTestApp();
    try {
      const reader = await signedIn(t.app, DEMO.reader);
      type Model = { regions: { key: string; label: string }[]; processes: { key: string; label: string }[]; floatingNorms: { key: string; label: string }[]; templates: { region: string; process: string; nominal: number[] }[] };
      const model = async () => (await reader.get(`${A}/model`)).body as Model;
      const effect = async () => ((await reader.get(`${A}/entries/lumi`)).body as { effects: { region: string; process: string; nominal: number[]; up: number[] }[] }).effects.find((e) => e.region === 'CR-low' && e.process === 'halo')!;
      const summary = async () => ((await reader.get(`${A}/entries`)).body as { key: string; regions: string[]; processes: string[] }[]).find((e) => e.key === 'lumi')!;
      const norm = (await model()).floatingNorms[0].key;
      const {
        rows: [{ id }],
      } = await t.database.client.query<{ id: number }>(`select id from analyses where slug = 'vireon-search'`);
      const sql = (text: string, params: unknown[] = []) => t.database.client.query(text, [id, ...params]);
      const before = await effect();
      expect(before.nominal.length).toBeGreaterThan(0);
      expect((await summary()).regions).toContain('CR-low');

      // writes that bypass the services: the triggers announce them all the same
      await sql(`update regions set label = 'Relabelled in the database' where key = 'CR-low' and analysis_id = $1`);
      expect((await model()).regions.find((r) => r.key === 'CR-low')!.label).toBe('Relabelled in the database');
      await sql(`update processes set label = 'Halo, relabelled' where key = 'halo' and analysis_id = $1`);
      expect((await model()).processes.find((p) => p.key === 'halo')!.label).toBe('Halo, relabelled');
      await sql(`update floating_norms set label = 'Norm, relabelled' where key = $2 and analysis_id = $1`, [norm]);
      expect((await model()).floatingNorms.find((f) => f.key === norm)!.label).toBe('Norm, relabelled');
      await sql(
        `update templates set nominal = (select jsonb_agg(7) from generate_series(1, jsonb_array_length(nominal))) where analysis_id = $1 and region_id = (select id from regions where key = 'CR-low' and analysis_id = $1) and process_id = (select id from processes where key = 'halo' and analysis_id = $1)`,
      );
      const template = (await model()).templates.find((x) => x.region === 'CR-low' && x.process === 'halo')!;
      expect(new Set(template.nominal)).toEqual(new Set([7]));
      // an entry's page draws its variations over the template it varies
      expect(new Set((await effect()).nominal)).toEqual(new Set([7]));

      // an edit that leaves the effects alone rebuilds the register with their summary intact
      await sql(`update entries set label = 'Luminosity, relabelled' where key = 'lumi' and analysis_id = $1`);
      expect((await summary()).regions).toContain('CR-low');
      await sql(`delete from effects where entry_id = (select id from entries where key = 'lumi' and analysis_id = $1) and region_id = (select id from regions where key = 'CR-low' and analysis_id = $1)`);
      expect((await summary()).regions).not.toContain('CR-low');
      expect(await effect()).toBeUndefined();
    } finally {
      await t.close();
    }
  });

  it('sends the register and the model compressed as the client accepts, the same JSON each way, with an ETag', async () => {
    const t = await createTestApp();
    try {
      const reader = await signedIn(t.app, DEMO.reader);
      // both above the 16 kB from which a copy is compressed
      await t.database.client.query(
        `insert into entries (analysis_id, key, label) select id, 'bulk_' || g, repeat('Bulk entry ', 15) || g from analyses, generate_series(1, 40) g where slug = 'vireon-search'`,
      );
      await t.database.client.query(
        `insert into regions (analysis_id, key, role, observable, edges) select id, 'CR-fine', 'control', 'm', (select jsonb_agg(g) from generate_series(0, 1500) g) from analyses where slug = 'vireon-search'`,
      );
      for (const path of [`${A}/entries`, `${A}/model`]) {
        const plain = await reader.get(path).set('accept-encoding', 'identity');
        expect(plain.text.length).toBeGreaterThan(16 * 1024);
        expect(plain.headers['content-encoding']).toBeUndefined();
        const gzip = await reader.get(path).set('accept-encoding', 'gzip');
        expect(gzip.headers['content-encoding']).toBe('gzip');
        const brotli = await reader.get(path).set('accept-encoding', 'gzip, deflate, br');
        expect(brotli.headers['content-encoding']).toBe('br');
        expect(gzip.body).toEqual(plain.body);
        expect(brotli.body).toEqual(plain.body);
        expect((await reader.get(path).set('if-none-match', plain.headers.etag)).status).toBe(304);
      }
    } finally {
      await t.close();
    }
  });

  it('sends signal-region counts by the blinding rule in force, whichever copy of the model is kept', async () => {
    const t = await createTestApp();
    try {
      const reader = await signedIn(t.app, DEMO.reader);
      const core = async () => ((await reader.get(`${A}/model`)).body as { regions: { key: string; observed: number[] | null; withheld: boolean }[] }).regions.find((r) => r.key === 'SR-core')!;
      const blinding = (state: string) => t.database.client.query(`update analyses set blinding = $1 where slug = 'vireon-search'`, [state]);
      expect(await core()).toMatchObject({ observed: null, withheld: true });
      await blinding('unblinded');
      const open = await core();
      expect(open.withheld).toBe(false);
      expect(open.observed!.length).toBeGreaterThan(0);
      await blinding('blinded');
      expect(await core()).toMatchObject({ observed: null, withheld: true });
    } finally {
      await t.close();
    }
  });
});
