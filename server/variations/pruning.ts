import { ratioNumber, type Effect, type ExchangeModel, type ScaleEffect } from '@shared/schemas/exchange';
import { shiftPrecision } from './precision';

/**
 * Pruning: effects too small or too noisy to carry information, proposed for leaving out of the
 * fit by the analysis's own rules (common practice, no source). Nothing is pruned without an
 * analyst's decision; a pruned effect stays in the register, marked, and frozen versions leave it
 * out (services/exchange-export).
 *
 * - small: the effect moves no bin of its template by `belowPct` percent or more, up or down
 *   (a scale effect: |κ± − 1|). Pruning leaves the whole effect out.
 * - flat shape: a shape effect neither of whose shifts is significant over its statistical noise
 *   against a flat shift (χ² p-value of both sides above `shapeP`, variations/precision.ts).
 *   Pruning keeps its normalisation only: frozen versions carry it as a scale effect with
 *   κ± = Σ_b ν±_b / Σ_b ν⁰_b.
 */
export type PruningRules = { belowPct: number; shapeP: number };

export type PruningReason =
  | { rule: 'small'; largestPct: number }
  | { rule: 'flat-shape'; p: number; estimated: boolean; normalisation: { up: number; down: number } };

export type PrunableEffect = {
  kind: 'scale' | 'shape';
  up: number | number[];
  down: number | number[];
  nominal: number[];
  /** largest |variation − nominal| / nominal over the bins, in percent */
  largestPct: number;
  /** the smaller p of both shifts' χ² against flat; null where no test is possible */
  flatP: number | null;
  /** the shifts' errors were estimated from the template's variance, not given with the upload */
  estimated?: boolean;
};

/** Why the rules propose pruning this effect, or null. */
export function pruningReason(rules: PruningRules, e: PrunableEffect): PruningReason | null {
  if (e.largestPct < rules.belowPct && !movesEmptyBins(e)) return { rule: 'small', largestPct: e.largestPct };
  if (e.kind === 'shape' && e.flatP !== null && e.flatP > rules.shapeP) {
    const normalisation = normalisationOf(e.nominal, e.up as number[], e.down as number[]);
    if (normalisation) return { rule: 'flat-shape', p: e.flatP, estimated: e.estimated ?? true, normalisation };
  }
  return null;
}

/** A shape that puts events where the nominal has none is not small, whatever its relative size says. */
function movesEmptyBins(e: PrunableEffect) {
  if (e.kind !== 'shape') return false;
  const up = e.up as number[];
  const down = e.down as number[];
  return e.nominal.some((n, b) => n <= 0 && (up[b] !== 0 || down[b] !== 0));
}

/** The ratios Σν±/Σν⁰ a pruned shape keeps, or null when they would not be valid scale ratios. */
export function normalisationOf(nominal: number[], up: number[], down: number[]): { up: number; down: number } | null {
  const total = nominal.reduce((s, n) => s + n, 0);
  if (!(total > 0)) return null;
  const ratio = (v: number[]) => v.reduce((s, x) => s + x, 0) / total;
  const r = { up: ratio(up), down: ratio(down) };
  return ratioNumber.safeParse(r.up).success && ratioNumber.safeParse(r.down).success ? r : null;
}

/** The smaller p-value of the two shifts' χ² against a flat shift; null where either cannot be tested. */
export function flatShapeP(nominal: number[], up: number[], down: number[], shiftVariance: { up: number[] | null; down: number[] | null }, templateVariance: number[] | null): number | null {
  const u = shiftPrecision(nominal, up, shiftVariance.up, templateVariance).againstFlat;
  const d = shiftPrecision(nominal, down, shiftVariance.down, templateVariance).againstFlat;
  return u && d ? Math.min(u.p, d.p) : null;
}

export type PrunedEffect = { systematic: string; region: string; process: string; kind: 'scale' | 'shape'; as: 'dropped' | 'normalisation' };

/**
 * The model with these effects pruned: left out, or (a shape keeping its normalisation) turned
 * into a scale effect of κ± = Σν±/Σν⁰, multiplied into the systematic's own scale effect on the
 * same template if it has one (both act on the same θ in log space, so their logarithms add).
 * A systematic left without effects is left out. Effects not in the model change nothing.
 */
export function pruneModel(model: ExchangeModel, pruned: readonly PrunedEffect[]): ExchangeModel {
  if (!pruned.length) return model;
  const bySystematic = new Map<string, PrunedEffect[]>();
  for (const p of pruned) bySystematic.set(p.systematic, [...(bySystematic.get(p.systematic) ?? []), p]);
  const nominalOf = new Map(model.templates.map((t) => [`${t.region}/${t.process}`, t.nominal]));
  const systematics = model.systematics.flatMap((s) => {
    const mine = bySystematic.get(s.key);
    if (!mine) return [s];
    const find = (e: Effect) => mine.find((p) => p.region === e.region && p.process === e.process && p.kind === e.kind);
    const kept: Effect[] = s.effects.filter((e) => !find(e));
    for (const e of s.effects) {
      const p = find(e);
      if (!p || p.as !== 'normalisation' || e.kind !== 'shape') continue;
      const ratio = normalisationOf(nominalOf.get(`${e.region}/${e.process}`) ?? [], e.up, e.down);
      if (!ratio) continue;
      const own = kept.findIndex((k) => k.kind === 'scale' && k.region === e.region && k.process === e.process);
      if (own < 0) kept.push({ region: e.region, process: e.process, kind: 'scale', up: ratio.up, down: ratio.down });
      else {
        const k = kept[own] as ScaleEffect;
        kept[own] = { ...k, up: k.up * ratio.up, down: k.down * ratio.down };
      }
    }
    return kept.length ? [{ ...s, effects: kept }] : [];
  });
  return { ...model, systematics };
}
