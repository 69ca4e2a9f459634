import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { desc, eq } from 'drizzle-orm';
import { analyses, fits, modelVersions, outbox, regions, users } from '../../server/db/schema';
import { Client, createTestApp, dbSnapshot, DEMO, PASSWORD, signedIn, type TestApp } from './helpers';
import { markSignalCounts, MARK, scanForBlindedCounts } from './blinded-scan';

/**
 * Blinding against the people who could break it: an analyst editing a region's role, a version
 * frozen while a role was different, an admin or a convener standing on both sides of an
 * unblinding. Every attack is followed by the blinded-response scan (every GET route × every
 * caller, and the outbox), which fails on any signal-region count.
 */

const SLUG = 'vireon-search';
const A = `/api/analyses/${SLUG}`;

async function analysisRow(t: TestApp) {
  const [a] = await t.database.db.select().from(analyses).where(eq(analyses.slug, SLUG));
  return a;
}

async function callers(t: TestApp, extra: Record<string, Client> = {}) {
  const [reader, contact, analyst, convener, admin] = await Promise.all([DEMO.reader, DEMO.contact, DEMO.analyst, DEMO.convener, DEMO.admin].map((e) => signedIn(t.app, e)));
  return { reader, contact, analyst, convener, admin, ...extra };
}

async function newAccount(admin: Client, email: string, name: string) {
  const res = await admin.send('post', '/api/users', { email, name, password: PASSWORD });
  expect(res.status).toBe(201);
  return res.body.id as number;
}

const userId = async (t: TestApp, email: string) => (await t.database.db.select({ id: users.id }).from(users).where(eq(users.email, email)))[0].id;

