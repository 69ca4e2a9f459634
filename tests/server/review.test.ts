import { desc, eq } from 'drizzle-orm';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { answers, fits, outbox, questions } from '../../server/db/schema';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';

const V = '/api/analyses/vireon-search';
const C = '/api/analyses/cascade-rate';

describe('the review loop', () => {
  let t: TestApp;
  let analyst: Client;
  let contact: Client;
  let convener: Client;
  let reader: Client;
  let seen = 0;
  /** mail sent since the last call, one row per recipient, oldest first */
  async function mail() {
    await t.mailer.idle();
    const rows = await t.database.db.select().from(outbox).orderBy(desc(outbox.id));
    const fresh = rows.filter((r) => r.id > seen);
    seen = Math.max(seen, ...rows.map((r) => r.id));
    return fresh.reverse().map((r) => ({ to: r.to, subject: r.subject, body: r.body }));
  }
  beforeAll(async () => {
    t = await createTestApp();
    [analyst, contact, convener, reader] = await Promise.all([DEMO.analyst, DEMO.contact, DEMO.convener, DEMO.reader].map((e) => signedIn(t.app, e)));
  });
  beforeEach(async () => {
    await mail();
  });
  afterAll(async () => t.close());

  describe('questions on parameters', () => {
    let id: number;
    it('lets a convener raise a question; the owner and the analysts are e-mailed, and the register marks the entry', async () => {
      const res = await convener.send('post', `${V}/questions`, { entry: 'flare_escale', title: 'Why so narrow?', body: 'The constraint is 0.3 of the prior.' });
      expect(res.status).toBe(201);
      expect(res.body).toMatchObject({ state: 'open', title: 'Why so narrow?', entry: { key: 'flare_escale', owner: { name: expect.any(String) } }, author: { name: 'Mira Quellbright' }, answers: 0, thread: [] });
      id = res.body.id;
      const sent = await mail();
      expect(sent.map((m) => m.to).sort()).toEqual([DEMO.contact, DEMO.analyst].sort());
      expect(sent[0].subject).toBe('[vireon-search] Question on flare_escale: Why so narrow?');
      expect(sent[0].body).toContain(`/a/vireon-search/questions/${id}`);
      const register = (await reader.get(`${V}/entries`)).body as { key: string; openQuestions: number }[];
      expect(register.find((e) => e.key === 'flare_escale')!.openQuestions).toBe(1);
      expect(register.find((e) => e.key === 'lumi')!.openQuestions).toBe(0);
    });

    it('refuses a bad question with a message and writes nothing', async () => {
      const before = await dbSnapshot(t);
      const empty = await convener.send('post', `${V}/questions`, { entry: 'flare_escale', title: '', body: 'x' });
      expect(empty.status).toBe(400);
      expect(empty.body.error.issues[0]).toMatchObject({ path: ['title'], message: expect.stringMatching(/at least 3 characters/) });
      const unknown = await convener.send('post', `${V}/questions`, { entry: 'no_such_entry', title: 'Title', body: 'x' });
      expect(unknown.status).toBe(404);
      expect(unknown.body.error.message).toMatch(/no_such_entry/);
      const foreignFit = await convener.send('post', `${V}/questions`, { entry: 'flare_escale', fitId: 999, title: 'Title', body: 'x' });
      expect(foreignFit.status).toBe(400);
      expect(foreignFit.body.error.issues).toEqual([{ path: ['fitId'], message: 'unknown fit' }]);
      // a region, a bin, a version that do not exist; two subjects; none
      const refusal = async (body: object) => (await analyst.send('post', `${V}/questions`, { title: 'Title', body: 'x', ...body })).body.error;
      expect(await refusal({ region: 'SR-nowhere' })).toMatchObject({ message: 'Unknown region: this analysis has no region "SR-nowhere".', issues: [{ path: ['region'] }] });
      expect((await refusal({ region: 'SR-core', bin: 999 })).issues).toEqual([{ path: ['bin'], message: expect.stringMatching(/^from 1 to \d+$/) }]);
      expect((await refusal({ bin: 2 })).issues).toEqual([{ path: ['region'], message: 'name the region of the bin' }]);
      expect((await refusal({ version: 99 })).issues).toEqual([{ path: ['version'], message: 'unknown version' }]);
      expect((await refusal({ entry: 'lumi', region: 'SR-core' })).issues).toEqual([{ path: ['region'], message: 'give either entry or region' }]);
      expect((await refusal({})).issues).toEqual([{ path: ['entry'], message: 'name what the question is about' }]);
      expect(await dbSnapshot(t)).toEqual(before);
      expect(await mail()).toEqual([]);
    });

    it('lets the owner answer: the question is answered and the convener who asked is e-mailed', async () => {
      const res = await contact.send('post', `${V}/questions/${id}/answers`, { body: 'The control region CR-shower has many events.' });
      expect(res.status).toBe(201);
      expect(res.body).toMatchObject({ state: 'answered', answers: 1, thread: [{ author: { name: expect.any(String) }, body: 'The control region CR-shower has many events.' }] });
      const sent = await mail();
      expect(sent.map((m) => m.to)).toEqual([DEMO.convener]);
      expect(sent[0].subject).toMatch(/Answer on flare_escale/);
    });

    it('filters by state, owner, group, fit and entry', async () => {
      const other = await convener.send('post', `${V}/questions`, { entry: 'lumi', title: 'Luminosity scan date?', body: 'Which scan?' });
      expect(other.status).toBe(201);
      const keys = async (q: string) => ((await reader.get(`${V}/questions${q}`)).body as { entry: { key: string } }[]).map((x) => x.entry.key);
      expect(await keys('')).toEqual(['lumi', 'flare_escale']);
      expect(await keys('?state=answered')).toEqual(['flare_escale']);
      expect(await keys('?state=open')).toEqual(['lumi']);
      expect(await keys('?group=calorimetry')).toEqual(['flare_escale']);
      expect(await keys('?entry=lumi')).toEqual(['lumi']);
      const juno = (await contact.get('/api/auth/me')).body.user.id;
      expect(await keys(`?owner=${juno}`)).toEqual(['flare_escale']);
      expect(await keys('?fit=12345')).toEqual([]);
      const bad = await reader.get(`${V}/questions?state=pending`);
      expect(bad.status).toBe(400);
      expect(bad.body.error.issues[0].path).toEqual(['state']);
    });

    it('lets the convener resolve and reopen; a resolved question takes no answers, and the owner hears of each step', async () => {
      const resolved = await convener.send('post', `${V}/questions/${id}/resolve`, { note: 'Understood: the data constrain it.' });
      expect(resolved.status).toBe(200);
      expect(resolved.body).toMatchObject({ state: 'resolved', resolvedBy: { name: 'Mira Quellbright' }, answers: 2 });
      expect((await mail()).map((m) => [m.to, m.subject])).toEqual([[DEMO.contact, '[vireon-search] Question on flare_escale resolved: Why so narrow?']]);
      expect((await reader.get(`${V}/entries`)).body.find((e: { key: string }) => e.key === 'flare_escale').openQuestions).toBe(0);
      const late = await contact.send('post', `${V}/questions/${id}/answers`, { body: 'One more thing' });
      expect(late.status).toBe(409);
      expect(late.body.error.message).toMatch(/resolved/);
      expect((await convener.send('post', `${V}/questions/${id}/resolve`, {})).status).toBe(409);
      expect((await analyst.send('post', `${V}/questions/${id}/reopen`, {})).status).toBe(403);
      const reopened = await convener.send('post', `${V}/questions/${id}/reopen`, {});
      expect(reopened.body).toMatchObject({ state: 'open', resolvedBy: null, resolvedAt: null });
      const [row] = await t.database.db.select().from(questions).where(eq(questions.id, id));
      expect(row.state).toBe('open');
      expect((await t.database.db.select().from(answers).where(eq(answers.questionId, id))).length).toBe(2);
    });
  });

  describe('blinding and unblinding', () => {
    it('runs the request, a decline and an approval, logging who and when, and e-mails each step', async () => {
      const short = await analyst.send('post', `${V}/blinding/request`, { note: 'ready' });
      expect(short.status).toBe(400);
      expect(short.body.error.issues[0].message).toMatch(/at least 10 characters/);
      expect((await convener.send('post', `${V}/blinding/request`, { note: 'The control regions are understood.' })).status).toBe(403);
      const none = await convener.send('post', `${V}/blinding/decision`, { approve: true });
      expect(none.status).toBe(409);
      expect(none.body.error.message).toMatch(/no unblinding request/);

      const requested = await analyst.send('post', `${V}/blinding/request`, { note: 'The control regions are understood.' });
      expect(requested.status).toBe(200);
      expect(requested.body).toMatchObject({ state: 'unblinding_requested', events: [{ action: 'requested', by: 'Otto Brannholm', note: 'The control regions are understood.' }] });
      const toConveners = await mail();
      expect(toConveners.map((m) => m.to)).toEqual([DEMO.convener]);
      expect(toConveners[0].subject).toBe('[vireon-search] Unblinding requested by Otto Brannholm');
      expect((await analyst.send('post', `${V}/blinding/request`, { note: 'The control regions are understood.' })).status).toBe(409);
      expect((await reader.get(`/api/analyses/vireon-search`)).body.analysis.blinding).toBe('unblinding_requested');

      const before = await dbSnapshot(t);
      const bare = await convener.send('post', `${V}/blinding/decision`, { approve: false });
      expect(bare.status).toBe(400);
      expect(bare.body.error.message).toMatch(/Say why you decline/);
      expect(await dbSnapshot(t)).toEqual(before);
      const declined = await convener.send('post', `${V}/blinding/decision`, { approve: false, note: 'After the approval meeting.' });
      expect(declined.body.state).toBe('blinded');
      expect((await mail())[0].subject).toBe('[vireon-search] Unblinding declined by Mira Quellbright');
      // still blinded: the signal regions' counts stay on the server
      const model = (await analyst.get(`${V}/model`)).body;
      expect(model.regions.filter((r: { role: string }) => r.role === 'signal').map((r: { observed: unknown }) => r.observed)).toEqual([null, null]);

      await analyst.send('post', `${V}/blinding/request`, { note: 'The approval meeting agreed.' });
      await mail();
      // the checklist has open items here (no frozen version): approving needs a note, and nothing changes without one
      const before2 = await dbSnapshot(t);
      const noNote = await convener.send('post', `${V}/blinding/decision`, { approve: true });
      expect(noNote.status).toBe(400);
      expect(noNote.body.error.issues).toEqual([{ path: ['note'], message: 'Approving with open items needs a note.' }]);
      expect(await dbSnapshot(t)).toEqual(before2);
      const approved = await convener.send('post', `${V}/blinding/decision`, { approve: true, note: 'The approval meeting agreed on the open items.' });
      expect(approved.body.state).toBe('unblinded');
      expect(approved.body.events[0].checklist).toMatchObject({ ready: false, version: null });
      expect(approved.body.events.map((e: { action: string; by: string }) => [e.action, e.by])).toEqual([
        ['approved', 'Mira Quellbright'],
        ['requested', 'Otto Brannholm'],
        ['declined', 'Mira Quellbright'],
        ['requested', 'Otto Brannholm'],
      ]);
      const told = await mail();
      expect(told.map((m) => m.to)).toEqual(expect.arrayContaining([DEMO.analyst, DEMO.convener]));
      expect(told[0].subject).toBe('[vireon-search] Unblinding approved by Mira Quellbright');
      // unblinded: the counts are shown, and an observed fit may include the signal regions
      const open = (await reader.get(`${V}/model`)).body;
      expect(open.regions.filter((r: { role: string }) => r.role === 'signal').every((r: { observed: unknown }) => Array.isArray(r.observed))).toBe(true);
      const version = (await analyst.send('post', `${V}/versions`, {})).body.number;
      expect((await analyst.send('post', `${V}/fits`, { version, options: { dataset: 'observed', impacts: 'none' } })).status).toBe(202);
      await t.fits.idle();
    });
  });

  describe('the diagnosis of a parameter', () => {
    it('explains the demo\u2019s over-constrained halo_norm with numbers that agree with the stored fit', async () => {
      const version = (await analyst.send('post', `${C}/versions`, {})).body.number;
      const started = await analyst.send('post', `${C}/fits`, { version, options: { dataset: 'observed', impacts: 'quick' } });
      await t.fits.idle();
      const fitId = started.body.id;
      const res = await reader.get(`${C}/fits/${fitId}/diagnosis/halo_norm`);
      expect(res.status).toBe(200);
      const d = res.body;
      const stored = (await reader.get(`${C}/fits/${fitId}`)).body.result;
      const report = stored.nuisance.find((n: { name: string }) => n.name === 'halo_norm');
      expect(d.pull).toBe(report.pull);
      expect(d.constraint).toBe(report.constraint);
      expect(d.overConstrained).toBe(true);
      expect(d.parameter).toMatchObject({ name: 'halo_norm', entry: { key: 'halo_norm', owner: 'Otto Brannholm' } });
      // the shares add up to the whole: regions plus the prior
      const shares = d.information.regions.reduce((s: number, r: { share: number }) => s + r.share, 0) + d.information.constraint / d.information.total;
      expect(shares).toBeCloseTo(1, 10);
      const information = (await reader.get(`${C}/fits/${fitId}/parts/information`)).body.find((x: { parameter: string }) => x.parameter === 'halo_norm');
      expect(d.information.total).toBeCloseTo(information.total, 9);
      for (const r of d.information.regions)
        for (const b of r.bins) {
          expect(b.precision).toBeCloseTo(Math.sqrt(b.expected), 12);
          expect(b.ratio).toBeCloseTo(Math.max(Math.abs(b.up), Math.abs(b.down)) / b.precision, 12);
        }
      expect(d.scan.points.length).toBeGreaterThan(5);
      expect(d.scan.crossings68.low).toBeLessThan(d.value);
      expect(d.summary[0]).toMatchObject({ evidence: 'pull', text: expect.stringMatching(/over-constrained/) });
      expect(d.summary.map((c: { evidence: string }) => c.evidence)).toEqual(expect.arrayContaining(['regions', 'bins', 'width']));
      expect((await reader.get(`${C}/fits/${fitId}/diagnosis/no_such_parameter`)).status).toBe(404);
      expect((await reader.get(`${C}/fits/${fitId}/diagnosis/mu`)).status).toBe(404);
    });

    it('refuses a fit that did not succeed', async () => {
      // the newest fit is the cascade-rate one of the test above
      const [any] = await t.database.db.select().from(fits).orderBy(desc(fits.id)).limit(1);
      // a fit cancelled before it started: no result
      const [cancelled] = await t.database.db.insert(fits).values({ analysisId: any.analysisId, modelVersionId: any.modelVersionId, options: {}, state: 'cancelled' }).returning();
      const res = await reader.get(`${C}/fits/${cancelled.id}/diagnosis/halo_norm`);
      expect(res.status).toBe(409);
      expect(res.body.error.message).toMatch(/nothing to diagnose/);
    });
  });
});
