/**
 * Fits an exchange file from the command line and writes the result in the shape the API returns.
 *
 *   npm run fit -- MODEL.json [--asimov MU] [--control-only] [--impacts none|quick|full]
 *                 [--scan] [--limit] [--exclude REGION]… [--threads N] --out RESULT.json
 *
 * Exit codes: 0 fitted, 1 bad input (the messages name the failing fields), 3 the fit failed
 * (its report is still written).
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import type { FitOptionsInput } from '@shared/schemas/fit';
import { createFitPool, FitInputError, fitModel } from '../server/fit';

function fail(message: string): never {
  process.stderr.write(`${message}\n`);
  process.exit(1);
}

const { values, positionals } = parseArgs({
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
  },
});
if (positionals.length !== 1 || !values.out) fail('usage: npm run fit -- MODEL.json [--asimov MU] [--control-only] [--impacts none|quick|full] [--scan] [--limit] --out RESULT.json');
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
};
if (!Number.isFinite(options.asimovMu)) fail(`--asimov needs a number (got "${values.asimov}")`);

const needsPool = options.impacts === 'full' || options.scan || options.limit;
const pool = needsPool ? createFitPool(values.threads ? { threads: Number(values.threads) } : {}) : undefined;
try {
  const result = await fitModel(parsed.data, options, { pool });
  writeFileSync(values.out, `${JSON.stringify(result, null, 1)}\n`);
  const mu = result.summary?.mu;
  process.stdout.write(
    result.status === 'converged'
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
