import { Link } from 'react-router';
import type { ImpactCheck } from '@shared/schemas/register';
import { BeforeAfter, MovedParameters, RefitStateBadge, RefitWarnings, SignalStrengthChange } from '../../../components/status/refit-change';
import { fitName, fitPath } from '../../../lib/fits';
import { formatDateTime } from '../../../lib/format';
import { formatSigned } from '../../../lib/stats-format';

type Focus = ImpactCheck['focus'][number];

function Impact({ impact }: { impact: Focus['impact'] }) {
  if (!impact) return <span title="No impact on μ: the compared fit holds μ or hides it">–</span>;
  return (
    <span className="tabular-nums" title="Post-fit impact on μ in the refit: Δμ̂ with this parameter held at θ̂ + σ̂ and at θ̂ − σ̂, everything else refitted">
      {formatSigned(impact.up, 3)} / {formatSigned(impact.down, 3)}
    </span>
  );
}

function Rank({ before, after }: { before: number | null; after: number | null }) {
  if (before === null && after === null) return <span title="No rank: the compared fit has no impacts on μ">–</span>;
  return (
    <span className="tabular-nums" title="Place among the compared fit's post-fit impacts on μ (1 = largest); before: in the compared fit, after: this parameter's impact in the refit">
      {before === null ? '–' : `#${before}`}
      <span aria-hidden className="px-1 text-ink-muted">
        →
      </span>
      <span className="sr-only"> to </span>
      <span className="font-semibold">{after === null ? '–' : `#${after}`}</span>
    </span>
  );
}

/** The entry's own parameter: its pull, constraint, impact and rank before and after. */
function FocusParameter({ focus }: { focus: Focus }) {
  return (
    <section aria-label={`Parameter ${focus.name}`} className="rounded-md border border-rule px-3 py-2">
      <h3 className="mb-1 text-xs font-semibold text-ink-soft">
        This entry's parameter <span className="font-mono text-ink">{focus.name}</span>
      </h3>
      <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-0.5 text-sm">
        <dt className="text-ink-muted" title="Pull (θ̂ − θ₀)/σ_prior">
          Pull
        </dt>
        <dd title="Pull in the compared fit → in the refit">
          <BeforeAfter change={focus.pull} />
        </dd>
        <dt className="text-ink-muted" title="Constraint σ̂/σ_prior: below 1, the data know more than the prior">
          Constraint
        </dt>
        <dd title="Constraint in the compared fit → in the refit">
          <BeforeAfter change={focus.constraint} />
        </dd>
        <dt className="text-ink-muted">Impact on μ (+σ / −σ)</dt>
        <dd>
          <Impact impact={focus.impact} />
        </dd>
        <dt className="text-ink-muted">Rank by impact</dt>
        <dd>
          <Rank before={focus.rankBefore} after={focus.rankAfter} />
        </dd>
      </dl>
    </section>
  );
}

function Outcome({ check }: { check: ImpactCheck }) {
  if (check.state === 'running')
    return (
      <p className="text-sm text-ink-soft" role="status">
        The server is refitting the compared fit's configuration with this upload; the numbers appear here when it is done (usually within seconds).
      </p>
    );
  if (check.state === 'failed')
    return (
      <div role="alert" className="rounded-md border border-danger/30 bg-danger-soft/60 px-3 py-2 text-sm">
        <p className="font-semibold text-danger">The refit with this upload gave no result, so no number is shown.</p>
        <p className="mt-0.5 text-ink-soft">{check.failure ?? 'The server gave no reason.'}</p>
        <p className="mt-1 text-xs text-ink-muted">A variation that makes the fit fail is worth a look before it is submitted: its size, its bins with no nominal, its warnings above.</p>
      </div>
    );
  if (check.state === 'withheld')
    return (
      <p className="rounded-md border border-plum/30 bg-plum-soft/50 px-3 py-2 text-sm text-ink-soft">
        The fit this upload was compared with read the observed data of a region that is blinded now. While it stays blinded, nothing compared with that data is shown: not μ̂, not the
        pulls or constraints. The next upload is compared with a fit whose numbers may be shown.
      </p>
    );
  return (
    <div className="grid items-start gap-x-6 gap-y-4 lg:grid-cols-2">
      <div className="flex flex-col gap-3">
        <SignalStrengthChange mu={check.mu} muError={check.muError} />
        {check.focus.length ? (
          check.focus.map((f) => <FocusParameter key={f.name} focus={f} />)
        ) : (
          <p className="text-sm text-ink-muted">This entry has no effect in the refit, so it has no parameter of its own to compare.</p>
        )}
      </div>
      <div>
        <h3 className="mb-1.5 text-xs font-semibold text-ink-soft">Parameters whose pull or constraint moved by more than 0.1 ({check.moved.length})</h3>
        <MovedParameters parameters={check.moved} label="Parameters that moved with this upload" empty="No parameter's pull or constraint moved by more than 0.1." compact />
      </div>
    </div>
  );
}

/**
 * What the entry's latest upload does to the result: the analysis's latest shown fit refitted with
 * the entry's effects as they are now (nothing stored as a fit), before anyone submits it.
 */
export function ImpactCheckPanel({ slug, check }: { slug: string; check: ImpactCheck }) {
  return (
    <div className="flex flex-col gap-3">
      <p className="flex flex-wrap items-center gap-x-3 gap-y-1 text-xs text-ink-muted">
        <RefitStateBadge state={check.state} change="with this upload" />
        {check.state === 'done' && <RefitWarnings warnings={check.warnings} />}
        {check.fit ? (
          <span>
            Compared with{' '}
            <Link to={fitPath(slug, check.fit.id)} className="font-medium text-teal-ink hover:underline">
              {fitName(check.fit)}
            </Link>
            , refitted with this entry's effects as they are now
          </span>
        ) : (
          <span>No compared fit</span>
        )}
        <span>checked {formatDateTime(check.createdAt)}</span>
        {check.state === 'done' && check.seconds !== null && <span title="Time the server took for the refit">in {check.seconds < 1 ? '< 1' : check.seconds.toFixed(1)} s</span>}
      </p>
      <Outcome check={check} />
      <p className="text-xs text-ink-muted">Stored fits are not changed: this is a check of the upload only.</p>
    </div>
  );
}
