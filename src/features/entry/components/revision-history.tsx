import { useState } from 'react';
import type { Revision } from '@shared/schemas/register';
import { formatDateTime } from '../../../lib/format';

const ACTION_WORDS: Record<string, string> = {
  created: 'created',
  edited: 'edited',
  imported: 'imported',
  'variations.uploaded': 'variations uploaded',
  'effect.removed': 'effect removed',
  'group.changed': 'group changed',
  'review.submit': 'submitted',
  'review.accept': 'accepted',
  'review.send_back': 'sent back',
  'review.retire': 'retired',
  'review.reopen': 'reopened',
};

const show = (v: unknown) => (v === undefined ? '—' : typeof v === 'string' ? v || '(empty)' : JSON.stringify(v, null, 1));

/**
 * Before and after, field by field where both are objects; otherwise the two values whole.
 * Written by hand rather than with the data table: it is a small diff inside one revision (fixed
 * column widths, the old value on red and the new on teal, long values wrapping), not a listing
 * to sort, scroll or follow into.
 */
function Change({ before, after }: { before: unknown; after: unknown }) {
  const isObj = (x: unknown): x is Record<string, unknown> => typeof x === 'object' && x !== null && !Array.isArray(x);
  if (isObj(before) || isObj(after)) {
    const b = isObj(before) ? before : {};
    const a = isObj(after) ? after : {};
    const fields = [...new Set([...Object.keys(b), ...Object.keys(a)])].filter((f) => JSON.stringify(b[f]) !== JSON.stringify(a[f]));
    if (!fields.length) return <p className="text-xs text-ink-muted">No field differs.</p>;
    return (
      <table className="w-full table-fixed border-collapse text-xs">
        <thead>
          <tr className="text-left text-ink-soft">
            <th scope="col" className="w-32 border-b border-rule px-2 py-1 font-semibold">Field</th>
            <th scope="col" className="border-b border-rule px-2 py-1 font-semibold">Before</th>
            <th scope="col" className="border-b border-rule px-2 py-1 font-semibold">After</th>
          </tr>
        </thead>
        <tbody>
          {fields.map((f) => (
            <tr key={f}>
              <th scope="row" className="border-b border-rule px-2 py-1 text-left align-top font-mono font-normal">{f}</th>
              <td className="border-b border-rule bg-danger-soft/30 px-2 py-1 align-top"><pre className="font-sans whitespace-pre-wrap break-words">{show(b[f])}</pre></td>
              <td className="border-b border-rule bg-teal-soft/40 px-2 py-1 align-top"><pre className="font-sans whitespace-pre-wrap break-words">{show(a[f])}</pre></td>
            </tr>
          ))}
        </tbody>
      </table>
    );
  }
  return (
    <div className="grid gap-2 text-xs sm:grid-cols-2">
      <div><p className="font-semibold text-ink-soft">Before</p><pre className="font-sans whitespace-pre-wrap break-words">{show(before)}</pre></div>
      <div><p className="font-semibold text-ink-soft">After</p><pre className="font-sans whitespace-pre-wrap break-words">{show(after)}</pre></div>
    </div>
  );
}

/** Every change of the entry, newest first: who, when, what; the before and after open on demand. */
export function RevisionHistory({ revisions }: { revisions: Revision[] }) {
  const [open, setOpen] = useState<number | null>(null);
  if (!revisions.length) return <p className="text-sm text-ink-muted">No revisions recorded.</p>;
  const sorted = [...revisions].sort((a, b) => b.createdAt.localeCompare(a.createdAt) || b.id - a.id);
  return (
    <ol className="flex flex-col" aria-label="Revisions">
      {sorted.map((r) => {
        const hasChange = r.before !== undefined || r.after !== undefined;
        const isOpen = open === r.id;
        return (
          <li key={r.id} className="border-b border-rule py-2 last:border-b-0">
            <div className="flex flex-wrap items-baseline gap-x-3 gap-y-0.5">
              <time dateTime={r.createdAt} className="text-xs text-ink-muted tabular-nums">
                {formatDateTime(r.createdAt)}
              </time>
              <span className="text-sm font-medium">{r.author?.name ?? 'Plumbline'}</span>
              <span className="text-xs font-semibold tracking-wide text-ink-soft uppercase">{ACTION_WORDS[r.action] ?? r.action.replace(/[._]/g, ' ')}</span>
            </div>
            <p className="text-sm text-ink-soft">{r.summary}</p>
            {hasChange && (
              <>
                <button
                  type="button"
                  aria-expanded={isOpen}
                  onClick={() => setOpen(isOpen ? null : r.id)}
                  className="mt-0.5 text-xs font-medium text-teal-ink hover:underline"
                >
                  {isOpen ? 'Hide before and after' : 'Show before and after'}
                </button>
                {isOpen && (
                  <div className="mt-1.5 rounded-md border border-rule bg-paper px-2 py-1.5">
                    <Change before={r.before} after={r.after} />
                  </div>
                )}
              </>
            )}
          </li>
        );
      })}
    </ol>
  );
}
