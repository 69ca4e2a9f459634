import { execFile } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { describe, expect, it } from 'vitest';
import { exchangeModelSchema, type ExchangeModel, type ExchangeModelInput } from '@shared/schemas/exchange';
import { hypothesisScanResultSchema, type HypothesisPointResult, type HypothesisScanResult } from '@shared/schemas/hypothesis-scan';
import { FitCancelledError, FitInputError, fitModel, hypothesisModel, scanHypotheses, syntheticModel, type ScanToyOutcome, type ScanToyTask } from '../../server/fit';
import { prepareScanToys, runScanToys } from '../../server/fit/hypothesis-toys';
import { globalSignificance, upcrossings, upcrossingPValue } from '../../server/fit/look-elsewhere';
import { threadEntry, workerPool } from '../../server/runs/threads/pool';
import { countingModel, expectClose } from './helpers';

const run = promisify(execFile);
const dir = mkdtempSync(join(tmpdir(), 'plumbline-scan-'));

/** Two regions of 20 bins, one background with a floating normalisation and two systematics: cheap to fit many times. */
const LEAN = { regions: 2, signalRegions: 1, bins: 20, processes: 2, systematics: 2, floatingNorms: 1, varianceFraction: 0 };

/** The model with each region's counts replaced by those of a fit result's dataset (an Asimov dataset). */
function withData(model: ExchangeModel, data: { region: string; values: number[] | null }[]): ExchangeModel {
  return { ...model, regions: model.regions.map((r) => ({ ...r, observed: data.find((d) => d.region === r.key)!.values! })) };
}

/** The pre-fit Asimov dataset of one hypothesis at μ (docs/likelihood.md §7), as the model's observed counts. */
async function asimovOf(model: ExchangeModel, key: string, mu: number): Promise<ExchangeModel> {
  const fit = await fitModel(hypothesisModel(model, key), { dataset: 'asimov', asimovMu: mu, impacts: 'none', expected: false });
  return withData(model, fit.data.regions);
}

/** The scan without its timing, for comparing two runs. */
const numbersOf = (r: HypothesisScanResult) => ({ ...r, seconds: 0 });

describe('the scan on an Asimov dataset', () => {
  it('gives at the injected hypothesis the local Z that a plain fit of its model expects (Cowan, Cranmer, Gross & Vitells, Eur. Phys. J. C 71 (2011) 1554, the Asimov dataset)', async () => {
    // small seed 14: a signal systematic with a scale and a shape effect, another with a scale effect; γ in half the templates
    const base = syntheticModel('small', 14, { hypotheses: 6 });
    expect(base.signalHypotheses!.points[1].effects.some((e) => e.kind === 'shape')).toBe(true);
    const model = await asimovOf(base, 'm1', 1);
    const scan = await scanHypotheses(model, { limit: false });
    const point = scan.points.find((p) => p.key === 'm1')!;
    const plain = await fitModel(hypothesisModel(model, 'm1'), { impacts: 'none' });
    // the expected Z of the plain fit is computed on the pre-fit Asimov dataset at μ = 1: the data here
    const expectedZ = plain.summary!.expected!.z;
    expect(expectedZ).toBeGreaterThan(2);
    expectClose(point.local!.z, expectedZ, 0, 1e-3);
    expectClose(point.expected!.z, expectedZ, 0, 1e-6);
    expectClose(point.mu!.value, 1, 0, 1e-4);
    // the other hypotheses see less of the injected peak
    expect(scan.points.every((p) => p.key === 'm1' || p.local!.z < point.local!.z)).toBe(true);
    expect(scan.global!.at.key).toBe('m1');
    hypothesisScanResultSchema.parse(scan);
  });
});

