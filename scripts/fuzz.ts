import fc from 'fast-check';
import { fuzzFixture, fuzzTarget, TARGETS } from '../tests/fuzz/targets';
import { hostileModel, hostileOptions, importable, judgeFit } from '../tests/fuzz/models';
import { fitThroughApi } from '../tests/fuzz/fit-through-api';

/**
 * npm run fuzz — feeds FUZZ_INPUTS (default 10 000) generated malformed inputs to a real app on
 * an in-memory database, spread over every target in tests/fuzz/targets.ts, and asserts each is
 * refused with a 4xx and a message, leaves the database unchanged, and leaves the server up.
 * Then fits FUZZ_MODELS (default 1 000) numerically hostile models in the engine and FUZZ_API_FITS
 * (default 40) of them through the API, asserting every one fits or fails with a report and
 * no response holds a NaN or an infinity. FUZZ_SEED repeats a run; a failure prints the input.
 */
const INPUTS = Number(process.env.FUZZ_INPUTS ?? 10_000);
const MODELS = Number(process.env.FUZZ_MODELS ?? 1_000);
const API_FITS = Number(process.env.FUZZ_API_FITS ?? 40);
const SEED = Number(process.env.FUZZ_SEED ?? Date.now() % 2 ** 31);

async function main() {
  console.log(`fuzz seed ${SEED} (repeat with FUZZ_SEED=${SEED})`);
  const f = await fuzzFixture();
  const started = Date.now();
  let total = 0;
  try {
    const each = Math.ceil(INPUTS / TARGETS.length);
    for (const [i, target] of TARGETS.entries()) {
      const t0 = Date.now();
      const tally = await fuzzTarget(f, target, each, SEED + i);
      total += tally.inputs;
      const statuses = Object.entries(tally.statuses)
        .map(([s, n]) => `${s}×${n}`)
        .join(' ');
      console.log(`${target.name.padEnd(18)} ${String(tally.inputs).padStart(6)} inputs refused  ${statuses}  (${((Date.now() - t0) / 1000).toFixed(1)} s)`);
    }
    console.log(`malformed inputs: ${total}, every one refused with a message; database unchanged; server up (${((Date.now() - started) / 1000).toFixed(0)} s)`);

    const statuses: Record<string, number> = {};
    let refusedAtImport = 0;
    const t1 = Date.now();
    await fc.assert(
      fc.asyncProperty(hostileModel, hostileOptions, async (input, options) => {
        const model = importable(input);
        if (!model) return void (refusedAtImport += 1);
        const { wrong, status } = await judgeFit(model, options);
        statuses[status] = (statuses[status] ?? 0) + 1;
        if (wrong) throw new Error(wrong);
      }),
      { numRuns: MODELS, seed: SEED, endOnFailure: true },
    );
    console.log(`hostile models in the engine: ${MODELS} (${refusedAtImport} refused by the import schema) → ${Object.entries(statuses).map(([s, n]) => `${s} ${n}`).join(', ')}; no NaN or infinity (${((Date.now() - t1) / 1000).toFixed(0)} s)`);

    const t2 = Date.now();
    const api = await fitThroughApi(f, API_FITS, SEED);
    console.log(`hostile models through the API: ${api.imported} imported and fitted (${api.refused} refused at import with 422) → ${Object.entries(api.states).map(([s, n]) => `${s} ${n}`).join(', ')}; every fit response matches its schema (${((Date.now() - t2) / 1000).toFixed(0)} s)`);
  } finally {
    await f.t.close();
  }
}

main().then(
  () => process.exit(0),
  (e) => {
    console.error(e instanceof Error ? `${e.message}\n${e.cause instanceof Error ? e.cause.message : ""}` : e);
    process.exit(1);
  },
);
