import type { Model, Region } from '@shared/schemas/api';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { formatCount, round1 } from '../../../lib/format';
import { sum } from '../../../lib/numbers';
import { processColour } from '../../../lib/palette';
import type { EditorControl } from './model-editor';
import { TemplateEditor } from './template-editor';

const col = dataColumns<Region>();

/** Regions down, processes across: each cell a template's expected events, a button to edit it for an analyst. */
function templateColumns(model: Model, canEdit: boolean, editor: EditorControl) {
  const templateOf = new Map(model.templates.map((t) => [`${t.region}|${t.process}`, t]));
  return [
    col.accessor('key', { header: 'Region', meta: { cellClass: 'font-mono text-xs' } }),
    ...model.processes.map((p, i) =>
      col.display({
        id: `process-${p.key}`,
        header: () => (
          <span className="inline-flex items-center gap-1.5">
            <span aria-hidden className="inline-block size-2.5 rounded-sm" style={{ background: processColour(i, p.colour) }} />
            {p.label || p.key}
          </span>
        ),
        meta: {
          numeric: true,
          nowrap: true,
          cellClass: (r) => (editor.is({ kind: 'template', region: r.key, process: p.key }) ? 'bg-teal-soft' : ''),
          cellTitle: (r) => {
            const t = templateOf.get(`${r.key}|${p.key}`);
            if (!t) return `No template of ${p.label || p.key} in ${r.label || r.key}`;
            const total = round1(sum(t.nominal));
            return `${p.label || p.key} in ${r.label || r.key}: ${formatCount(total)} events over ${t.nominal.length} bins${t.variance ? `, template statistics ±${formatCount(round1(Math.sqrt(sum(t.variance))))} events` : ''}${t.floatingNorm ? `, floating normalisation ${t.floatingNorm}` : ''}`;
          },
        },
        cell: (c) => {
          const r = c.row.original;
          const t = templateOf.get(`${r.key}|${p.key}`);
          const total = t ? round1(sum(t.nominal)) : null;
          const text = total === null ? '—' : formatCount(total);
          const floating = t?.floatingNorm && <sup className="ml-0.5 text-2xs text-teal-ink">f</sup>;
          if (!canEdit)
            return (
              <>
                {text}
                {floating}
              </>
            );
          // the floating mark stays outside the button: its name says the events, as its text does
          return (
            <>
              <button
                type="button"
                aria-label={total !== null ? `Edit template ${r.key} × ${p.key}, ${formatCount(total)} events` : `Add template ${r.key} × ${p.key}`}
                onClick={() => editor.open({ kind: 'template', region: r.key, process: p.key })}
                className={`rounded px-1 hover:bg-paper-sunk hover:underline ${t ? 'text-ink' : 'text-ink-muted'}`}
              >
                {text}
              </button>
              {floating}
            </>
          );
        },
      }),
    ),
  ];
}

/** The nominal templates as a matrix of regions and processes, with the editor of the chosen one beneath. */
export function TemplatesPanel({ slug, model, canEdit, editor }: { slug: string; model: Model; canEdit: boolean; editor: EditorControl }) {
  const open = editor.current?.kind === 'template' ? editor.current : null;
  return (
    <Panel title="Nominal templates">
      <p className="mb-2 text-xs text-ink-muted">
        Expected events per region and process, before the fit.{canEdit ? ' Choose a cell to enter or change its template, its variance and its floating normalisation.' : ''}
      </p>
      <DataTable columns={templateColumns(model, canEdit, editor)} data={model.regions} getRowId={(r) => r.key} label="Nominal templates" rowHeader="key" frame="plain" frameClass="-mx-4" stickyFirstColumn />
      <p className="mt-1 text-2xs text-ink-muted">
        <sup className="text-teal-ink">f</sup> has a floating normalisation.
      </p>
      {open && (
        <div className="mt-3 rounded-md bg-paper-sunk/50 px-3 py-3">
          <TemplateEditor key={`${open.region}|${open.process}`} slug={slug} model={model} region={open.region} process={open.process} onDone={editor.close} />
        </div>
      )}
    </Panel>
  );
}
