import { Link } from 'react-router';

/** What a parameter's marker says: how many of its questions are not resolved, and whether one still waits for an answer. */
export type QuestionMark = { state: 'open' | 'answered'; count: number };

/**
 * A small mark beside a parameter with unresolved questions; its words are in the label, not in the colour.
 * Given `link`, the mark is a link to those questions, named by `link.label` and explained by `link.title`.
 */
export function QuestionMarker({ state, count, link }: { state: 'open' | 'answered'; count: number; link?: { to: string; label: string; title: string } }) {
  const text =
    state === 'open'
      ? `${count} unresolved question${count === 1 ? '' : 's'} on this parameter, waiting for an answer`
      : `${count} unresolved question${count === 1 ? '' : 's'} on this parameter, answered and waiting to be resolved`;
  const className = `inline-flex h-4 min-w-4 shrink-0 items-center justify-center rounded-full border px-1 text-2xs leading-none font-bold ${
    state === 'open' ? 'border-amber/60 bg-amber-soft text-amber-ink' : 'border-teal/40 bg-teal-soft text-teal-ink'
  }`;
  const mark = `?${count > 1 ? count : ''}`;
  if (link)
    return (
      <Link to={link.to} aria-label={link.label} title={link.title} className={`${className} hover:underline`}>
        {mark}
      </Link>
    );
  return (
    <span role="img" aria-label={text} title={text} className={className}>
      {mark}
    </span>
  );
}
