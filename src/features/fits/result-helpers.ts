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
