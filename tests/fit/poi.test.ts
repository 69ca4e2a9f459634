import { execFile } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { EigenvalueDecomposition, inverse, Matrix } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { exchangeModelSchema, type ExchangeModel, type ExchangeModelInput } from '@shared/schemas/exchange';
import { fitResultSchema, profileContourSchema } from '@shared/schemas/fit';
import { FitInputError, contourLines, fitModel, hideMu, profileContour, syntheticModel, variantIssues } from '../../server/fit';
import { expectClose } from './helpers';

const axis = { name: 'x', unit: '' };

/** One channel: a signal region and a control region fixing its background's normalisation, and a scale systematic. */
function channel(c: number, s: number, b: number, n: number, m: number) {
  return {
    regions: [
      { key: `SR${c}`, role: 'signal' as const, observable: axis, edges: [0, 1, 2], observed: [n, Math.round(n * 0.7)] },
      { key: `CR${c}`, role: 'control' as const, observable: axis, edges: [0, 1], observed: [m] },
    ],
    templates: [
      { region: `SR${c}`, process: `sig${c}`, nominal: [s, 0.4 * s] },
      { region: `SR${c}`, process: `bkg${c}`, nominal: [b, 0.8 * b] },
      { region: `CR${c}`, process: `bkg${c}`, nominal: [5 * b] },
    ],
    floatingNorm: { key: `k${c}`, targets: [{ region: `SR${c}`, process: `bkg${c}` }, { region: `CR${c}`, process: `bkg${c}` }] },
    systematic: { key: `syst${c}`, effects: [{ region: `SR${c}`, process: `sig${c}`, kind: 'scale' as const, up: 1.05, down: 0.96 }] },
    processes: [
      { key: `sig${c}`, kind: 'signal' as const },
      { key: `bkg${c}`, kind: 'background' as const },
    ],
  };
}

function model(channels: ReturnType<typeof channel>[], extra: Partial<ExchangeModelInput> = {}): ExchangeModel {
  return exchangeModelSchema.parse({
    format: 'plumbline.model',
    version: 2,
    name: 'channels',
    regions: channels.flatMap((c) => c.regions),
    processes: channels.flatMap((c) => c.processes),
    floatingNorms: channels.map((c) => c.floatingNorm),
    templates: channels.flatMap((c) => c.templates),
    systematics: channels.map((c) => c.systematic),
    ...extra,
  });
}

const one = channel(1, 12, 30, 45, 148);
const two = channel(2, 8, 50, 54, 256);
const combined = () => model([one, two], { parametersOfInterest: [{ key: 'mu2', targets: [{ region: 'SR2', process: 'sig2' }] }] });