describe('the global significance', () => {
  /** Scan points with the given local q0, at values 1, 2, …. */
  const scanned = (q: number[]): HypothesisPointResult[] =>
    q.map((q0, k) => ({ key: `h${k}`, label: `h${k}`, value: k + 1, status: 'converged', message: null, warnings: [], mu: { value: 1, error: 1 }, local: { q0, p0: 0, z: Math.sqrt(q0) }, expected: null, limit: null }));

  it('follows a hand computation of the upcrossing formula of Gross & Vitells (Eur. Phys. J. C 70 (2010) 525) for one dimension and χ² with one degree of freedom', () => {
    // q0 along the scan: upcrossings of c₀ = 0.5 at 0.2→0.7, 0.1→2.0 and 0.4→0.6, so N(c₀) = 3; u = 16 at h7
    const q = [0, 0.2, 0.7, 1.5, 0.3, 0.1, 2.0, 16, 4, 0.4, 0.6];
    expect(upcrossings(q, 0.5)).toBe(3);
    expect(upcrossings(q, 16)).toBe(1);
    // by hand (the formula as recalled from the paper, for s = 1: P(max q > u) ≤ P(χ²₁ > u) + ⟨N(c₀)⟩ e^(−(u − c₀)/2),
    // with the one-sided q0's tail Φ(−√u) as its first term; written from memory, the paper's equation numbers not checked):
    //   p_local = Φ(−√16) = Φ(−4) = 3.16712e-5 (standard normal table; the further digits here and below computed
    //   separately in double precision, not with this code)
    //   e^(−(u − c₀)/2) = e^(−(16 − 0.5)/2) = e^(−7.75) = 4.30743e-4
    //   p_global ≈ p_local + N e^(−(u − c₀)/2) = 3.16712e-5 + 3 × 4.30743e-4 = 1.32390e-3
    //   its error from N's Poisson error √3: √3 × 4.30743e-4 = 7.46068e-4
    //   Z = Φ⁻¹(1 − 1.32390e-3) = 3.00592 (just above 3, whose one-sided p is 1.35e-3)
    //   trials factor = 1.32390e-3 / 3.16712e-5 = 41.801
    expectClose(upcrossingPValue(16, 0.5, 3), 1.3239e-3, 1e-5);
    const warnings: string[] = [];
    const g = globalSignificance(scanned(q), { referenceLevel: 0.5 }, null, warnings);
    expect(g.at).toMatchObject({ key: 'h7', value: 8, q0: 16, z: 4 });
    expectClose(g.at.p0, 3.16712e-5, 1e-5);
    expect(g.upcrossings).toEqual({ observed: 3, toys: null });
    expect(g.upcrossingEstimate.source).toBe('observed');
    expectClose(g.upcrossingEstimate.p, 1.3239e-3, 1e-5);
    expectClose(g.upcrossingEstimate.pError, 7.46068e-4, 1e-5);
    expectClose(g.upcrossingEstimate.z, 3.00592, 1e-5);
    expectClose(g.upcrossingEstimate.trialsFactor, 41.801, 1e-4);
    expect(g.fromToys).toBeNull();
    expect(warnings).toEqual([]);

    // With toys, by hand: toy 0 crosses c₀ twice (max 1), toy 1 once (max 20 ≥ u), toy 2 never (max 0), toy 3 failed.
    //   ⟨N⟩ = (2 + 1 + 0)/3 = 1, standard error = sd/√3 = 1/√3 = 0.57735
    //   p_global = 3.16712e-5 + 1 × 4.30743e-4 = 4.62414e-4, error 4.30743e-4/√3 = 2.48689e-4, Z = 3.31245, trials factor 14.6004
    //   from the toys: 1 of 3 reach u: p = 1/3, error √((1/3)(2/3)/3) = 0.272166, Z = Φ⁻¹(2/3) = 0.430727, trials factor 10524.8
    const outcomes: ScanToyOutcome[] = [
      { index: 0, ok: true, q0: [0, 1, 0, 1], message: null },
      { index: 1, ok: true, q0: [3, 0, 20, 0], message: null },
      { index: 2, ok: true, q0: [0, 0, 0, 0], message: null },
      { index: 3, ok: false, q0: null, message: 'the fit with μ held at 0 failed: no minimum' },
    ];
    const withToys = globalSignificance(scanned(q), { referenceLevel: 0.5 }, { outcomes, upcrossingToys: 4, trialsToys: 4 }, warnings);
    expect(withToys.upcrossings.toys!.count).toBe(3);
    expectClose(withToys.upcrossings.toys!.mean, 1, 1e-12);
    expectClose(withToys.upcrossings.toys!.error, 0.57735, 1e-5);
    expectClose(withToys.upcrossingEstimate.p, 4.62414e-4, 1e-5);
    expectClose(withToys.upcrossingEstimate.pError, 2.48689e-4, 1e-5);
    expectClose(withToys.upcrossingEstimate.z, 3.31245, 1e-5);
    expectClose(withToys.upcrossingEstimate.trialsFactor, 14.6004, 1e-5);
    expect(withToys.fromToys).toMatchObject({ count: 3, exceeding: 1 });
    expectClose(withToys.fromToys!.p, 1 / 3, 1e-12);
    expectClose(withToys.fromToys!.pError, 0.272166, 1e-5);
    expectClose(withToys.fromToys!.z, 0.430727, 1e-5);
    expectClose(withToys.fromToys!.trialsFactor, 10524.8, 1e-5);
    expect(warnings).toEqual([expect.stringMatching(/^1 of 4 background-only pseudo-experiments were left out because a fit did not converge \(first: toy 3/)]);
  });

  it('gives no Z from toys when no toy reaches u, with the bound in a warning, and Z = 0 when p is not below 0.5', () => {
    const warnings: string[] = [];
    const outcomes: ScanToyOutcome[] = [0, 1, 2, 3].map((index) => ({ index, ok: true, q0: [0, 1, 0, 1], message: null }));
    const g = globalSignificance(scanned([0, 1, 0, 9, 0]), { referenceLevel: 0.5 }, { outcomes, upcrossingToys: 0, trialsToys: 4 }, warnings);
    expect(g.fromToys).toEqual({ count: 4, exceeding: 0, p: 0, pError: 0, z: null, trialsFactor: null });
    expect(warnings).toEqual([expect.stringContaining('below 1/4 = 0.25')]);
    // u = 1 just above c₀ = 0.5, with 2 upcrossings: p ≈ 0.159 + 2 e^(−0.25) > 1
    const low = globalSignificance(scanned([0, 1, 0, 1]), { referenceLevel: 0.5 }, null, warnings);
    expect(low.upcrossingEstimate.p).toBe(1);
    expect(low.upcrossingEstimate.z).toBe(0);
    expect(warnings.some((w) => /exceeds 1/.test(w)) && warnings.some((w) => /its Z is given as 0/.test(w))).toBe(true);
  });

  it('from upcrossings counted on background-only toys agrees with the fraction of toys whose largest q0 reaches u, within two combined standard errors (seeded, 400 toys)', async () => {
    // the lean model with 10 hypotheses, its data the pre-fit expectation with 0.4 of hypothesis m4's signal: u ≈ 4.4
    const base = syntheticModel(LEAN, 3, { hypotheses: 10 });
    const model = await asimovOf(base, 'm4', 0.4);
    const scan = await scanHypotheses(model, { limit: false, upcrossingToys: 400, trialsToys: 400, seed: 11 });
    const g = scan.global!;
    expect(g.at.key).toBe('m4');
    expect(g.upcrossingEstimate.source).toBe('toys');
    expect(g.upcrossings.toys!.count).toBe(400);
    expect(g.fromToys!.count).toBe(400);
    // a p-value the toys can measure, and a u where the asymptotic formula is meant to hold (Gross & Vitells 2010)
    expect(g.fromToys!.p).toBeGreaterThan(0.03);
    expect(g.fromToys!.p).toBeLessThan(0.5);
    // (with this seed: 0.129 ± 0.004 against 0.133 ± 0.017, 0.2 combined standard errors apart; the toys are shared by both estimates)
    const combined = Math.hypot(g.upcrossingEstimate.pError, g.fromToys!.pError);
    expect(Math.abs(g.upcrossingEstimate.p - g.fromToys!.p)).toBeLessThan(2 * combined);
    // the trials factor is the ratio of global to local p-values either way
    expectClose(g.fromToys!.trialsFactor, g.fromToys!.p / g.at.p0, 1e-12);
    expect(scan.warnings).toEqual([]);
  });

  it('draws the same toys on worker threads, in batches, as in this thread (seeded)', async () => {
    const model = await asimovOf(syntheticModel(LEAN, 3, { hypotheses: 10 }), 'm4', 0.4);
    const options = { limit: false, upcrossingToys: 30, trialsToys: 60, seed: 5 };
    const here = await scanHypotheses(model, options);
    const pool = workerPool(threadEntry('hypothesis-toys.worker'), { minThreads: 2, maxThreads: 2, workerData: { niceness: 0 } });
    try {
      const threads = await scanHypotheses(model, options, { runToys: (task: ScanToyTask) => pool.run(task) as Promise<ScanToyOutcome[]> });
      expect(numbersOf(threads)).toEqual(numbersOf(here));
    } finally {
      await pool.destroy();
    }
    const again = await scanHypotheses(model, options);
    expect(numbersOf(again)).toEqual(numbersOf(here));
    const other = await scanHypotheses(model, { ...options, seed: 6 });
    expect(other.global!.upcrossings.toys).not.toEqual(here.global!.upcrossings.toys);
  });
});

describe('background-only toys', () => {
  it('fit μ = 0 once for the whole scan when the hypotheses agree at μ = 0 (checked at the background-only fit), and once per group when signal variances make them differ', async () => {
    const model = syntheticModel(LEAN, 3, { hypotheses: 10 });
    const keys = model.signalHypotheses!.points.map((p) => p.key);
    const shared = prepareScanToys(model, keys);
    expect(shared.warnings).toEqual([]);
    expect(shared.setup!.groups).toEqual([keys.map((_, k) => k)]);

    // signal templates with variances enter the γ constraints of their bins: every hypothesis is then a likelihood of its own at μ = 0
    const varied: ExchangeModel = {
      ...model,
      signalHypotheses: { ...model.signalHypotheses!, points: model.signalHypotheses!.points.map((p) => ({ ...p, templates: p.templates.map((t) => ({ ...t, variance: t.nominal.map((v) => 0.1 * v) })) })) },
    };
    const grouped = prepareScanToys(varied, keys);
    expect(grouped.setup!.groups.length).toBe(10);
    expect(grouped.warnings).toEqual([expect.stringContaining('10 groups instead of one')]);
    const toys = await runScanToys(grouped.setup!, 1, [0, 1, 2]);
    expect(toys.every((t) => t.ok && t.q0!.length === 10 && t.q0!.every((q) => q >= 0))).toBe(true);
  });
});

/** A hand model: two signal processes and a background, scale and shape effects on the replaced template and elsewhere. */
function handModel(): ExchangeModelInput {
  const region = (key: string, role: 'signal' | 'control', edges: number[], observed: number[]) => ({ key, role, observable: { name: 'x', unit: '' }, edges, observed });
  return {
    format: 'plumbline.model',
    version: 2,
    name: 'hand',
    regions: [region('SR', 'signal', [0, 1, 2], [60, 45]), region('CR', 'control', [0, 1], [200])],
    processes: [
      { key: 'sig', kind: 'signal' },
      { key: 'sig2', kind: 'signal' },
      { key: 'bkg', kind: 'background' },
    ],
    floatingNorms: [{ key: 'k', targets: [{ region: 'SR', process: 'bkg' }, { region: 'CR', process: 'bkg' }] }],
    templates: [
      { region: 'SR', process: 'sig', nominal: [5, 1], variance: [1, 0.5] },
      { region: 'SR', process: 'sig2', nominal: [2, 2] },
      { region: 'SR', process: 'bkg', nominal: [50, 40] },
      { region: 'CR', process: 'sig', nominal: [0.1] },
      { region: 'CR', process: 'bkg', nominal: [200] },
    ],
    systematics: [
      { key: 'A', effects: [{ region: 'SR', process: 'sig', kind: 'scale', up: 1.1, down: 0.9 }, { region: 'SR', process: 'bkg', kind: 'scale', up: 1.05, down: 0.95 }] },
      { key: 'B', effects: [{ region: 'SR', process: 'sig', kind: 'shape', up: [6, 1.2], down: [4, 0.8] }, { region: 'SR', process: 'sig', kind: 'scale', up: 1.02, down: 0.98 }] },
      { key: 'C', effects: [{ region: 'CR', process: 'sig', kind: 'scale', up: 1.2, down: 0.8 }] },
      { key: 'D', effects: [{ region: 'SR', process: 'bkg', kind: 'shape', up: [52, 41], down: [48, 39] }] },
    ],
    signalHypotheses: {
      parameter: { name: 'mass', unit: 'GeV' },
      points: [
        {
          key: 'h1',
          value: 300,
          templates: [{ region: 'SR', process: 'sig', nominal: [1, 7] }],
          effects: [
            { systematic: 'B', region: 'SR', process: 'sig', kind: 'shape', up: [1.1, 7.7], down: [0.9, 6.3] },
            { systematic: 'A', region: 'SR', process: 'sig', kind: 'scale', up: 1.3, down: 0.7 },
            { systematic: 'C', region: 'SR', process: 'sig', kind: 'scale', up: 1.15, down: 0.85 },
          ],
        },
        {
          key: 'h0',
          label: 'the model’s own',
          value: 200,
          templates: [{ region: 'SR', process: 'sig', nominal: [5, 1], variance: [1, 0.5] }],
          effects: [{ systematic: 'B', region: 'SR', process: 'sig', kind: 'shape', up: [6, 1.2], down: [4, 0.8] }],
        },
      ],
    },
  };
}

describe('the model of a hypothesis', () => {
  it('replaces exactly the listed templates and, on them, the shape effects and the scale effects the hypothesis gives, keeping every other template and effect', () => {
    const model = exchangeModelSchema.parse(handModel());
    const { signalHypotheses: _, ...own } = model;
    const plain = hypothesisModel(model, 'h1');
    expect('signalHypotheses' in plain).toBe(false);
    expect(plain).toEqual({
      ...own,
      templates: [
        // replaced whole: the hypothesis gives no variance, so the template has none
        { region: 'SR', process: 'sig', nominal: [1, 7] },
        ...own.templates.slice(1),
      ],
      systematics: [
        // A's scale on the replaced template is the hypothesis's; its effect on the background stays
        { key: 'A', effects: [{ region: 'SR', process: 'sig', kind: 'scale', up: 1.3, down: 0.7 }, own.systematics[0].effects[1]] },
        // B's shape is the hypothesis's; its scale, which the hypothesis does not give, stays
        { key: 'B', effects: [{ region: 'SR', process: 'sig', kind: 'shape', up: [1.1, 7.7], down: [0.9, 6.3] }, own.systematics[1].effects[1]] },
        // C keeps its effect on the control region's signal (not replaced) and gains one on the replaced template
        { key: 'C', effects: [own.systematics[2].effects[0], { region: 'SR', process: 'sig', kind: 'scale', up: 1.15, down: 0.85 }] },
        own.systematics[3],
      ],
    });
    // a hypothesis that repeats the model's own signal gives the model itself
    expect(hypothesisModel(model, 'h0')).toEqual(own);
    // and the synthetic model's own signal is its middle hypothesis
    const synthetic = syntheticModel('small', 14, { hypotheses: 6 });
    const { signalHypotheses: __, ...syntheticOwn } = synthetic;
    expect(hypothesisModel(synthetic, 'm2')).toEqual(syntheticOwn);
  });

  it('refuses an unknown hypothesis and a hypothesis that leaves out a shape effect of the template it replaces, naming what to fix', () => {
    const model = exchangeModelSchema.parse(handModel());
    expect(() => hypothesisModel(model, 'h9')).toThrow(/unknown signal hypothesis "h9": the model's hypotheses are "h1", "h0"/);
    // built in code, past the schema: h1 without B's shape effect
    const broken = { ...model, signalHypotheses: { ...model.signalHypotheses!, points: [{ ...model.signalHypotheses!.points[0], effects: model.signalHypotheses!.points[0].effects.slice(1) }] } };
    const error = (() => {
      try {
        hypothesisModel(broken, 'h1');
      } catch (e) {
        return e;
      }
    })();
    expect(error).toBeInstanceOf(FitInputError);
    expect((error as FitInputError).message).toMatch(/^signal hypothesis "h1": replaces the template of region "SR", process "sig", which systematic "B" varies by shape: give that shape effect for this hypothesis too/);
    expect((error as FitInputError).path).toEqual(['signalHypotheses', 'points', 0, 'effects']);
  });
});

describe('scanHypotheses', () => {
  it('refuses a model of version 1 or without hypotheses, invalid options, data the scan needs and does not have, and a cancelled scan, naming what to fix', async () => {
    await expect(scanHypotheses(countingModel({ s: 10, b: 50, n: 55 }))).rejects.toThrow(/^the model declares no signal hypotheses: .*this file is version 1$/);
    const v2 = exchangeModelSchema.parse({ ...countingModel({ s: 10, b: 50, n: 55 }), version: 2 });
    await expect(scanHypotheses(v2)).rejects.toThrow(FitInputError);
    await expect(scanHypotheses(v2)).rejects.toThrow(/^the model declares no signal hypotheses: a scan needs exchange file version 2 with signalHypotheses/);
    const model = exchangeModelSchema.parse(handModel());
    await expect(scanHypotheses(model, { referenceLevel: 9 })).rejects.toThrow(/^invalid scan option referenceLevel/);
    const blinded = { ...model, regions: model.regions.map((r) => (r.role === 'signal' ? { ...r, observed: undefined } : r)) };
    await expect(scanHypotheses(blinded)).rejects.toThrow('region "SR" has no observed counts: an observed scan fits every signal and control region\'s data (scan a blinded analysis with dataset "expected")');
    const noControl = { ...model, regions: model.regions.map((r) => ({ ...r, role: 'signal' as const })) };
    await expect(scanHypotheses(noControl, { dataset: 'expected' })).rejects.toThrow(/^an expected scan builds its Asimov datasets on the fit of the control regions/);
    const aborted = new AbortController();
    aborted.abort();
    await expect(scanHypotheses(model, {}, { signal: aborted.signal })).rejects.toThrow(FitCancelledError);
  });

  it('orders the points by value and reports a hypothesis whose fit fails with its message and no number', async () => {
    const input = handModel();
    // hypothesis "flat": a signal in the background's proportions in both regions, so μ and k move together
    input.signalHypotheses!.points.push({
      key: 'flat',
      value: 250,
      templates: [
        { region: 'SR', process: 'sig', nominal: [5, 4] },
        { region: 'CR', process: 'sig', nominal: [20] },
      ],
      effects: [{ systematic: 'B', region: 'SR', process: 'sig', kind: 'shape', up: [5, 4], down: [5, 4] }],
    });
    // without the second signal process and the systematics that would tell the two apart
    input.processes = input.processes.filter((p) => p.key !== 'sig2');
    input.templates = input.templates.filter((t) => t.process !== 'sig2');
    input.systematics = input.systematics!.filter((s) => s.key === 'B');
    input.signalHypotheses!.points = input.signalHypotheses!.points.map((p) => ({ ...p, effects: p.effects!.filter((e) => e.systematic === 'B') }));
    const model = exchangeModelSchema.parse(input);
    const scan = hypothesisScanResultSchema.parse(await scanHypotheses(model));
    expect(scan.points.map((p) => p.key)).toEqual(['h0', 'flat', 'h1']);
    expect(scan.parameter).toEqual({ name: 'mass', unit: 'GeV' });
    const flat = scan.points[1];
    expect(flat).toMatchObject({ status: 'failed', mu: null, local: null, expected: null, limit: null });
    expect(flat.message).toMatch(/move together/);
    for (const p of [scan.points[0], scan.points[2]]) {
      expect(p.status).toBe('converged');
      expect(p.message).toBeNull();
      expect(p.mu).not.toBeNull();
      expect(p.local).not.toBeNull();
      expect(p.limit!.expected).not.toBeNull();
    }
    expect(scan.points[0].label).toBe('the model’s own');
    expect(scan.warnings[0]).toMatch(/^1 of 3 hypotheses did not converge \(flat\)/);
    // the global significance is over the converged points only
    expect([scan.points[0].key, scan.points[2].key]).toContain(scan.global!.at.key);
  });
});

describe('the expected scan', () => {
  it('never reads the signal regions\u2019 observed counts: removed, changed or unreadable, they give the same numbers, while a control region\u2019s counts change them', async () => {
    const model = syntheticModel('small', 14, { hypotheses: 4 });
    const signal = (r: ExchangeModel['regions'][number]) => r.role === 'signal';
    const variant = (change: (r: ExchangeModel['regions'][number]) => ExchangeModel['regions'][number]) => ({ ...model, regions: model.regions.map((r) => (signal(r) ? change(r) : r)) });
    const removed = variant(({ observed: _, ...r }) => r);
    const changed = variant((r) => ({ ...r, observed: r.observed!.map((n) => 3 * n + 7) }));
    const unreadable = variant((r) => {
      const copy = { ...r };
      Object.defineProperty(copy, 'observed', { enumerable: true, get: () => { throw new Error(`the observed counts of signal region ${r.key} were read`); } });
      return copy;
    });
    const options = { dataset: 'expected' as const };
    const reference = await scanHypotheses(model, options);
    expect(reference.global).toBeNull();
    for (const p of reference.points) {
      expect(p).toMatchObject({ status: 'converged', mu: null, local: null, limit: { observed: null } });
      expect(p.expected!.z).toBeGreaterThan(0);
      expect(p.limit!.expected!.median).toBeGreaterThan(0);
    }
    for (const other of [removed, changed, unreadable]) expect(numbersOf(await scanHypotheses(other, options))).toEqual(numbersOf(reference));
    const controlChanged = { ...model, regions: model.regions.map((r) => (signal(r) ? r : { ...r, observed: r.observed!.map((n) => 1.2 * n) })) };
    expect(numbersOf(await scanHypotheses(controlChanged, options)).points).not.toEqual(numbersOf(reference).points);
  });
});

describe('command line', () => {
  it('prints a table per hypothesis and the global significance, and writes the result', async () => {
    const modelPath = join(dir, 'scan.json');
    const outPath = join(dir, 'scan-result.json');
    writeFileSync(modelPath, JSON.stringify(await asimovOf(syntheticModel(LEAN, 3, { hypotheses: 10 }), 'm4', 0.4)));
    const { stdout } = await run('npx', ['tsx', 'scripts/fit-cli.ts', modelPath, '--scan-hypotheses', '--no-limit', '--toys-upcrossings', '20', '--threads', '2', '--out', outPath], { cwd: process.cwd() });
    expect(stdout).toMatch(/^scan over mass \(GeV\), observed data: 10 hypotheses, 0 failed/);
    expect(stdout).toMatch(/mass \[GeV\] +status +μ̂ +σ_μ +local Z +p0 +exp\. Z +obs\. limit +exp\. limit/);
    expect(stdout).toMatch(/largest local excess: mass = [0-9.]+ GeV \(m4\)/);
    expect(stdout).toMatch(/upcrossings of q0 through c0 = 0\.5: \d+ along the observed scan; mean [0-9.]+ ± [0-9.e-]+ on 20 background-only toys/);
    expect(stdout).toMatch(/global, from the upcrossings \(⟨N\(c0\)⟩ from the toys\): p = [0-9.e-]+ ± [0-9.e-]+, Z = [0-9.]+, trials factor [0-9.]+/);
    const result = hypothesisScanResultSchema.parse(JSON.parse(readFileSync(outPath, 'utf8')));
    expect(result.global!.upcrossings.toys!.count).toBe(20);
  });

  it('names an unknown flag or a bad value in one line and exits with status 2', async () => {
    const modelPath = join(dir, 'scan.json');
    const cases: [string[], string][] = [
      [['--scan-hypotheses', '--bogus'], "Unknown option '--bogus'."],
      [['--scan-hypotheses', '--reference-level', '9'], '--reference-level needs a number from 0.01 to 4 (got "9")'],
      [['--scan-hypotheses', '--toys-trials', '2.5'], '--toys-trials needs a whole number from 0 to 20000 (got "2.5")'],
      [['--seed', '3', '--out', join(dir, 'never.json')], '--seed needs --scan-hypotheses'],
    ];
    const errors = await Promise.all(cases.map(([flags]) => run('npx', ['tsx', 'scripts/fit-cli.ts', modelPath, ...flags], { cwd: process.cwd() }).catch((e) => e)));
    errors.forEach((error, k) => {
      expect(error.code).toBe(2);
      expect(error.stderr).toBe(`${cases[k][1]}\n`);
    });
  });
});
