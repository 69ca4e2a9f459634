import { PageHeader } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { useOutbox } from '../../../features/outbox/api/get-outbox';
import { OutboxList } from '../../../features/outbox/components/outbox-list';

export function OutboxRoute() {
  const outbox = useOutbox();
  return (
    <main id="main" className="mx-auto max-w-6xl px-6 py-6">
      <PageHeader title="Outbox" description="E-mail Plumbline has sent or queued, newest first. Open a subject to read the message." />
      <QueryView query={outbox} loadingLabel="Loading the outbox…">
        {(messages) => <OutboxList messages={messages} />}
      </QueryView>
    </main>
  );
}
