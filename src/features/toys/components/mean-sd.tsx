import type { ToyDistribution } from '@shared/schemas/toys';
import { Badge } from '../../../components/ui/badge';
import { decimalsFor, formatFixed, formatSigned } from '../../../lib/stats-format';
import { deviationOf, FLAG_ERRORS } from '../toy-stats';

/** A distance in standard errors, e.g. "+1.4 errors". */
export function formatErrors(v: number | null): string {
  return v === null ? '–' : `${formatSigned(v, 1)} errors`;
}

/** The mark of a mean off 0 or an sd off 1, in words (never colour alone). */
export function DeviationBadges({ d }: { d: Pick<ToyDistribution, 'mean' | 'meanError' | 'sd' | 'sdError'> }) {
  const dev = deviationOf(d);
  if (!dev.meanOff && !dev.sdOff) return null;
  return (
    <span className="inline-flex flex-wrap gap-1">
      {dev.meanOff && (
        <Badge tone="plum" title={`The mean is ${formatErrors(dev.mean)} from 0: more than ${FLAG_ERRORS} standard errors`}>
          mean off 0
        </Badge>
      )}
      {dev.sdOff && (
        <Badge tone="amber" title={`The sd is ${formatErrors(dev.sd)} from 1: more than ${FLAG_ERRORS} standard errors`}>
          sd off 1
        </Badge>
      )}
    </span>
  );
}

/**
 * The mean and sd of a standardised toy distribution with their standard errors, how far each
 * is from 0 and 1 in those errors, and what that says about the reference fit, in a sentence.
 */
export function MeanSd({ d, estimate, errorName }: { d: ToyDistribution; estimate: string; errorName: string }) {
  const dev = deviationOf(d);
  const decMean = decimalsFor(d.meanError);
  const decSd = decimalsFor(d.sdError);
  const biasPct = Math.round(Math.abs(d.mean) * 100);
  const spreadPct = Math.round(Math.abs(d.sd - 1) * 100);
  return (
    <div className="flex flex-col gap-2 text-sm">
      <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1">
        <dt className="text-ink-muted">Mean</dt>
        <dd className="tabular-nums" title={`Mean of (${estimate} − generated)/${errorName} over ${d.n} toys ± its standard error σ/√n; expected 0`}>
          <span className={dev.meanOff ? 'font-semibold text-plum' : ''}>
            {formatSigned(d.mean, decMean)} ± {formatFixed(d.meanError, decMean)}
          </span>{' '}
          <span className="text-xs text-ink-muted">({formatErrors(dev.mean)} from 0)</span>
        </dd>
        <dt className="text-ink-muted">Standard deviation</dt>
        <dd className="tabular-nums" title={`Standard deviation of the standardised values ± its standard error σ/√(2(n − 1)); expected 1`}>
          <span className={dev.sdOff ? 'font-semibold text-amber-ink' : ''}>
            {formatFixed(d.sd, decSd)} ± {formatFixed(d.sdError, decSd)}
          </span>{' '}
          <span className="text-xs text-ink-muted">({formatErrors(dev.sd)} from 1)</span>
        </dd>
        <dt className="text-ink-muted">Generated at</dt>
        <dd className="tabular-nums" title="The value the toys were drawn at">
          {formatFixed(d.generated, 4)}
        </dd>
        <dt className="text-ink-muted">{errorName} of the fit</dt>
        <dd className="tabular-nums" title="The reference fit's post-fit σ, which standardises every toy's value">
          {formatFixed(d.referenceError, 4)}
        </dd>
        <dt className="text-ink-muted">Toys used</dt>
        <dd className="tabular-nums" title="Toys whose fit converged">
          {d.n.toLocaleString('en-GB')}
        </dd>
      </dl>
      <p className="text-xs text-ink-soft">
        {dev.mean === null
          ? 'Too few toys to judge the mean.'
          : dev.meanOff
            ? `The mean is ${formatErrors(dev.mean)} from 0: over these toys ${estimate} lands ${d.mean > 0 ? 'above' : 'below'} the generated value by about ${biasPct} % of ${errorName}.`
            : `The mean is within ${FLAG_ERRORS} standard errors of 0: no bias shows at this number of toys.`}{' '}
        {dev.sd === null
          ? 'Too few toys to judge the spread.'
          : dev.sdOff
            ? `The sd is ${formatErrors(dev.sd)} from 1: the fit's ${errorName} ${d.sd > 1 ? 'understates' : 'overstates'} the spread of ${estimate} by about ${spreadPct} %.`
            : `The sd is within ${FLAG_ERRORS} standard errors of 1: the fit's ${errorName} matches the spread of the toys.`}
      </p>
    </div>
  );
}
