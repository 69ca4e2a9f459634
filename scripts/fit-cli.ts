/**
 * Fits an exchange file from the command line and writes the result in the shape the API returns.
 *
 *   npm run fit -- MODEL.json [--asimov MU] [--control-only] [--impacts none|quick|full]
 *                 [--scan] [--limit] [--exclude REGION]… [--threads N] --out RESULT.json
 *   variants (docs/likelihood.md §9):
 *                 [--hold KEY=VALUE|best]… [--hold-group GROUP]… [--stat-only] [--no-template-stats]
 *                 [--decorrelate KEY:region|KEY:process]… [--expected-from prefit|control|background]
 *                 [--hidden-mu] [--breakdown]
 *   a scan over the model's signal hypotheses (docs/fit-engine.md, "Scan over signal hypotheses"):
 *   npm run fit -- MODEL.json --scan-hypotheses [--expected] [--no-limit] [--reference-level C]
 *                 [--toys-upcrossings N] [--toys-trials N] [--seed N] [--threads N] [--out RESULT.json]
 *   the 2D profile-likelihood contour of two parameters (docs/fit-engine.md, "Several parameters of
 *   interest and 2D contours"):
 *   npm run fit -- MODEL.json --contour A,B [--asimov MU] [--control-only] [--exclude REGION]… [--out CONTOUR.json]
 *
 * A fit with --hidden-mu writes the result without anything computed from μ̂ or from the signal
 * regions' data, as the server stores it. A scan prints a table of its hypotheses and the global
 * significance, and writes its result when --out is given. A contour prints its lines' points, and
 * writes the contour when --out is given.
 * Exit codes: 0 fitted, 1 bad input (the messages name the failing fields), 2 an unknown flag or a
 * bad flag value (one line naming it), 3 the fit failed, or a hypothesis of the scan did (its
 * report is still written).
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { exchangeModelSchema, type ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptionsInput } from '@shared/schemas/fit';
import type { HypothesisScanOptionsInput, HypothesisScanResult } from '@shared/schemas/hypothesis-scan';
import { FitInputError, fitModel, hideMu, profileContour, scanHypotheses, variantIssues, type ScanToyOutcome, type ScanToyTask } from '../server/fit';
import { createFitPool, threadEntry, workerPool } from '../server/runs/threads/pool';

function fail(message: string): never {
  process.stderr.write(`${message}\n`);
  process.exit(1);
}

/** A flag the command line does not know, or a flag's value it cannot use: one line, exit code 2. */
function usage(message: string): never {
  process.stderr.write(`${message}\n`);
  process.exit(2);
}

const USAGE =
  'usage: npm run fit -- MODEL.json [--asimov MU] [--control-only] [--impacts none|quick|full] [--scan] [--limit] [--exclude REGION]… [--hold KEY=VALUE|best]… [--hold-group GROUP]… [--stat-only] [--no-template-stats] [--decorrelate KEY:region|KEY:process]… [--expected-from prefit|control|background] [--hidden-mu] [--breakdown] [--threads N] --out RESULT.json\n' +
  '   or: npm run fit -- MODEL.json --scan-hypotheses [--expected] [--no-limit] [--reference-level C] [--toys-upcrossings N] [--toys-trials N] [--seed N] [--threads N] [--out RESULT.json]\n' +
  '   or: npm run fit -- MODEL.json --contour A,B [--asimov MU] [--control-only] [--exclude REGION]… [--out CONTOUR.json]';

let args: ReturnType<typeof read>;
try {
  args = read();
} catch (e) {
  // an unknown or malformed flag: one plain line naming it (the first sentence of the parser's message), not a stack trace
  const first = (e as Error).message.split('\n')[0];
  usage(first.slice(0, first.indexOf('. ') + 1 || undefined));
}
const { values, positionals } = args;

