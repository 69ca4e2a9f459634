import type { QuestionFilter } from '@shared/schemas/review';

/**
 * Every query key of the client. Keys of an analysis nest under ['analyses', slug], and a key that
 * lives inside another starts with it, so invalidating the outer key reaches the inner ones too:
 * the register's key holds every entry's, a fit's holds its parts, comparisons, diagnoses and toy
 * runs. Features read and invalidate through these functions; none builds a key of its own.
 */

const analysis = (slug: string) => ['analyses', slug] as const;
const entries = (slug: string) => [...analysis(slug), 'entries'] as const;
const fits = (slug: string) => [...analysis(slug), 'fits'] as const;
const fit = (slug: string, id: number) => [...fits(slug), id] as const;
const questions = (slug: string) => [...analysis(slug), 'questions'] as const;
const questionLists = (slug: string) => [...questions(slug), 'list'] as const;
const pruning = (slug: string) => [...analysis(slug), 'pruning'] as const;
const model = (slug: string) => [...analysis(slug), 'model'] as const;
const hypothesisScans = (slug: string) => [...analysis(slug), 'hypothesis-scans'] as const;

export const queryKeys = {
  /** The signed-in user (null when signed out). */
  me: ['auth', 'me'] as const,
  users: ['users'] as const,
  outbox: ['outbox'] as const,
  invitation: (token: string) => ['invitations', token] as const,

  /** The analyses the caller sees; every analysis's own keys sit under it. */
  analyses: ['analyses'] as const,
  /** The overview, which also carries the caller's role and permissions. */
  overview: (slug: string) => [...analysis(slug), 'overview'] as const,
  members: (slug: string) => [...analysis(slug), 'members'] as const,
  blinding: (slug: string) => [...analysis(slug), 'blinding'] as const,
  /** The server's checklist before unblinding: under the blinding key, so a blinding change refreshes it. */
  blindingChecklist: (slug: string) => [...analysis(slug), 'blinding', 'checklist'] as const,
  /** The model; its signal hypotheses sit under it (a model change may change what they lack). */
  model,
  signalHypotheses: (slug: string) => [...model(slug), 'signal-hypotheses'] as const,
  groups: (slug: string) => [...analysis(slug), 'groups'] as const,

  /** The register's list; every entry's key starts with it. */
  entries,
  entry: (slug: string, key: string) => [...entries(slug), key] as const,

  /** The pruning overview (rules, candidates, pruned effects); its previews sit under it. */
  pruning,
  pruningPreview: (slug: string, id: number) => [...pruning(slug), 'previews', id] as const,

  /** The scans over signal hypotheses; every scan's key starts with it. */
  hypothesisScans,
  hypothesisScan: (slug: string, id: number) => [...hypothesisScans(slug), id] as const,

  versions: (slug: string) => [...analysis(slug), 'versions'] as const,
  /** The gates of a version for approval and the stale effects: under the versions key, so a freeze refreshes them. */
  versionChecklist: (slug: string) => [...analysis(slug), 'versions', 'approval-checklist'] as const,
  staleEffects: (slug: string) => [...analysis(slug), 'versions', 'stale-effects'] as const,
  /** The fits' list; every fit's key starts with it. */
  fits,
  fit,
  fitPart: (slug: string, id: number, part: string) => [...fit(slug, id), 'parts', part] as const,
  comparison: (slug: string, id: number, otherId: number) => [...fit(slug, id), 'compare', otherId] as const,
  /** A rerun's comparison with the fit it reproduces. */
  reproduction: (slug: string, id: number) => [...fit(slug, id), 'reproduction'] as const,
  diagnosis: (slug: string, fitId: number, parameter: string) => [...fit(slug, fitId), 'diagnosis', parameter] as const,
  /** A fit's toy runs sit under the fit; one run is reached by its own id, as the API does. */
  toyRuns: (slug: string, fitId: number) => [...fit(slug, fitId), 'toys'] as const,
  toyRun: (slug: string, toyId: number) => [...analysis(slug), 'toys', toyId] as const,

  /** The review sets' list; every set's key starts with it. */
  reviewSets: (slug: string) => [...analysis(slug), 'review-sets'] as const,
  reviewSet: (slug: string, id: number) => [...analysis(slug), 'review-sets', id] as const,

  questions,
  /** Every filtered list of questions (not the threads). */
  questionLists,
  questionList: (slug: string, filter: QuestionFilter) => [...questionLists(slug), filter] as const,
  question: (slug: string, id: number) => [...questions(slug), 'detail', id] as const,
};
