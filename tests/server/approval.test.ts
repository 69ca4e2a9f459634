import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ApprovalChecklist } from '@shared/schemas/approval';
import { entries, fits, modelVersions, questions } from '../../server/db/schema';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';

const V = '/api/analyses/vireon-search';
const C = '/api/analyses/cascade-rate';

describe('approval gates', () => {
  let t: TestApp;
  let analyst: Client;
  let convener: Client;
  let reader: Client;
  beforeAll(async () => {
    t = await createTestApp();
    [analyst, convener, reader] = await Promise.all([DEMO.analyst, DEMO.convener, DEMO.reader].map((e) => signedIn(t.app, e)));
  });
  afterAll(async () => t.close());

  const item = (c: ApprovalChecklist, key: string) => c.items.find((i) => i.key === key);

  it('records every entry’s review state and revision number in a frozen version', async () => {
    const frozen = await analyst.send('post', `${C}/versions`, { note: 'snapshot' });
    expect(frozen.status).toBe(201);
    const [row] = await t.database.db.select().from(modelVersions).where(eq(modelVersions.sha256, frozen.body.sha256));
    const now = await t.database.db.select({ key: entries.key, label: entries.label, state: entries.state, revision: entries.version }).from(entries).where(eq(entries.analysisId, row.analysisId));
    expect(row.register).toEqual(now.filter((e) => e.state !== 'retired').sort((a, b) => a.key.localeCompare(b.key)));
    expect(row.approvalOverride).toBeNull();
  });

  it('freezes for approval without a reason once every entry is accepted and no question is open', async () => {
    const before = await convener.get(`${C}/versions/approval-checklist`);
    expect(before.body.ready).toBe(false);
    expect(item(before.body, 'entries-accepted')!.open).toEqual(['cascade_theory: draft', 'continuum_shape: submitted for review']);
    const [{ analysisId }] = await t.database.db.select({ analysisId: entries.analysisId }).from(entries).where(eq(entries.key, 'cascade_theory')).limit(1);
    await t.database.db.update(entries).set({ state: 'accepted' }).where(eq(entries.analysisId, analysisId));
    await t.database.db.update(questions).set({ state: 'resolved' }).where(eq(questions.analysisId, analysisId));
    const after = (await reader.get(`${C}/versions/approval-checklist`)).body as ApprovalChecklist;
    expect(after.ready).toBe(true);
    const approval = await convener.send('post', `${C}/versions`, { note: 'for the approval meeting', forApproval: true });
    expect(approval.status).toBe(201);
    expect(approval.body).toMatchObject({ forApproval: true, override: null, register: { accepted: 6 } });
  });

  it('refuses an override reason on a version not for approval, naming the field, and saves nothing', async () => {
    const before = await dbSnapshot(t);
    const res = await analyst.send('post', `${C}/versions`, { overrideReason: 'because' });
    expect(res.status).toBe(400);
    expect(res.body.error.issues).toEqual([{ path: ['overrideReason'], message: 'Only with forApproval.' }]);
    expect(await dbSnapshot(t)).toEqual(before);
  });

  it('computes the unblinding checklist from the newest version’s fits, the pulls of the fit with μ hidden and the questions', async () => {
    let c = (await reader.get(`${V}/blinding/checklist`)).body as ApprovalChecklist;
    expect(c.version).toBeNull();
    expect(c.items.map((i) => [i.key, i.ok])).toEqual([
      ['entries-accepted', false],
      ['control-fit', false],
      ['expected-results', false],
      ['no-open-questions', true],
    ]);
    const version = (await analyst.send('post', `${V}/versions`, { note: 'for the checklist' })).body.number;
    const run = async (options: object) => {
      const started = await analyst.send('post', `${V}/fits`, { version, options });
      expect(started.status, JSON.stringify(started.body)).toBe(202);
      await t.fits.idle();
      return started.body.id as number;
    };
    const control = await run({ dataset: 'observed', controlOnly: true, impacts: 'none', expected: false });
    const asimov = await run({ dataset: 'asimov', impacts: 'none', expected: false });
    c = (await reader.get(`${V}/blinding/checklist`)).body;
    expect(c.version).toBe(version);
    expect(item(c, 'control-fit')).toMatchObject({ ok: true, detail: `Fit #${control} of version ${version}.` });
    expect(item(c, 'expected-results')).toMatchObject({ ok: true, detail: `Fit #${asimov} of version ${version}.` });
    expect(item(c, 'pulls-explained')).toBeUndefined();

    // the fit with μ hidden: a pull beyond ±2 (set in its stored result) needs a resolved question on that parameter
    const hidden = await run({ dataset: 'observed', hiddenMu: true, impacts: 'none', expected: false });
    const [row] = await t.database.db.select({ result: fits.result }).from(fits).where(eq(fits.id, hidden));
    const result = structuredClone(row.result) as { nuisance: { name: string; pull: number; fixed: boolean }[] };
    const pulled = result.nuisance.find((n) => !n.fixed)!;
    pulled.pull = -2.4;
    await t.database.db.update(fits).set({ result }).where(eq(fits.id, hidden));
    c = (await reader.get(`${V}/blinding/checklist`)).body;
    expect(item(c, 'pulls-explained')).toMatchObject({ ok: false, open: [`${pulled.name}: pull -2.40`] });
    const raised = await convener.send('post', `${V}/questions`, { entry: pulled.name, fitId: hidden, title: 'Why is it pulled?', body: 'The pull is beyond two standard deviations.' });
    expect(raised.status, JSON.stringify(raised.body)).toBe(201);
    c = (await reader.get(`${V}/blinding/checklist`)).body;
    expect(item(c, 'pulls-explained')!.ok).toBe(false);
    expect(item(c, 'no-open-questions')).toMatchObject({ ok: false, open: [`#${raised.body.id} on ${pulled.name} (open): Why is it pulled?`] });
    const [analysis] = await t.database.db.select({ id: questions.analysisId }).from(questions).where(eq(questions.id, raised.body.id));
    await t.database.db.update(questions).set({ state: 'resolved' }).where(and(eq(questions.id, raised.body.id), eq(questions.analysisId, analysis.id)));
    c = (await reader.get(`${V}/blinding/checklist`)).body;
    expect(item(c, 'pulls-explained')).toMatchObject({ ok: true, open: [] });
    expect(item(c, 'no-open-questions')!.ok).toBe(true);

    // the request records it as it stood
    const requested = await analyst.send('post', `${V}/blinding/request`, { note: 'The control regions are understood.' });
    expect(requested.status).toBe(200);
    expect(requested.body.events[0]).toMatchObject({ action: 'requested', checklist: { version, ready: false } });
    expect(item(requested.body.events[0].checklist, 'entries-accepted')!.ok).toBe(false);
  });
});
