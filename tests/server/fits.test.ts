import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import { fitOptionsSchema } from '@shared/schemas/fit';
import { fitParts, fits, modelVersions } from '../../server/db/schema';
import { fitModel } from '../../server/fit';
import { INTERRUPTED } from '../../server/runs/fit-runner';
import { demoScenario } from '../../server/seed/scenario';
import { storedResult } from '../../server/db/fits.repository';
import { createTestApp, DEMO, signedIn, type Client, type TestApp } from './helpers';

const V = '/api/analyses/vireon-search';
const C = '/api/analyses/cascade-rate';

describe('model versions and fit runs', () => {
  let t: TestApp;
  let analyst: Client;
  let convener: Client;
  let reader: Client;
  /** starts a fit and waits for the job to end */
  async function runFit(base: string, version: number, options: object, label = '') {
    const started = await analyst.send('post', `${base}/fits`, { version, label, options });
    expect(started.status).toBe(202);
    expect(started.body.state).toBe('queued');
    await t.fits.idle();
    return (await analyst.get(`${base}/fits/${started.body.id}`)).body;
  }
  beforeAll(async () => {
    t = await createTestApp();
    [analyst, convener, reader] = await Promise.all([DEMO.analyst, DEMO.convener, DEMO.reader].map((e) => signedIn(t.app, e)));
  });
  afterAll(async () => t.close());

  it('freezes the current model into numbered versions; only a convener freezes one for approval', async () => {
    const first = await analyst.send('post', `${C}/versions`, { note: 'first look' });
    expect(first.status).toBe(201);
    expect(first.body).toMatchObject({ number: 1, note: 'first look', forApproval: false, createdBy: 'Otto Brannholm', counts: { regions: 2, processes: 3, systematics: 6 } });
    expect(first.body.sha256).toMatch(/^[0-9a-f]{64}$/);
    expect((await analyst.send('post', `${C}/versions`, { forApproval: true })).status).toBe(403);
    // entries under review and open questions: for approval only with a written reason, nothing saved without one
    const refused = await convener.send('post', `${C}/versions`, { note: 'for approval', forApproval: true });
    expect(refused.status).toBe(400);
    expect(refused.body.error.issues).toEqual([{ path: ['overrideReason'], message: 'Open items remain: give a written reason to freeze for approval nonetheless.' }]);
    expect(refused.body.error.message).toMatch(/continuum_shape: submitted for review/);
    expect((await reader.get(`${C}/versions`)).body).toHaveLength(1);
    const approval = await convener.send('post', `${C}/versions`, { note: 'for approval', forApproval: true, overrideReason: 'The theory entry is settled at the approval meeting.' });
    expect(approval.body).toMatchObject({ number: 2, forApproval: true, override: { reason: 'The theory entry is settled at the approval meeting.', by: 'Mira Quellbright' } });
    expect(approval.body.override.openItems).toContain('Every active register entry is accepted: continuum_shape: submitted for review');
    expect(approval.body.register).toEqual({ accepted: 4, submitted: 1, draft: 1 });
    expect(first.body.override).toBeNull();
    expect((await reader.send('post', `${C}/versions`, {})).status).toBe(403);
    expect((await reader.get(`${C}/versions`)).body.map((v: { number: number }) => v.number)).toEqual([2, 1]);
  });

  it('keeps a frozen version unchanged when the model changes afterwards', async () => {
    const [before] = await t.database.db.select().from(modelVersions).where(eq(modelVersions.number, 1));
    await analyst.send('put', `${C}/regions/CR/observed`, { observed: Array(10).fill(7) });
    const [after] = await t.database.db.select().from(modelVersions).where(eq(modelVersions.id, before.id));
    expect(after.model).toEqual(before.model);
    expect(after.sha256).toBe(before.sha256);
  });

  it('stores the engine\u2019s own numbers: the result equals a direct engine call on the frozen version', async () => {
    const options = { dataset: 'observed', impacts: 'full', scan: true, limit: true };
    const detail = await runFit(C, 1, options, 'observed, full impacts');
    expect(detail).toMatchObject({ state: 'succeeded', progress: 1, label: 'observed, full impacts', version: 1 });
    expect(detail.result.status).toBe('converged');
    const [version] = await t.database.db.select().from(modelVersions).where(eq(modelVersions.number, 1));
    const direct = await fitModel(exchangeModelSchema.parse(version.model), fitOptionsSchema.parse(options));
    expect(detail.result.summary.mu.value).toBe(direct.summary!.mu.value);
    expect(detail.result.summary.mu.interval68).toEqual(direct.summary!.mu.interval68);
    expect(detail.result.nuisance.map((n: { name: string; rank: number }) => [n.name, n.rank])).toEqual(direct.nuisance.map((n) => [n.name, n.rank]));
    expect(detail.headline).toEqual({ mu: direct.summary!.mu.value, muError: direct.summary!.mu.error, z: direct.summary!.discovery!.z, warnings: direct.convergence.warnings.length });
  });

  it('refuses an observed-data fit that includes a signal region while the analysis is blinded', async () => {
    await analyst.send('post', `${V}/versions`, {});
    const before = (await analyst.get(`${V}/fits`)).body.length;
    const res = await analyst.send('post', `${V}/fits`, { version: 1, options: { dataset: 'observed' } });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/blinded: a fit to observed data may not include a blinded region \(SR-core, SR-wide;/);
    expect(res.body.error.issues[0].path).toEqual(['options', 'dataset']);
    const excludedOne = await analyst.send('post', `${V}/fits`, { version: 1, options: { dataset: 'observed', excludeRegions: ['SR-core'] } });
    expect(excludedOne.status).toBe(400);
    expect((await analyst.get(`${V}/fits`)).body.length).toBe(before);
  });

  it('runs a control-region fit on observed data while blinded, and never sends the signal regions\u2019 counts', async () => {
    const detail = await runFit(V, 1, { dataset: 'observed', controlOnly: true, impacts: 'quick', expected: false });
    expect(detail.state).toBe('succeeded');
    const sr = detail.result.data.regions.filter((r: { region: string }) => r.region.startsWith('SR'));
    expect(sr.length).toBe(2);
    for (const r of sr) expect(r.values).toBeNull();
    const observed = demoScenario().analyses[0].model.regions.filter((r) => r.role === 'signal').flatMap((r) => r.observed!);
    const body = JSON.stringify((await reader.get(`${V}/fits/${detail.id}`)).body);
    // the signal-region counts, written as a run of consecutive bins, appear nowhere in the response
    for (const r of demoScenario().analyses[0].model.regions.filter((x) => x.role === 'signal')) expect(body).not.toContain(JSON.stringify(r.observed!.slice(0, 4)).slice(1, -1));
    expect(observed.length).toBeGreaterThan(0);
  });

  it('runs an Asimov fit of the blinded analysis with the signal regions', async () => {
    const detail = await runFit(V, 1, { dataset: 'asimov', asimovMu: 1, impacts: 'quick' });
    expect(detail.state).toBe('succeeded');
    expect(detail.result.summary.mu.value).toBeCloseTo(1, 4);
    expect(detail.result.model.regionsInFit).toEqual(['SR-core', 'SR-wide', 'CR-low', 'CR-shower']);
  });

  it('cancels a fit that is queued or running', async () => {
    const started = await analyst.send('post', `${V}/fits`, { version: 1, options: { dataset: 'asimov', impacts: 'full', scan: true, limit: true } });
    const res = await analyst.send('post', `${V}/fits/${started.body.id}/cancel`);
    expect(res.status).toBe(200);
    expect(res.body.state).toBe('cancelled');
    expect(res.body.failure).toMatch(/Cancelled by Otto Brannholm/);
    await t.fits.idle();
    expect((await analyst.get(`${V}/fits/${started.body.id}`)).body.result).toBeNull();
    const again = await analyst.send('post', `${V}/fits/${started.body.id}/cancel`);
    expect(again.status).toBe(409);
  });

  it('marks a fit that was running when the server stopped as failed with that reason, and runs the queued ones', async () => {
    const [version] = await t.database.db.select().from(modelVersions).where(eq(modelVersions.number, 1));
    const options = fitOptionsSchema.parse({ dataset: 'asimov', impacts: 'none', expected: false });
    const [running] = await t.database.db.insert(fits).values({ analysisId: version.analysisId, modelVersionId: version.id, options, state: 'running' }).returning();
    const [queued] = await t.database.db.insert(fits).values({ analysisId: version.analysisId, modelVersionId: version.id, options, state: 'queued' }).returning();
    await t.fits.recover();
    await t.fits.idle();
    const [r] = await t.database.db.select().from(fits).where(eq(fits.id, running.id));
    const [q] = await t.database.db.select().from(fits).where(eq(fits.id, queued.id));
    expect(r).toMatchObject({ state: 'failed', failure: INTERRUPTED });
    expect(q.state).toBe('succeeded');
  });

  it('shows a failed fit with its report and no numbers, and refuses to export numbers from it', async () => {
    // two floating normalisations on identical templates of one region: the data cannot tell them apart
    const admin = await signedIn(t.app, DEMO.admin);
    await admin.send('post', '/api/analyses', { slug: 'degenerate', name: 'Degenerate', blinded: false });
    await admin.send('post', '/api/analyses/degenerate/members', { email: DEMO.analyst, role: 'analyst' });
    const model = {
      format: 'plumbline.model',
      version: 1,
      name: 'degenerate',
      regions: [{ key: 'CR', role: 'control', observable: { name: 'x', unit: '' }, edges: [0, 1, 2], observed: [100, 80] }],
      processes: [
        { key: 'a', kind: 'background' },
        { key: 'b', kind: 'background' },
      ],
      floatingNorms: [
        { key: 'k_a', targets: [{ region: 'CR', process: 'a' }] },
        { key: 'k_b', targets: [{ region: 'CR', process: 'b' }] },
      ],
      templates: [
        { region: 'CR', process: 'a', nominal: [50, 40] },
        { region: 'CR', process: 'b', nominal: [50, 40] },
      ],
    };
    expect((await analyst.upload('/api/analyses/degenerate/exchange', { name: 'd.json', content: JSON.stringify(model) })).status).toBe(201);
    await analyst.send('post', '/api/analyses/degenerate/versions', {});
    const detail = await runFit('/api/analyses/degenerate', 1, { dataset: 'observed', controlOnly: true, impacts: 'full' });
    expect(detail.state).toBe('failed');
    expect(detail.failure).toMatch(/k_a.*k_b|k_b.*k_a/);
    expect(detail.headline).toBeNull();
    expect(detail.result).toMatchObject({ status: 'failed', summary: null, parameters: [], nuisance: [] });
    expect((await analyst.get(`/api/analyses/degenerate/fits/${detail.id}/parts/correlation`)).body).toBeNull();
    const csv = await analyst.get(`/api/analyses/degenerate/fits/${detail.id}/export?format=csv&table=nuisance`);
    expect(csv.status).toBe(409);
    expect(csv.body.error.message).toMatch(/failed .* it has no results to compare or export/);
  });

  it('compares two fits, largest change first', async () => {
    const a = await runFit(C, 1, { dataset: 'observed', impacts: 'quick' });
    const b = await runFit(C, 1, { dataset: 'asimov', asimovMu: 1, impacts: 'quick' });
    const res = await reader.get(`${C}/fits/${a.id}/compare/${b.id}`);
    expect(res.status).toBe(200);
    expect(res.body.mu).toEqual({ a: a.result.summary.mu.value, b: b.result.summary.mu.value, delta: b.result.summary.mu.value - a.result.summary.mu.value });
    const changes = res.body.parameters.map((p: { change: number }) => p.change);
    expect(changes).toEqual([...changes].sort((x, y) => y - x));
    expect(res.body.parameters.map((p: { name: string }) => p.name).sort()).toEqual(['cascade_eff', 'cascade_theory', 'continuum_shape', 'energy_scale', 'halo_norm', 'lumi']);
  });

  it('exports the result as JSON and its tables as CSV', async () => {
    const [fit] = (await reader.get(`${C}/fits`)).body.filter((f: { state: string }) => f.state === 'succeeded');
    const json = await reader.get(`${C}/fits/${fit.id}/export?format=json`);
    expect(json.headers['content-disposition']).toMatch(new RegExp(`cascade-rate-fit-${fit.id}\\.json`));
    expect(JSON.parse(json.text).result.status).toBe('converged');
    const nuisance = await reader.get(`${C}/fits/${fit.id}/export?format=csv&table=nuisance`);
    expect(nuisance.headers['content-type']).toMatch(/text\/csv/);
    const [header, ...rows] = nuisance.text.trim().split('\n');
    expect(header).toBe('name,group,pull,constraint,over_constrained,normalised_pull,quick_impact,postfit_up,postfit_down,prefit_up,prefit_down,rank');
    expect(rows).toHaveLength(6);
    const corr = (await reader.get(`${C}/fits/${fit.id}/export?format=csv&table=correlation`)).text.trim().split('\n');
    expect(corr.length).toBe(corr[0].split(',').length);
    const bad = await reader.get(`${C}/fits/${fit.id}/export?format=csv&table=everything`);
    expect(bad.status).toBe(400);
  });
});

