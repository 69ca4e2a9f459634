import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import { fitOptionsSchema } from '@shared/schemas/fit';
import { toyRunSchema, type ToyRun } from '@shared/schemas/toys';
import { fits, modelVersions, toyRuns } from '../../server/db/schema';
import { prepareToys, runToys, summariseToys } from '../../server/fit/toys';
import { createTestApp, DEMO, signedIn, type Client, type TestApp } from './helpers';

const C = '/api/analyses/cascade-rate';
const V = '/api/analyses/vireon-search';

/** Pseudo-experiments through the API on the embedded database: the server's own threads run them. */
describe('toy runs of a fit', () => {
  let t: TestApp;
  let analyst: Client;
  let reader: Client;
  let fitId = 0;

  async function runToys_(base: string, fit: number, body: object): Promise<ToyRun> {
    const started = await analyst.send('post', `${base}/fits/${fit}/toys`, body);
    expect(started.status, JSON.stringify(started.body)).toBe(202);
    expect(started.body.state).toBe('queued');
    await t.toys.idle();
    const read = await reader.get(`${base}/toys/${started.body.id}`);
    expect(read.status).toBe(200);
    return toyRunSchema.parse(read.body);
  }

  beforeAll(async () => {
    t = await createTestApp();
    [analyst, reader] = await Promise.all([DEMO.analyst, DEMO.reader].map((e) => signedIn(t.app, e)));
    const version = (await analyst.send('post', `${C}/versions`, { note: 'for toys' })).body.number;
    const started = await analyst.send('post', `${C}/fits`, { version, options: { dataset: 'observed', impacts: 'none' } });
    await t.fits.idle();
    fitId = started.body.id;
  });
  afterAll(async () => t.close());

  it('runs toys at μ = 0 and stores the summary the engine computes for the same seed', async () => {
    const run = await runToys_(C, fitId, { count: 60, hypothesis: { kind: 'fixed-mu', mu: 0 }, seed: 99, label: 'background only' });
    expect(run).toMatchObject({ state: 'succeeded', progress: 1, count: 60, seed: 99, label: 'background only', workers: 1, failure: null });
    expect(run.summary!.requested).toBe(60);
    expect(run.summary!.q0!.expectedZeroFraction).toBeCloseTo(0.5, 12);

    // the engine, called directly on the frozen version and the fit's options
    const [fit] = await t.database.db.select().from(fits).where(eq(fits.id, fitId));
    const [version] = await t.database.db.select().from(modelVersions).where(eq(modelVersions.id, fit.modelVersionId));
    const model = exchangeModelSchema.parse(version.model);
    const options = fitOptionsSchema.parse(fit.options);
    const plan = prepareToys(model, options, { kind: 'fixed-mu', mu: 0 });
    const direct = summariseToys(plan, runToys(model, options, plan, 99, Array.from({ length: 60 }, (_, i) => i)), 60);
    expect(run.summary).toEqual(JSON.parse(JSON.stringify(direct)));
  });

  it('lists the runs of a fit, newest first, without their summaries', async () => {
    const second = await runToys_(C, fitId, { count: 10, seed: 5 });
    expect(second.hypothesis).toEqual({ kind: 'best-fit' });
    const list = await reader.get(`${C}/fits/${fitId}/toys`);
    expect(list.status).toBe(200);
    expect(list.body.map((r: ToyRun) => r.id)).toEqual([second.id, second.id - 1]);
    expect(list.body.every((r: ToyRun) => r.summary === null)).toBe(true);
  });

  it('refuses bad requests with what to fix, and saves nothing', async () => {
    const before = (await t.database.db.select().from(toyRuns)).length;
    const tooFew = await analyst.send('post', `${C}/fits/${fitId}/toys`, { count: 5 });
    expect(tooFew.status).toBe(400);
    expect(JSON.stringify(tooFew.body)).toContain('count');
    const badKind = await analyst.send('post', `${C}/fits/${fitId}/toys`, { count: 10, hypothesis: { kind: 'somewhere' } });
    expect(badKind.status).toBe(400);
    expect((await analyst.send('post', `${C}/fits/999999/toys`, { count: 10 })).status).toBe(404);
    expect((await reader.send('post', `${C}/fits/${fitId}/toys`, { count: 10 })).status).toBe(403);
    expect((await t.database.db.select().from(toyRuns)).length).toBe(before);
  });

  it('draws toys from a converged fit only', async () => {
    const [fit] = await t.database.db.select().from(fits).where(eq(fits.id, fitId));
    const [failed] = await t.database.db.insert(fits).values({ analysisId: fit.analysisId, modelVersionId: fit.modelVersionId, options: fit.options, state: 'failed', failure: 'did not converge' }).returning();
    const refused = await analyst.send('post', `${C}/fits/${failed.id}/toys`, { count: 10 });
    expect(refused.status).toBe(409);
    expect(refused.body.error.message).toMatch(/has not converged/);
  });

  it('fails a run at a μ outside its range with the reason, and shows no numbers', async () => {
    const run = await runToys_(C, fitId, { count: 10, hypothesis: { kind: 'fixed-mu', mu: 1000 } });
    expect(run.state).toBe('failed');
    expect(run.failure).toMatch(/No toys can be drawn: .*μ = 1000 lies outside the range of μ/);
    expect(run.summary).toBeNull();
  });

  it('cancels a run in progress; it keeps no summary', async () => {
    const started = await analyst.send('post', `${C}/fits/${fitId}/toys`, { count: 20_000, seed: 1 });
    expect(started.status).toBe(202);
    for (let i = 0; i < 200; i++) {
      const r = await reader.get(`${C}/toys/${started.body.id}`);
      if (r.body.state === 'running') break;
      await new Promise((r) => setTimeout(r, 50));
    }
    const cancelled = await analyst.send('post', `${C}/toys/${started.body.id}/cancel`);
    expect(cancelled.status).toBe(200);
    expect(cancelled.body).toMatchObject({ state: 'cancelled', failure: 'Cancelled by Otto Brannholm.', summary: null });
    expect((await analyst.send('post', `${C}/toys/${started.body.id}/cancel`)).status).toBe(409);
  });

  it('keeps toy runs to their analysis', async () => {
    const [run] = await t.database.db.select().from(toyRuns).limit(1);
    expect((await reader.get(`${V}/toys/${run.id}`)).status).toBe(404);
    expect((await reader.get(`${V}/fits/${fitId}/toys`)).status).toBe(404);
  });
});
