import type { FitState, FitSummary } from '@shared/schemas/fits';
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
