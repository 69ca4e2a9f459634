import { Link } from 'react-router';
import type { ReviewSetSummary } from '@shared/schemas/review-sets';
import { Badge } from '../../../components/ui/badge';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { StartedCell } from '../../../components/status/fit-state';
import { reviewSetPath } from '../../../lib/fits';

/** A set's state with its progress while it runs: the set as a whole, never a member alone. */
export function ReviewSetState({ set }: { set: Pick<ReviewSetSummary, 'state' | 'progress' | 'members'> }) {
  const ended = set.members.filter((m) => m.state !== 'queued' && m.state !== 'running').length;
  const failed = set.members.filter((m) => m.state === 'failed' || m.state === 'cancelled').length;
  const pct = Math.round(Math.max(0, Math.min(1, set.progress)) * 100);
  if (set.state === 'running')
    return (
      <div className="flex min-w-36 flex-col gap-0.5">
        <div
          role="progressbar"
          aria-label="Progress of the set"
          aria-valuemin={0}
          aria-valuemax={100}
          aria-valuenow={pct}
          aria-valuetext={`${pct} %, ${ended} of ${set.members.length} fits ended`}
          className="h-1.5 w-full overflow-hidden rounded-full bg-paper-sunk"
        >
          <div className="h-full rounded-full bg-teal transition-[width] duration-500" style={{ width: `${pct}%` }} />
        </div>
        <span className="text-2xs text-ink-muted tabular-nums">
          {pct} % · {ended} of {set.members.length} fits ended
        </span>
      </div>
    );
  return set.state === 'succeeded' ? (
    <Badge tone="teal" title="Every fit of the set finished">
      {set.members.length} fits finished
    </Badge>
  ) : (
    <Badge tone="danger" title="At least one fit of the set did not finish; its numbers are left out">
      {failed} of {set.members.length} did not finish
    </Badge>
  );
}

const col = dataColumns<ReviewSetSummary>();

function makeColumns(slug: string) {
  return col.columns([
    col.accessor('label', {
      header: 'Review set',
      cell: (c) => (
        <>
          <Link to={reviewSetPath(slug, c.row.original.id)} className="font-medium text-teal-ink hover:underline">
            {c.getValue() || `Review set ${c.row.original.id}`}
          </Link>
          <span className="block text-2xs text-ink-muted">
            #{c.row.original.id}
            {c.row.original.blinded ? ' · started while blinded' : ''}
          </span>
        </>
      ),
    }),
    col.accessor('version', { header: 'Version', meta: { numeric: true, cellTitle: 'The frozen model version every fit of the set used' } }),
    col.accessor('state', { header: 'State', cell: (c) => <ReviewSetState set={c.row.original} /> }),
    col.accessor('createdAt', {
      header: 'Started',
      meta: { nowrap: true, cellClass: 'text-xs text-ink-soft' },
      cell: (c) => <StartedCell at={c.getValue()} by={c.row.original.createdBy} />,
    }),
  ]);
}

/** The review sets of an analysis, newest first, each opening its side-by-side view. */
export function ReviewSetsList({ slug, sets }: { slug: string; sets: ReviewSetSummary[] }) {
  return <DataTable columns={makeColumns(slug)} data={sets} getRowId={(s) => String(s.id)} label="Review sets" rowHeader="label" />;
}
