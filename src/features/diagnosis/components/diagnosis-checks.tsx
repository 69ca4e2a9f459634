import { Link } from 'react-router';
import type { Diagnosis } from '@shared/schemas/review';
import { FitProgress, FitStateBadge } from '../../../components/status/fit-state';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { fitName, fitPath, isActive, variantShortName } from '../../../lib/fits';
import { decimalsFor, formatFixed } from '../../../lib/stats-format';
import { useRunChecks } from '../api/run-checks';

type Check = Diagnosis['checks'][number];

function CheckResult({ check }: { check: Check }) {
  if (check.withheld) return <span className="text-xs font-medium text-amber-ink">withheld while blinded</span>;
  if (isActive(check.state)) return <FitProgress fit={check} className="w-48" />;
  if (check.state !== 'succeeded') return check.failure ? <span className="text-xs text-danger">{check.failure}</span> : null;
  const h = check.headline;
  if (!h) return <span className="text-xs text-ink-muted">{check.options.hiddenMu ? 'μ hidden: read its pulls' : 'no result'}</span>;
  const dec = decimalsFor(h.muError);
  return (
    <span className="text-xs text-ink-soft tabular-nums" title="μ̂ ± σ_μ of the check, from the covariance">
      μ̂ = {formatFixed(h.mu, dec)}
      {h.muError !== null && ` ± ${formatFixed(h.muError, dec)}`}
      {h.warnings > 0 && (
        <span className="ml-1 font-semibold text-amber-ink" title="The check's convergence report carries warnings; read them on its fit">
          ⚠ {h.warnings}
        </span>
      )}
    </span>
  );
}

/**
 * The checks of a parameter, run from its diagnosis: the fit again with the parameter split by
 * region (does a control region's constraint reach into the others?) and with its most correlated
 * partner held at its best fit (is the constraint shared?). Each opens as a fit.
 */
export function DiagnosisChecks({ slug, fitId, parameter, checks, mayRun }: { slug: string; fitId: number; parameter: string; checks: Check[]; mayRun: boolean }) {
  const run = useRunChecks(slug, fitId, parameter);
  // the server's answer to the click lists every check so far; the diagnosis catches up when it is asked again
  if (run.data && run.data.length > checks.length) checks = run.data;
  const running = checks.some((c) => isActive(c.state));
  return (
    <div className="flex flex-col gap-2">
      <div className="flex flex-wrap items-center gap-3">
        {mayRun && (
          <Button variant="secondary" size="sm" busy={run.isPending} disabled={running} onClick={() => run.mutate()}>
            Check this parameter
          </Button>
        )}
        <p className="text-xs text-ink-muted">
          Fits this fit again twice: with {parameter} split by region, and with its most correlated parameter held at its best fit.
        </p>
      </div>
      <FormError error={run.error} />
      {checks.length > 0 ? (
        <ul aria-label={`Checks of ${parameter}`} className="flex flex-col divide-y divide-rule rounded-md border border-rule">
          {checks.map((c) => (
            <li key={c.id} className="flex flex-wrap items-center justify-between gap-x-4 gap-y-1 px-3 py-1.5">
              <span className="flex flex-wrap items-center gap-2">
                <Link to={fitPath(slug, c.id)} className="text-sm font-medium text-teal-ink hover:underline">
                  {fitName(c)}
                </Link>
                <span className="text-2xs text-ink-muted">{variantShortName(c.variant)}</span>
                <FitStateBadge state={c.state} />
              </span>
              <CheckResult check={c} />
            </li>
          ))}
        </ul>
      ) : (
        <p className="text-xs text-ink-muted">No check of {parameter} has been run from this fit.</p>
      )}
    </div>
  );
}