function read() {
  return parseArgs({
    allowPositionals: true,
    options: {
      asimov: { type: 'string' },
      'control-only': { type: 'boolean', default: false },
      impacts: { type: 'string', default: 'quick' },
      scan: { type: 'boolean', default: false },
      limit: { type: 'boolean', default: false },
      exclude: { type: 'string', multiple: true, default: [] },
      threads: { type: 'string' },
      out: { type: 'string' },
      hold: { type: 'string', multiple: true, default: [] },
      'hold-group': { type: 'string', multiple: true, default: [] },
      'stat-only': { type: 'boolean', default: false },
      'no-template-stats': { type: 'boolean', default: false },
      decorrelate: { type: 'string', multiple: true, default: [] },
      'expected-from': { type: 'string', default: 'prefit' },
      'hidden-mu': { type: 'boolean', default: false },
      breakdown: { type: 'boolean', default: false },
      'scan-hypotheses': { type: 'boolean', default: false },
      expected: { type: 'boolean', default: false },
      'no-limit': { type: 'boolean', default: false },
      'reference-level': { type: 'string' },
      'toys-upcrossings': { type: 'string' },
      'toys-trials': { type: 'string' },
      seed: { type: 'string' },
      contour: { type: 'string' },
    },
  });
}
const scanning = values['scan-hypotheses']!;
const contouring = values.contour !== undefined;
if (positionals.length !== 1 || (!values.out && !scanning && !contouring)) usage(USAGE);
const contourPair = contouring ? /^([^,]+),([^,]+)$/.exec(values.contour!) : null;
if (contouring && !contourPair) usage(`--contour needs two parameter names, A,B (got "${values.contour}")`);
if (values.threads !== undefined && !/^[1-9][0-9]*$/.test(values.threads)) usage(`--threads needs a whole number of at least 1 (got "${values.threads}")`);
if (!['prefit', 'control', 'background'].includes(values['expected-from']!)) usage(`--expected-from must be prefit, control or background (got "${values['expected-from']}")`);
const hold = values.hold!.map((h) => {
  const m = /^([^=]+)=(.+)$/.exec(h);
  if (!m) usage(`--hold needs KEY=VALUE or KEY=best (got "${h}")`);
  const value = m[2] === 'best' ? 'best' : Number(m[2]);
  if (value !== 'best' && !Number.isFinite(value)) usage(`--hold ${m[1]} needs a number or "best" (got "${m[2]}")`);
  return { parameter: m[1], value: value as number | 'best' };
});
const decorrelate = values.decorrelate!.map((d) => {
  const m = /^(.+):(region|process)$/.exec(d);
  if (!m) usage(`--decorrelate needs KEY:region or KEY:process (got "${d}")`);
  return { parameter: m[1], by: m[2] as 'region' | 'process' };
});
if (!['none', 'quick', 'full'].includes(values.impacts!)) usage(`--impacts must be none, quick or full (got "${values.impacts}")`);

// A scan's flags, and the fit's flags that do not apply to a scan (a scan fits each hypothesis on its own terms).
const scanFlags = { expected: values.expected, 'no-limit': values['no-limit'], 'reference-level': values['reference-level'], 'toys-upcrossings': values['toys-upcrossings'], 'toys-trials': values['toys-trials'], seed: values.seed };
const fitFlags = {
  asimov: values.asimov,
  'control-only': values['control-only'],
  impacts: values.impacts === 'quick' ? undefined : values.impacts,
  scan: values.scan,
  limit: values.limit,
  exclude: values.exclude!.length ? values.exclude : undefined,
  hold: values.hold!.length ? values.hold : undefined,
  'hold-group': values['hold-group']!.length ? values['hold-group'] : undefined,
  'stat-only': values['stat-only'],
  'no-template-stats': values['no-template-stats'],
  decorrelate: values.decorrelate!.length ? values.decorrelate : undefined,
  'expected-from': values['expected-from'] === 'prefit' ? undefined : values['expected-from'],
  'hidden-mu': values['hidden-mu'],
  breakdown: values.breakdown,
};
const given = (flags: Record<string, unknown>) => Object.entries(flags).filter(([, v]) => v !== undefined && v !== false).map(([k]) => `--${k}`);
if (scanning && given(fitFlags).length) usage(`${given(fitFlags)[0]} does not apply to --scan-hypotheses`);
if (!scanning && given(scanFlags).length) usage(`${given(scanFlags)[0]} needs --scan-hypotheses`);
// a contour reads the data flags only
const notForContour = given({ ...fitFlags, asimov: undefined, 'control-only': undefined, exclude: undefined, 'scan-hypotheses': values['scan-hypotheses'], threads: values.threads });
if (contouring && notForContour.length) usage(`${notForContour[0]} does not apply to --contour`);
/** A whole number of a flag within [0, max]. */
const whole = (flag: string, text: string | undefined, fallback: number, max: number) => {
  if (text === undefined) return fallback;
  if (!/^[0-9]+$/.test(text) || Number(text) > max) usage(`--${flag} needs a whole number from 0 to ${max} (got "${text}")`);
  return Number(text);
};
const referenceLevel = values['reference-level'] === undefined ? 0.5 : Number(values['reference-level']);
if (!(referenceLevel >= 0.01 && referenceLevel <= 4)) usage(`--reference-level needs a number from 0.01 to 4 (got "${values['reference-level']}")`);
const scanOptions: HypothesisScanOptionsInput = {
  dataset: values.expected ? 'expected' : 'observed',
  limit: !values['no-limit'],
  referenceLevel,
  upcrossingToys: whole('toys-upcrossings', values['toys-upcrossings'], 0, 2000),
  trialsToys: whole('toys-trials', values['toys-trials'], 0, 20000),
  seed: whole('seed', values.seed, 1, 2 ** 31 - 1),
};

