import type { AnalysisRow } from '../db/analyses.repository';

/**
 * The one rule every response goes through: while an analysis is not unblinded, observed counts
 * of its signal regions never leave the server.
 */
export function isWithheld(analysis: Pick<AnalysisRow, 'blinding'>, region: { role: string }): boolean {
  return analysis.blinding !== 'unblinded' && region.role === 'signal';
}

export function visibleObserved(analysis: Pick<AnalysisRow, 'blinding'>, region: { role: string; observed: number[] | null }) {
  return isWithheld(analysis, region) ? null : region.observed;
}