describe('a finished fit\u2019s response', () => {
  it('serves the head and the three large parts separately; together they are the stored result', async () => {
    const t = await createTestApp();
    try {
      const analyst = await signedIn(t.app, DEMO.analyst);
      await analyst.send('post', `${C}/versions`, {});
      const started = await analyst.send('post', `${C}/fits`, { version: 1, options: { impacts: 'quick' } });
      // a fit that has not ended has no parts yet
      const early = await analyst.get(`${C}/fits/${started.body.id}/parts/correlation`);
      expect(early.status).toBe(409);
      expect(early.body.error.message).toMatch(/has not finished yet/);
      await t.fits.idle();
      const head = (await analyst.get(`${C}/fits/${started.body.id}`)).body.result;
      expect(Object.keys(head)).not.toContain('correlation');
      expect(Object.keys(head)).not.toContain('information');
      expect(Object.keys(head)).not.toContain('yields');
      const parts = Object.fromEntries(
        await Promise.all(['correlation', 'information', 'yields', 'gammas'].map(async (p) => [p, (await analyst.get(`${C}/fits/${started.body.id}/parts/${p}`)).body])),
      );
      const stored = await storedResult(t.database.db, started.body.id);
      const { gammas, ...large } = parts;
      expect({ ...head, ...large, gammas: { ...head.gammas, list: gammas } }).toEqual(stored);
      // the two largest parts are stored apart, compressed where the fit ran
      const rows = await t.database.db.select({ part: fitParts.part, encoding: fitParts.encoding }).from(fitParts).where(eq(fitParts.fitId, started.body.id));
      expect(rows.map((r) => `${r.part}:${r.encoding}`).sort()).toEqual(['correlation:gzip', 'information:gzip']);
      const wrong = await analyst.get(`${C}/fits/${started.body.id}/parts/everything`);
      expect(wrong.status).toBe(400);
      expect(wrong.body.error.message).toMatch(/correlation, information, yields, gammas/);
      expect((await analyst.get(`${C}/fits/999/parts/yields`)).status).toBe(404);
    } finally {
      await t.close();
    }
  });

  it('carries an ETag, answers 304 to it, and comes compressed to a client that accepts gzip', async () => {
    const t = await createTestApp();
    try {
      const analyst = await signedIn(t.app, DEMO.analyst);
      await analyst.send('post', `${C}/versions`, {});
      await analyst.send('post', `${V}/versions`, {});
      const started = await analyst.send('post', `${V}/fits`, { version: 1, options: { dataset: 'asimov', impacts: 'quick' } });
      await t.fits.idle();
      // the per-bin information is the largest part
      const path = `${V}/fits/${started.body.id}/parts/information`;
      const first = await analyst.get(path).set('accept-encoding', 'gzip');
      expect(first.status).toBe(200);
      expect(first.headers['content-encoding']).toBe('gzip');
      expect(first.body.length).toBeGreaterThan(0);
      const again = await analyst.get(path).set('if-none-match', first.headers.etag);
      expect(again.status).toBe(304);
      const plain = await analyst.get(path).set('accept-encoding', 'identity');
      expect(plain.headers['content-encoding']).toBeUndefined();
      expect(plain.body).toEqual(first.body);
      const brotli = await analyst.get(path).set('accept-encoding', 'gzip, deflate, br');
      expect(brotli.headers['content-encoding']).toBe('br');
      expect(brotli.body).toEqual(first.body);
      const head = await analyst.get(`${V}/fits/${started.body.id}`);
      expect(head.headers.etag).toMatch(/^"/);
      expect((await analyst.get(`${V}/fits/${started.body.id}`).set('if-none-match', head.headers.etag)).status).toBe(304);
    } finally {
      await t.close();
    }
  });
});
