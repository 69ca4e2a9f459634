/**
 * Warnings on a variation (PRODUCT.md §Validation): saved with the effect, shown on the entry and
 * in the register. They do not block an upload; errors (wrong bin count, NaN, negatives…) do.
 */
export type VariationWarning = { code: VariationWarningCode; message: string; bins?: number[] };
export type VariationWarningCode = 'same-side' | 'over-100-percent' | 'zero-effect' | 'flat-shape' | 'empty-nominal' | 'within-noise' | 'nominal-changed';

/** Relative spread below which a shape effect counts as flat (common practice, no source). */
const FLAT_TOLERANCE = 1e-3;

const binList = (bins: number[]) => {
  const shown = bins.slice(0, 8).map((b) => b + 1).join(', ');
  return bins.length > 8 ? `${shown} … (${bins.length} bins)` : shown;
};

/** Warnings for a per-bin (shape) variation against its nominal template. Bins are 0-based in data, 1-based in messages. */
export function shapeWarnings(nominal: number[], up: number[], down: number[]): VariationWarning[] {
  const warnings: VariationWarning[] = [];
  const sameSide: number[] = [];
  const over100: number[] = [];
  const emptyNominal: number[] = [];
  let zero = true;
  nominal.forEach((n, b) => {
    const du = up[b] - n;
    const dd = down[b] - n;
    if (du !== 0 || dd !== 0) zero = false;
    if (n === 0) {
      if (du !== 0 || dd !== 0) emptyNominal.push(b);
      return;
    }
    if (du * dd > 0) sameSide.push(b);
    if (Math.abs(du) > n || Math.abs(dd) > n) over100.push(b);
  });
  if (zero) return [{ code: 'zero-effect', message: 'Up and down equal the nominal in every bin: this variation has no effect (candidate for pruning).' }];
  if (sameSide.length)
    warnings.push({ code: 'same-side', message: `Up and down lie on the same side of the nominal in bin ${binList(sameSide)}.`, bins: sameSide });
  if (over100.length)
    warnings.push({ code: 'over-100-percent', message: `The variation exceeds 100 % of the nominal in bin ${binList(over100)}.`, bins: over100 });
  if (emptyNominal.length)
    warnings.push({ code: 'empty-nominal', message: `The nominal is 0 but the variation is not in bin ${binList(emptyNominal)}.`, bins: emptyNominal });
  const flat = flatRatios(nominal, up, down);
  if (!emptyNominal.length && flat)
    warnings.push({
      code: 'flat-shape',
      message: `The shape effect is flat (up ×${flat.up.toFixed(4)}, down ×${flat.down.toFixed(4)} in every bin): it is better entered as a scale effect.`,
    });
  return warnings;
}

/**
 * The ratios of a shape effect whose up/nominal and down/nominal are the same in every bin with a
 * non-zero nominal (within FLAT_TOLERANCE), or null. Needs at least two such bins.
 */
export function flatRatios(nominal: number[], up: number[], down: number[]): { up: number; down: number } | null {
  const filled = nominal.map((_, b) => b).filter((b) => nominal[b] > 0);
  if (filled.length < 2) return null;
  const ru = filled.map((b) => up[b] / nominal[b]);
  const rd = filled.map((b) => down[b] / nominal[b]);
  const spread = (rs: number[]) => Math.max(...rs) - Math.min(...rs);
  if (spread(ru) >= FLAT_TOLERANCE || spread(rd) >= FLAT_TOLERANCE) return null;
  const total = filled.reduce((s, b) => s + nominal[b], 0);
  return { up: filled.reduce((s, b) => s + up[b], 0) / total, down: filled.reduce((s, b) => s + down[b], 0) / total };
}

/** Warnings for a scale effect given as ratios κ+ and κ−. */
export function scaleWarnings(up: number, down: number): VariationWarning[] {
  if (up === 1 && down === 1) return [{ code: 'zero-effect', message: 'Both ratios are 1: this variation has no effect (candidate for pruning).' }];
  const warnings: VariationWarning[] = [];
  if ((up - 1) * (down - 1) > 0) warnings.push({ code: 'same-side', message: `Up (×${up}) and down (×${down}) move the yield the same way.` });
  if (Math.abs(up - 1) > 1 || Math.abs(down - 1) > 1) warnings.push({ code: 'over-100-percent', message: 'The variation exceeds 100 % of the nominal.' });
  return warnings;
}

/** Largest |variation − nominal| / nominal over the bins of an effect, in percent (the register's "largest effect"). */
export function largestEffectPct(kind: 'scale' | 'shape', up: number | number[], down: number | number[], nominal: number[] | undefined): number {
  if (kind === 'scale') return 100 * Math.max(Math.abs((up as number) - 1), Math.abs((down as number) - 1));
  let worst = 0;
  (nominal ?? []).forEach((n, b) => {
    if (n > 0) worst = Math.max(worst, Math.abs((up as number[])[b] - n) / n, Math.abs((down as number[])[b] - n) / n);
  });
  return 100 * worst;
}
