import type { QuestionState } from '@shared/schemas/review';
import { Badge } from '../../../components/ui/badge';
import { QUESTION_STATE_META } from '../question-states';

export function QuestionStateBadge({ state }: { state: QuestionState }) {
  const m = QUESTION_STATE_META[state];
  return (
    <Badge tone={m.tone} title={m.title}>
      {m.label}
    </Badge>
  );
}
