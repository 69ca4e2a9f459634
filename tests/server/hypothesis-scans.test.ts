import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import { hypothesisScanSchema, type HypothesisScan } from '@shared/schemas/hypothesis-scan';
import { scanHypotheses } from '../../server/fit';
import { modelForScan } from '../../server/runs/hypothesis-scan-runner';
import { createTestApp, DEMO, signedIn, type Client, type TestApp } from './helpers';
import { markSignalCounts, scanForBlindedCounts } from './blinded-scan';

const C = '/api/analyses/cascade-rate';
const V = '/api/analyses/vireon-search';

/** Scans over signal hypotheses through the API: the demo's blinded search declares 30 masses. */
describe('scans over signal hypotheses', () => {
  let t: TestApp;
  let analyst: Client;
  let reader: Client;
  let version = 0;

  beforeAll(async () => {
    t = await createTestApp();
    [analyst, reader] = await Promise.all([DEMO.analyst, DEMO.reader].map((e) => signedIn(t.app, e)));
    version = (await analyst.send('post', `${V}/versions`, { note: 'for scans' })).body.number;
  });
  afterAll(async () => t.close());

  it('refuses an observed scan while the analysis is blinded, naming the field and saving nothing', async () => {
    const res = await analyst.send('post', `${V}/hypothesis-scans`, { version, options: { dataset: 'observed' } });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/blinded/);
    expect(res.body.error.issues).toEqual(expect.arrayContaining([expect.objectContaining({ path: ['options', 'dataset'] })]));
    expect((await reader.get(`${V}/hypothesis-scans`)).body).toEqual([]);
  });

  it('refuses a version without hypotheses, toys on an expected scan, and a reader', async () => {
    const cv = (await analyst.send('post', `${C}/versions`, { note: 'no hypotheses' })).body.number;
    const none = await analyst.send('post', `${C}/hypothesis-scans`, { version: cv, options: { dataset: 'observed' } });
    expect(none.status).toBe(400);
    expect(none.body.error.message).toMatch(/declares no signal hypotheses/);
    const toys = await analyst.send('post', `${V}/hypothesis-scans`, { version, options: { dataset: 'expected', trialsToys: 100 } });
    expect(toys.status).toBe(400);
    expect(toys.body.error.issues).toEqual(expect.arrayContaining([expect.objectContaining({ path: ['options', 'trialsToys'] })]));
    const unknown = await analyst.send('post', `${V}/hypothesis-scans`, { version, options: { dataset: 'expected', toys: 3 } });
    expect(unknown.status).toBe(400);
    const byReader = await reader.send('post', `${V}/hypothesis-scans`, { version, options: { dataset: 'expected' } });
    expect(byReader.status).toBe(403);
  });

  it('runs the expected scan of the blinded search: expected numbers for every mass, no observed one, the same as the engine given only the control regions', async () => {
    const started = await analyst.send('post', `${V}/hypothesis-scans`, { version, label: 'expected', options: { dataset: 'expected' } });
    expect(started.status, JSON.stringify(started.body)).toBe(202);
    await t.scans.idle();
    const read = await reader.get(`${V}/hypothesis-scans/${started.body.id}`);
    expect(read.status).toBe(200);
    const scan: HypothesisScan = hypothesisScanSchema.parse(read.body);
    expect(scan).toMatchObject({ state: 'succeeded', hypotheses: 30, withheld: null, label: 'expected' });
    const result = scan.result!;
    expect(result.parameter).toEqual({ name: 'mass', unit: 'GeV' });
    expect(result.points).toHaveLength(30);
    expect(result.global).toBeNull();
    for (const p of result.points) {
      expect(p.mu).toBeNull();
      expect(p.local).toBeNull();
      if (p.status === 'converged') {
        expect(p.expected!.z).toBeGreaterThan(0);
        expect(p.limit!.observed).toBeNull();
        expect(p.limit!.expected!.median).toBeGreaterThan(0);
      }
    }
    expect(result.points.filter((p) => p.status === 'converged').length).toBeGreaterThanOrEqual(28);

    // the engine itself on the version with every region but the control regions stripped of its data
    const versions = await reader.get(`${V}/versions`);
    expect(versions.status).toBe(200);
    const rows = await t.database.client.query<{ model: unknown; regions: string[] }>(
      `select v.model, s.regions_in_fit as regions from hypothesis_scans s join model_versions v on v.id = s.model_version_id where s.id = ${started.body.id}`,
    );
    const model = exchangeModelSchema.parse(rows.rows[0].model);
    const regions = rows.rows[0].regions;
    expect(regions.length).toBeGreaterThan(0);
    for (const key of regions) expect(model.regions.find((r) => r.key === key)!.role).toBe('control');
    const direct = await scanHypotheses(modelForScan(model, regions), { dataset: 'expected', seed: scan.options.seed });
    expect(result.points.map((p) => p.expected?.z ?? null)).toEqual(direct.points.map((p) => p.expected?.z ?? null));
  }, 240_000);

  it('sends no signal-region count of the blinded search in any response once an expected scan of a version holding them has run', async () => {
    await markSignalCounts(t, 'vireon-search');
    const marked = (await analyst.send('post', `${V}/versions`, { note: 'marked counts' })).body.number;
    const started = await analyst.send('post', `${V}/hypothesis-scans`, { version: marked, options: { dataset: 'expected', limit: false } });
    expect(started.status, JSON.stringify(started.body)).toBe(202);
    await t.scans.idle();
    expect((await reader.get(`${V}/hypothesis-scans/${started.body.id}`)).body.state).toBe('succeeded');
    expect(await scanForBlindedCounts(t, 'vireon-search', { analyst, reader }, 'an expected scan')).toBeGreaterThan(100);
  }, 300_000);

  it('gives the engine no observed count outside the regions a scan may read', () => {
    const model = exchangeModelSchema.parse({
      format: 'plumbline.model',
      version: 2,
      name: 'm',
      regions: [
        { key: 'SR', role: 'signal', observable: { name: 'x', unit: '' }, edges: [0, 1], observed: [7] },
        { key: 'CR', role: 'control', observable: { name: 'x', unit: '' }, edges: [0, 1], observed: [9] },
      ],
      processes: [{ key: 'b', kind: 'background' }],
      templates: [
        { region: 'SR', process: 'b', nominal: [5] },
        { region: 'CR', process: 'b', nominal: [8] },
      ],
    });
    const stripped = modelForScan(model, ['CR']);
    expect(stripped.regions.map((r) => r.observed)).toEqual([undefined, [9]]);
    expect(JSON.stringify(stripped)).not.toContain('[7]');
  });
});
