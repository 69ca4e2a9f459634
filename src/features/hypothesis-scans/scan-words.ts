import type { HypothesisScan } from '@shared/schemas/hypothesis-scan';

/** The hypothesis parameter with its unit, for axes and headers: "mass [GeV]". */
export function valueLabel(parameter: { name: string; unit: string }): string {
  return parameter.unit ? `${parameter.name} [${parameter.unit}]` : parameter.name;
}

/** A scan's name: its label, or what it is. */
export function scanName(s: Pick<HypothesisScan, 'id' | 'label' | 'options'>): string {
  return s.label || `${s.options.dataset === 'observed' ? 'Observed' : 'Expected'} scan #${s.id}`;
}

export function scanPath(slug: string, id: number): string {
  return `/a/${slug}/hypotheses/${id}`;
}
