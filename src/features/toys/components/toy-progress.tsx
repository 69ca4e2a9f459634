import type { ToyRun } from '@shared/schemas/toys';
import { formatCount } from '../../../lib/format';
import { toyRunName } from '../toy-stats';

/** Toys done so far, from the run's progress (a fraction of the toys asked for). */
export function toysDone(run: Pick<ToyRun, 'count' | 'progress' | 'state'>): number {
  if (run.state === 'succeeded') return run.count;
  return Math.round(Math.max(0, Math.min(1, run.progress)) * run.count);
}

/** A queued or running toy run: a bar with toys done of toys asked, and the stage it is in. */
export function ToyProgress({ run, className = '' }: { run: Pick<ToyRun, 'id' | 'label' | 'count' | 'progress' | 'stage' | 'state'>; className?: string }) {
  const pct = Math.round(Math.max(0, Math.min(1, run.progress)) * 100);
  const done = toysDone(run);
  const words = `${formatCount(done)} of ${formatCount(run.count)} toys`;
  return (
    <div className={`flex min-w-40 flex-col gap-0.5 ${className}`}>
      <div
        role="progressbar"
        aria-label={`Progress of ${toyRunName(run)}`}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={pct}
        aria-valuetext={`${words}${run.stage ? `, ${run.stage}` : ''}`}
        title={`${words} done${run.stage ? `: ${run.stage}` : ''}`}
        className="h-1.5 w-full overflow-hidden rounded-full bg-paper-sunk"
      >
        <div className={`h-full rounded-full ${run.state === 'queued' ? 'bg-rule-strong' : 'bg-teal'} transition-[width] duration-500`} style={{ width: `${pct}%` }} />
      </div>
      <span className="text-2xs text-ink-muted tabular-nums">
        {words}
        {run.stage ? ` · ${run.stage}` : run.state === 'queued' ? ' · waiting for a worker' : ''}
      </span>
    </div>
  );
}