describe('parameters of interest besides μ', () => {
  // Internal consistency: two channels that share no parameter give a likelihood that factorises,
  // so each parameter of interest of the joint fit is that of its channel fitted alone (μ there).
  it('on disjoint channels give the value, σ and q = 1 interval of each channel fitted alone', async () => {
    const joint = fitResultSchema.parse(await fitModel(combined(), { impacts: 'none', expected: false }));
    expect(joint.parameters.map((p) => `${p.name}:${p.kind}`)).toEqual(['mu:poi', 'k1:normalisation', 'k2:normalisation', 'mu2:poi', 'syst1:nuisance', 'syst2:nuisance']);
    expect(joint.poi!.list.map((p) => p.name)).toEqual(['mu', 'mu2']);
    for (const [k, ch] of [one, two].entries()) {
      const alone = await fitModel(model([ch]), { impacts: 'none', expected: false, scan: true });
      const mu = alone.summary!.mu;
      const p = joint.poi!.list[k];
      expectClose(p.value, mu.value, 1e-6, 1e-7);
      expectClose(p.error, mu.error!, 1e-6);
      expectClose(p.interval68!.low, mu.value + mu.interval68!.low!, 0, 1e-5 * mu.error!);
      expectClose(p.interval68!.high, mu.value + mu.interval68!.high!, 0, 1e-5 * mu.error!);
    }
    // no shared parameter: the two are uncorrelated
    expect(joint.poi!.correlation.names).toEqual(['mu', 'mu2']);
    expect(Math.abs(joint.poi!.correlation.values[1])).toBeLessThan(1e-6);
  });

  it('are flagged in the parameter table and leave μ’s own summary in place', async () => {
    const r = await fitModel(combined(), { impacts: 'none', expected: false });
    expect(r.parameters.find((p) => p.name === 'mu2')!.kind).toBe('poi');
    expect(r.summary!.mu.value).toBe(r.poi!.list[0].value);
    expect(r.summary!.mu.error).toBe(r.poi!.list[0].error);
  });

  // docs/likelihood.md §9.6: a fit with μ hidden keeps nothing computed from a signal strength.
  it('are hidden with μ, and may be held like any parameter', async () => {
    const r = await fitModel(combined(), { impacts: 'none', expected: false });
    const hidden = hideMu(r);
    expect('poi' in hidden).toBe(false);
    expect(hidden.parameters.some((p) => p.kind === 'poi')).toBe(false);
    expect(hidden.correlation!.names).toEqual(['k1', 'k2', 'syst1', 'syst2']);
    expect(hidden.information.map((i) => i.parameter)).not.toContain('mu2');
    const options = { hold: [{ parameter: 'mu2', value: 1 }], holdGroups: [], statOnly: false, decorrelate: [], controlOnly: false };
    expect(variantIssues(combined(), options)).toEqual([]);
    const held = await fitModel(combined(), { impacts: 'none', expected: false, hold: [{ parameter: 'mu2', value: 1 }] });
    expect(held.poi!.list[1]).toMatchObject({ name: 'mu2', value: 1, fixed: true, error: null, interval68: null });
    expect(held.poi!.correlation.names).toEqual(['mu']);
  });
});

