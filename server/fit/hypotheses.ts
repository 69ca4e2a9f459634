import type { ExchangeHypothesis, ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptionsInput, FitResult } from '@shared/schemas/fit';
import { hypothesisScanOptionsSchema, type HypothesisPointResult, type HypothesisScanOptions, type HypothesisScanOptionsInput, type HypothesisScanResult } from '@shared/schemas/hypothesis-scan';
import { FitInputError, throwIfAborted } from './errors';
import { fitModel } from './fit';
import { checkHypotheses, declaredHypotheses, plainModel, withoutSignalData } from './hypothesis-model';
import { globalSignificance, type ToyScans } from './look-elsewhere';
import { prepareScanToys, runScanToys, type ScanToyOutcome, type ScanToyTask } from './hypothesis-toys';
import type { FitPool } from './refit-batches';

/**
 * A scan over signal hypotheses (docs/fit-engine.md, "Scan over signal hypotheses"): the model of
 * each hypothesis fitted in turn, with μ̂, the local discovery test and the CLs limit, then the
 * global significance of the largest local excess over the whole scan (look-elsewhere.ts).
 */

export interface HypothesisScanControl {
  /** Refits of each hypothesis's fit run on it (fitModel's pool). */
  pool?: FitPool;
  signal?: AbortSignal;
  /** Stages: hypotheses, toys, done. */
  onProgress?: (fraction: number, stage: string) => void;
  /**
   * Fits a batch of background-only pseudo-experiments elsewhere (a worker thread running
   * runScanToyTask: server/runs/threads/hypothesis-toys.worker.ts); without it they run in this thread.
   */
  runToys?: (task: ScanToyTask, signal?: AbortSignal) => Promise<ScanToyOutcome[]>;
  /** Batches handed to runToys at once (default 4: two per thread of a two-thread pool keep both busy). */
  toyBatchesInFlight?: number;
  /** Hypotheses fitted at once (default 2: while one fit's refits run on the pool, the next one's fit runs in this thread). */
  hypothesesInFlight?: number;
}

/**
 * Fits every hypothesis of the model (ordered by value) and, for observed data, the global
 * significance of the largest local excess. Contract breaks throw FitInputError (a model without
 * hypotheses, invalid options); a hypothesis whose fit fails is reported as failed, with no number.
 */
export async function scanHypotheses(model: ExchangeModel, optionsInput: HypothesisScanOptionsInput = {}, control: HypothesisScanControl = {}): Promise<HypothesisScanResult> {
  const started = performance.now();
  const parsed = hypothesisScanOptionsSchema.safeParse(optionsInput);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw new FitInputError(`invalid scan option ${issue.path.join('.')}: ${issue.message}`, issue.path as (string | number)[]);
  }
  const options = parsed.data;
  const hypotheses = declaredHypotheses(model);
  checkHypotheses(model);
  checkData(model, options.dataset);
  const { signal } = control;
  throwIfAborted(signal);
  const observed = options.dataset === 'observed';
  const nToys = observed ? Math.max(options.upcrossingToys, options.trialsToys) : 0;
  // The fits take most of the time without toys; with toys, the toys (one fit per hypothesis and toy) do.
  const fitShare = nToys > 0 ? Math.min(0.9, Math.max(0.1, 1 / (1 + nToys / 20))) : 1;
  let reported = 0;
  const progress = (fraction: number, stage: string) => control.onProgress?.((reported = Math.max(reported, Math.min(1, fraction))), stage);
  progress(0, 'hypotheses');

  const ordered = [...hypotheses.points].sort((a, b) => a.value - b.value);
  const warnings: string[] = [];
  if (!observed && (options.upcrossingToys > 0 || options.trialsToys > 0)) warnings.push('Expected scans have no global significance: the pseudo-experiments asked for were not run.');

  const points: HypothesisPointResult[] = new Array(ordered.length);
  let done = 0;
  await inFlight(ordered.length, control.hypothesesInFlight ?? 2, async (k) => {
    points[k] = await fitPoint(model, ordered[k], options, control);
    progress((fitShare * ++done) / ordered.length, 'hypotheses');
  });
  throwIfAborted(signal);

  const failed = points.filter((p) => p.status === 'failed');
  if (failed.length > 0) warnings.push(`${failed.length} of ${points.length} hypotheses did not converge (${failed.slice(0, 5).map((p) => p.label).join(', ')}${failed.length > 5 ? ', …' : ''}): they carry no numbers${observed ? ' and are left out of the global significance' : ''}.`);

  let global: HypothesisScanResult['global'] = null;
  if (observed) {
    const scanned = points.filter((p) => p.local !== null);
    const missing = points.filter((p) => p.status === 'converged' && p.local === null);
    if (missing.length > 0) warnings.push(`${missing.length} converged hypotheses have no local q0 (${missing.slice(0, 5).map((p) => p.label).join(', ')}): they are left out of the global significance, and upcrossings are counted across them.`);
    const u = scanned.reduce((max, p) => Math.max(max, p.local!.q0), 0);
    if (scanned.length === 0) warnings.push('No hypothesis has a local q0: there is no global significance.');
    else if (!(u > 0)) warnings.push('No hypothesis has μ̂ > 0, so every local q0 is 0: there is no excess whose global significance could be given.');
    else {
      let toys: ToyScans | null = null;
      if (nToys > 0) {
        toys = await backgroundOnlyToys(model, scanned, options, nToys, control, warnings, (f) => progress(fitShare + (1 - fitShare) * f, 'toys'));
      }
      global = globalSignificance(scanned, options, toys, warnings);
    }
  }
  throwIfAborted(signal);
  progress(1, 'done');
  return {
    parameter: { name: hypotheses.parameter.name, unit: hypotheses.parameter.unit },
    dataset: options.dataset,
    points,
    global,
    warnings,
    seconds: (performance.now() - started) / 1000,
  };
}

