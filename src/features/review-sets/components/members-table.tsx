import { Link } from 'react-router';
import type { ReviewComparison } from '@shared/schemas/review-sets';
import { FitStateBadge } from '../../../components/status/fit-state';
import { Badge } from '../../../components/ui/badge';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { fitPath, variantShortName } from '../../../lib/fits';
import { decimalsFor, formatFixed, formatSigma, formatSigned } from '../../../lib/stats-format';
import type { FitState } from '@shared/schemas/fits';

export type MemberRow = ReviewComparison['rows'][number];

const BASIS: Record<NonNullable<MemberRow['expectedFrom']>, string> = { prefit: 'pre-fit', control: 'control regions', background: 'measured background' };

/** Whether a member's numbers may be shown: a converged result, never a failed one. */
export function hasNumbers(r: MemberRow): boolean {
  return r.state === 'succeeded' && r.status === 'converged';
}

/** The convergence of a member and its warnings, drawn beside each of its numbers. */
export function WarningMark({ warnings }: { warnings: number }) {
  if (warnings === 0) return null;
  return (
    <span className="ml-1 text-2xs font-semibold text-amber-ink" title={`${warnings} convergence warning${warnings === 1 ? '' : 's'}: read them on the fit before using this number`}>
      ⚠ {warnings}
    </span>
  );
}

function Mu({ r }: { r: MemberRow }) {
  if (!hasNumbers(r) || !r.mu) return <span className="text-ink-muted">{r.state === 'succeeded' && r.status === 'converged' ? 'hidden' : '–'}</span>;
  const mu = r.mu;
  if (mu.fixed)
    return (
      <span title="μ is held in this fit">
        held at {formatFixed(mu.value, 2)}
        <WarningMark warnings={r.warnings} />
      </span>
    );
  const dec = decimalsFor(mu.error);
  return (
    <span className="whitespace-nowrap" title="μ̂ ± σ_μ from the covariance; the 68 % interval from the scan beneath where there is one">
      {formatFixed(mu.value, dec)}
      {mu.error !== null && ` ± ${formatFixed(mu.error, dec)}`}
      <WarningMark warnings={r.warnings} />
      {mu.low !== null && mu.high !== null && (
        <span className="block text-2xs text-ink-muted">
          scan {formatSigned(mu.high, dec)} / {formatSigned(mu.low, dec)}
        </span>
      )}
    </span>
  );
}

const col = dataColumns<MemberRow>();

function makeColumns(slug: string) {
  return col.columns([
    col.accessor('title', {
      header: 'Variant',
      cell: (c) => (
        <>
          <Link to={fitPath(slug, c.row.original.fitId)} className="font-medium text-teal-ink hover:underline">
            {variantShortName(c.row.original.variant)}
          </Link>
          <span className="block max-w-64 text-2xs text-ink-muted">{c.getValue()}</span>
        </>
      ),
    }),
    col.accessor('state', {
      header: 'State',
      cell: (c) => {
        const r = c.row.original;
        return (
          <div className="flex flex-wrap items-center gap-1">
            {r.state !== 'succeeded' && <FitStateBadge state={r.state as FitState} />}
            {r.status === 'converged' && (
              <Badge tone="teal" title="The minimiser reached its stopping rule">
                Converged
              </Badge>
            )}
            {r.status === 'failed' && (
              <Badge tone="danger" title="The minimiser did not reach its stopping rule: no numbers are shown">
                Not converged
              </Badge>
            )}
            {r.warnings > 0 && <span className="text-2xs font-medium text-amber-ink">{r.warnings} warning{r.warnings === 1 ? '' : 's'}</span>}
          </div>
        );
      },
    }),
    col.display({ id: 'mu', header: 'μ̂ ± σ', meta: { numeric: true, headerTitle: 'Fitted signal strength, in multiples of the nominal signal' }, cell: (c) => <Mu r={c.row.original} /> }),
    col.accessor('z', {
      header: 'Z',
      meta: { numeric: true, nowrap: true, headerTitle: 'Significance Z = √q₀ of this fit’s data (for an expected fit, the expected significance), in standard deviations' },
      cell: (c) =>
        hasNumbers(c.row.original) && c.getValue() !== null ? (
          <>
            {formatSigma(c.getValue())}
            <WarningMark warnings={c.row.original.warnings} />
          </>
        ) : (
          <span className="text-ink-muted">–</span>
        ),
    }),
    col.accessor('limit', {
      header: 'Limit on μ',
      meta: { numeric: true, nowrap: true, headerTitle: '95 % CL upper limit on μ (CLs): of this fit’s data, and the median expected' },
      cell: (c) => {
        const l = c.getValue();
        if (!hasNumbers(c.row.original) || !l) return <span className="text-ink-muted">–</span>;
        return (
          <span>
            {formatFixed(l.observed, 2)}
            <WarningMark warnings={c.row.original.warnings} />
            <span className="block text-2xs text-ink-muted">expected {formatFixed(l.expected, 2)}</span>
          </span>
        );
      },
    }),
    col.accessor('expectedFrom', {
      header: 'Expected from',
      meta: { cellClass: 'text-xs', headerTitle: 'The Asimov dataset its expected numbers were built on' },
      cell: (c) => (c.getValue() ? BASIS[c.getValue()!] : <span className="text-ink-muted">–</span>),
    }),
    col.accessor('note', { header: 'Note', meta: { cellClass: 'text-xs text-ink-soft max-w-56' }, cell: (c) => c.getValue() ?? '' }),
  ]);
}

/** A row per member: its part in the set, its state and convergence, and its headline numbers where its blinding allows them. */
export function MembersTable({ slug, rows }: { slug: string; rows: MemberRow[] }) {
  return <DataTable columns={makeColumns(slug)} data={rows} getRowId={(r) => String(r.fitId)} label="Fits of the set" rowHeader="title" frame="plain" />;
}
