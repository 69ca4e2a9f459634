import { useCallback, useMemo, useState } from 'react';
import type { PruningOverview } from '@shared/schemas/register';
import { plural } from '../../../lib/format';
import { CandidatesPanel } from './candidates-panel';
import { PrunedPanel } from './pruned-panel';
import { RulesPanel } from './rules-panel';
import { SelectionPanel } from './selection-panel';

/** One line that answers "how much could go?" before any table is read. */
function Summary({ overview }: { overview: PruningOverview }) {
  const small = overview.candidates.filter((c) => c.reason?.rule === 'small').length;
  const flat = overview.candidates.length - small;
  return (
    <p className="mb-4 text-sm text-ink-soft" aria-label="Summary">
      The rules propose <span className="font-semibold text-ink">{plural(overview.candidates.length, 'effect')}</span> of the {overview.effects.toLocaleString('en-GB')} in the fit: {small} below the size
      threshold, {flat} flat within {flat === 1 ? 'its' : 'their'} noise. {overview.pruned.length ? `${plural(overview.pruned.length, 'effect')} ${overview.pruned.length === 1 ? 'is' : 'are'} pruned.` : 'None is pruned yet.'}
    </p>
  );
}

/**
 * Which effects can be dropped without changing the result, and what dropping them changes: the
 * candidates by rule, a selection previewed against the latest shown fit, pruning with a comment,
 * and the pruned effects with a way back. Those who may not edit the model read it all.
 */
export function PruningScreen({ slug, overview, mayEdit }: { slug: string; overview: PruningOverview; mayEdit: boolean }) {
  const [chosen, setChosen] = useState<Set<number>>(() => new Set());
  const [notice, setNotice] = useState<string | null>(null);
  const onToggle = useCallback((ids: number[], on: boolean) => {
    setNotice(null);
    setChosen((prev) => {
      const next = new Set(prev);
      for (const id of ids) if (on) next.add(id);
      else next.delete(id);
      return next;
    });
  }, []);
  // only candidates can be selected: one pruned meanwhile, or no longer proposed, drops out
  const selected = useMemo(() => overview.candidates.filter((c) => chosen.has(c.effectId)), [overview.candidates, chosen]);
  const selectedIds = useMemo(() => new Set(selected.map((s) => s.effectId)), [selected]);
  const selection = useMemo(() => (mayEdit ? { selected: selectedIds, onToggle } : null), [mayEdit, selectedIds, onToggle]);

  return (
    <>
      <Summary overview={overview} />
      {notice && (
        <p role="status" className="mb-4 rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          {notice}
        </p>
      )}
      <div className="grid items-start gap-5 xl:grid-cols-[minmax(0,1fr)_27rem]">
        <CandidatesPanel slug={slug} rules={overview.rules} candidates={overview.candidates} selection={selection} />
        <div className="flex flex-col gap-5 xl:sticky xl:top-4">
          {mayEdit && (
            <SelectionPanel
              slug={slug}
              overview={overview}
              selected={selected}
              onClear={() => setChosen(new Set())}
              onPruned={(count) => {
                setChosen(new Set());
                setNotice(`Pruned ${plural(count, 'effect')}. Versions frozen from now on leave ${count === 1 ? 'it' : 'them'} out (or keep the normalisation); each entry’s history has your comment.`);
              }}
            />
          )}
          <RulesPanel slug={slug} rules={overview.rules} mayEdit={mayEdit} />
        </div>
      </div>
      <div className="mt-5">
        <PrunedPanel slug={slug} pruned={overview.pruned} mayEdit={mayEdit} />
      </div>
    </>
  );
}
