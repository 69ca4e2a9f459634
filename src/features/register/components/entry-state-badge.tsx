import type { EntryState } from '@shared/schemas/api';
import { Badge } from '../../../components/ui/badge';
import { ENTRY_STATE_META } from '../entry-states';

export function EntryStateBadge({ state }: { state: EntryState }) {
  const m = ENTRY_STATE_META[state];
  return (
    <Badge tone={m.tone} title={m.meaning}>
      {m.label}
    </Badge>
  );
}
