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
