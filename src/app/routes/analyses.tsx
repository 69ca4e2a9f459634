import { useMe } from '../../features/auth/api/get-me';
import { useAnalyses } from '../../features/analyses/api/get-analyses';
import { AnalysesList } from '../../features/analyses/components/analyses-list';
import { CreateAnalysisForm } from '../../features/analyses/components/create-analysis-form';
import { PageHeader, Panel } from '../../components/ui/page';
import { QueryView } from '../../components/ui/query-view';

export function AnalysesRoute() {
  const me = useMe();
  const analyses = useAnalyses();
  const isAdmin = me.data?.user.isAdmin ?? false;
  return (
    <main id="main" className="mx-auto max-w-6xl px-6 py-6">
      <PageHeader
        title="Analyses"
        description={isAdmin ? 'Every analysis on this Plumbline. As an admin you may open any of them and manage its members.' : 'The analyses you are a member of.'}
      />
      <div className={isAdmin ? 'grid gap-6 lg:grid-cols-[1fr_20rem]' : ''}>
        <div className="min-w-0 self-start">
          <QueryView query={analyses} loadingLabel="Loading analyses…">
            {(list) => <AnalysesList analyses={list} isAdmin={isAdmin} />}
          </QueryView>
        </div>
        {isAdmin && (
          <Panel title="New analysis" className="self-start">
            <CreateAnalysisForm />
          </Panel>
        )}
      </div>
    </main>
  );
}