describe('every output per parameter of interest', () => {
  // Internal consistency again: on disjoint channels the joint fit's scan, 95 % interval and
  // impacts on mu2 are those on μ of channel 2 fitted alone, and channel 1's systematic moves mu2 not at all.
  it('gives mu2 the scan, 95 % interval and impacts of its channel fitted alone', async () => {
    const joint = fitResultSchema.parse(await fitModel(combined(), { impacts: 'full', scan: true, expected: false }));
    const alone = await fitModel(model([two]), { impacts: 'full', scan: true, expected: false });
    const mu2 = joint.poi!.list[1];
    const mu = alone.summary!.mu;
    expect(mu2.scan!.parameter).toBe('mu2');
    expect(mu2.scan!.points).toHaveLength(21);
    expectClose(mu2.interval95!.low, mu.value + mu.interval95!.low!, 0, 1e-5 * mu.error!);
    expectClose(mu2.interval95!.high, mu.value + mu.interval95!.high!, 0, 1e-5 * mu.error!);
    expectClose(mu2.scan!.crossings68.high, mu.value + mu.interval68!.high!, 0, 1e-5 * mu.error!);
    const onMu2 = new Map(mu2.impacts!.map((r) => [r.name, r]));
    const syst2 = alone.nuisance.find((n) => n.name === 'syst2')!;
    for (const side of ['up', 'down'] as const) {
      expectClose(onMu2.get('syst2')!.postfitImpact![side], syst2.postfitImpact![side]!, 1e-4, 1e-7);
      expectClose(onMu2.get('syst2')!.prefitImpact![side], syst2.prefitImpact![side]!, 1e-4, 1e-7);
      expect(Math.abs(onMu2.get('syst1')!.postfitImpact![side]!)).toBeLessThan(1e-6);
    }
    expectClose(onMu2.get('syst2')!.quickImpact, syst2.quickImpact!, 1e-6);
    expect(onMu2.get('syst2')!.rank).toBe(1);
    // μ's own impacts stay in the nuisance table
    expect(joint.poi!.list[0].impacts).toBeNull();
    expect(joint.nuisance.find((n) => n.name === 'syst1')!.rank).toBe(1);
  });

  // Against a cold fit: an impact on mu2 is mu2 of the fit with that θ held at θ̂ ± σ̂ (or ± 1).
  it('on a model where the strengths share parameters, matches a cold fit with the systematic held', async () => {
    const m = syntheticModel({ regions: 3, signalRegions: 2, bins: 5, processes: 3, systematics: 4, floatingNorms: 1, varianceFraction: 0.5 }, 2, { secondPoi: true });
    const r = await fitModel(m, { impacts: 'full', expected: false });
    const mu2 = r.poi!.list.find((p) => p.name === 'mu2')!;
    const moved = mu2.impacts!.filter((i) => i.postfitImpact && Math.abs(i.postfitImpact.up ?? 0) > 1e-4);
    expect(moved.length).toBeGreaterThan(0);
    for (const impact of moved.slice(0, 2)) {
      const row = r.nuisance.find((n) => n.name === impact.name)!;
      const theta = r.parameters.find((p) => p.name === impact.name)!.value;
      const cold = await fitModel(m, { impacts: 'none', expected: false, hold: [{ parameter: impact.name, value: theta + row.constraint! }] });
      const coldMu2 = cold.poi!.list.find((p) => p.name === 'mu2')!.value;
      expectClose(impact.postfitImpact!.up, coldMu2 - mu2.value, 2e-3, 1e-5);
    }
    // without scans, the intervals come from crossings
    expect(mu2.scan).toBeNull();
    expect(mu2.interval68!.low).toBeLessThan(mu2.value);
    expect(mu2.interval95!.low).toBeLessThan(mu2.interval68!.low!);
    expect(mu2.interval95!.high).toBeGreaterThan(mu2.interval68!.high!);
  });

  it('draws the contour the options name around the fit’s own minimum, and hides it with μ', async () => {
    const m = syntheticModel({ regions: 3, signalRegions: 2, bins: 5, processes: 3, systematics: 4, floatingNorms: 1, varianceFraction: 0.5 }, 2, { secondPoi: true });
    const r = fitResultSchema.parse(await fitModel(m, { impacts: 'none', expected: false, contour: ['mu', 'mu2'] }));
    const alone = profileContour(m, {}, 'mu', 'mu2');
    expect(r.contour!.failure).toBeNull();
    expect(r.contour!.parameters).toEqual(['mu', 'mu2']);
    expectClose(r.contour!.bestFit[0], alone.bestFit[0], 0, 1e-6);
    expectClose(r.contour!.bestFit[1], alone.bestFit[1], 0, 1e-6);
    r.contour!.q.forEach((row, j) => row.forEach((q, i) => expectClose(q, alone.q[j][i]!, 1e-4, 1e-6)));
    expect(r.contour!.levels.map((l) => l.lines.length)).toEqual([1, 1]);
    expect('contour' in hideMu(r)).toBe(false);
    // a pair the fit holds gives a contour with its reason, and a warning beside it
    const held = await fitModel(m, { impacts: 'none', expected: false, contour: ['mu', 'mu2'], hold: [{ parameter: 'mu2', value: 1 }] });
    expect(held.contour!.failure).toBe('mu2 is held in this fit');
    expect(held.convergence.warnings.some((w) => w.includes('No contour of mu and mu2'))).toBe(true);
  });
});

