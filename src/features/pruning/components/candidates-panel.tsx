import { useEffect, useMemo, useRef } from 'react';
import { Link } from 'react-router';
import type { PruningItem, PruningRules } from '@shared/schemas/register';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { plural } from '../../../lib/format';
import { effectName, EstimatedMarker, Kappa, Reason, RULE_MEANING, RULE_TITLES, type Rule } from './pruning-words';

const col = dataColumns<PruningItem>();

/** An effect as one cell: its entry (a link to its page) over its region × process and kind. */
export function effectColumn(slug: string) {
  return col.accessor((i) => `${i.entry.key} ${i.region} ${i.process}`, {
    id: 'effect',
    header: 'Effect',
    sortFn: 'alphanumeric',
    meta: { nowrap: true },
    cell: (c) => {
      const i = c.row.original;
      return (
        <span className="flex flex-col leading-tight">
          <Link to={`/a/${slug}/entries/${encodeURIComponent(i.entry.key)}`} title={i.entry.label} className="font-mono text-xs font-medium text-teal-ink hover:underline">
            {i.entry.key}
          </Link>
          <span className="text-2xs text-ink-muted">
            <span className="font-mono">
              {i.region} × {i.process}
            </span>{' '}
            · {i.kind}
          </span>
        </span>
      );
    },
  });
}

function SelectBox({ item, selected, onToggle }: { item: PruningItem; selected: boolean; onToggle: (ids: number[], on: boolean) => void }) {
  return <input type="checkbox" className="size-4 accent-teal" aria-label={`Select ${effectName(item)}`} checked={selected} onChange={(e) => onToggle([item.effectId], e.target.checked)} />;
}

function columnsFor(slug: string, rule: Rule, selection: { selected: Set<number>; onToggle: (ids: number[], on: boolean) => void } | null) {
  return [
    ...(selection
      ? [
          col.display({
            id: 'select',
            header: 'Select',
            meta: { srOnlyHeader: true },
            cell: (c) => <SelectBox item={c.row.original} selected={selection.selected.has(c.row.original.effectId)} onToggle={selection.onToggle} />,
          }),
        ]
      : []),
    effectColumn(slug),
    col.accessor((i) => (i.reason?.rule === 'flat-shape' ? i.reason.p : i.largestPct), {
      id: 'reason',
      header: rule === 'small' ? 'Largest shift' : 'Flat within noise',
      sortFn: 'basic',
      meta: { numeric: true, nowrap: true },
      cell: (c) => <Reason item={c.row.original} />,
    }),
    ...(rule === 'flat-shape'
      ? [
          col.accessor((i) => (i.reason?.rule === 'flat-shape' && i.reason.estimated ? 1 : 0), {
            id: 'errors',
            header: 'Errors',
            sortFn: 'basic',
            meta: { nowrap: true, headerTitle: 'Whether the shifts’ errors were given with the upload or estimated from the template variance' },
            cell: (c) => (c.getValue() ? <EstimatedMarker /> : <span className="text-xs text-ink-muted">given</span>),
          }),
        ]
      : []),
    col.display({
      id: 'as',
      header: 'When pruned',
      meta: { nowrap: true, headerTitle: 'Left out of the fit, or kept as its normalisation κ (up / down) as a scale effect' },
      cell: (c) => {
        const r = c.row.original.reason;
        return r?.rule === 'flat-shape' ? (
          <span className="text-xs">
            <Kappa normalisation={r.normalisation} />
          </span>
        ) : (
          <span className="text-xs text-ink-soft">left out</span>
        );
      },
    }),
  ];
}

/** "Select all" of one group, partly checked when some of it is selected. */
function SelectAll({ items, selected, onToggle, name }: { items: PruningItem[]; selected: Set<number>; onToggle: (ids: number[], on: boolean) => void; name: string }) {
  const ref = useRef<HTMLInputElement>(null);
  const count = items.filter((i) => selected.has(i.effectId)).length;
  useEffect(() => {
    if (ref.current) ref.current.indeterminate = count > 0 && count < items.length;
  }, [count, items.length]);
  return (
    <label className="flex items-center gap-2 text-xs font-medium text-ink-soft">
      <input ref={ref} type="checkbox" className="size-4 accent-teal" checked={count === items.length && count > 0} onChange={(e) => onToggle(items.map((i) => i.effectId), e.target.checked)} aria-label={`Select all ${items.length} ${name}`} />
      Select all {items.length}
      {count > 0 && count < items.length && <span className="text-ink-muted">({count} selected)</span>}
    </label>
  );
}

function RuleGroup({
  slug,
  rule,
  rules,
  items,
  selection,
}: {
  slug: string;
  rule: Rule;
  rules: PruningRules;
  items: PruningItem[];
  selection: { selected: Set<number>; onToggle: (ids: number[], on: boolean) => void } | null;
}) {
  const columns = useMemo(() => columnsFor(slug, rule, selection), [slug, rule, selection]);
  const title = RULE_TITLES[rule](rules);
  const estimated = items.filter((i) => i.reason?.rule === 'flat-shape' && i.reason.estimated).length;
  return (
    <section aria-label={title} className="flex flex-col gap-2">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <div>
          <h3 className="text-sm font-semibold">
            {title} <span className="font-normal text-ink-muted">({items.length})</span>
          </h3>
          <p className="max-w-prose text-xs text-ink-muted">
            {RULE_MEANING[rule]}
            {estimated > 0 && ` For ${estimated} of them the shifts’ errors were estimated, not given with the upload: a p-value from estimated errors leans towards “flat”.`}
          </p>
        </div>
        {selection && items.length > 0 && <SelectAll items={items} selected={selection.selected} onToggle={selection.onToggle} name={rule === 'small' ? 'small effects' : 'flat shapes'} />}
      </div>
      {items.length > 0 ? (
        <DataTable
          columns={columns}
          data={items}
          getRowId={(i) => String(i.effectId)}
          label={`Candidates: ${title}`}
          rowHeader="effect"
          sortable
          frameClass="max-h-[26rem]"
          rowTone={selection ? (i) => (selection.selected.has(i.effectId) ? 'marked' : undefined) : undefined}
        />
      ) : (
        <p className="text-sm text-ink-muted">No effect meets this rule.</p>
      )}
    </section>
  );
}

const order = (a: PruningItem, b: PruningItem) => a.entry.key.localeCompare(b.entry.key) || a.region.localeCompare(b.region) || a.process.localeCompare(b.process);

/** The effects the rules propose, one group per rule, each with its reason; selectable by those who prune. */
export function CandidatesPanel({
  slug,
  rules,
  candidates,
  selection,
}: {
  slug: string;
  rules: PruningRules;
  candidates: PruningItem[];
  selection: { selected: Set<number>; onToggle: (ids: number[], on: boolean) => void } | null;
}) {
  const groups = useMemo(
    () => ({
      small: candidates.filter((c) => c.reason?.rule === 'small').sort(order),
      flat: candidates.filter((c) => c.reason?.rule === 'flat-shape').sort(order),
    }),
    [candidates],
  );
  return (
    <Panel title={`Candidates (${plural(candidates.length, 'effect')})`}>
      <div className="flex flex-col gap-5">
        <RuleGroup slug={slug} rule="small" rules={rules} items={groups.small} selection={selection} />
        <RuleGroup slug={slug} rule="flat-shape" rules={rules} items={groups.flat} selection={selection} />
      </div>
    </Panel>
  );
}
