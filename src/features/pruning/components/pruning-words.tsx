import type { PruningItem, PruningRules } from '@shared/schemas/register';
import { Badge } from '../../../components/ui/badge';
import { formatPercent } from '../../../lib/format';
import { formatProbability } from '../../../lib/stats-format';

/** The words of the pruning screen: the rules, an effect's name and why it is proposed. */

export type Rule = 'small' | 'flat-shape';

export const RULE_TITLES: Record<Rule, (rules: PruningRules) => string> = {
  small: (r) => `Below ${r.belowPct} % in every bin`,
  'flat-shape': (r) => `Shapes flat within their noise (p above ${r.shapeP})`,
};

export const RULE_MEANING: Record<Rule, string> = {
  small: 'No bin moves by the threshold: the effect is left out of the fit.',
  'flat-shape':
    'The shift is a constant factor within its statistical error (χ² against a flat shift): the shape is pruned and its overall normalisation κ is kept as a scale effect.',
};

/** "calo_nonlin on CR-low × continuum (shape)" */
export function effectName(item: Pick<PruningItem, 'entry' | 'region' | 'process' | 'kind'>): string {
  return `${item.entry.key} on ${item.region} × ${item.process} (${item.kind})`;
}

/** κ up / κ down of a shape kept as its normalisation, with four decimals. */
export function Kappa({ normalisation }: { normalisation: { up: number; down: number } }) {
  return (
    <span className="whitespace-nowrap tabular-nums" title="Normalisation kept as a scale effect: κ = Σ varied / Σ nominal over the region's bins, up / down">
      κ {normalisation.up.toFixed(4)} / {normalisation.down.toFixed(4)}
    </span>
  );
}

/** Why the rules propose the effect, as a number with its meaning. */
export function Reason({ item }: { item: PruningItem }) {
  const r = item.reason;
  if (!r) return <span className="text-ink-muted">not proposed by the rules now</span>;
  if (r.rule === 'small')
    return (
      <span className="tabular-nums" title="Largest |variation − nominal| / nominal in any bin">
        at most {formatPercent(r.largestPct)} in a bin
      </span>
    );
  return (
    <span className="tabular-nums" title="p-value of the shift's χ² against a flat shift (the smaller of up and down): large means flat within its noise">
      flat, p {r.p > 0.999 ? '> 0.999' : `= ${formatProbability(r.p)}`}
    </span>
  );
}

/** Marks a reason resting on errors estimated from the template variance rather than given with the upload. */
export function EstimatedMarker() {
  return (
    <Badge tone="amber" title="The shifts' errors were not given with the upload: they were estimated from the template variance (conservative, treating the varied sample as independent)">
      errors estimated
    </Badge>
  );
}
