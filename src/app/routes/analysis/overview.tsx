import { useParams } from 'react-router';
import { useAnalysis } from '../../../features/analyses/api/get-analysis';
import { AnalysisOverview } from '../../../features/analyses/components/analysis-overview';
import { PlotLabelsPanel } from '../../../features/analyses/components/plot-labels-panel';
import { BlindingPanel } from '../../../features/blinding/components/blinding-panel';
import { useCan } from '../../../features/analyses/use-can';
import { useMe } from '../../../features/auth/api/get-me';
import { PageHeader } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';

export function OverviewRoute() {
  const { slug = '' } = useParams();
  const analysis = useAnalysis(slug);
  const me = useMe();
  const can = useCan(slug);
  return (
    <QueryView query={analysis}>
      {(o) => (
        <>
          <PageHeader title={o.analysis.name} description={o.analysis.description || undefined} />
          <BlindingPanel slug={slug} state={o.analysis.blinding} mayRequest={can('blinding.request')} mayDecide={can('blinding.decide')} />
          <AnalysisOverview overview={o} isAdmin={me.data?.user.isAdmin ?? false} />
          <PlotLabelsPanel slug={slug} labels={o.analysis.plotLabels} mayEdit={can('version.approve')} />
        </>
      )}
    </QueryView>
  );
}
