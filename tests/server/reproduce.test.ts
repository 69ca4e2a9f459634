import { cpSync, mkdtempSync, mkdirSync, renameSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fits } from '../../server/db/schema';
import { canonicalJson, engineIdentity, inputSha256, resultDifferences, sourcesHash } from '../../server/runs/engine-identity';
import { createTestApp, DEMO, signedIn, type Client, type TestApp } from './helpers';

const C = '/api/analyses/cascade-rate';
const HEX64 = /^[0-9a-f]{64}$/;

describe('the engine’s identity and a fit’s input', () => {
  it('hashes the engine’s sources: any change, addition or rename changes it, where they live does not', () => {
    const root = mkdtempSync(path.join(tmpdir(), 'plumbline-sources-'));
    mkdirSync(path.join(root, 'engine/deep'), { recursive: true });
    writeFileSync(path.join(root, 'engine/a.ts'), 'export const a = 1;\n');
    writeFileSync(path.join(root, 'engine/deep/b.ts'), 'export const b = 2;\n');
    writeFileSync(path.join(root, 'engine/notes.md'), 'not a source\n');
    const first = sourcesHash(root, ['engine']);
    expect(first).toMatch(HEX64);
    const elsewhere = mkdtempSync(path.join(tmpdir(), 'plumbline-sources-'));
    cpSync(path.join(root, 'engine'), path.join(elsewhere, 'engine'), { recursive: true });
    expect(sourcesHash(elsewhere, ['engine'])).toBe(first);
    writeFileSync(path.join(root, 'engine/notes.md'), 'still not a source\n');
    expect(sourcesHash(root, ['engine'])).toBe(first);
    writeFileSync(path.join(root, 'engine/a.ts'), 'export const a = 2;\n');
    const changed = sourcesHash(root, ['engine']);
    expect(changed).not.toBe(first);
    renameSync(path.join(root, 'engine/deep/b.ts'), path.join(root, 'engine/deep/c.ts'));
    expect(sourcesHash(root, ['engine'])).not.toBe(changed);
    // the product's own: the package version and a hash of server/fit and shared
    expect(engineIdentity()).toEqual({ version: expect.stringMatching(/^\d+\.\d+\.\d+/), hash: expect.stringMatching(HEX64) });
  });

  it('hashes an input by its content, whatever the order of its keys', () => {
    expect(canonicalJson({ b: 1, a: { d: [2, { f: 1, e: 0 }], c: null } })).toBe('{"a":{"c":null,"d":[2,{"e":0,"f":1}]},"b":1}');
    const model = { name: 'm', regions: [{ key: 'SR', edges: [0, 1] }] };
    expect(inputSha256(model, { scan: true, impacts: 'full' })).toBe(inputSha256({ regions: [{ edges: [0, 1], key: 'SR' }], name: 'm' }, { impacts: 'full', scan: true }));
    expect(inputSha256(model, { scan: true, impacts: 'full' })).not.toBe(inputSha256(model, { scan: false, impacts: 'full' }));
    expect(inputSha256(model, {})).toMatch(HEX64);
  });

  it('finds every place two results differ, numbers, texts and structure, and skips what it is told', () => {
    const a = { status: 'converged', convergence: { seconds: 1.5, warnings: ['x'] }, nuisance: [{ pull: 0.1, impact: { up: 0.02, down: -0.01 } }], zero: 0 };
    expect(resultDifferences(a, structuredClone(a), () => false)).toEqual({ compared: 5, count: 0, listed: [] });
    const b = structuredClone(a);
    b.convergence.seconds = 2;
    b.nuisance[0].impact.down = -0.0100000001;
    b.convergence.warnings.push('y');
    (b as { zero: number }).zero = -0;
    const found = resultDifferences(a, b, (p) => p === 'convergence.seconds');
    expect(found.count).toBe(2);
    expect(found.listed).toEqual([
      { path: 'convergence.warnings.length', original: 1, rerun: 2 },
      { path: 'nuisance.0.impact.down', original: -0.01, rerun: -0.0100000001 },
    ]);
    expect(resultDifferences({ x: 1 }, { y: 1 }, () => false).listed).toEqual([
      { path: 'x', original: 1, rerun: null },
      { path: 'y', original: null, rerun: 1 },
    ]);
    expect(resultDifferences({ x: [1, 2, 3] }, { x: [1, 5, 6] }, () => false, 1)).toMatchObject({ count: 2, listed: [{ path: 'x.1' }] });
  });
});

