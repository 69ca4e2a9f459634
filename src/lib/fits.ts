import type { FitOptions, NuisanceReport } from '@shared/schemas/fit';
import type { FitState } from '@shared/schemas/fits';
import { formatEdge } from './format';

/**
 * The words, paths and polling rule of a fit that several screens share: the fits list, a result,
 * its diagnosis, the questions raised on it, the overview and the pseudo-experiments. The state
 * badge and the progress bar that draw a fit's state are in src/components/status/fit-state.tsx.
 */

/** A fit as people name it: its label, or its number when it has none. */
export function fitName(f: { id: number; label: string }): string {
  return f.label || `Fit ${f.id}`;
}

/** The dataset of a fit in words: what was fitted, and where. */
export function datasetInWords(o: FitOptions): string {
  const where = o.controlOnly ? 'control regions only' : o.excludeRegions.length ? `without ${o.excludeRegions.join(', ')}` : 'all regions';
  const what = o.dataset === 'asimov' ? `Asimov dataset at μ = ${formatEdge(o.asimovMu)}` : 'observed data';
  return `${what}, ${where}`;
}

/** The options beyond the dataset, in words. */
export function optionsInWords(o: FitOptions): string {
  const parts = [o.impacts === 'full' ? 'full impacts' : o.impacts === 'quick' ? 'quick impacts' : 'no impacts'];
  if (o.scan) parts.push(`μ scan (${o.scanPoints} points)`);
  if (o.limit) parts.push('CLs limit');
  if (o.expected) parts.push('expected significance');
  return parts.join(' · ');
}

/** The basis of a fit's expected numbers, in words. */
export const EXPECTED_BASIS: Record<FitOptions['expectedFrom'], string> = {
  prefit: 'pre-fit expectation',
  control: 'background measured in the control regions',
  background: 'background measured in all regions (μ = 0)',
};

/**
 * The variant of a fit in words (docs/likelihood.md §9): one phrase per way it departs from the
 * nominal fit, or an empty list for the nominal fit itself.
 */
export function variantInWords(o: FitOptions): string[] {
  const parts: string[] = [];
  if (o.hiddenMu) parts.push('μ hidden');
  if (o.statOnly) parts.push('statistics only');
  for (const h of o.hold) parts.push(`${h.parameter} held at ${h.value === 'best' ? 'its best fit' : formatEdge(h.value)}`);
  for (const g of o.holdGroups) parts.push(`group ${g} held`);
  if (!o.templateStats) parts.push('without template statistics');
  for (const d of o.decorrelate) parts.push(`${d.parameter} split by ${d.by}`);
  if (o.expectedFrom !== 'prefit') parts.push(`expected numbers from the ${EXPECTED_BASIS[o.expectedFrom]}`);
  if (o.breakdown) parts.push('breakdown by freezing');
  return parts;
}

/** A job (a fit or a toy run) that has not ended yet: its screens poll for progress. */
export function isActive(state: FitState): boolean {
  return state === 'queued' || state === 'running';
}

/** How often a screen asks for a running job's progress, in milliseconds. */
export const POLL_MS = 700;

/** Where a fit's result lives. */
export function fitPath(slug: string, fitId: number): string {
  return `/a/${slug}/fits/${fitId}`;
}

/** Where a parameter's diagnosis in a fit lives. */
export function diagnosisPath(slug: string, fitId: number, name: string): string {
  return `${fitPath(slug, fitId)}/diagnostics?parameter=${encodeURIComponent(name)}`;
}

/**
 * A linked fit's part (a review set's member, a diagnosis check) in a few words, for a column
 * header or a list: `held:theory` → "theory held", `decorrelate:lumi` → "lumi split".
 */
export function variantShortName(variant: string | null): string {
  if (!variant) return 'nominal';
  const fixed: Record<string, string> = {
    'control-only': 'Control only',
    'expected-1': 'Expected, μ = 1',
    'expected-0': 'Expected, μ = 0',
    'hidden-mu': 'μ hidden',
    observed: 'Observed',
    'stat-only': 'Statistics only',
  };
  if (fixed[variant]) return fixed[variant];
  const [kind, ...rest] = variant.split(':');
  const what = rest.join(':');
  if (kind === 'held' || kind === 'partner') return `${what} held`;
  if (kind === 'decorrelate') return `${what} split`;
  return variant;
}

/** Where a review set lives. */
export function reviewSetPath(slug: string, setId: number): string {
  return `/a/${slug}/review-sets/${setId}`;
}

/** What a parameter without a group is listed under. */
export const NO_GROUP = '(no group)';
export function groupName(g: string | null): string {
  return g ?? NO_GROUP;
}

/** |pull| above which a parameter is marked as strongly pulled (in units of its prior width). */
export const STRONG_PULL = 1;

export function isStronglyPulled(n: NuisanceReport): boolean {
  return Math.abs(n.pull) > STRONG_PULL;
}
