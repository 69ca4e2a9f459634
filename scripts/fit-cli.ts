/**
 * Fits an exchange file from the command line and writes the result in the shape the API returns.
 *
 *   npm run fit -- MODEL.json [--asimov MU] [--control-only] [--impacts none|quick|full]
 *                 [--scan] [--limit] [--exclude REGION]… [--threads N] --out RESULT.json
 *   variants (docs/likelihood.md §9):
 *                 [--hold KEY=VALUE|best]… [--hold-group GROUP]… [--stat-only] [--no-template-stats]
 *                 [--decorrelate KEY:region|KEY:process]… [--expected-from prefit|control|background]
 *                 [--hidden-mu] [--breakdown]
 *
 * A fit with --hidden-mu writes the result without anything computed from μ̂ or from the signal
 * regions' data, as the server stores it.
 * Exit codes: 0 fitted, 1 bad input (the messages name the failing fields), 3 the fit failed
 * (its report is still written).
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import type { FitOptionsInput } from '@shared/schemas/fit';
import { FitInputError, fitModel, hideMu, variantIssues } from '../server/fit';
import { createFitPool } from '../server/runs/threads/pool';

function fail(message: string): never {
  process.stderr.write(`${message}\n`);
  process.exit(1);
}

const USAGE =
  'usage: npm run fit -- MODEL.json [--asimov MU] [--control-only] [--impacts none|quick|full] [--scan] [--limit] [--exclude REGION]… [--hold KEY=VALUE|best]… [--hold-group GROUP]… [--stat-only] [--no-template-stats] [--decorrelate KEY:region|KEY:process]… [--expected-from prefit|control|background] [--hidden-mu] [--breakdown] [--threads N] --out RESULT.json';

let args: ReturnType<typeof read>;
try {
  args = read();
} catch (e) {
  // an unknown or malformed flag: one plain line, not a stack trace
  fail(`${(e as Error).message}\n${USAGE}`);
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
    },
  });
}
if (positionals.length !== 1 || !values.out) fail(USAGE);
if (!['prefit', 'control', 'background'].includes(values['expected-from']!)) fail(`--expected-from must be prefit, control or background (got "${values['expected-from']}")`);
const hold = values.hold!.map((h) => {
  const m = /^([^=]+)=(.+)$/.exec(h);
  if (!m) fail(`--hold needs KEY=VALUE or KEY=best (got "${h}")`);
  const value = m[2] === 'best' ? 'best' : Number(m[2]);
  if (value !== 'best' && !Number.isFinite(value)) fail(`--hold ${m[1]} needs a number or "best" (got "${m[2]}")`);
  return { parameter: m[1], value: value as number | 'best' };
});
const decorrelate = values.decorrelate!.map((d) => {
  const m = /^(.+):(region|process)$/.exec(d);
  if (!m) fail(`--decorrelate needs KEY:region or KEY:process (got "${d}")`);
  return { parameter: m[1], by: m[2] as 'region' | 'process' };
});
if (!['none', 'quick', 'full'].includes(values.impacts!)) fail(`--impacts must be none, quick or full (got "${values.impacts}")`);

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
if (!Number.isFinite(options.asimovMu)) fail(`--asimov needs a number (got "${values.asimov}")`);

const issues = variantIssues(parsed.data, { hold, holdGroups: values['hold-group']!, statOnly: values['stat-only']!, decorrelate, controlOnly: values['control-only']! });
if (issues.length) fail(issues.map((i) => `  options.${i.path.join('.')}: ${i.message}`).join('\n'));

const needsPool = options.impacts === 'full' || options.scan || options.limit || options.breakdown;
const pool = needsPool ? createFitPool(values.threads ? { threads: Number(values.threads) } : {}) : undefined;
try {
  const computed = await fitModel(parsed.data, options, { pool });
  const result = options.hiddenMu ? hideMu(computed) : computed;
  writeFileSync(values.out, `${JSON.stringify(result, null, 1)}\n`);
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
