import type { Model, Process } from '@shared/schemas/api';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { ConfirmButton } from '../../../components/ui/confirm-button';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { processColour } from '../../../lib/palette';
import { useDeleteProcess } from '../api/delete-process';
import type { EditorControl } from './model-editor';
import { ProcessForm } from './process-form';

function DeleteProcess({ slug, process }: { slug: string; process: string }) {
  const del = useDeleteProcess(slug);
  return <ConfirmButton label="Delete" ariaLabel={`Delete process ${process}`} question={`Delete process ${process} and its templates?`} confirmLabel="Delete process" busy={del.isPending} error={del.error} onCancel={del.reset} onConfirm={() => del.mutate(process)} />;
}

/** A process with its place in the model's list, which picks its colour when it has none of its own. */
type Row = Process & { index: number };

const col = dataColumns<Row>();

function processColumns(slug: string, model: Model, canEdit: boolean, editor: EditorControl) {
  const normOf = new Map(model.floatingNorms.map((f) => [f.key, f]));
  const templatesOf = (p: Process) => model.templates.filter((t) => t.process === p.key);
  return [
    col.accessor('key', {
      header: 'Process',
      cell: (c) => {
        const p = c.row.original;
        return (
          <span className="inline-flex items-center gap-2">
            <span aria-hidden className="inline-block size-3 rounded-sm border border-ink/15" style={{ background: processColour(p.index, p.colour) }} />
            {p.label && <span className="font-medium">{p.label}</span>}
            <span className={`font-mono text-xs ${p.label ? 'text-ink-muted' : 'font-medium'}`}>{p.key}</span>
          </span>
        );
      },
    }),
    col.accessor('kind', {
      header: 'Kind',
      cell: (c) => (
        <Badge tone={c.getValue() === 'signal' ? 'plum' : 'neutral'} title={c.getValue() === 'signal' ? 'Scaled by the signal strength μ' : 'Background: not scaled by μ'}>
          {c.getValue()}
        </Badge>
      ),
    }),
    col.display({
      id: 'norms',
      header: 'Floating normalisation',
      cell: (c) => {
        const norms = [...new Set(templatesOf(c.row.original).map((t) => t.floatingNorm).filter((n): n is string => !!n))];
        if (!norms.length) return <span className="text-ink-muted">fixed</span>;
        return norms.map((n) => {
          const f = normOf.get(n);
          return (
            <span key={n} className="mr-2" title={f ? `Fitted freely: starts at ${f.start}, allowed range [${f.min}, ${f.max}]` : undefined}>
              {f?.label || n} {f && <span className="text-ink-muted tabular-nums">[{f.min}, {f.max}]</span>}
            </span>
          );
        });
      },
    }),
    col.display({
      id: 'templates',
      header: 'Templates',
      meta: { cellTitle: 'Regions in which this process has a nominal template' },
      cell: (c) => {
        const ts = templatesOf(c.row.original);
        return ts.length ? `${ts.length} region${ts.length === 1 ? '' : 's'}: ${ts.map((t) => t.region).join(', ')}` : <span className="text-ink-muted">none</span>;
      },
    }),
    ...(canEdit
      ? [
          col.display({
            id: 'actions',
            header: 'Actions',
            meta: { srOnlyHeader: true, headerClass: 'text-right', cellClass: 'text-right' },
            cell: (c) => (
              <div className="flex items-start justify-end gap-1">
                <Button size="sm" variant="ghost" aria-label={`Edit process ${c.row.original.key}`} onClick={() => editor.open({ kind: 'process', key: c.row.original.key })}>
                  Edit
                </Button>
                <DeleteProcess slug={slug} process={c.row.original.key} />
              </div>
            ),
          }),
        ]
      : []),
  ];
}

/** The processes with their kind, floating normalisations and templates; an analyst edits them in place. */
export function ProcessesPanel({ slug, model, canEdit, editor }: { slug: string; model: Model; canEdit: boolean; editor: EditorControl }) {
  const rows = model.processes.map((p, index) => ({ ...p, index }));
  return (
    <Panel
      title={`Processes (${model.processes.length})`}
      actions={
        canEdit && !editor.is({ kind: 'process-new' }) ? (
          <Button size="sm" onClick={() => editor.open({ kind: 'process-new' })}>
            Add process
          </Button>
        ) : undefined
      }
    >
      {editor.is({ kind: 'process-new' }) && (
        <div className="mb-3 rounded-md bg-paper-sunk/50 px-3 py-3">
          <ProcessForm slug={slug} index={model.processes.length} onDone={editor.close} />
        </div>
      )}
      {model.processes.length === 0 ? (
        <p className="text-sm text-ink-muted">No processes yet.</p>
      ) : (
        <DataTable
          columns={processColumns(slug, model, canEdit, editor)}
          data={rows}
          getRowId={(p) => p.key}
          label="Processes"
          rowHeader="key"
          frame="plain"
          frameClass="-mx-4 -mb-3"
          below={(p) =>
            editor.is({ kind: 'process', key: p.key })
              ? { content: <div className="px-1 py-1.5"><ProcessForm slug={slug} process={model.processes[p.index]} index={p.index} onDone={editor.close} /></div> }
              : null
          }
        />
      )}
    </Panel>
  );
}
