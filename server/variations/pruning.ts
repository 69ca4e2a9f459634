import { ratioNumber, type Effect, type ExchangeHypothesis, type ExchangeModel, type HypothesisEffect, type ScaleEffect } from '@shared/schemas/exchange';
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
 * The signal hypotheses' effects of the same systematic, template and kind are pruned alike
 * (pruneHypothesis). A systematic left without effects is left out, unless a hypothesis still
 * has one of it. Effects not in the model change nothing.
 */
export function pruneModel(model: ExchangeModel, pruned: readonly PrunedEffect[]): ExchangeModel {
  if (!pruned.length) return model;
  const bySystematic = new Map<string, PrunedEffect[]>();
  for (const p of pruned) bySystematic.set(p.systematic, [...(bySystematic.get(p.systematic) ?? []), p]);
  const signalHypotheses = model.signalHypotheses && { ...model.signalHypotheses, points: model.signalHypotheses.points.map((h) => pruneHypothesis(model, h, bySystematic)) };
  const named = new Set(signalHypotheses?.points.flatMap((h) => h.effects.map((e) => e.systematic)));
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
    return kept.length || named.has(s.key) ? [{ ...s, effects: kept }] : [];
  });
  return { ...model, systematics, ...(signalHypotheses ? { signalHypotheses } : {}) };
}

/**
 * A signal hypothesis's effects pruned as the model's are: an effect of a pruned systematic on the
 * same template and of the same kind is left out, or a shape keeps its own normalisation, over the
 * hypothesis's template. That normalisation becomes the hypothesis's scale effect of the
 * systematic there, multiplied into the one the hypothesis gives or else into the model's own
 * (unless that one is pruned): a hypothesis's scale effect replaces the model's on its template.
 */
function pruneHypothesis(model: ExchangeModel, h: ExchangeHypothesis, bySystematic: Map<string, PrunedEffect[]>): ExchangeHypothesis {
  const find = (systematic: string, e: { region: string; process: string; kind: string }) =>
    bySystematic.get(systematic)?.find((p) => p.region === e.region && p.process === e.process && p.kind === e.kind);
  if (!h.effects.some((e) => find(e.systematic, e))) return h;
  const nominalOf = new Map(h.templates.map((t) => [`${t.region}/${t.process}`, t.nominal]));
  const kept: HypothesisEffect[] = h.effects.filter((e) => !find(e.systematic, e));
  for (const e of h.effects) {
    const p = find(e.systematic, e);
    if (!p || p.as !== 'normalisation' || e.kind !== 'shape') continue;
    const ratio = normalisationOf(nominalOf.get(`${e.region}/${e.process}`) ?? [], e.up, e.down);
    if (!ratio) continue;
    const own = kept.findIndex((k) => k.kind === 'scale' && k.systematic === e.systematic && k.region === e.region && k.process === e.process);
    if (own >= 0) {
      const k = kept[own] as HypothesisEffect & ScaleEffect;
      kept[own] = { ...k, up: k.up * ratio.up, down: k.down * ratio.down };
      continue;
    }
    const base = model.systematics
      .find((s) => s.key === e.systematic)
      ?.effects.find((m): m is ScaleEffect => m.kind === 'scale' && m.region === e.region && m.process === e.process && !find(e.systematic, m));
    kept.push({ systematic: e.systematic, region: e.region, process: e.process, kind: 'scale', up: (base?.up ?? 1) * ratio.up, down: (base?.down ?? 1) * ratio.down });
  }
  return { ...h, effects: kept };
}
