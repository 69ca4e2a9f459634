import { Link, useParams } from 'react-router';
import type { ReviewSetDetail } from '@shared/schemas/review-sets';
import { EmptyState } from '../../../components/ui/empty-state';
import { PageHeader, Panel } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { formatDateTime } from '../../../lib/format';
import { fitPath, variantShortName } from '../../../lib/fits';
import { useReviewSet } from '../../../features/review-sets/api/get-review-set';
import { BreakdownTable } from '../../../features/fits/components/breakdown-table';
import { DecorrelationTable } from '../../../features/fits/components/decorrelation-table';
import { MembersTable } from '../../../features/review-sets/components/members-table';
import { PullsGrid } from '../../../features/review-sets/components/pulls-grid';
import { ReviewSetState } from '../../../features/review-sets/components/review-sets-list';

function SetBody({ slug, set }: { slug: string; set: ReviewSetDetail }) {
  const c = set.comparison;
  const decorrelations = c.decorrelation.flatMap((d) => d.reports.map((r) => ({ ...r, variant: d.variant, fitId: d.fitId })));
  const titleOf = new Map(c.rows.map((r) => [r.variant, r.title]));
  return (
    <div className="flex flex-col gap-5">
      <Panel title="The fits of the set" actions={<ReviewSetState set={set} />}>
        <MembersTable slug={slug} rows={c.rows} />
      </Panel>
      <Panel title="Which parameters move between the fits">
        <PullsGrid slug={slug} comparison={c} />
      </Panel>
      <div className="grid gap-5 2xl:grid-cols-2">
        <Panel title="Split systematics: do the parts agree?">
          {decorrelations.length ? (
            <DecorrelationTable slug={slug} rows={decorrelations} />
          ) : (
            <p className="text-sm text-ink-muted">
              No fit of this set splits a systematic. Split one with “Check this parameter” on a parameter’s diagnosis, or under Variant when you run a fit; a large χ² says a
              control region’s constraint was being carried into another region.
            </p>
          )}
        </Panel>
        <Panel title="Uncertainty on μ by freezing">
          {c.breakdown.length ? (
            <div className="flex flex-col gap-4">
              {c.breakdown.map((b) => (
                <section key={b.fitId} aria-label={`Breakdown in ${variantShortName(b.variant)}`}>
                  <h3 className="mb-1 text-xs font-semibold text-ink-soft">
                    In{' '}
                    <Link to={fitPath(slug, b.fitId)} className="text-teal-ink hover:underline">
                      {titleOf.get(b.variant) ?? variantShortName(b.variant)}
                    </Link>
                  </h3>
                  <BreakdownTable rows={b.rows} label={`Uncertainty breakdown, ${variantShortName(b.variant)}`} />
                </section>
              ))}
            </div>
          ) : (
            <p className="text-sm text-ink-muted">{set.state === 'running' ? 'The breakdown appears when its fit has finished.' : 'No fit of this set has a breakdown by freezing.'}</p>
          )}
        </Panel>
      </div>
    </div>
  );
}

/** A review set: its fits side by side, read for which parameter moves or is constrained differently when the fit changes, and why. */
export function ReviewSetRoute() {
  const { slug = '', setId = '' } = useParams();
  const id = /^\d+$/.test(setId) ? Number(setId) : NaN;
  const set = useReviewSet(slug, id);
  if (Number.isNaN(id))
    return (
      <EmptyState title="No such review set">
        <p>
          “{setId}” is not a review set number. <Link to={`/a/${slug}/fits`}>Back to the fits</Link>.
        </p>
      </EmptyState>
    );
  return (
    <QueryView query={set} loadingLabel="Loading the review set…">
      {(s) => (
        <>
          <p className="mb-1 text-xs">
            <Link to={`/a/${slug}/fits`} className="text-teal-ink hover:underline">
              ← Fits
            </Link>
          </p>
          <PageHeader
            title={s.label || `Review set ${s.id}`}
            description={
              <>
                Model version {s.version} · started {formatDateTime(s.createdAt)}
                {s.createdBy ? ` by ${s.createdBy}` : ''}
                {s.blinded ? ' · blinded: the fits of every region hide μ' : ''}
                <span className="mt-1 block">These fits inform the collaboration’s own statistical review; they do not replace it.</span>
              </>
            }
          />
          <SetBody slug={slug} set={s} />
        </>
      )}
    </QueryView>
  );
}
