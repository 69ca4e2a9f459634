import { PageHeader } from '../../../components/ui/page';
import { EmptyState } from '../../../components/ui/empty-state';

export function FitsRoute() {
  return (
    <>
      <PageHeader title="Fits" description="Profile-likelihood fits of the model, run on the server as background jobs." />
      <EmptyState title="No fits to list" notBuilt>
        <p>
          Every fit will be listed here with the model version it used, its dataset (observed where unblinded, pre-fit Asimov, or control regions only), its
          progress while it runs and its fitted signal strength when done. Analysts will start fits from this page.
        </p>
      </EmptyState>
    </>
  );
}
