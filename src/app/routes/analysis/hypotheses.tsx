import { useNavigate, useParams } from 'react-router';
import { useAnalysis } from '../../../features/analyses/api/get-analysis';
import { useCan } from '../../../features/analyses/use-can';
import { useVersions } from '../../../features/fits/api/get-versions';
import { useHypothesisScans } from '../../../features/hypothesis-scans/api/get-hypothesis-scans';
import { ScansTable } from '../../../features/hypothesis-scans/components/scans-table';
import { StartScanForm } from '../../../features/hypothesis-scans/components/start-scan-form';
import { scanPath } from '../../../features/hypothesis-scans/scan-words';
import { EmptyState } from '../../../components/ui/empty-state';
import { PageHeader, Panel } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';

export function HypothesesRoute() {
  const { slug = '' } = useParams();
  const navigate = useNavigate();
  const analysis = useAnalysis(slug);
  const scans = useHypothesisScans(slug);
  const versions = useVersions(slug);
  const can = useCan(slug);
  const blinded = analysis.data ? analysis.data.analysis.blinding !== 'unblinded' : true;
  return (
    <>
      <PageHeader
        title="Signal hypotheses"
        description="One fit per signal hypothesis of a frozen version (e.g. per mass): where the data show an excess, how significant it is once every hypothesis looked at is accounted for, and which hypotheses are excluded. These numbers inform the collaboration's statistical review and approval; they do not replace it."
      />
      <div className="grid gap-5 xl:grid-cols-[minmax(0,1fr)_22rem]">
        <section aria-label="Scans of this analysis" className="min-w-0">
          <QueryView query={scans} loadingLabel="Loading the scans…">
            {(list) =>
              list.length === 0 ? (
                <EmptyState title="No scan yet">
                  <p>
                    A scan needs a frozen version whose model declares signal hypotheses (model screen, “Signal hypotheses”).
                    {can('fit.run') ? ' Then run one with the form on this page.' : ''}
                  </p>
                </EmptyState>
              ) : (
                <ScansTable slug={slug} scans={list} mayRun={can('fit.run')} />
              )
            }
          </QueryView>
        </section>
        {can('fit.run') && (
          <Panel title="Scan the hypotheses">
            <QueryView query={versions} loadingLabel="Loading the versions…">
              {(vs) => <StartScanForm key={`${vs[0]?.number ?? 0}-${blinded}`} slug={slug} versions={vs} blinded={blinded} onStarted={(s) => navigate(scanPath(slug, s.id))} />}
            </QueryView>
          </Panel>
        )}
      </div>
    </>
  );
}