describe('the 2D profile-likelihood contour', () => {
  // Linear Gaussian limit: with counts of ~10⁶ per bin the Poisson NLL is quadratic in (μ, μ2) to
  // ~10⁻³, so q = (p − p̂)ᵀ V⁻¹ (p − p̂) with V⁻¹ the Fisher information Σ_b s_a s_b / ν_b at the
  // minimum (Cowan, Statistical Data Analysis, 1998, §7.5), and the q = 2.30 line is that ellipse
  // (PDG Review of Particle Physics, Statistics chapter: Δχ² = 2.30 for two parameters at 68.27 %).
  it('at q = 2.30 follows the ellipse of the Fisher information on a two-bin model with large counts', () => {
    const s1 = [6000, 2000];
    const s2 = [2500, 7000];
    const b = [1e6, 1e6];
    const nu = b.map((x, i) => x + s1[i] + s2[i]);
    const m = exchangeModelSchema.parse({
      format: 'plumbline.model',
      version: 2,
      name: 'gaussian',
      regions: [{ key: 'SR', role: 'signal', observable: axis, edges: [0, 1, 2], observed: nu }],
      processes: [
        { key: 'a', kind: 'signal' },
        { key: 'c', kind: 'signal' },
        { key: 'bkg', kind: 'background' },
      ],
      templates: [
        { region: 'SR', process: 'a', nominal: s1 },
        { region: 'SR', process: 'c', nominal: s2 },
        { region: 'SR', process: 'bkg', nominal: b },
      ],
      parametersOfInterest: [{ key: 'muC', targets: [{ region: 'SR', process: 'c' }] }],
    });
    const c = profileContourSchema.parse(profileContour(m, {}, 'mu', 'muC'));
    expect(c.failure).toBeNull();
    expect(c.points).toEqual({ converged: 441, failed: 0 });
    expectClose(c.bestFit[0], 1, 0, 1e-6);
    expectClose(c.bestFit[1], 1, 0, 1e-6);
    const S = [s1, s2];
    const info = new Matrix(S.map((sa) => S.map((sb) => sa.reduce((t, _, i) => t + (sa[i] * sb[i]) / nu[i], 0))));
    const V = inverse(info);
    expectClose(c.errors[0], Math.sqrt(V.get(0, 0)), 2e-3);
    expectClose(c.errors[1], Math.sqrt(V.get(1, 1)), 2e-3);
    const level = c.levels[0];
    expectClose(level.q, 2.2958, 1e-4);
    expect(level.lines).toHaveLength(1);
    const line = level.lines[0];
    expect(line[0]).toEqual(line[line.length - 1]); // closed
    // every point on the ellipse (p − p̂)ᵀ I (p − p̂) = 2.30, to 2 % (interpolation on a 0.3σ grid)
    for (const [x, y] of line) {
      const d = [x - 1, y - 1];
      const q = info.get(0, 0) * d[0] * d[0] + 2 * info.get(0, 1) * d[0] * d[1] + info.get(1, 1) * d[1] * d[1];
      expectClose(q, level.q, 0.02);
    }
    // and reaching its semi-major axis sqrt(2.30 λ_max(V)) along the major eigenvector
    const eig = new EigenvalueDecomposition(V);
    const k = eig.realEigenvalues[0] > eig.realEigenvalues[1] ? 0 : 1;
    const u = [eig.eigenvectorMatrix.get(0, k), eig.eigenvectorMatrix.get(1, k)];
    const reach = Math.max(...line.map(([x, y]) => Math.abs((x - 1) * u[0] + (y - 1) * u[1])));
    expectClose(reach, Math.sqrt(level.q * eig.realEigenvalues[k]), 0.01);
  });

  it('leaves out failed grid points and draws no line through their cells', () => {
    const x = [0, 1, 2];
    const z = [
      [4, 4, 4],
      [4, 0, null],
      [4, 4, 4],
    ];
    const lines = contourLines(x, x, z, 1);
    for (const line of lines) for (const [px] of line) expect(px).toBeLessThanOrEqual(1);
    // the full grid gives one closed line around the centre
    const full = contourLines(x, x, [[4, 4, 4], [4, 0, 4], [4, 4, 4]], 1);
    expect(full).toHaveLength(1);
    expect(full[0]).toHaveLength(5);
    expect(full[0][0]).toEqual(full[0][4]);
  });

  it('of a synthetic model with a second parameter of interest has one line at each level', () => {
    const m = syntheticModel({ regions: 3, signalRegions: 2, bins: 5, processes: 3, systematics: 4, floatingNorms: 1, varianceFraction: 0.5 }, 2, { secondPoi: true });
    const c = profileContour(m, {}, 'mu', 'mu2', { points: 11 });
    expect(c.points.converged + c.points.failed).toBe(121);
    expect(c.levels.map((l) => l.lines.length)).toEqual([1, 1]);
  });
});

