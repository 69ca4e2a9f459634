import { useParams } from 'react-router';
import { useModel } from '../../../features/model/api/get-model';
import { ModelView } from '../../../features/model/components/model-view';
import { PageHeader } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';

export function ModelRoute() {
  const { slug = '' } = useParams();
  const model = useModel(slug);
  return (
    <>
      <PageHeader title="Model" description="Regions with their observable and binning, and the processes with their nominal templates." />
      <QueryView query={model} loadingLabel="Loading the model…">
        {(m) => <ModelView model={m} />}
      </QueryView>
    </>
  );
}