describe('a region blinded by the analysis keeps its data withheld, whatever is done to its role', () => {
  let t: TestApp;
  let who: Awaited<ReturnType<typeof callers>>;
  beforeAll(async () => {
    t = await createTestApp();
    await markSignalCounts(t, SLUG);
    who = await callers(t);
  });
  afterAll(async () => t.close());

  it('refuses to turn a signal region into a control or validation region, with the rule named, and sends no count', async () => {
    const before = await dbSnapshot(t);
    for (const [key, role] of [
      ['SR-core', 'control'],
      ['SR-wide', 'validation'],
    ]) {
      const res = await who.analyst.send('patch', `${A}/regions/${key}`, { role });
      expect(res.status).toBe(409);
      expect(res.body.error.message).toMatch(new RegExp(`Region "${key}" is blinded.*until a convener approves unblinding`));
      expect(MARK.test(res.text)).toBe(false);
    }
    expect(await dbSnapshot(t)).toBe(before);
    const model = (await who.analyst.get(`${A}/model`)).body as { regions: { key: string; role: string; observed: number[] | null; withheld: boolean }[] };
    expect(model.regions.filter((r) => r.key.startsWith('SR')).map((r) => [r.key, r.role, r.observed, r.withheld])).toEqual([
      ['SR-core', 'signal', null, true],
      ['SR-wide', 'signal', null, true],
    ]);
  });

  it('refuses the role change in the database too, should a writer skip the service', async () => {
    const refused = await t.database.db
      .update(regions)
      .set({ role: 'control' })
      .where(eq(regions.key, 'SR-core'))
      .then(() => null, (e: Error & { cause?: Error }) => e.cause?.message ?? e.message);
    expect(refused).toMatch(/region "SR-core" is blinded: its role cannot change before unblinding/);
  });

  it('lets a control region become a signal region, and then keeps it blinded: turning it back is refused', async () => {
    const toSignal = await who.analyst.send('patch', `${A}/regions/CR-shower`, { role: 'signal' });
    expect(toSignal.status).toBe(200);
    expect(toSignal.body).toMatchObject({ key: 'CR-shower', role: 'signal', observed: null, withheld: true });
    const back = await who.analyst.send('patch', `${A}/regions/CR-shower`, { role: 'control' });
    expect(back.status).toBe(409);
    expect(back.body.error.message).toMatch(/CR-shower" is blinded/);
    expect((await analysisRow(t)).blindedRegions.sort()).toEqual(['CR-shower', 'SR-core', 'SR-wide']);
  });

  it('keeps a blinded region withheld when it is rebinned, and takes its observed counts without reading them back', async () => {
    const region = (await who.analyst.get(`${A}/model`)).body.regions.find((r: { key: string }) => r.key === 'SR-wide');
    const edges = region.edges.map((e: number, i: number) => (i === 0 ? e - 1 : e));
    const rebinned = await who.analyst.send('patch', `${A}/regions/SR-wide`, { edges });
    expect(rebinned.status).toBe(200);
    expect(rebinned.body).toMatchObject({ observed: null, withheld: true });
    const counts = edges.slice(1).map((_: number, i: number) => 918250 + i);
    const upload = await who.analyst.send('put', `${A}/regions/SR-wide/observed`, { observed: counts });
    expect(upload.status).toBe(200);
    expect(upload.body).toMatchObject({ observed: null, withheld: true });
    expect(MARK.test(upload.text)).toBe(false);
  });

  it('refuses an observed fit of a version frozen while a blinded region had another role', async () => {
    // a version frozen before regions were blinded by the analysis, with SR-core saved as a control region
    const analyst = who.analyst;
    const frozen = await analyst.send('post', `${A}/versions`, { note: 'base' });
    expect(frozen.status).toBe(201);
    const [v] = await t.database.db.select().from(modelVersions).where(eq(modelVersions.number, frozen.body.number));
    const model = structuredClone(v.model) as { regions: { key: string; role: string }[] };
    model.regions.find((r) => r.key === 'SR-core')!.role = 'control';
    await t.database.db.update(modelVersions).set({ model }).where(eq(modelVersions.id, v.id));

    for (const options of [{ dataset: 'observed', controlOnly: true }, { dataset: 'observed' }, { dataset: 'observed', excludeRegions: ['SR-wide', 'CR-shower'] }]) {
      const res = await analyst.send('post', `${A}/fits`, { version: frozen.body.number, options: { ...options, impacts: 'none', expected: false } });
      expect(res.status).toBe(400);
      expect(res.body.error.message).toMatch(/may not include a blinded region \(SR-core/);
    }
    // leaving the blinded regions out is allowed
    const allowed = await analyst.send('post', `${A}/fits`, {
      version: frozen.body.number,
      options: { dataset: 'observed', excludeRegions: ['SR-core', 'SR-wide', 'CR-shower'], impacts: 'none', expected: false },
    });
    expect(allowed.status).toBe(202);
    await t.fits.idle();
    expect((await analyst.get(`${A}/fits/${allowed.body.id}`)).body.withheld).toBeNull();
  });

  it('withholds every number of a fit that read a blinded region: list, head, parts, exports, comparison, toys and diagnosis', async () => {
    // a fit made while the analysis was open, read again once it is blinded
    const a = await analysisRow(t);
    await t.database.db.update(analyses).set({ blinding: 'unblinded' }).where(eq(analyses.id, a.id));
    const version = (await who.analyst.get(`${A}/versions`)).body[0].number;
    const started = await who.analyst.send('post', `${A}/fits`, { version, options: { dataset: 'observed', excludeRegions: ['SR-core'], impacts: 'quick', expected: false } });
    expect(started.status).toBe(202);
    await t.fits.idle();
    await t.database.db.update(analyses).set({ blinding: 'blinded' }).where(eq(analyses.id, a.id));
    const id = started.body.id as number;
    const [row] = await t.database.db.select({ regionsInFit: fits.regionsInFit }).from(fits).where(eq(fits.id, id));
    expect(row.regionsInFit).toContain('SR-wide');

    const listed = ((await who.reader.get(`${A}/fits`)).body as { id: number; headline: unknown; withheld: string | null }[]).find((f) => f.id === id)!;
    expect(listed.headline).toBeNull();
    expect(listed.withheld).toMatch(/observed data of blinded regions "SR-wide", "CR-shower"; its results are withheld/);
    const head = await who.reader.get(`${A}/fits/${id}`);
    expect(head.status).toBe(200);
    expect(head.body.result).toBeNull();
    for (const path of [`/parts/yields`, `/parts/correlation`, `/export?format=csv&table=summary`, `/compare/${id}`, `/diagnosis/halo_norm`])
      expect({ path, status: (await who.reader.get(`${A}/fits/${id}${path}`)).status }).toEqual({ path, status: 409 });
    const json = await who.reader.get(`${A}/fits/${id}/export?format=json`);
    expect(json.status).toBe(200);
    expect(JSON.parse(json.text).result).toBeNull();
    const toys = await who.analyst.send('post', `${A}/fits/${id}/toys`, { count: 10, hypothesis: { kind: 'best-fit' }, seed: 1 });
    expect(toys.status).toBe(409);
  });

  it('sends no count to anyone after these attempts', async () => {
    expect(await scanForBlindedCounts(t, SLUG, who, 'the role edits and the old version')).toBeGreaterThan(300);
  });
});

describe('unblinding needs two people, enforced by the server', () => {
  let t: TestApp;
  let who: Awaited<ReturnType<typeof callers>>;
  let seen = 0;
  async function mail() {
    await t.mailer.idle();
    const rows = await t.database.db.select().from(outbox).orderBy(desc(outbox.id));
    const fresh = rows.filter((r) => r.id > seen);
    seen = Math.max(seen, ...rows.map((r) => r.id));
    return fresh.reverse();
  }
  const log = async () => (await who.reader.get(`${A}/blinding`)).body as { state: string; approvalsRequired: number; approvalsGiven: number; events: { action: string; note: string; by: string }[] };
  const decline = async () => expect((await who.convener.send('post', `${A}/blinding/decision`, { approve: false, note: 'Not this way.' })).status).toBe(200);

  beforeAll(async () => {
    t = await createTestApp();
    await markSignalCounts(t, SLUG);
    who = await callers(t);
    await mail();
  });
  afterAll(async () => t.close());

  it('refuses an admin who made an accomplice a convener, added themself as analyst and requested', async () => {
    const accomplice = 'ally@lantern.example';
    await newAccount(who.admin, accomplice, 'Al Ally');
    expect((await who.admin.send('post', `${A}/members`, { email: accomplice, role: 'convener' })).status).toBe(201);
    expect((await who.admin.send('post', `${A}/members`, { email: DEMO.admin, role: 'analyst' })).status).toBe(201);
    // the convener role an admin gives, and the admin's own membership change, are announced to every convener
    const sent = await mail();
    const promoted = sent.filter((m) => m.subject.includes('gave the convener role'));
    expect(promoted.map((m) => m.to).sort()).toEqual([accomplice, DEMO.convener].sort());
    expect(promoted[0].body).toMatch(/added Al Ally as convener/);
    const announced = sent.filter((m) => m.subject.includes('changed their own membership'));
    expect(announced.map((m) => m.to).sort()).toEqual([accomplice, DEMO.convener].sort());
    expect(announced[0].body).toMatch(/added .* as analyst/);

    expect((await who.admin.send('post', `${A}/blinding/request`, { note: 'I am sure it is fine to look now.' })).status).toBe(200);
    const ally = await signedIn(t.app, accomplice);
    const approve = await ally.send('post', `${A}/blinding/decision`, { approve: true, note: '' });
    expect(approve.status).toBe(403);
    expect(approve.body.error.message).toMatch(/gave you your convener role/);
    const l = await log();
    expect(l.state).toBe('unblinding_requested');
    expect(l.events.map((e) => e.action)).toEqual(['requested', 'member_added', 'member_added']);
    expect(l.events[1].note).toMatch(/added .* as analyst/);
    expect(await scanForBlindedCounts(t, SLUG, { ...who, ally }, 'the admin and the accomplice account')).toBeGreaterThan(300);
    await decline();
  });

  it('refuses a convener who invited an address of their own as analyst and requested with it', async () => {
    const alt = 'mira.other@lantern.example';
    expect((await who.convener.send('post', `${A}/invitations`, { email: alt, role: 'analyst' })).status).toBe(201);
    const invitation = (await mail()).find((m) => m.to === alt)!;
    const token = invitation.body.match(/\/invite\/([\w-]+)/)![1];
    const other = new Client(t.app);
    expect((await other.send('post', `/api/invitations/${token}/accept`, { name: 'Mira Other', password: PASSWORD })).status).toBe(201);
    expect((await other.send('post', `${A}/blinding/request`, { note: 'Ready, as far as I can see.' })).status).toBe(200);
    const approve = await who.convener.send('post', `${A}/blinding/decision`, { approve: true, note: '' });
    expect(approve.status).toBe(403);
    expect(approve.body.error.message).toMatch(/You (invited|gave) Mira Other/);
    expect((await log()).events.slice(0, 2).map((e) => e.action)).toEqual(['requested', 'member_joined']);
    expect(await scanForBlindedCounts(t, SLUG, { ...who, other }, 'the invited accomplice')).toBeGreaterThan(300);
    await decline();
  });

  it('refuses the requester, and a convener whose role is younger than the request', async () => {
    expect((await who.analyst.send('post', `${A}/blinding/request`, { note: 'The control regions are understood.' })).status).toBe(200);
    const late = 'late@lantern.example';
    await newAccount(who.admin, late, 'Lee Late');
    expect((await who.admin.send('post', `${A}/members`, { email: late, role: 'convener' })).status).toBe(201);
    const lateClient = await signedIn(t.app, late);
    const res = await lateClient.send('post', `${A}/blinding/decision`, { approve: true, note: '' });
    expect(res.status).toBe(403);
    expect(res.body.error.message).toMatch(/after unblinding was requested/);
    // a role changed after the request counts from the change
    const readerId = await userId(t, DEMO.reader);
    expect((await who.convener.send('patch', `${A}/members/${readerId}`, { role: 'convener' })).status).toBe(200);
    const promoted = await who.reader.send('post', `${A}/blinding/decision`, { approve: true, note: '' });
    expect(promoted.status).toBe(403);
    expect((await log()).events[0]).toMatchObject({ action: 'role_changed', note: expect.stringMatching(/from reader to convener/) });
    await decline();
  });

  it('needs two conveners when the analysis asks for two, each meeting the rules, and then unblinds', async () => {
    // the second convener has held the role since before the request, given by the admin
    const second = 'second@lantern.example';
    await newAccount(who.admin, second, 'Sam Second');
    expect((await who.admin.send('post', `${A}/members`, { email: second, role: 'convener' })).status).toBe(201);
    const secondClient = await signedIn(t.app, second);
    expect((await who.analyst.send('put', `${A}/blinding/settings`, { approvals: 2 })).status).toBe(403);
    const set = await who.convener.send('put', `${A}/blinding/settings`, { approvals: 2 });
    expect(set.status).toBe(200);
    expect(set.body).toMatchObject({ approvalsRequired: 2 });
    expect(set.body.events[0]).toMatchObject({ action: 'settings', by: 'Mira Quellbright' });
    expect((await who.convener.send('put', `${A}/blinding/settings`, { approvals: 3 })).status).toBe(400);

    await new Promise((r) => setTimeout(r, 5));
    expect((await who.analyst.send('post', `${A}/blinding/request`, { note: 'The control regions are understood.' })).status).toBe(200);
    expect((await who.convener.send('put', `${A}/blinding/settings`, { approvals: 1 })).status).toBe(409);
    const first = await who.convener.send('post', `${A}/blinding/decision`, { approve: true, note: 'Fine by me.' });
    expect(first.status).toBe(200);
    expect(first.body).toMatchObject({ state: 'unblinding_requested', approvalsGiven: 1 });
    expect((await who.convener.send('post', `${A}/blinding/decision`, { approve: true, note: '' })).status).toBe(409);
    expect(await scanForBlindedCounts(t, SLUG, { ...who, secondClient }, 'one of two approvals')).toBeGreaterThan(300);

    const final = await secondClient.send('post', `${A}/blinding/decision`, { approve: true, note: 'Agreed, with the open items of the checklist followed up.' });
    expect(final.status).toBe(200);
    expect(final.body.state).toBe('unblinded');
    // the scan can see a count once the analysis is unblinded: it is not blind itself
    expect((await who.reader.get(`${A}/model`)).text).toMatch(MARK);
  });
});

describe('rights before state', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => t.close());

  it('answers 403, not 409, to a caller who may not review an entry in whatever state it is', async () => {
    const [reader, analyst, convener] = await Promise.all([DEMO.reader, DEMO.analyst, DEMO.convener].map((e) => signedIn(t.app, e)));
    const [draft] = await t.database.client
      .query<{ key: string }>(`select e.key from entries e join analyses a on a.id = e.analysis_id where a.slug = '${SLUG}' and e.state = 'draft' order by e.id limit 1`)
      .then((r) => r.rows);
    expect(draft).toBeDefined();
    expect((await reader.send('post', `${A}/entries/${draft.key}/review`, { action: 'accept' })).status).toBe(403);
    expect((await analyst.send('post', `${A}/entries/${draft.key}/review`, { action: 'accept' })).status).toBe(403);
    // the convener may accept, but not a draft: now the state speaks
    expect((await convener.send('post', `${A}/entries/${draft.key}/review`, { action: 'accept' })).status).toBe(409);
  });
});
