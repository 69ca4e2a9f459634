import type { PlotLabels } from '@shared/schemas/api';
import type { FitOptions } from '@shared/schemas/fit';

/** Text for HTML and SVG: every character that could open markup is escaped. */
export function esc(value: unknown): string {
  return String(value ?? '')
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/"/g, '&quot;')
    .replace(/'/g, '&#39;');
}

/** A number as a reader wants it: four significant digits, a true minus sign, "—" for none. */
export function num(x: number | null | undefined, digits = 4): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  if (x === 0) return '0';
  const a = Math.abs(x);
  const text = a >= 1e6 || a < 1e-3 ? x.toExponential(digits - 1) : a >= 10 ** digits ? x.toFixed(0) : String(Number(x.toPrecision(digits)));
  return text.replace(/^-/, '−');
}

/** A signed shift, pull or coefficient (+0.12, −0.34); one at the engine's rounding noise (a parameter no datum moves) reads 0. */
export const signed = (x: number | null | undefined, digits = 3) => (x === null || x === undefined || !Number.isFinite(x) ? '—' : Math.abs(x) < 1e-10 ? '0' : x > 0 ? `+${num(x, digits)}` : num(x, digits));

/** The plot labels as one line: "LANTERN Internal · 38 fb⁻¹ · 9 TeV" (empty parts left out). */
export function plotLabelParts(l: PlotLabels): { lead: string; rest: string } {
  const lead = [l.experiment, l.status].filter(Boolean).join(' ');
  const rest = [l.luminosity, l.energy].filter(Boolean).join(' · ');
  return { lead, rest };
}
export function plotLabelText(l: PlotLabels): string {
  const { lead, rest } = plotLabelParts(l);
  return [lead, rest].filter(Boolean).join(' · ');
}

/** The dataset of a fit in words: what was fitted, and where. */
export function datasetInWords(o: FitOptions): string {
  const where = o.controlOnly ? 'control regions only' : o.excludeRegions.length ? `all regions but ${o.excludeRegions.join(', ')}` : 'all regions';
  const what = o.dataset === 'asimov' ? `Asimov dataset at μ = ${num(o.asimovMu)}` : 'observed data';
  return `${what}, ${where}`;
}

/** The options beyond the dataset, in words. */
export function optionsInWords(o: FitOptions): string[] {
  const parts = [o.impacts === 'full' ? 'full impacts (refits at θ̂ ± σ̂ and θ̂ ± 1)' : o.impacts === 'quick' ? 'quick impacts (from the covariance)' : 'no impacts'];
  if (o.scan) parts.push(`profile-likelihood scan of μ (${o.scanPoints} points)`);
  if (o.limit) parts.push('95 % CL upper limit on μ (CLs)');
  if (o.expected) parts.push('expected significance');
  if (o.contour) parts.push(`contour of ${o.contour[0]} and ${o.contour[1]}`);
  parts.push(`over-constraint flagged below σ̂ = ${num(o.overConstraintThreshold)}`);
  return parts;
}

const EXPECTED_BASIS: Record<FitOptions['expectedFrom'], string> = {
  prefit: 'pre-fit expectation',
  control: 'background measured in the control regions',
  background: 'background measured in all regions (μ = 0)',
};

/** How the fit departs from the nominal one; empty for the nominal fit. */
export function variantInWords(o: FitOptions): string[] {
  const parts: string[] = [];
  if (o.hiddenMu) parts.push('μ hidden: no number computed from μ̂ is kept');
  if (o.statOnly) parts.push('statistics only (every θ and γ held at its best fit)');
  for (const h of o.hold) parts.push(`${h.parameter} held at ${h.value === 'best' ? 'its best fit' : num(h.value)}`);
  for (const g of o.holdGroups) parts.push(`group ${g} held at its best fit`);
  if (!o.templateStats) parts.push('without template-statistics parameters');
  for (const d of o.decorrelate) parts.push(`${d.parameter} split by ${d.by}`);
  if (o.expectedFrom !== 'prefit') parts.push(`expected numbers from the ${EXPECTED_BASIS[o.expectedFrom]}`);
  if (o.breakdown) parts.push('uncertainty breakdown by freezing each group');
  return parts;
}

/** A date and time in UTC, to the minute. */
export const when = (iso: string | null | undefined) => (iso ? `${iso.slice(0, 10)} ${iso.slice(11, 16)} UTC` : '—');