let raw: unknown;
try {
  raw = JSON.parse(readFileSync(positionals[0], 'utf8'));
} catch (error) {
  fail(`cannot read ${positionals[0]}: ${(error as Error).message}`);
}
const parsed = exchangeModelSchema.safeParse(raw);
if (!parsed.success) {
  const lines = parsed.error.issues.map((i) => `  ${i.path.length ? i.path.join('.') : '(document)'}: ${i.message}`);
  fail(`${positionals[0]} is not a valid model:\n${lines.join('\n')}`);
}

const options: FitOptionsInput = {
  dataset: values.asimov === undefined ? 'observed' : 'asimov',
  asimovMu: values.asimov === undefined ? 1 : Number(values.asimov),
  controlOnly: values['control-only'],
  impacts: values.impacts as 'none' | 'quick' | 'full',
  scan: values.scan,
  limit: values.limit,
  excludeRegions: values.exclude,
  hold,
  holdGroups: values['hold-group'],
  statOnly: values['stat-only'],
  templateStats: !values['no-template-stats'],
  decorrelate,
  expectedFrom: values['expected-from'] as 'prefit' | 'control' | 'background',
  hiddenMu: values['hidden-mu'],
  breakdown: values.breakdown,
};
if (!Number.isFinite(options.asimovMu)) usage(`--asimov needs a number (got "${values.asimov}")`);
if (scanning) {
  await scan(parsed.data);
  process.exit(process.exitCode ?? 0);
}
if (contourPair) {
  contour(parsed.data, contourPair[1], contourPair[2]);
  process.exit(process.exitCode ?? 0);
}

const issues = variantIssues(parsed.data, { hold, holdGroups: values['hold-group']!, statOnly: values['stat-only']!, decorrelate, controlOnly: values['control-only']! });
if (issues.length) fail(issues.map((i) => `  options.${i.path.join('.')}: ${i.message}`).join('\n'));

const needsPool = options.impacts === 'full' || options.scan || options.limit || options.breakdown;
const pool = needsPool ? createFitPool(values.threads ? { threads: Number(values.threads) } : {}) : undefined;
try {
  const computed = await fitModel(parsed.data, options, { pool });
  const result = options.hiddenMu ? hideMu(computed) : computed;
  writeFileSync(values.out!, `${JSON.stringify(result, null, 1)}\n`);
  const mu = result.summary?.mu;
  process.stdout.write(
    result.status === 'converged' && options.hiddenMu
      ? `converged in ${result.convergence.iterations} iterations, μ hidden (${result.convergence.seconds.toFixed(2)} s) → ${values.out}\n`
      : result.status === 'converged'
      ? `converged in ${result.convergence.iterations} iterations: μ = ${mu!.value.toPrecision(5)}${mu!.error === null ? ' (fixed)' : ` ± ${mu!.error.toPrecision(3)}`} (${result.convergence.seconds.toFixed(2)} s) → ${values.out}\n`
      : `the fit failed: ${result.convergence.failure} → ${values.out}\n`,
  );
  process.exitCode = result.status === 'converged' ? 0 : 3;
} catch (error) {
  if (error instanceof FitInputError) fail(`${error.message}${error.path.length ? ` (at ${error.path.join('.')})` : ''}`);
  throw error;
} finally {
  await pool?.destroy();
}

