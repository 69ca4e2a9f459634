import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';
import { MARK, markSignalCounts, scanForBlindedCounts } from './blinded-scan';

const V = '/api/analyses/vireon-search';
const C = '/api/analyses/cascade-rate';

describe('fit variants and the review programme through the API', () => {
  let t: TestApp;
  let analyst: Client;
  let reader: Client;
  let version: number;
  beforeAll(async () => {
    t = await createTestApp();
    [analyst, reader] = await Promise.all([DEMO.analyst, DEMO.reader].map((e) => signedIn(t.app, e)));
    version = (await analyst.send('post', `${V}/versions`, { note: 'review' })).body.number;
  });
  afterAll(async () => t.close());

  it('refuses bad variants with 400 naming the field, and stores nothing', async () => {
    const before = await dbSnapshot(t);
    const cases: [object, (string | number)[], RegExp][] = [
      [{ dataset: 'asimov', hold: [{ parameter: 'no_such', value: 0 }] }, ['options', 'hold', 0, 'parameter'], /there is no parameter "no_such"/],
      [{ dataset: 'asimov', holdGroups: ['nobody'] }, ['options', 'holdGroups', 0], /there is no group "nobody"/],
      [{ dataset: 'asimov', decorrelate: [{ parameter: 'no_such', by: 'region' }] }, ['options', 'decorrelate', 0, 'parameter'], /no systematic "no_such"/],
      [{ dataset: 'asimov', expectedFrom: 'background' }, ['options', 'expectedFrom'], /only once the analysis is unblinded/],
      [{ dataset: 'asimov', statOnly: true, hold: [{ parameter: 'mu', value: 1 }, { parameter: 'k_continuum', value: 1 }, { parameter: 'k_showerpair', value: 1 }] }, ['options', 'hold'], /every parameter is held/],
      [{ dataset: 'observed' }, ['options', 'dataset'], /may not include a blinded region/],
    ];
    for (const [options, path, message] of cases) {
      const res = await analyst.send('post', `${V}/fits`, { version, options });
      expect({ options, status: res.status }).toEqual({ options, status: 400 });
      expect(res.body.error.issues.map((i: { path: unknown }) => i.path)).toContainEqual(path);
      expect(res.body.error.message).toMatch(message);
    }
    expect(await dbSnapshot(t)).toBe(before);
  });

  it('runs a fit of every region with μ hidden while blinded, and sends pulls and constraints but nothing that reveals μ̂', async () => {
    const started = await analyst.send('post', `${V}/fits`, { version, options: { dataset: 'observed', hiddenMu: true, impacts: 'full', scan: true } });
    expect(started.status).toBe(202);
    await t.fits.idle();
    const head = (await reader.get(`${V}/fits/${started.body.id}`)).body;
    expect(head.state).toBe('succeeded');
    expect(head.headline).toBeNull();
    expect(head.withheld).toBeNull();
    expect(head.result.summary).toBeNull();
    expect(head.result.scan).toBeNull();
    expect(head.result.groupedImpacts).toEqual([]);
    expect(head.result.parameters.some((p: { kind: string }) => p.kind === 'poi')).toBe(false);
    expect(head.result.nuisance.length).toBeGreaterThan(10);
    expect(head.result.nuisance.every((n: { postfitImpact: unknown; quickImpact: unknown; rank: unknown }) => n.postfitImpact === null && n.quickImpact === null && n.rank === null)).toBe(true);
    const correlation = (await reader.get(`${V}/fits/${started.body.id}/parts/correlation`)).body;
    expect(correlation.names).not.toContain('mu');
    const yields = (await reader.get(`${V}/fits/${started.body.id}/parts/yields`)).body;
    expect(yields.postfit.map((r: { region: string }) => r.region)).not.toContain('SR-core');
    // no toys, no summary table: both would show μ̂
    expect((await analyst.send('post', `${V}/fits/${started.body.id}/toys`, { count: 10, hypothesis: { kind: 'best-fit' }, seed: 1 })).status).toBe(409);
    expect((await reader.get(`${V}/fits/${started.body.id}/export?format=csv&table=summary`)).status).toBe(409);
    expect((await reader.get(`${V}/fits/${started.body.id}/export?format=csv&table=nuisance`)).status).toBe(200);
  });

  it('queues the standard review set on a version and shows it side by side', async () => {
    const res = await analyst.send('post', `${V}/review-sets`, { version, label: 'before unblinding' });
    expect(res.status).toBe(202);
    const variants = res.body.members.map((m: { variant: string }) => m.variant);
    expect(variants.slice(0, 5)).toEqual(['control-only', 'expected-1', 'expected-0', 'hidden-mu', 'stat-only']);
    expect(variants.filter((v: string) => v.startsWith('held:')).length).toBeGreaterThanOrEqual(3);
    await t.fits.idle();
    const set = (await reader.get(`${V}/review-sets/${res.body.id}`)).body;
    expect(set.state).toBe('succeeded');
    expect(set.progress).toBe(1);
    const row = (v: string) => set.comparison.rows.find((r: { variant: string }) => r.variant === v);
    expect(row('hidden-mu')).toMatchObject({ mu: null, status: 'converged', note: 'μ hidden: pulls and constraints only' });
    expect(set.comparison.rows.every((r: { status: string | null }) => r.status === 'converged')).toBe(true);
    expect(row('expected-1').mu.value).toBeCloseTo(1, 4);
    expect(row('expected-1').expectedFrom).toBe('control');
    expect(row('expected-0').limit.observed).toBeGreaterThan(0);
    expect(row('stat-only').mu.error).toBeLessThan(row('expected-1').mu.error);
    // a pull and constraint per parameter and member; held members show their held parameters as held
    const p = set.comparison.parameters[0];
    expect(p.cells).toHaveLength(set.members.length);
    expect(set.comparison.breakdown[0].variant).toBe('expected-1');
    expect(set.comparison.breakdown[0].rows.map((r: { group: string }) => r.group)).toEqual(expect.arrayContaining(['all systematics', 'template statistics']));
    expect((await reader.get(`${V}/review-sets`)).body[0].id).toBe(res.body.id);
  });

  it('runs the checks of a parameter from its diagnosis, linked back to it', async () => {
    const fit = await analyst.send('post', `${C}/fits`, { version: (await analyst.send('post', `${C}/versions`, {})).body.number, options: { dataset: 'observed', impacts: 'none' } });
    await t.fits.idle();
    const checks = await analyst.send('post', `${C}/fits/${fit.body.id}/diagnosis/halo_norm/checks`, {});
    expect(checks.status).toBe(202);
    expect(checks.body.map((c: { variant: string }) => c.variant)).toEqual(['decorrelate:halo_norm', expect.stringMatching(/^partner:/)]);
    await t.fits.idle();
    const diagnosis = (await reader.get(`${C}/fits/${fit.body.id}/diagnosis/halo_norm`)).body;
    expect(diagnosis.checks.map((c: { state: string }) => c.state)).toEqual(['succeeded', 'succeeded']);
    const checkFit = (await reader.get(`${C}/fits/${checks.body[0].id}`)).body;
    // each check names the fit and parameter it checks, so its page links back to the diagnosis
    expect(checkFit.checkOf).toEqual({ fitId: fit.body.id, parameter: 'halo_norm' });
    expect((await reader.get(`${C}/fits/${fit.body.id}`)).body.checkOf).toBeNull();
    const split = checkFit.result;
    expect(split.variant.decorrelation[0].parameter).toBe('halo_norm');
    expect(split.variant.decorrelation[0].parts.length).toBeGreaterThan(1);
  });

});

describe('blinding holds through the variants', () => {
  it('sends no signal-region count to anyone after a hidden-μ fit, a review set and their diagnoses', async () => {
    const t = await createTestApp();
    try {
      await markSignalCounts(t, 'vireon-search');
      const analyst = await signedIn(t.app, DEMO.analyst);
      const version = (await analyst.send('post', `${V}/versions`, {})).body.number;
      expect((await analyst.send('post', `${V}/fits`, { version, options: { dataset: 'observed', hiddenMu: true, impacts: 'quick' } })).status).toBe(202);
      expect((await analyst.send('post', `${V}/review-sets`, { version })).status).toBe(202);
      await t.fits.idle();
      const who = Object.fromEntries(await Promise.all(['reader', 'analyst', 'convener', 'contact', 'admin'].map(async (k) => [k, await signedIn(t.app, DEMO[k as keyof typeof DEMO])])));
      expect(await scanForBlindedCounts(t, 'vireon-search', who, 'the variants and the review set')).toBeGreaterThan(300);
      // the scan sees the marked counts where they may be seen: the model to no one, an upload response to no one
      expect(MARK.test(JSON.stringify((await analyst.get(`${V}/model`)).body))).toBe(false);
    } finally {
      await t.close();
    }
  }, 120_000);
});
