import type { EntryState } from '@shared/schemas/api';
import { ENTRY_STATES } from '@shared/vocabulary';
import { ENTRY_STATE_META } from '../../../components/status/entry-state';

/** Register entries by review state: one proportional bar and a legend with the counts. */
export function EntryStateBar({ counts }: { counts: Partial<Record<EntryState, number>> }) {
  const total = ENTRY_STATES.reduce((s, k) => s + (counts[k] ?? 0), 0);
  return (
    <div>
      {total > 0 && (
        <div className="flex h-2.5 overflow-hidden rounded-full bg-paper-sunk" aria-hidden>
          {ENTRY_STATES.map((s) =>
            counts[s] ? <div key={s} style={{ width: `${(100 * counts[s]) / total}%`, background: ENTRY_STATE_META[s].colour }} /> : null,
          )}
        </div>
      )}
      <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-4 gap-y-0.5 text-sm sm:grid-cols-[auto_1fr_auto_1fr]">
        {ENTRY_STATES.map((s) => (
          <div key={s} className="contents" title={ENTRY_STATE_META[s].meaning}>
            <dt className="flex items-center gap-1.5 text-ink-soft">
              <span aria-hidden className="inline-block size-2.5 rounded-sm" style={{ background: ENTRY_STATE_META[s].colour }} />
              {ENTRY_STATE_META[s].label}
            </dt>
            <dd className="font-semibold tabular-nums">{counts[s] ?? 0}</dd>
          </div>
        ))}
      </dl>
    </div>
  );
}