/** The scan over the model's signal hypotheses: a table per hypothesis and the global significance. */
async function scan(model: ExchangeModel): Promise<void> {
  const threads = values.threads ? Number(values.threads) : undefined;
  const pool = createFitPool(threads ? { threads } : {});
  const withToys = scanOptions.dataset === 'observed' && (scanOptions.upcrossingToys! > 0 || scanOptions.trialsToys! > 0);
  const toyThreads = withToys ? workerPool(threadEntry('hypothesis-toys.worker'), { minThreads: pool.threads, maxThreads: pool.threads, workerData: { niceness: 0 } }) : null;
  const runToys = toyThreads ? (task: ScanToyTask, signal?: AbortSignal) => toyThreads.run(task, { signal }) as Promise<ScanToyOutcome[]> : undefined;
  try {
    const result = await scanHypotheses(model, scanOptions, { pool, runToys, toyBatchesInFlight: 2 * pool.threads });
    if (values.out) writeFileSync(values.out, `${JSON.stringify(result, null, 1)}\n`);
    process.stdout.write(scanReport(result));
    process.exitCode = result.points.some((p) => p.status === 'failed') ? 3 : 0;
  } catch (error) {
    if (error instanceof FitInputError) fail(`${error.message}${error.path.length ? ` (at ${error.path.join('.')})` : ''}`);
    throw error;
  } finally {
    await pool.destroy();
    await toyThreads?.destroy();
  }
}

/** The 2D contour of two parameters: its lines' points, printed, and written with --out. */
function contour(model: ExchangeModel, a: string, b: string): void {
  const known = new Set(['mu', ...model.floatingNorms.map((f) => f.key), ...(model.parametersOfInterest ?? []).map((p) => p.key), ...model.systematics.map((s) => s.key)]);
  const unknown = [a, b].filter((name) => !known.has(name));
  if (unknown.length) usage(`--contour: unknown parameter${unknown.length > 1 ? 's' : ''} ${unknown.map((name) => `"${name}"`).join(' and ')}`);
  if (a === b) usage(`--contour needs two different parameters (got "${a}" twice)`);
  const started = performance.now();
  let result: ReturnType<typeof profileContour>;
  try {
    result = profileContour(model, { dataset: options.dataset, asimovMu: options.asimovMu, controlOnly: options.controlOnly, excludeRegions: options.excludeRegions }, a, b);
  } catch (error) {
    if (error instanceof FitInputError) fail(`${error.message}${error.path.length ? ` (at ${error.path.join('.')})` : ''}`);
    throw error;
  }
  if (values.out) writeFileSync(values.out, `${JSON.stringify(result, null, 1)}\n`);
  const seconds = ((performance.now() - started) / 1000).toFixed(1);
  if (result.failure !== null) {
    process.stdout.write(`no contour of ${a} and ${b}: ${result.failure}${values.out ? ` → ${values.out}` : ''}\n`);
    process.exitCode = 3;
    return;
  }
  const total = result.points.converged + result.points.failed;
  const out = [`contour of ${a} and ${b}: best fit ${a} = ${num(result.bestFit[0], 5)}, ${b} = ${num(result.bestFit[1], 5)}; ${result.points.converged} of ${total} grid points converged, ${result.points.failed} failed (${seconds} s)${values.out ? ` → ${values.out}` : ''}`];
  for (const level of result.levels) {
    level.lines.forEach((line, k) => {
      out.push(`q = ${num(level.q)} (${num(100 * level.cl, 4)} %), line ${k + 1} of ${level.lines.length}: ${line.length} points (${a} ${b})`);
      for (const [x, y] of line) out.push(`  ${num(x, 6)} ${num(y, 6)}`);
    });
    if (!level.lines.length) out.push(`q = ${num(level.q)} (${num(100 * level.cl, 4)} %): no line within the grid`);
  }
  process.stdout.write(`${out.join('\n')}\n`);
  process.exitCode = 0;
}