describe('bad input', () => {
  const base = (pois: unknown, version = 2) => exchangeModelSchema.safeParse({ ...model([one, two]), version, parametersOfInterest: pois });
  const issues = (pois: unknown, version = 2) => base(pois, version).error?.issues.map((i) => `${i.path.join('.')}: ${i.message}`) ?? [];

  it('names the field of a parameter of interest the model cannot take', () => {
    expect(issues([{ key: 'mu2', targets: [{ region: 'SR9', process: 'sig2' }] }])).toEqual(['parametersOfInterest.0.targets.0.region: unknown region "SR9"']);
    expect(issues([{ key: 'mu2', targets: [{ region: 'CR2', process: 'sig2' }] }])).toEqual(['parametersOfInterest.0.targets.0: region "CR2" has no template for process "sig2" to multiply']);
    expect(issues([{ key: 'mu2', targets: [{ region: 'SR2', process: 'bkg2' }] }])).toEqual(['parametersOfInterest.0.targets.0: region "SR2", process "bkg2" already has a floating normalisation']);
    expect(issues([{ key: 'mu', targets: [{ region: 'SR2', process: 'sig2' }] }])).toEqual(['parametersOfInterest.0.key: key "mu" is already μ, a floating normalisation or a systematic']);
    expect(issues([{ key: 'syst1', targets: [{ region: 'SR2', process: 'sig2' }] }])).toEqual(['parametersOfInterest.0.key: key "syst1" is already μ, a floating normalisation or a systematic']);
    expect(issues([{ key: 'a', targets: [{ region: 'SR2', process: 'sig2' }] }, { key: 'b', targets: [{ region: 'SR2', process: 'sig2' }] }])).toEqual([
      'parametersOfInterest.1.targets.0: region "SR2", process "sig2" already has a parameter of interest',
    ]);
    expect(issues([{ key: 'a', targets: [{ region: 'SR2', process: 'sig2' }] }], 1)).toEqual(['parametersOfInterest: parameters of interest besides μ need exchange file version 2']);
    expect(issues([{ key: 'a', targets: [] }])).toEqual(['parametersOfInterest.0.targets: must multiply at least one template']);
  });

  it('refuses a contour of an unknown parameter, naming it', () => {
    expect(() => profileContour(combined(), {}, 'mu', 'nope')).toThrow(FitInputError);
    expect(() => profileContour(combined(), {}, 'nope', 'mu2')).toThrow(/unknown parameter "nope"/);
    expect(() => profileContour(combined(), {}, 'mu', 'mu')).toThrow(/must differ/);
  });
});

describe('a model without parameters of interest besides μ', () => {
  // The same numbers, to the last bit, as the engine gave before parameters of interest existed
  // (a stored run of this model and these options).
  it('gives a result without a poi section and the stored numbers', async () => {
    const r = await fitModel(syntheticModel('small', 3), { impacts: 'quick', scan: true });
    expect('poi' in r).toBe(false);
    expect(r.convergence.nll).toBe(15.783983837863216);
    expect(r.summary!.mu.value).toBe(0.7222938117099887);
    expect(r.summary!.mu.error).toBe(0.37441451881146504);
    expect(r.summary!.mu.interval68).toEqual({ low: -0.3665210145211289, high: 0.3852876140930549 });
    expect(r.parameters[3].value).toBe(1.5880995472695812e-15);
    expect(r.correlation!.values[1]).toBe(0.047546580537922364);
  });
});

describe('fit-cli --contour', () => {
  const run = promisify(execFile);
  const dir = mkdtempSync(join(tmpdir(), 'plumbline-contour-'));
  const modelPath = join(dir, 'model.json');
  writeFileSync(modelPath, JSON.stringify(combined()));

  it('prints the lines of the contour and writes it with --out', async () => {
    const outPath = join(dir, 'contour.json');
    const { stdout } = await run('npx', ['tsx', 'scripts/fit-cli.ts', modelPath, '--contour', 'mu,mu2', '--out', outPath], { cwd: process.cwd() });
    expect(stdout).toMatch(/^contour of mu and mu2: .* 441 of 441 grid points converged, 0 failed/);
    expect(stdout).toMatch(/q = 2\.3 \(68\.27 %\), line 1 of 1/);
    const written = profileContourSchema.parse(JSON.parse(readFileSync(outPath, 'utf8')));
    expect(written.parameters).toEqual(['mu', 'mu2']);
  });

  it('names unknown parameters in one line and exits with status 2', async () => {
    const error = await run('npx', ['tsx', 'scripts/fit-cli.ts', modelPath, '--contour', 'mu,nope'], { cwd: process.cwd() }).catch((e) => e);
    expect(error.code).toBe(2);
    expect(error.stderr).toBe('--contour: unknown parameter "nope"\n');
  });
});
