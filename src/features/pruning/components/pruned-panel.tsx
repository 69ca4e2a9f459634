import { useMemo } from 'react';
import type { PruningItem } from '@shared/schemas/register';
import { Button } from '../../../components/ui/button';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { FormError } from '../../../components/ui/error-notice';
import { Panel } from '../../../components/ui/page';
import { plural } from '../../../lib/format';
import { useRestoreEffects } from '../api/restore-effects';
import { effectColumn } from './candidates-panel';
import { effectName, Kappa, Reason } from './pruning-words';

const col = dataColumns<PruningItem>();

function Restore({ slug, item }: { slug: string; item: PruningItem }) {
  const restore = useRestoreEffects(slug);
  return (
    <div className="flex flex-col items-end gap-1">
      <Button size="sm" variant="secondary" busy={restore.isPending} aria-label={`Restore ${effectName(item)}`} onClick={() => restore.mutate({ effects: [item.effectId] })}>
        Restore
      </Button>
      {restore.error ? (
        <div className="max-w-xs text-left">
          <FormError error={restore.error} />
        </div>
      ) : null}
    </div>
  );
}

function columnsFor(slug: string, mayEdit: boolean) {
  return [
    effectColumn(slug),
    col.accessor((i) => i.pruned, {
      id: 'as',
      header: 'Pruned as',
      sortFn: 'text',
      meta: { nowrap: true },
      cell: (c) => {
        const i = c.row.original;
        if (i.pruned === 'dropped') return <span>left out of the fit</span>;
        return (
          <span>
            normalisation only,{' '}
            {i.normalisation ? <Kappa normalisation={i.normalisation} /> : <span className="text-ink-muted">κ unavailable</span>}
          </span>
        );
      },
    }),
    col.display({ id: 'reason', header: 'What the rules say now', meta: { nowrap: true }, cell: (c) => <Reason item={c.row.original} /> }),
    ...(mayEdit
      ? [col.display({ id: 'restore', header: 'Restore', meta: { srOnlyHeader: true, headerClass: 'text-right', cellClass: 'text-right' }, cell: (c) => <Restore slug={slug} item={c.row.original} /> })]
      : []),
  ];
}

/** Effects pruned: out of frozen versions, or in them as their normalisation only; each can be put back. */
export function PrunedPanel({ slug, pruned, mayEdit }: { slug: string; pruned: PruningItem[]; mayEdit: boolean }) {
  const columns = useMemo(() => columnsFor(slug, mayEdit), [slug, mayEdit]);
  const sorted = useMemo(() => [...pruned].sort((a, b) => a.entry.key.localeCompare(b.entry.key) || a.region.localeCompare(b.region) || a.process.localeCompare(b.process)), [pruned]);
  return (
    <Panel title={`Pruned (${plural(pruned.length, 'effect')})`}>
      <p className="mb-2 max-w-prose text-xs text-ink-muted">
        Pruned effects stay in the register, marked on their entries. Versions frozen from now on leave them out, or keep a shape’s normalisation κ as a scale effect; fits already run keep the version they
        used. A new upload or smoothing of an effect brings it back into the fit.
      </p>
      {sorted.length ? (
        <DataTable columns={columns} data={sorted} getRowId={(i) => String(i.effectId)} label="Pruned effects" rowHeader="effect" sortable frameClass="max-h-[24rem]" />
      ) : (
        <p className="text-sm text-ink-muted">Nothing is pruned: every effect of the register is in the fit.</p>
      )}
    </Panel>
  );
}
