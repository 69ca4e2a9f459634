import type { FitOptions } from '@shared/schemas/fit';
import type { FitState } from '@shared/schemas/fits';
import type { Tone } from '../../components/ui/badge';
import { formatEdge } from '../../lib/format';

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

export const FIT_STATE_META: Record<FitState, { label: string; tone: Tone; title: string }> = {
  queued: { label: 'Queued', tone: 'neutral', title: 'Waiting for a free worker on the server' },
  running: { label: 'Running', tone: 'teal', title: 'The fit is running on the server' },
  succeeded: { label: 'Finished', tone: 'neutral', title: 'The job ended; see the convergence report for whether the fit converged' },
  failed: { label: 'Failed', tone: 'danger', title: 'The fit did not converge or the job stopped; no numbers are shown' },
  cancelled: { label: 'Cancelled', tone: 'amber', title: 'Cancelled before it finished' },
};

/** A fit as people name it: its label, or its number when it has none. */
export function fitName(f: { id: number; label: string }): string {
  return f.label || `Fit ${f.id}`;
}
