import type { EntryState } from '@shared/schemas/api';
import { Badge, type Tone } from '../ui/badge';

/** A register entry's review state in words, with its badge tone, its colour in the overview's bar and what it means. */
export const ENTRY_STATE_META: Record<EntryState, { label: string; tone: Tone; meaning: string; colour: string }> = {
  draft: { label: 'Draft', tone: 'neutral', meaning: 'Being written by its owner; not yet submitted for review', colour: '#b9ad97' },
  submitted: { label: 'Submitted', tone: 'amber', meaning: 'Waiting for a convener to review it', colour: '#c07a12' },
  accepted: { label: 'Accepted', tone: 'teal', meaning: 'Reviewed and accepted by a convener', colour: '#0e7c74' },
  sent_back: { label: 'Sent back', tone: 'danger', meaning: 'Returned to its owner with review comments', colour: '#9b2c22' },
  retired: { label: 'Retired', tone: 'neutral', meaning: 'No longer part of the model; kept for the record', colour: '#5f574c' },
};

export function EntryStateBadge({ state }: { state: EntryState }) {
  const m = ENTRY_STATE_META[state];
  return (
    <Badge tone={m.tone} title={m.meaning}>
      {m.label}
    </Badge>
  );
}
