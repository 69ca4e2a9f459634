import { useNavigate, useParams } from 'react-router';
import { useAnalysis } from '../../../features/analyses/api/get-analysis';
import { useCan } from '../../../features/analyses/use-can';
import { useFits } from '../../../features/fits/api/get-fits';
import { useVersions } from '../../../features/fits/api/get-versions';
import { FitsTable } from '../../../features/fits/components/fits-table';
import { FreezeVersionForm, VersionsList } from '../../../features/fits/components/freeze-version';
import { StartFitForm } from '../../../features/fits/components/start-fit-form';
import { EmptyState } from '../../../components/ui/empty-state';
import { PageHeader, Panel } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';

export function FitsRoute() {
  const { slug = '' } = useParams();
  const navigate = useNavigate();
  const analysis = useAnalysis(slug);
  const fits = useFits(slug);
  const versions = useVersions(slug);
  const can = useCan(slug);
  const overview = analysis.data;
  const blinded = overview ? overview.analysis.blinding !== 'unblinded' : true;

  return (
    <>
      <PageHeader
        title="Fits"
        description="Profile-likelihood fits of a frozen model version, run on the server as background jobs. Results inform the collaboration's statistical review and approval; they do not replace it."
      />
      <div className="grid gap-5 xl:grid-cols-[minmax(0,1fr)_22rem]">
        <section aria-label="Fits of this analysis" className="min-w-0">
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
                    onStarted={(fit) => navigate(`/a/${slug}/fits/${fit.id}`)}
                  />
                )}
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
