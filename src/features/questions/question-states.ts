import { QUESTION_STATES as STATES } from '@shared/vocabulary';
import type { QuestionState } from '@shared/schemas/review';
import type { Tone } from '../../components/ui/badge';

export const QUESTION_STATES: readonly QuestionState[] = STATES;

export const QUESTION_STATE_META: Record<QuestionState, { label: string; tone: Tone; title: string }> = {
  open: { label: 'Open', tone: 'amber', title: 'Raised and waiting for an answer' },
  answered: { label: 'Answered', tone: 'teal', title: 'Answered and waiting for the convener to resolve it' },
  resolved: { label: 'Resolved', tone: 'neutral', title: 'Resolved by a convener' },
};
