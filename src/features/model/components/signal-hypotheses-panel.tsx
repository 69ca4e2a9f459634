import type { HypothesisSummary, SignalHypotheses } from '@shared/schemas/signal-hypotheses';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { ConfirmButton } from '../../../components/ui/confirm-button';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { ErrorNotice } from '../../../components/ui/error-notice';
import { Panel } from '../../../components/ui/page';
import { formatEdge, formatYield, plural } from '../../../lib/format';
import { useDeleteSignalHypothesis } from '../api/delete-signal-hypothesis';
import { useSignalHypotheses } from '../api/get-signal-hypotheses';
import { HypothesisForm } from './hypothesis-form';
import { HypothesisParameterForm } from './hypothesis-parameter-form';
import type { EditorControl } from './model-editor';

type Parameter = NonNullable<SignalHypotheses['parameter']>;
/** A hypothesis with what it lacks since the model changed (empty when it fits). */
type Row = HypothesisSummary & { issues: string[] };

function DeleteHypothesis({ slug, hypothesis }: { slug: string; hypothesis: Row }) {
  const del = useDeleteSignalHypothesis(slug);
  return (
    <ConfirmButton
      label="Delete"
      ariaLabel={`Delete hypothesis ${hypothesis.key}`}
      question={`Delete hypothesis ${hypothesis.key}?`}
      confirmLabel="Delete hypothesis"
      busy={del.isPending}
      error={del.error}
      onCancel={del.reset}
      onConfirm={() => del.mutate(hypothesis.key)}
    />
  );
}

/** "vireon in SR-core, SR-wide": the templates a hypothesis replaces, by process. */
function replaced(templates: HypothesisSummary['templates']) {
  const regionsOf = new Map<string, string[]>();
  for (const t of templates) regionsOf.set(t.process, [...(regionsOf.get(t.process) ?? []), t.region]);
  return [...regionsOf].map(([process, regions]) => `${process} in ${regions.join(', ')}`).join('; ');
}

const col = dataColumns<Row>();

function hypothesisColumns(slug: string, parameter: Parameter | null, canEdit: boolean) {
  const unit = parameter?.unit ? ` ${parameter.unit}` : '';
  return [
    col.accessor('key', {
      header: 'Hypothesis',
      sortFn: 'alphanumeric',
      cell: (c) => {
        const h = c.row.original;
        return (
          <span className="inline-flex items-baseline gap-2">
            {h.label && <span className="font-medium">{h.label}</span>}
            <span className={`font-mono text-xs ${h.label ? 'text-ink-muted' : 'font-medium'}`}>{h.key}</span>
          </span>
        );
      },
    }),
    col.accessor('value', {
      header: parameter ? parameter.name.charAt(0).toUpperCase() + parameter.name.slice(1) : 'Value',
      sortFn: 'basic',
      meta: { numeric: true, nowrap: true, headerTitle: parameter ? `The ${parameter.name} of each hypothesis${unit ? `, in${unit}` : ''}` : undefined },
      cell: (c) => `${formatEdge(c.getValue())}${unit}`,
    }),
    col.display({
      id: 'replaces',
      header: 'Replaces',
      meta: { cellTitle: 'The signal process and the regions whose templates of the model this hypothesis replaces' },
      cell: (c) => replaced(c.row.original.templates),
    }),
    col.accessor('total', {
      header: 'Signal yield',
      sortFn: 'basic',
      meta: { numeric: true, nowrap: true, headerTitle: 'Expected signal events at μ = 1, summed over the templates it replaces' },
      cell: (c) => `${formatYield(c.getValue())} events`,
    }),
    col.display({
      id: 'effects',
      header: 'Effects',
      meta: { cellTitle: (h) => (h.issues.length ? h.issues.join('\n') : 'Its own effects of the register\u2019s systematics on the templates it replaces') },
      cell: (c) => {
        const { effects, issues } = c.row.original;
        const given = [effects.shape ? `${effects.shape} shape` : null, effects.scale ? `${effects.scale} scale` : null].filter(Boolean).join(', ');
        return (
          <span className="inline-flex flex-wrap items-center gap-1.5">
            {given || <span className="text-ink-muted">none</span>}
            {issues.length > 0 && <Badge tone="amber">lacks {plural(issues.length, 'effect')}</Badge>}
          </span>
        );
      },
    }),
    ...(canEdit
      ? [
          col.display({
            id: 'actions',
            header: 'Actions',
            meta: { srOnlyHeader: true, headerClass: 'text-right', cellClass: 'text-right' },
            cell: (c) => <DeleteHypothesis slug={slug} hypothesis={c.row.original} />,
          }),
        ]
      : []),
  ];
}

