import type { FitResult, NuisanceReport } from '@shared/schemas/fit';
import type { FitResultHead } from '@shared/schemas/fits';

/** A parameter of interest as the result reports it (μ first). */
export type PoiReport = NonNullable<FitResult['poi']>['list'][number];

/** How a parameter of interest is written in formulas: its symbol, best fit, change, σ and variance. */
export type PoiWords = { name: string; sym: string; hat: string; delta: string; sigma: string; variance: string };

export const MU_WORDS: PoiWords = { name: 'mu', sym: 'μ', hat: 'μ̂', delta: 'Δμ', sigma: 'σ_μ', variance: 'V_μμ' };

/** The symbol of a parameter of interest: μ for "mu", μ_x for a key "mu_x", else the key itself. */
export function poiSymbol(name: string): string {
  if (name === 'mu') return 'μ';
  const m = /^mu_(.+)$/.exec(name);
  return m ? `μ_${m[1]}` : name;
}

export function poiWords(name: string): PoiWords {
  if (name === 'mu') return MU_WORDS;
  const sym = poiSymbol(name);
  const hat = sym.startsWith('μ_') ? `μ̂${sym.slice(1)}` : `${sym}̂`;
  return { name, sym, hat, delta: `Δ${sym}`, sigma: `σ(${sym})`, variance: `V(${sym}, ${sym})` };
}

/** The parameter of interest a choice names, when the result has it; μ otherwise. */
export function chosenPoi(result: Pick<FitResultHead, 'poi'>, choice: string | null | undefined): string {
  if (!choice || choice === 'mu') return 'mu';
  return result.poi?.list.some((p) => p.name === choice) ? choice : 'mu';
}

/** An interval of absolute values as offsets from the best fit (null ends stay null). */
function offsets(interval: { low: number | null; high: number | null } | null | undefined, value: number) {
  if (!interval) return null;
  return { low: interval.low === null ? null : interval.low - value, high: interval.high === null ? null : interval.high - value };
}

/**
 * The result as the impact ranking reads it for one parameter of interest. For μ (or a name the
 * result does not have) the result itself. For another one, every nuisance row carries that
 * parameter's impacts instead of μ's (none where its impacts were not computed), and the
 * summary's μ is that parameter's best fit and σ; the split into statistics and systematics and
 * the grouped impacts are μ's alone, so they are left out.
 */
export function impactsFor(result: FitResultHead, poi: string | null | undefined): { result: FitResultHead; poi: string; words: PoiWords; label: string } {
  const name = chosenPoi(result, poi);
  const report = result.poi?.list.find((p) => p.name === name);
  if (name === 'mu' || !report || !result.summary) return { result, poi: 'mu', words: MU_WORDS, label: result.poi?.list[0]?.label ?? 'signal strength' };
  const impacts = new Map((report.impacts ?? []).map((i) => [i.name, i]));
  const nuisance: NuisanceReport[] = result.nuisance.map((n) => {
    const i = impacts.get(n.name);
    return { ...n, quickImpact: i?.quickImpact ?? null, postfitImpact: i?.postfitImpact ?? null, prefitImpact: i?.prefitImpact ?? null, rank: i?.rank ?? null };
  });
  const mu = {
    value: report.value,
    fixed: report.fixed,
    error: report.error,
    interval68: offsets(report.interval68, report.value),
    interval95: offsets(report.interval95, report.value),
    stat: null,
    syst: null,
  };
  return { result: { ...result, nuisance, summary: { ...result.summary, mu }, groupedImpacts: [] }, poi: name, words: poiWords(name), label: report.label };
}

/** ρ between two parameters of interest from the section's correlation (null when either is held or absent). */
export function poiCorrelation(section: NonNullable<FitResult['poi']>, a: string, b: string): number | null {
  const { names, values } = section.correlation;
  const i = names.indexOf(a);
  const j = names.indexOf(b);
  if (i < 0 || j < 0) return null;
  const v = values[i * names.length + j];
  return Number.isFinite(v) ? v : null;
}
