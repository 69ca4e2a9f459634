import { useMemo } from 'react';
import type { QuestionSummary } from '@shared/schemas/review';
import type { QuestionMark } from '../../components/status/question-marker';
import { useQuestions } from './api/get-questions';

/** Per register entry (= parameter name), its unresolved questions; resolved ones leave no mark. */
export function questionMarks(list: QuestionSummary[]): Map<string, QuestionMark> {
  const marks = new Map<string, QuestionMark>();
  for (const q of list) {
    // a question on a region, a fit or a version marks no parameter
    if (q.state === 'resolved' || !q.entry) continue;
    const key = q.entry.key;
    const m = marks.get(key);
    if (!m) marks.set(key, { state: q.state, count: 1 });
    else marks.set(key, { state: m.state === 'open' || q.state === 'open' ? 'open' : 'answered', count: m.count + 1 });
  }
  return marks;
}

/** The analysis's questions, fetched once and shared by every result table that marks parameters. */
export function useQuestionMarks(slug: string): Map<string, QuestionMark> {
  const { data } = useQuestions(slug);
  return useMemo(() => questionMarks(data ?? []), [data]);
}
