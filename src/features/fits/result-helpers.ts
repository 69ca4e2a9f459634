import type { NuisanceReport } from '@shared/schemas/fit';
import type { FitResultHead } from '@shared/schemas/fits';

/** How the impacts of a fit were computed: refits, the estimate from V, or not at all. */
export type ImpactMode = 'postfit' | 'quick' | 'none';

export function impactMode(r: FitResultHead): ImpactMode {
  if (r.nuisance.some((n) => n.postfitImpact !== null)) return 'postfit';
  if (r.nuisance.some((n) => n.quickImpact !== null)) return 'quick';
  return 'none';
}

/** The size of a parameter's impact as ranked: max(|Δμ+|, |Δμ−|) of the post-fit refits, else |quick impact|. */
export function impactSize(n: NuisanceReport, mode: ImpactMode): number | null {
  if (mode === 'postfit') {
    const p = n.postfitImpact;
    if (!p || (p.up === null && p.down === null)) return null;
    return Math.max(Math.abs(p.up ?? 0), Math.abs(p.down ?? 0));
  }
  if (mode === 'quick') return n.quickImpact === null ? null : Math.abs(n.quickImpact);
  return null;
}

/** Nuisance parameters ordered by impact, largest first; those without one at the end, by name. */
export function rankByImpact(list: NuisanceReport[], mode: ImpactMode): NuisanceReport[] {
  return [...list].sort((a, b) => {
    const x = impactSize(a, mode);
    const y = impactSize(b, mode);
    if (x === null && y === null) return a.name.localeCompare(b.name);
    if (x === null) return 1;
    if (y === null) return -1;
    return y - x || a.name.localeCompare(b.name);
  });
}

/** Labels of fitted parameters by name. */
export function labelsOf(r: FitResultHead): Map<string, string> {
  return new Map(r.parameters.map((p) => [p.name, p.label]));
}

/**
 * The symmetric impact of a parameter, the size its share of σ_μ² is taken from: the mean of
 * |Δμ⁺| and |Δμ⁻| of the post-fit refits (one side alone when the other refit gave none), or
 * |ρ(μ, θ)·σ_μ| with quick impacts. Null without an impact.
 */
export function symmetricImpact(n: NuisanceReport, mode: ImpactMode): { value: number; partial: boolean } | null {
  if (mode === 'postfit') {
    const p = n.postfitImpact;
    if (!p) return null;
    if (p.up !== null && p.down !== null) return { value: (Math.abs(p.up) + Math.abs(p.down)) / 2, partial: false };
    const one = p.up ?? p.down;
    return one === null ? null : { value: Math.abs(one), partial: true };
  }
  if (mode === 'quick') return n.quickImpact === null ? null : { value: Math.abs(n.quickImpact), partial: false };
  return null;
}

/** A ranked parameter with its share of σ_μ² and the running sum of the shares down to it. */
export type ShareRow = {
  name: string;
  /** the symmetric impact, in units of μ; null without one */
  symmetric: number | null;
  /** one side of the post-fit impact is missing (its refit gave none) */
  partial: boolean;
  /** symmetric² / σ_μ²; null without an impact or without σ_μ */
  share: number | null;
  /** the shares of this row and of every row ranked above it in the list */
  cumulative: number | null;
};

/** Shares of σ_μ² along a ranked list (the order given), with their running sum. */
export function sharesOf(ranked: NuisanceReport[], mode: ImpactMode, sigmaMu: number | null): ShareRow[] {
  let sum = 0;
  return ranked.map((n) => {
    const s = symmetricImpact(n, mode);
    const share = s && sigmaMu && sigmaMu > 0 ? (s.value * s.value) / (sigmaMu * sigmaMu) : null;
    if (share !== null) sum += share;
    return { name: n.name, symmetric: s?.value ?? null, partial: s?.partial ?? false, share, cumulative: share === null ? null : sum };
  });
}

/** The cut levels offered, as fractions of what the listed parameters hold together. */
export const CUT_LEVELS = [0.5, 0.8, 0.9, 0.95, 1] as const;
export type CutLevel = (typeof CUT_LEVELS)[number];

export type Cut = {
  /** how many leading rows the cut keeps */
  kept: number;
  /** Σ of every listed share: what the parameters hold of σ_μ² together */
  total: number;
  /** the running sum at which the cut falls: level × total */
  threshold: number;
  /** Σ of the kept rows' shares */
  keptShare: number;
};

/**
 * Keep the leading rows until their running share reaches `level` of the total the listed rows
 * hold, the row that reaches it included. At 1 every row is kept, also those without an impact;
 * without any share (no impacts, or no σ_μ) every row is kept.
 */
export function cutByShare(rows: ShareRow[], level: number): Cut {
  const total = rows.reduce((s, r) => s + (r.share ?? 0), 0);
  const threshold = level * total;
  if (level >= 1 || total <= 0) return { kept: rows.length, total, threshold, keptShare: total };
  // A relative tolerance, so that rounding in the sum does not add a row at an exact level.
  const i = rows.findIndex((r) => r.cumulative !== null && r.cumulative >= threshold * (1 - 1e-9));
  const kept = i < 0 ? rows.length : i + 1;
  return { kept, total, threshold, keptShare: rows[kept - 1]?.cumulative ?? total };
}

/** The convergence warnings that name a parameter (as a whole word: `jes` is not `jes_flavour`). */
export function warningsNaming(warnings: string[], name: string): string[] {
  const escaped = name.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  const re = new RegExp(`(^|[^A-Za-z0-9_])${escaped}($|[^A-Za-z0-9_])`);
  return warnings.filter((w) => re.test(w));
}
