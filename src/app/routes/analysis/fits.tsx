import { useNavigate, useParams } from 'react-router';
import { useAnalysis } from '../../../features/analyses/api/get-analysis';
import { useCan } from '../../../features/analyses/use-can';
import { useFits } from '../../../features/fits/api/get-fits';
import { useVersions } from '../../../features/fits/api/get-versions';
import { FitsTable } from '../../../features/fits/components/fits-table';
import { FreezeVersionForm, VersionsList } from '../../../features/fits/components/freeze-version';
import { StartFitForm } from '../../../features/fits/components/start-fit-form';
import type { FitChoices } from '../../../features/fits/components/variant-fields';
import { useGroups } from '../../../features/groups/api/get-groups';
import { useModel } from '../../../features/model/api/get-model';
import { useReviewSets } from '../../../features/review-sets/api/get-review-sets';
import { ReviewSetsList } from '../../../features/review-sets/components/review-sets-list';
import { StartReviewSetForm } from '../../../features/review-sets/components/start-review-set-form';
import { reviewSetPath } from '../../../lib/fits';
import { EmptyState } from '../../../components/ui/empty-state';
import { PageHeader, Panel } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';

/** The names the variant fields suggest, from the current model and register (a version may differ: the server checks). */
function useFitChoices(slug: string): FitChoices {
  const model = useModel(slug).data;
  const groups = useGroups(slug).data;
  const systematics = [...(groups?.groups.flatMap((g) => g.entries) ?? []), ...(groups?.ungrouped ?? [])].sort((a, b) => a.localeCompare(b));
  return {
    parameters: ['mu', ...(model?.floatingNorms.map((f) => f.key) ?? []), ...systematics],
    systematics,
    groups: groups?.groups.filter((g) => g.entries.length > 0).map((g) => g.name) ?? [],
    regions: model?.regions.map((r) => ({ key: r.key, label: r.label, role: r.role })) ?? [],
    pois: model?.parametersOfInterest?.map((p) => ({ key: p.key, label: p.label })) ?? [],
  };
}

export function FitsRoute() {
  const { slug = '' } = useParams();
  const navigate = useNavigate();
  const analysis = useAnalysis(slug);
  const fits = useFits(slug);
  const versions = useVersions(slug);
  const can = useCan(slug);
  const reviewSets = useReviewSets(slug);
  const choices = useFitChoices(slug);
  const overview = analysis.data;
  const blinded = overview ? overview.analysis.blinding !== 'unblinded' : true;

  return (
    <>
      <PageHeader
        title="Fits"
        description="Profile-likelihood fits of a frozen model version, run on the server as background jobs. Results inform the collaboration's statistical review and approval; they do not replace it."
      />
      <div className="grid gap-5 xl:grid-cols-[minmax(0,1fr)_22rem]">
        <div className="min-w-0">
          <section aria-label="Fits of this analysis">
            <QueryView query={fits} loadingLabel="Loading the fits…">
              {(list) =>
                list.length === 0 ? (
                  <EmptyState title="No fits yet">
                    <p>
                      {can('fit.run')
                        ? 'Freeze a model version, then run a fit on it with the form on this page.'
                        : 'Analysts run fits; each will be listed here with its progress and, once converged, its fitted signal strength.'}
                    </p>
                  </EmptyState>
                ) : (
                  <FitsTable slug={slug} fits={list} mayRun={can('fit.run')} />
                )
              }
            </QueryView>
          </section>
          <section aria-labelledby="review-sets-heading" className="mt-6">
            <h2 id="review-sets-heading" className="mb-1 text-base font-semibold text-ink">
              Review sets
            </h2>
            <p className="mb-2 max-w-prose text-xs text-ink-muted">
              Linked fits of one version read side by side: which parameter moves or is constrained differently when the fit changes. They inform the collaboration’s own statistical
              review; they do not replace it.
            </p>
            <QueryView query={reviewSets} loadingLabel="Loading the review sets…">
              {(sets) =>
                sets.length === 0 ? (
                  <p className="text-sm text-ink-muted">{can('fit.run') ? 'No review set yet: start one on a frozen version with the form on this page.' : 'No review set yet.'}</p>
                ) : (
                  <ReviewSetsList slug={slug} sets={sets} />
                )
              }
            </QueryView>
          </section>
        </div>
        <div className="flex flex-col gap-4">
          {can('fit.run') && (
            <Panel title="Run a fit">
              <QueryView query={versions} loadingLabel="Loading the versions…">
                {(vs) => (
                  <StartFitForm
                    key={vs[0]?.number ?? 0}
                    slug={slug}
                    versions={vs}
                    blinded={blinded}
                    overConstraintThreshold={overview?.analysis.overConstraintThreshold ?? 0.5}
                    choices={choices}
                    onStarted={(fit) => navigate(`/a/${slug}/fits/${fit.id}`)}
                  />
                )}
              </QueryView>
            </Panel>
          )}
          {can('fit.run') && (
            <Panel title="Start a review set">
              <QueryView query={versions} loadingLabel="Loading the versions…">
                {(vs) => <StartReviewSetForm key={vs[0]?.number ?? 0} slug={slug} versions={vs} blinded={blinded} onStarted={(set) => navigate(reviewSetPath(slug, set.id))} />}
              </QueryView>
            </Panel>
          )}
          {can('version.freeze') && (
            <Panel title="Freeze model version">
              <FreezeVersionForm slug={slug} mayMarkForApproval={can('version.approve')} />
            </Panel>
          )}
          <Panel title="Model versions">
            <QueryView query={versions} loadingLabel="Loading the versions…">
              {(vs) => <VersionsList versions={vs} />}
            </QueryView>
          </Panel>
        </div>
      </div>
    </>
  );
}