/** Three significant digits, or an exponent below 1e-3. */
function num(x: number | null | undefined, digits = 3): string {
  if (x === null || x === undefined) return '–';
  if (x !== 0 && Math.abs(x) < 1e-3) return x.toExponential(digits - 1);
  return Number(x.toPrecision(digits)).toString();
}

function scanReport(r: HypothesisScanResult): string {
  const unit = r.parameter.unit ? ` [${r.parameter.unit}]` : '';
  const header = [`${r.parameter.name}${unit}`, 'status', 'μ̂', 'σ_μ', 'local Z', 'p0', 'exp. Z', 'obs. limit', 'exp. limit', '±1σ', '±2σ'];
  const rows = r.points.map((p) => {
    const e = p.limit?.expected;
    return [
      num(p.value, 6),
      p.status,
      num(p.mu?.value),
      num(p.mu?.error),
      num(p.local?.z),
      num(p.local?.p0),
      num(p.expected?.z),
      num(p.limit?.observed),
      num(e?.median),
      e ? `${num(e.minus1)}–${num(e.plus1)}` : '–',
      e ? `${num(e.minus2)}–${num(e.plus2)}` : '–',
    ];
  });
  const widths = header.map((h, c) => Math.max(h.length, ...rows.map((row) => row[c].length)));
  const line = (cells: string[]) => `  ${cells.map((cell, c) => (c < 2 ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('  ')}`.trimEnd();
  const out = [
    `scan over ${r.parameter.name}${r.parameter.unit ? ` (${r.parameter.unit})` : ''}, ${r.dataset} data: ${r.points.length} hypotheses, ${r.points.filter((p) => p.status === 'failed').length} failed (${r.seconds.toFixed(1)} s)`,
    line(header),
    ...rows.map(line),
  ];
  for (const p of r.points) if (p.status === 'failed') out.push(`  ${p.label}: the fit failed: ${p.message}`);
  const g = r.global;
  if (g) {
    const at = r.points.find((p) => p.key === g.at.key)!;
    out.push(
      `largest local excess: ${r.parameter.name} = ${num(g.at.value, 6)}${r.parameter.unit ? ` ${r.parameter.unit}` : ''} (${at.key}): q0 = ${num(g.at.q0, 4)}, local Z = ${num(g.at.z)}, p0 = ${num(g.at.p0)}`,
      `upcrossings of q0 through c0 = ${g.referenceLevel}: ${g.upcrossings.observed} along the observed scan` +
        (g.upcrossings.toys ? `; mean ${num(g.upcrossings.toys.mean)} ± ${num(g.upcrossings.toys.error, 2)} on ${g.upcrossings.toys.count} background-only toys` : ''),
      `global, from the upcrossings (⟨N(c0)⟩ from the ${g.upcrossingEstimate.source === 'toys' ? 'toys' : 'observed scan'}): p = ${num(g.upcrossingEstimate.p)} ± ${num(g.upcrossingEstimate.pError, 2)}, Z = ${num(g.upcrossingEstimate.z)}, trials factor ${num(g.upcrossingEstimate.trialsFactor)}`,
    );
    const t = g.fromToys;
    if (t) out.push(`global, from toys (${t.exceeding} of ${t.count} reach q0 = ${num(g.at.q0, 4)}): p = ${num(t.p)} ± ${num(t.pError, 2)}, Z = ${num(t.z)}, trials factor ${num(t.trialsFactor)}`);
  } else if (r.dataset === 'observed') out.push('no global significance (see the warnings)');
  const warnings = [...r.warnings, ...r.points.flatMap((p) => p.warnings.map((w) => `${p.label}: ${w}`))];
  if (warnings.length) out.push('warnings:', ...warnings.map((w) => `  - ${w}`));
  return `${out.join('\n')}\n`;
}
