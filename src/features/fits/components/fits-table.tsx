import { Link } from 'react-router';
import type { FitSummary } from '@shared/schemas/fits';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { tableClass, tdClass, thClass } from '../../../components/ui/page';
import { formatDateTime } from '../../../lib/format';
import { decimalsFor, formatFixed, formatSigma } from '../../../lib/stats-format';
import { useCancelFit } from '../api/cancel-fit';
import { FitProgress, FitStateBadge } from '../../../components/status/fit-state';
import { datasetInWords, fitName, fitPath, isActive, optionsInWords } from '../../../lib/fits';

function Headline({ fit }: { fit: FitSummary }) {
  const h = fit.headline;
  if (fit.withheld)
    return (
      <span className="text-xs font-medium text-amber-ink" title={fit.withheld}>
        withheld while blinded
      </span>
    );
  if (!h) return <span className="text-ink-muted">–</span>;
  const dec = decimalsFor(h.muError);
  const muText = `${formatFixed(h.mu, dec)}${h.muError !== null ? ` ± ${formatFixed(h.muError, dec)}` : ''}`;
  return (
    <span className="flex flex-col items-end">
      {fit.options.controlOnly ? (
        <span className="whitespace-nowrap tabular-nums" title="μ is held at its start value in a fit of the control regions only">
          μ held at {formatFixed(h.mu, 2)}
        </span>
      ) : (
        <span className="whitespace-nowrap tabular-nums" title="Fitted signal strength μ̂ ± σ_μ (from the covariance), in multiples of the nominal signal">
          μ̂ = {muText}
        </span>
      )}
      {h.z !== null && (
        <span className="text-xs whitespace-nowrap text-ink-soft tabular-nums" title="Observed discovery significance Z = √q₀, in standard deviations">
          Z = {formatSigma(h.z)}
        </span>
      )}
      {h.warnings > 0 && (
        <span className="text-xs font-medium text-amber-ink" title="The convergence report carries warnings; read them on the result">
          {h.warnings} warning{h.warnings === 1 ? '' : 's'}
        </span>
      )}
    </span>
  );
}

/** Every fit of the analysis, newest first, with live progress for running ones. */
export function FitsTable({ slug, fits, mayRun }: { slug: string; fits: FitSummary[]; mayRun: boolean }) {
  const cancel = useCancelFit(slug);
  return (
    <div className="flex flex-col gap-2">
      <FormError error={cancel.error} />
      <div className="overflow-x-auto rounded-lg border border-rule bg-paper-raised">
        <table className={tableClass} aria-label="Fits">
          <thead>
            <tr>
              <th scope="col" className={thClass}>
                Fit
              </th>
              <th scope="col" className={`${thClass} text-right`}>
                Version
              </th>
              <th scope="col" className={thClass}>
                Dataset and options
              </th>
              <th scope="col" className={thClass}>
                State
              </th>
              <th scope="col" className={`${thClass} text-right`}>
                Result
              </th>
              <th scope="col" className={thClass}>
                Started
              </th>
              {mayRun && (
                <th scope="col" className={thClass}>
                  <span className="sr-only">Actions</span>
                </th>
              )}
            </tr>
          </thead>
          <tbody>
            {fits.map((f) => (
              <tr key={f.id} className="hover:bg-paper-sunk/50">
                <td className={tdClass}>
                  <Link to={fitPath(slug, f.id)} className="font-medium text-teal-ink hover:underline">
                    {fitName(f)}
                  </Link>
                  <span className="block text-2xs text-ink-muted">#{f.id}</span>
                </td>
                <td className={`${tdClass} text-right tabular-nums`} title="The frozen model version this fit used">
                  {f.version}
                </td>
                <td className={`${tdClass} text-xs`}>
                  <span className="block text-ink">{datasetInWords(f.options)}</span>
                  <span className="block text-ink-muted">{optionsInWords(f.options)}</span>
                </td>
                <td className={tdClass}>
                  <div className="flex flex-col gap-1">
                    <FitStateBadge state={f.state} />
                    {isActive(f.state) && <FitProgress fit={f} />}
                    {f.state === 'failed' && f.failure && <span className="max-w-xs text-xs text-danger">{f.failure}</span>}
                  </div>
                </td>
                <td className={`${tdClass} text-right`}>
                  <Headline fit={f} />
                </td>
                <td className={`${tdClass} text-xs whitespace-nowrap text-ink-soft`}>
                  {formatDateTime(f.createdAt)}
                  {f.createdBy && <span className="block text-ink-muted">{f.createdBy}</span>}
                </td>
                {mayRun && (
                  <td className={tdClass}>
                    {isActive(f.state) && (
                      <Button size="sm" variant="danger" busy={cancel.isPending && cancel.variables === f.id} onClick={() => cancel.mutate(f.id)} aria-label={`Cancel ${f.label || `fit ${f.id}`}`}>
                        Cancel
                      </Button>
                    )}
                  </td>
                )}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}
