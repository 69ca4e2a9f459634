import type { Model, Region } from '@shared/schemas/api';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { ConfirmButton } from '../../../components/ui/confirm-button';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { formatCount, formatEdge, round1 } from '../../../lib/format';
import { sum } from '../../../lib/numbers';
import { useDeleteRegion } from '../api/delete-region';
import type { EditorControl } from './model-editor';
import { ROLE_MEANING, ROLE_TONE } from './region-roles';
import { ObservedEditor } from './observed-editor';
import { RegionForm } from './region-form';

function Binning({ region }: { region: Region }) {
  const e = region.edges;
  const n = Math.max(0, e.length - 1);
  if (n === 0) return <span className="text-ink-muted">no bins</span>;
  const unit = region.unit ? ` ${region.unit}` : '';
  const widths = e.slice(1).map((x, i) => x - e[i]);
  const uniform = widths.every((w) => Math.abs(w - widths[0]) < 1e-9 * Math.max(1, Math.abs(widths[0])));
  return (
    <span title={`Bin edges${unit ? ` (${region.unit})` : ''}: ${e.map(formatEdge).join(', ')}`} className="tabular-nums">
      {n} bins, {formatEdge(e[0])}–{formatEdge(e[n])}
      {unit}
      <span className="text-ink-muted">{uniform ? `, width ${formatEdge(widths[0])}${unit}` : ', variable width'}</span>
    </span>
  );
}

function Observed({ region }: { region: Region }) {
  if (region.withheld)
    return (
      <Badge tone="amber" title="The analysis is blinded: the server does not send signal-region observed counts to any client">
        data withheld while blinded
      </Badge>
    );
  if (!region.observed) return <span className="text-ink-muted">not recorded</span>;
  return (
    <span className="tabular-nums" title={`Observed events per bin: ${region.observed.map(formatCount).join(', ')}`}>
      {formatCount(sum(region.observed))} events
    </span>
  );
}

function expectedTotal(model: Model, region: string): number | null {
  const ts = model.templates.filter((t) => t.region === region);
  return ts.length ? ts.reduce((s, t) => s + sum(t.nominal), 0) : null;
}

function DeleteRegion({ slug, region }: { slug: string; region: string }) {
  const del = useDeleteRegion(slug);
  return <ConfirmButton label="Delete" ariaLabel={`Delete region ${region}`} question={`Delete region ${region} and its templates?`} confirmLabel="Delete region" busy={del.isPending} error={del.error} onCancel={del.reset} onConfirm={() => del.mutate(region)} />;
}

const col = dataColumns<Region>();

function regionColumns(slug: string, model: Model, canEdit: boolean, editor: EditorControl) {
  return [
    col.accessor('key', {
      header: 'Region',
      cell: (c) => {
        const r = c.row.original;
        return r.label ? (
          <>
            <span className="font-medium">{r.label}</span>
            <span className="ml-2 font-mono text-xs text-ink-muted">{r.key}</span>
          </>
        ) : (
          <span className="font-mono text-xs font-medium">{r.key}</span>
        );
      },
    }),
    col.accessor('role', {
      header: 'Role',
      cell: (c) => (
        <Badge tone={ROLE_TONE[c.getValue()]} title={ROLE_MEANING[c.getValue()]}>
          {c.getValue()}
        </Badge>
      ),
    }),
    col.accessor('observable', { header: 'Observable', meta: { nowrap: true } }),
    col.accessor('unit', { header: 'Unit', meta: { nowrap: true }, cell: (c) => c.getValue() || <span className="text-ink-muted" title="Dimensionless observable">none</span> }),
    col.accessor('edges', { header: 'Binning', meta: { cellClass: 'min-w-48' }, cell: (c) => <Binning region={c.row.original} /> }),
    col.display({
      id: 'expected',
      header: 'Expected (pre-fit)',
      meta: { numeric: true, nowrap: true, cellTitle: 'Sum of the nominal templates of every process in this region, before the fit' },
      cell: (c) => {
        const exp = expectedTotal(model, c.row.original.key);
        return exp === null ? <span className="text-ink-muted">no templates</span> : `${formatCount(round1(exp))} events`;
      },
    }),
    col.accessor('observed', { header: 'Observed', meta: { numeric: true, nowrap: true }, cell: (c) => <Observed region={c.row.original} /> }),
    ...(canEdit
      ? [
          col.display({
            id: 'actions',
            header: 'Actions',
            meta: { srOnlyHeader: true, headerClass: 'text-right', cellClass: 'text-right' },
            cell: (c) => {
              const r = c.row.original;
              return (
                <div className="flex items-start justify-end gap-1">
                  <Button size="sm" variant="ghost" aria-label={`Edit region ${r.key}`} onClick={() => editor.open({ kind: 'region', key: r.key })}>
                    Edit
                  </Button>
                  <Button size="sm" variant="ghost" aria-label={`Observed data of ${r.key}`} onClick={() => editor.open({ kind: 'observed', key: r.key })}>
                    Data
                  </Button>
                  <DeleteRegion slug={slug} region={r.key} />
                </div>
              );
            },
          }),
        ]
      : []),
  ];
}

/** The regions with their observable, binning, expected and observed events; an analyst edits them in place. */
export function RegionsPanel({ slug, model, canEdit, editor }: { slug: string; model: Model; canEdit: boolean; editor: EditorControl }) {
  return (
    <Panel
      title={`Regions (${model.regions.length})`}
      actions={
        canEdit && !editor.is({ kind: 'region-new' }) ? (
          <Button size="sm" onClick={() => editor.open({ kind: 'region-new' })}>
            Add region
          </Button>
        ) : undefined
      }
    >
      {editor.is({ kind: 'region-new' }) && (
        <div className="mb-3 rounded-md bg-paper-sunk/50 px-3 py-3">
          <RegionForm slug={slug} onDone={editor.close} />
        </div>
      )}
      {model.regions.length === 0 ? (
        <p className="text-sm text-ink-muted">No regions yet.</p>
      ) : (
        <DataTable
          columns={regionColumns(slug, model, canEdit, editor)}
          data={model.regions}
          getRowId={(r) => r.key}
          label="Regions"
          rowHeader="key"
          frame="plain"
          frameClass="-mx-4 -mb-3"
          below={(r) =>
            editor.is({ kind: 'region', key: r.key })
              ? { content: <div className="px-1 py-1.5"><RegionForm slug={slug} region={r} onDone={editor.close} /></div> }
              : editor.is({ kind: 'observed', key: r.key })
                ? { content: <div className="px-1 py-1.5"><ObservedEditor slug={slug} region={r} onDone={editor.close} /></div> }
                : null
          }
        />
      )}
    </Panel>
  );
}
