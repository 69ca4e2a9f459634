import type { QuestionFilter } from '@shared/schemas/review';

/** Query keys of the questions, under the analysis's own key so an analysis change drops them too. */
export const questionKeys = {
  all: (slug: string) => ['analyses', slug, 'questions'] as const,
  list: (slug: string, filter: QuestionFilter) => ['analyses', slug, 'questions', 'list', filter] as const,
  detail: (slug: string, id: number) => ['analyses', slug, 'questions', 'detail', id] as const,
};
