import fc from 'fast-check';
import { exchangeModelSchema, type ExchangeModel, type ExchangeModelInput } from '@shared/schemas/exchange';
import { fitResultSchema, type FitOptionsInput, type FitResult } from '@shared/schemas/fit';
import { fitModel, FitInputError } from '../../server/fit';

/**
 * Models that pass the exchange schema but are numerically hostile: yields from the smallest
 * double to the largest allowed (1e15), empty bins, zero data, variations that do nothing or
 * change a yield by a factor 1e6, ratios at the allowed ends (1e-6, 1e6). The engine must fit each or fail with a report,
 * and never hand out a NaN or an infinity.
 */

/** A yield or count: ordinary, zero, tiny or huge. */
const extreme = fc.oneof(
  { weight: 4, arbitrary: fc.double({ min: 0.5, max: 1000, noNaN: true }) },
  { weight: 1, arbitrary: fc.constantFrom(0, 5e-324, 1e-300, 1e-12, 1e-6, 1e6, 1e9, 1e12, 1e15) },
);
const ratio = fc.oneof(
  { weight: 4, arbitrary: fc.double({ min: 0.5, max: 2, noNaN: true }) },
  { weight: 1, arbitrary: fc.constantFrom(1, 1e-6, 1e-3, 1e3, 1e6) },
);

export const hostileModel: fc.Arbitrary<ExchangeModelInput> = fc
  .record({
    regions: fc.array(fc.record({ bins: fc.integer({ min: 1, max: 5 }), signal: fc.boolean(), withData: fc.boolean() }), { minLength: 1, maxLength: 3 }),
    processes: fc.integer({ min: 1, max: 3 }),
    floating: fc.boolean(),
    seeds: fc.array(extreme, { minLength: 64, maxLength: 64 }),
    ratios: fc.array(ratio, { minLength: 16, maxLength: 16 }),
    systematics: fc.array(fc.record({ shape: fc.boolean(), region: fc.nat(), process: fc.nat(), scale: fc.double({ min: 0, max: 2, noNaN: true }) }), { maxLength: 4 }),
  })
  .map(({ regions, processes, floating, seeds, ratios, systematics }) => {
    let k = 0;
    const next = () => seeds[k++ % seeds.length];
    const rs = regions.map((r, i) => ({ key: `R${i}`, role: r.signal ? ('signal' as const) : ('control' as const), observable: { name: 'x', unit: '' }, edges: Array.from({ length: r.bins + 1 }, (_, b) => b), ...(r.withData ? { observed: Array.from({ length: r.bins }, next) } : {}) }));
    const ps = Array.from({ length: processes }, (_, i) => ({ key: `p${i}`, kind: i === 0 ? ('signal' as const) : ('background' as const) }));
    const templates = rs.flatMap((r) => ps.map((p) => ({ region: r.key, process: p.key, nominal: Array.from({ length: r.edges.length - 1 }, next), variance: Array.from({ length: r.edges.length - 1 }, next) })));
    const systs = systematics.map((s, i) => {
      const t = templates[(s.region * ps.length + s.process) % templates.length];
      const effect = s.shape
        ? { region: t.region, process: t.process, kind: 'shape' as const, up: t.nominal.map((v) => v * s.scale), down: t.nominal.map(() => next()) }
        : { region: t.region, process: t.process, kind: 'scale' as const, up: ratios[i % 16], down: ratios[(i + 5) % 16] };
      return { key: `s${i}`, effects: [effect] };
    });
    const floatingNorms = floating && ps.length > 1 ? [{ key: 'k', targets: rs.map((r) => ({ region: r.key, process: 'p1' })) }] : [];
    return { format: 'plumbline.model', version: 1, name: 'hostile', regions: rs, processes: ps, templates, systematics: systs, floatingNorms } as ExchangeModelInput;
  });

export const hostileOptions: fc.Arbitrary<FitOptionsInput> = fc.record({
  dataset: fc.constantFrom('observed', 'asimov') as fc.Arbitrary<'observed' | 'asimov'>,
  impacts: fc.constantFrom('none', 'quick', 'full') as fc.Arbitrary<'none' | 'quick' | 'full'>,
  expected: fc.boolean(),
  scan: fc.boolean(),
  scanPoints: fc.constant(7),
  limit: fc.boolean(),
});

/** The model as the import would take it, or null when the schema refuses it (the import then answers 422). */
export function importable(input: ExchangeModelInput): ExchangeModel | null {
  const parsed = exchangeModelSchema.safeParse(input);
  return parsed.success ? parsed.data : null;
}

/**
 * Fits one model and says what is wrong with the outcome, or null: a result must satisfy the
 * result contract (finite numbers only), a non-converged one must carry a failure report, and a
 * refusal must be an input error with a message.
 */
export async function judgeFit(model: ExchangeModel, options: FitOptionsInput): Promise<{ wrong: string | null; status: string }> {
  let result: FitResult;
  try {
    result = await fitModel(model, options);
  } catch (e) {
    if (e instanceof FitInputError && e.message.length > 10) return { wrong: null, status: 'refused' };
    return { wrong: `threw ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`, status: 'threw' };
  }
  const checked = fitResultSchema.safeParse(result);
  if (!checked.success) {
    return { wrong: `the result breaks its contract (status ${result.status}): ${describeIssues(checked.error)}`, status: result.status };
  }
  if (result.status !== 'converged' && !(result.convergence.failure && result.convergence.failure.length > 10)) return { wrong: `status ${result.status} without a failure report`, status: result.status };
  return { wrong: null, status: result.status };
}

/** The first three places where a value broke its schema, e.g. "yields.prefit.0.total.errors.2: expected number". */
export function describeIssues(error: { issues: { path: PropertyKey[]; message: string }[] }) {
  return error.issues
    .slice(0, 3)
    .map((i) => `${i.path.map(String).join('.')}: ${i.message}`)
    .join('; ');
}