/**
 * The signal hypotheses a scan fits in turn: the parameter they differ in, each hypothesis with
 * the templates it replaces and its yield, by value, and what any lacks since the model changed.
 * An analyst sets the parameter, adds a hypothesis from its CSV and deletes one.
 */
export function SignalHypothesesPanel({ slug, canEdit, editor }: { slug: string; canEdit: boolean; editor: EditorControl }) {
  const query = useSignalHypotheses(slug);
  if (query.isPending) return null;
  if (query.isError) return <ErrorNotice error={query.error} onRetry={() => void query.refetch()} compact />;
  const { parameter, points, issues } = query.data;
  if (!canEdit && !points.length && !parameter) return null;
  const rows: Row[] = points.map((p) => ({ ...p, issues: issues.filter((i) => i.hypothesis === p.key).map((i) => i.message) }));
  const editingParameter = editor.is({ kind: 'hypothesis-parameter' }) || (canEdit && !parameter);
  const adding = parameter && editor.is({ kind: 'hypothesis-new' });

  return (
    <Panel
      title={`Signal hypotheses (${points.length})`}
      actions={
        canEdit && parameter && !adding ? (
          <Button size="sm" onClick={() => editor.open({ kind: 'hypothesis-new' })}>
            Add hypothesis
          </Button>
        ) : undefined
      }
    >
      <p className="mb-2 text-xs text-ink-muted">
        A scan fits the model once per hypothesis. Each replaces the model&apos;s templates of its signal process in the regions it lists, with its own shape effects there; every other template stays.
      </p>
      {editingParameter && canEdit ? (
        <div className="mb-3 rounded-md bg-paper-sunk/50 px-3 py-3">
          {!parameter && <p className="mb-2 text-sm text-ink-soft">First say what the hypotheses differ in: the name and unit of their parameter.</p>}
          <HypothesisParameterForm slug={slug} parameter={parameter} onDone={editor.close} />
        </div>
      ) : (
        parameter && (
          <p className="mb-2 flex items-center gap-2 text-sm">
            <span className="text-ink-soft">Parameter:</span>
            <span className="font-medium">{parameter.name}</span>
            {parameter.unit && <span className="text-ink-muted">in {parameter.unit}</span>}
            {canEdit && (
              <Button size="sm" variant="ghost" aria-label="Edit the parameter of the signal hypotheses" onClick={() => editor.open({ kind: 'hypothesis-parameter' })}>
                Edit
              </Button>
            )}
          </p>
        )
      )}
      {issues.length > 0 && (
        <div role="note" className="mb-2 rounded-md border border-amber/40 bg-amber-soft/70 px-3 py-2 text-xs text-amber-ink">
          <p className="font-semibold">
            {plural(new Set(issues.map((i) => i.hypothesis)).size, 'hypothesis', 'hypotheses')} no longer fit the model, and a model version cannot be frozen until they are replaced with what they lack, or deleted:
          </p>
          <ul className="mt-1 list-disc pl-5">
            {issues.slice(0, 5).map((i, n) => (
              <li key={n}>
                {i.hypothesis && <span className="font-mono">{i.hypothesis}: </span>}
                {i.message}
              </li>
            ))}
            {issues.length > 5 && <li>… and {issues.length - 5} more</li>}
          </ul>
        </div>
      )}
      {adding && (
        <div className="mb-3 rounded-md bg-paper-sunk/50 px-3 py-3">
          <HypothesisForm slug={slug} parameter={parameter} onDone={editor.close} />
        </div>
      )}
      {points.length === 0 ? (
        <p className="text-sm text-ink-muted">No signal hypotheses yet: the model&apos;s own signal templates are its one hypothesis.</p>
      ) : (
        <DataTable
          columns={hypothesisColumns(slug, parameter, canEdit)}
          data={rows}
          getRowId={(h) => h.key}
          label="Signal hypotheses"
          rowHeader="key"
          sortable
          initialSorting={[{ id: 'value', desc: false }]}
          rowTone={(h) => (h.issues.length ? 'marked' : undefined)}
          frame="plain"
          frameClass="-mx-4 -mb-3 max-h-[28rem]"
        />
      )}
    </Panel>
  );
}
