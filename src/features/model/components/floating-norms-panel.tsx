import type { Model } from '@shared/schemas/api';
import { Button } from '../../../components/ui/button';
import { ConfirmButton } from '../../../components/ui/confirm-button';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { useDeleteFloatingNorm } from '../api/delete-floating-norm';
import { FloatingNormForm } from './floating-norm-form';
import type { EditorControl } from './model-editor';

type FloatingNorm = Model['floatingNorms'][number];

function DeleteNorm({ slug, norm }: { slug: string; norm: string }) {
  const del = useDeleteFloatingNorm(slug);
  return <ConfirmButton label="Delete" ariaLabel={`Delete floating normalisation ${norm}`} question={`Delete ${norm}? Its templates become fixed.`} confirmLabel="Delete" busy={del.isPending} error={del.error} onCancel={del.reset} onConfirm={() => del.mutate(norm)} />;
}

const col = dataColumns<FloatingNorm>();

function normColumns(slug: string, model: Model, canEdit: boolean) {
  return [
    col.accessor('key', {
      header: 'Factor',
      cell: (c) => {
        const f = c.row.original;
        return (
          <>
            {f.label && <span className="mr-2 font-medium">{f.label}</span>}
            <span className={`font-mono text-xs ${f.label ? 'text-ink-muted' : 'font-medium'}`}>{f.key}</span>
          </>
        );
      },
    }),
    col.accessor('start', { header: 'Start', meta: { numeric: true, cellTitle: 'Factor on the nominal yield where the fit starts' }, cell: (c) => `×${c.getValue()}` }),
    col.display({
      id: 'range',
      header: 'Allowed range',
      meta: { numeric: true, cellTitle: 'The fit keeps the factor within this range' },
      cell: (c) => `[${c.row.original.min}, ${c.row.original.max}]`,
    }),
    col.display({
      id: 'multiplies',
      header: 'Multiplies',
      meta: { cellClass: 'text-xs' },
      cell: (c) => {
        const targets = model.templates.filter((t) => t.floatingNorm === c.row.original.key);
        return targets.length ? targets.map((t) => `${t.region} × ${t.process}`).join(', ') : <span className="text-ink-muted">no template yet</span>;
      },
    }),
    ...(canEdit
      ? [
          col.display({
            id: 'actions',
            header: 'Actions',
            meta: { srOnlyHeader: true, headerClass: 'text-right', cellClass: 'text-right' },
            cell: (c) => <DeleteNorm slug={slug} norm={c.row.original.key} />,
          }),
        ]
      : []),
  ];
}

/** The free factors on templates, with where they start, their range and what they multiply. */
export function FloatingNormsPanel({ slug, model, canEdit, editor }: { slug: string; model: Model; canEdit: boolean; editor: EditorControl }) {
  return (
    <Panel
      title={`Floating normalisations (${model.floatingNorms.length})`}
      actions={
        canEdit && !editor.is({ kind: 'norm-new' }) ? (
          <Button size="sm" onClick={() => editor.open({ kind: 'norm-new' })}>
            Add floating normalisation
          </Button>
        ) : undefined
      }
    >
      {editor.is({ kind: 'norm-new' }) && (
        <div className="mb-3 rounded-md bg-paper-sunk/50 px-3 py-3">
          <FloatingNormForm slug={slug} onDone={editor.close} />
        </div>
      )}
      {model.floatingNorms.length === 0 ? (
        <p className="text-sm text-ink-muted">None: every template has a fixed normalisation. A floating normalisation is a free factor on the templates that choose it.</p>
      ) : (
        <DataTable columns={normColumns(slug, model, canEdit)} data={model.floatingNorms} getRowId={(f) => f.key} label="Floating normalisations" rowHeader="key" frame="plain" frameClass="-mx-4 -mb-3" />
      )}
    </Panel>
  );
}