/**
 * Runs job(0), …, job(count − 1) with at most `width` at once, in order of start. After a job
 * throws, no further job starts; those running are awaited, then the first error is thrown.
 */
async function inFlight(count: number, width: number, job: (k: number) => Promise<void>): Promise<void> {
  let next = 0;
  let failure = null as { error: unknown } | null;
  const lane = async () => {
    while (next < count && failure === null) {
      const k = next++;
      try {
        await job(k);
      } catch (error) {
        failure ??= { error };
      }
    }
  };
  await Promise.all(Array.from({ length: Math.max(1, Math.min(width, count)) }, lane));
  if (failure !== null) throw failure.error;
}

/**
 * The data a scan fits, checked before any fit so that the message says what the scan needs: an
 * observed scan the counts of every signal and control region; an expected one the control
 * regions' counts (the signal regions' are not looked at).
 */
function checkData(model: ExchangeModel, dataset: HypothesisScanOptions['dataset']): void {
  const control = model.regions.map((r, i) => ({ r, i })).filter(({ r }) => r.role === 'control');
  if (dataset === 'expected') {
    if (control.length === 0) throw new FitInputError('an expected scan builds its Asimov datasets on the fit of the control regions (μ held at 0), and the model has no control region', ['regions']);
    const blank = control.find(({ r }) => !r.observed);
    if (blank) throw new FitInputError(`region "${blank.r.key}" has no observed counts: an expected scan fits the control regions' data`, ['regions', blank.i, 'observed']);
    return;
  }
  model.regions.forEach((r, i) => {
    if ((r.role === 'signal' || r.role === 'control') && !r.observed) {
      throw new FitInputError(`region "${r.key}" has no observed counts: an observed scan fits every signal and control region's data (scan a blinded analysis with dataset "expected")`, ['regions', i, 'observed']);
    }
  });
}

/**
 * One hypothesis. Observed: fitModel on the observed data, without impacts, with the expected
 * significance (pre-fit Asimov dataset at μ = 1) and, when asked for, the CLs limit. Expected: the
 * signal regions' counts are left out of the model, and fitModel fits the Asimov dataset at μ = 1
 * built on the control-only fit with μ held at 0 (docs/likelihood.md §9.5, `expectedFrom:
 * 'control'`): its q0 is the expected q0, and the limit's bands come from the Asimov dataset at
 * μ = 0 on the same reference. Its observed limit and μ̂ are those of an Asimov dataset, not kept.
 */
