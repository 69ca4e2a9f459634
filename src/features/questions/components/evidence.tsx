import { Link } from 'react-router';
import type { Evidence, EvidenceCard, QuestionSummary } from '@shared/schemas/review';
import { diagnosisPath, fitPath } from '../../../lib/fits';

/** Where a piece of evidence opens. */
export function evidencePath(slug: string, e: Evidence): string {
  if (e.kind === 'version') return `/a/${slug}/fits`;
  if (e.kind === 'diagnosis') return diagnosisPath(slug, e.fitId, e.parameter);
  return fitPath(slug, e.fitId);
}

const KIND_WORDS: Record<Evidence['kind'], string> = { fit: 'Fit', variant: 'Variant', diagnosis: 'Diagnosis', version: 'Model version' };

/** An answer's evidence: one card per piece, each opening what it names. */
export function EvidenceCards({ slug, cards }: { slug: string; cards: EvidenceCard[] }) {
  if (cards.length === 0) return null;
  return (
    <ul aria-label="Evidence" className="mt-2 flex flex-wrap gap-2">
      {cards.map((c) => (
        <li key={JSON.stringify(c.evidence)}>
          <Link to={evidencePath(slug, c.evidence)} className="flex max-w-80 flex-col rounded-md border border-rule bg-paper px-3 py-1.5 text-xs hover:border-teal hover:bg-teal-soft/40">
            <span className="text-2xs font-semibold tracking-wide text-ink-muted uppercase">{KIND_WORDS[c.evidence.kind]}</span>
            <span className="font-medium text-teal-ink">{c.label}</span>
            <span className="text-ink-muted">
              {c.detail}
              {c.state ? ` · ${c.state === 'succeeded' ? 'finished' : c.state}` : ''}
            </span>
          </Link>
        </li>
      ))}
    </ul>
  );
}

/** Where the subject of a question opens: the parameter's entry, the model (a region or bin), the fit, or the versions. */
export function subjectPath(slug: string, q: Pick<QuestionSummary, 'about' | 'entry' | 'fit'>): string {
  switch (q.about.kind) {
    case 'parameter':
      return q.entry ? `/a/${slug}/entries/${encodeURIComponent(q.entry.key)}` : `/a/${slug}/register`;
    case 'region':
    case 'bin':
      return `/a/${slug}/model`;
    case 'fit':
      return q.fit ? fitPath(slug, q.fit.id) : `/a/${slug}/fits`;
    case 'version':
      return `/a/${slug}/fits`;
  }
}
