import type { FitState, FitSummary } from '@shared/schemas/fits';
import { Badge } from '../../../components/ui/badge';
import { FIT_STATE_META } from '../describe';

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