async function fitPoint(model: ExchangeModel, point: ExchangeHypothesis, options: HypothesisScanOptions, control: HypothesisScanControl): Promise<HypothesisPointResult> {
  const plain = plainModel(model, point);
  const expected = options.dataset === 'expected';
  const fitOptions: FitOptionsInput = expected
    ? { dataset: 'asimov', asimovMu: 1, expectedFrom: 'control', impacts: 'none', limit: options.limit, expected: false }
    : { dataset: 'observed', impacts: 'none', limit: options.limit, expected: true };
  const result = await fitModel(expected ? withoutSignalData(plain) : plain, fitOptions, { pool: control.pool, signal: control.signal });
  return pointResult(point, result, expected);
}

/** A fit's numbers as a point of the scan: none from a failed fit. */
function pointResult(point: ExchangeHypothesis, result: FitResult, expected: boolean): HypothesisPointResult {
  // In an expected scan the fit's "observed" limit is that of an Asimov dataset, and is not shown.
  const warnings = expected ? result.convergence.warnings.filter((w) => !w.startsWith('Observed limit')) : [...result.convergence.warnings];
  const base = { key: point.key, label: point.label ?? point.key, value: point.value, warnings };
  const summary = result.summary;
  if (result.status === 'failed' || summary === null) {
    return { ...base, status: 'failed', message: result.convergence.failure ?? 'the fit did not converge', mu: null, local: null, expected: null, limit: null };
  }
  const significance = expected ? summary.discovery : summary.expected;
  let limit: HypothesisPointResult['limit'] = null;
  if (summary.limit) {
    const e = summary.limit.expected;
    const bands = [e.minus2, e.minus1, e.median, e.plus1, e.plus2];
    const complete = bands.every((b) => b !== null);
    if (!complete) warnings.push('The expected limit is left out: not every band could be computed.');
    limit = {
      observed: expected ? null : summary.limit.observed,
      expected: complete ? { minus2: e.minus2!, minus1: e.minus1!, median: e.median!, plus1: e.plus1!, plus2: e.plus2! } : null,
    };
  }
  return {
    ...base,
    status: 'converged',
    message: null,
    mu: expected ? null : { value: summary.mu.value, error: summary.mu.error },
    local: expected || !summary.discovery ? null : { q0: summary.discovery.q0, p0: summary.discovery.p0, z: summary.discovery.z },
    expected: significance ? { z: significance.z, p0: significance.p0 } : null,
    limit,
  };
}

/** Toy batches: small enough that progress moves and both threads stay busy to the end. */
const TOYS_PER_BATCH = 25;

/**
 * Background-only pseudo-experiments of the scan over the hypotheses that have a local q0: each
 * toy's q0 at every one of them (hypothesis-toys.ts), in batches on runToys or in this thread.
 */
async function backgroundOnlyToys(
  model: ExchangeModel,
  scanned: HypothesisPointResult[],
  options: HypothesisScanOptions,
  count: number,
  control: HypothesisScanControl,
  warnings: string[],
  onProgress: (fraction: number) => void,
): Promise<ToyScans | null> {
  onProgress(0);
  const prepared = prepareScanToys(model, scanned.map((p) => p.key));
  warnings.push(...prepared.warnings);
  if (!prepared.setup) return null;
  const setup = prepared.setup;
  const outcomes: ScanToyOutcome[] = [];
  const indices = Array.from({ length: count }, (_, i) => i);
  if (!control.runToys) {
    outcomes.push(...(await runScanToys(setup, options.seed, indices, { signal: control.signal, onProgress: (d) => onProgress(d / count) })));
  } else {
    const runToys = control.runToys;
    const batches: number[][] = [];
    for (let i = 0; i < count; i += TOYS_PER_BATCH) batches.push(indices.slice(i, i + TOYS_PER_BATCH));
    await inFlight(batches.length, control.toyBatchesInFlight ?? 4, async (k) => {
      outcomes.push(...(await runToys({ setup, seed: options.seed, indices: batches[k] }, control.signal)));
      onProgress(outcomes.length / count);
    });
  }
  throwIfAborted(control.signal);
  outcomes.sort((a, b) => a.index - b.index);
  return { outcomes, upcrossingToys: options.upcrossingToys, trialsToys: options.trialsToys };
}