describe('Reproduce', () => {
  let t: TestApp;
  let analyst: Client;
  let reader: Client;
  let original = 0;
  beforeAll(async () => {
    t = await createTestApp();
    [analyst, reader] = await Promise.all([DEMO.analyst, DEMO.reader].map((e) => signedIn(t.app, e)));
    const version = (await analyst.send('post', `${C}/versions`, { note: 'to reproduce' })).body.number;
    original = (await analyst.send('post', `${C}/fits`, { version, label: 'Observed', options: { dataset: 'observed', impacts: 'full', scan: true, limit: true } })).body.id;
    await t.fits.idle();
  });
  afterAll(async () => t.close());

  it('records the engine and the input of every fit it runs', async () => {
    const fit = (await reader.get(`${C}/fits/${original}`)).body;
    expect(fit.state).toBe('succeeded');
    expect(fit.provenance).toEqual({ engineVersion: engineIdentity().version, engineHash: engineIdentity().hash, inputSha256: expect.stringMatching(HEX64) });
    expect(fit.reproduces).toBeNull();
  });

  it('reruns the same version and options, and finds every number of the result identical', async () => {
    const started = await analyst.send('post', `${C}/fits/${original}/reproduce`, {});
    expect(started.status).toBe(202);
    expect(started.body).toMatchObject({ label: `Reproduces fit ${original}: Observed`, reproduces: original, state: 'queued' });
    await t.fits.idle();
    const rerun = (await reader.get(`${C}/fits/${started.body.id}`)).body;
    const first = (await reader.get(`${C}/fits/${original}`)).body;
    expect(rerun.options).toEqual(first.options);
    expect(rerun.provenance).toEqual(first.provenance);
    const reproduction = await reader.get(`${C}/fits/${started.body.id}/reproduction`);
    expect(reproduction.status).toBe(200);
    expect(reproduction.body).toMatchObject({ fitId: started.body.id, of: original, sameEngine: true, sameInput: true, count: 0, differences: [] });
    // the whole result is compared: impacts, scan, limits, correlations, information, yields
    expect(reproduction.body.compared).toBeGreaterThan(500);

    // a number changed in the stored rerun is found, and named by its place
    const [row] = await t.database.db.select({ result: fits.result }).from(fits).where(eq(fits.id, started.body.id));
    const result = structuredClone(row.result) as { nuisance: { pull: number }[] };
    const was = result.nuisance[2].pull;
    result.nuisance[2].pull = was + 1e-12;
    await t.database.db.update(fits).set({ result, inputSha256: '0'.repeat(64) }).where(eq(fits.id, started.body.id));
    const changed = (await reader.get(`${C}/fits/${started.body.id}/reproduction`)).body;
    expect(changed).toMatchObject({ sameInput: false, count: 1, differences: [{ path: 'nuisance.2.pull', original: was, rerun: was + 1e-12 }] });
  });

  it('refuses what cannot be reproduced or compared, saying why, and saves nothing', async () => {
    const before = (await reader.get(`${C}/fits`)).body.length;
    // a fit still waiting: its row, not handed to this process's runner
    const [{ analysisId, modelVersionId }] = await t.database.db.select().from(fits).where(eq(fits.id, original));
    const [{ id: queued }] = await t.database.db.insert(fits).values({ analysisId, modelVersionId, options: {} }).returning();
    const early = await analyst.send('post', `${C}/fits/${queued}/reproduce`, {});
    expect(early.status).toBe(409);
    expect(early.body.error.message).toMatch(/has not ended yet/);
    await t.fits.idle();
    const none = await reader.get(`${C}/fits/${original}/reproduction`);
    expect(none.status).toBe(404);
    expect((await analyst.send('post', `${C}/fits/999999/reproduce`, {})).status).toBe(404);
    expect((await analyst.send('post', `${C}/fits/abc/reproduce`, {})).status).toBe(400);
    expect((await reader.send('post', `${C}/fits/${original}/reproduce`, {})).status).toBe(403);
    expect((await reader.get(`${C}/fits`)).body.length).toBe(before + 1);
  });
});
