import { useParams } from 'react-router';
import { useModel } from '../../../features/model/api/get-model';
import { ModelView } from '../../../features/model/components/model-view';
import { ExportModelLink } from '../../../features/model/components/exchange-actions';
import { useCan } from '../../../features/analyses/use-can';
import { PageHeader } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';

export function ModelRoute() {
  const { slug = '' } = useParams();
  const model = useModel(slug);
  const canEdit = useCan(slug)('model.edit');
  const hasModel = !!model.data && (model.data.regions.length > 0 || model.data.processes.length > 0);
  return (
    <>
      <PageHeader
        title="Model"
        description={
          canEdit
            ? 'Regions with their observable and binning, the processes with their nominal templates, and the observed data. You may edit all of it.'
            : 'Regions with their observable and binning, the processes with their nominal templates, and the observed data.'
        }
        actions={hasModel ? <ExportModelLink slug={slug} /> : undefined}
      />
      <QueryView query={model} loadingLabel="Loading the model…">
        {(m) => <ModelView slug={slug} model={m} canEdit={canEdit} />}
      </QueryView>
    </>
  );
}
