import type { ReactNode } from 'react';
import type { FitState, FitSummary } from '@shared/schemas/fits';
import { formatDateTime } from '../../lib/format';
import { Badge, type Tone } from '../ui/badge';

/** The state of a fit or a toy run in words, with its badge tone and what it means. */
export const FIT_STATE_META: Record<FitState, { label: string; tone: Tone; title: string }> = {
  queued: { label: 'Queued', tone: 'neutral', title: 'Waiting for a free worker on the server' },
  running: { label: 'Running', tone: 'teal', title: 'The fit is running on the server' },
  succeeded: { label: 'Finished', tone: 'neutral', title: 'The job ended; see the convergence report for whether the fit converged' },
  failed: { label: 'Failed', tone: 'danger', title: 'The fit did not converge or the job stopped; no numbers are shown' },
  cancelled: { label: 'Cancelled', tone: 'amber', title: 'Cancelled before it finished' },
};

export function FitStateBadge({ state }: { state: FitState }) {
  const m = FIT_STATE_META[state];
  return (
    <Badge tone={m.tone} title={m.title}>
      {m.label}
    </Badge>
  );
}

/** A running job's progress: a bar with its fraction and the stage it is in. */
export function FitProgress({ fit, className = '' }: { fit: Pick<FitSummary, 'id' | 'label' | 'progress' | 'stage' | 'state'>; className?: string }) {
  const pct = Math.round(Math.max(0, Math.min(1, fit.progress)) * 100);
  const name = fit.label || `fit ${fit.id}`;
  return (
    <div className={`flex min-w-40 flex-col gap-0.5 ${className}`}>
      <div
        role="progressbar"
        aria-label={`Progress of ${name}`}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={pct}
        aria-valuetext={`${pct} %${fit.stage ? `, ${fit.stage}` : ''}`}
        title={`${pct} % done${fit.stage ? `: ${fit.stage}` : ''}`}
        className="h-1.5 w-full overflow-hidden rounded-full bg-paper-sunk"
      >
        <div className={`h-full rounded-full ${fit.state === 'queued' ? 'bg-rule-strong' : 'bg-teal'} transition-[width] duration-500`} style={{ width: `${pct}%` }} />
      </div>
      <span className="text-2xs text-ink-muted tabular-nums">
        {pct} %{fit.stage ? ` · ${fit.stage}` : fit.state === 'queued' ? ' · waiting for a worker' : ''}
      </span>
    </div>
  );
}

/** A job's state in a table cell: its badge, its progress while it runs, and why it failed. */
export function JobStateCell({ job, progress }: { job: Pick<FitSummary, 'id' | 'label' | 'progress' | 'stage' | 'state' | 'failure'>; progress?: ReactNode }) {
  return (
    <div className="flex flex-col items-start gap-1">
      <FitStateBadge state={job.state} />
      {job.state === 'queued' || job.state === 'running' ? (progress ?? <FitProgress fit={job} />) : null}
      {job.state === 'failed' && job.failure && <span className="max-w-xs text-xs text-danger">{job.failure}</span>}
    </div>
  );
}

/** When a job or set was started and by whom, in a table cell (with how long it took, where known). */
export function StartedCell({ at, by, took }: { at: string; by: string | null; took?: string | null }) {
  return (
    <>
      {formatDateTime(at)}
      {by && <span className="block text-ink-muted">{by}</span>}
      {took && <span className="block text-ink-muted">took {took}</span>}
    </>
  );
}
