import type { ReactNode } from 'react';
import type { ToyRun, ToySummary } from '@shared/schemas/toys';
import { EmptyState } from '../../../components/ui/empty-state';
import { Panel } from '../../../components/ui/page';
import { formatCount, formatEdge } from '../../../lib/format';
import { FitStateBadge } from '../../../components/status/fit-state';
import { hypothesisInWords, toyRunName } from '../toy-stats';
import { MuToyPanel } from './mu-toy-panel';
import { Q0ToyPanel } from './q0-toy-panel';
import { ToyProgress } from './toy-progress';
import { ToyPullsTable } from './toy-pulls-table';

/** The failed toys' messages, each with the toy's index, as the server kept a few of them. */
function Failures({ failures, failed }: { failures: ToySummary['failures']; failed: number }) {
  if (failures.length === 0) return null;
  return (
    <div>
      <h3 className="text-xs font-semibold text-ink-soft">
        Why toys failed{failed > failures.length ? ` (${failures.length} of ${formatCount(failed)} shown)` : ''}
      </h3>
      <ul className="mt-1 flex flex-col gap-0.5 text-xs text-danger" aria-label="Failed toys">
        {failures.map((f) => (
          <li key={f.index}>
            <span className="font-medium tabular-nums">Toy {f.index}:</span> {f.message}
          </li>
        ))}
      </ul>
    </div>
  );
}

function Warnings({ warnings }: { warnings: string[] }) {
  if (warnings.length === 0) return null;
  return (
    <ul className="flex flex-col gap-1 rounded-md border border-amber/40 bg-amber-soft/60 px-3 py-2 text-sm text-amber-ink" aria-label="Warnings on this run">
      {warnings.map((w, i) => (
        <li key={i}>{w}</li>
      ))}
    </ul>
  );
}

/** Converged, failed and asked-for counts, the failures' messages and the warnings, side by side. */
export function ToyCounts({ summary }: { summary: ToySummary }) {
  const { requested, converged, failed } = summary;
  const share = requested > 0 ? Math.round((converged / requested) * 1000) / 10 : 0;
  return (
    <Panel title="Toys">
      <div className="grid gap-4 lg:grid-cols-2">
        <div className="flex flex-col gap-3">
          <dl className="flex flex-wrap gap-x-6 gap-y-2 text-sm" aria-label="Toy counts">
            <div>
              <dt className="text-xs text-ink-muted">Converged</dt>
              <dd className="text-2xl font-semibold tabular-nums" title={`Toys whose fit converged: ${share} % of those asked for. Only these enter the numbers below.`}>
                {formatCount(converged)}
              </dd>
            </div>
            <div>
              <dt className="text-xs text-ink-muted">Failed</dt>
              <dd className={`text-2xl font-semibold tabular-nums ${failed > 0 ? 'text-danger' : ''}`} title="Toys whose fit did not converge; they are left out of every number below">
                {formatCount(failed)}
              </dd>
            </div>
            <div>
              <dt className="text-xs text-ink-muted">Asked for</dt>
              <dd className="text-2xl font-semibold tabular-nums" title="Toys asked for">
                {formatCount(requested)}
              </dd>
            </div>
          </dl>
          <p className="text-xs text-ink-muted">
            Drawn from the {hypothesisInWords(summary.generation.hypothesis)} (μ = {formatEdge(summary.generation.mu)}): every bin as Poisson around its expected yield there, and every
            constraint's global observable around its generated value.
          </p>
          <Failures failures={summary.failures} failed={failed} />
        </div>
        <div className="flex flex-col gap-2">
          {summary.warnings.length > 0 ? <Warnings warnings={summary.warnings} /> : <p className="text-sm text-ink-muted">No warnings on this run.</p>}
          {failed > 0 && converged > 0 && (
            <p className="text-xs text-ink-soft">
              The {formatCount(failed)} failed toys are left out. If they fail for a reason tied to the data they drew (say, many toys with large q0), the numbers below are biased
              towards the toys that converged.
            </p>
          )}
        </div>
      </div>
    </Panel>
  );
}

/** A succeeded run's numbers: counts first, then μ̂ and q0 side by side, then every nuisance parameter. */
export function ToySummaryView({ summary }: { summary: ToySummary }) {
  return (
    <div className="flex flex-col gap-4">
      <ToyCounts summary={summary} />
      {summary.converged === 0 ? (
        <EmptyState title="No toy converged">
          <p>With no converged toy there is nothing to compare with the asymptotic formulas. Read the failures above.</p>
        </EmptyState>
      ) : (
        <>
          <div className="grid gap-4 xl:grid-cols-2">
            <MuToyPanel mu={summary.mu} />
            <Q0ToyPanel q0={summary.q0} />
          </div>
          <ToyPullsTable pulls={summary.pulls} />
        </>
      )}
    </div>
  );
}

/**
 * One toy run as its state allows: progress while it runs, the reason when it failed or was
 * cancelled (and no numbers), the comparison once it has succeeded. `actions` (a cancel button)
 * shows beside the progress.
 */
export function ToyRunResult({ run, actions }: { run: ToyRun; actions?: ReactNode }) {
  const heading = (
    <span className="flex flex-wrap items-center gap-2">
      {toyRunName(run)}
      <FitStateBadge state={run.state} />
    </span>
  );
  if (run.state === 'queued' || run.state === 'running')
    return (
      <Panel title={heading}>
        <div className="flex flex-wrap items-center gap-4">
          <ToyProgress run={run} className="w-full max-w-md" />
          {actions}
        </div>
        <p className="mt-2 text-xs text-ink-muted">This page follows the run; its numbers appear here when every toy has been fitted. You may leave and come back.</p>
      </Panel>
    );
  if (run.state === 'cancelled')
    return (
      <EmptyState title={`${toyRunName(run)} was cancelled`}>
        <p>It stopped before every toy was fitted, so it has no numbers. Start a new run with the form.</p>
      </EmptyState>
    );
  if (run.state === 'failed')
    return (
      <Panel title={heading}>
        <div className="flex flex-col gap-3">
          <p role="alert" className="rounded-md border border-danger/30 bg-danger-soft/60 px-3 py-2 text-sm text-danger">
            {run.failure ?? 'The run failed without a reason recorded.'}
          </p>
          {run.summary && <Failures failures={run.summary.failures} failed={run.summary.failed} />}
          {run.summary && <Warnings warnings={run.summary.warnings} />}
          <p className="text-xs text-ink-muted">A run that failed is kept with its reason and shows no numbers.</p>
        </div>
      </Panel>
    );
  if (!run.summary)
    return (
      <EmptyState title="No summary for this run">
        <p>The run ended without a summary of its toys, so there is nothing to show.</p>
      </EmptyState>
    );
  return <ToySummaryView summary={run.summary} />;
}
