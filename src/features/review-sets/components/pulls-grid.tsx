import { useMemo, useState } from 'react';
import { Link } from 'react-router';
import { MOVES, type ReviewComparison } from '@shared/schemas/review-sets';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { SegmentedField } from '../../../components/ui/segmented-field';
import { diagnosisPath, groupName, variantShortName } from '../../../lib/fits';
import { formatFixed, formatSigned } from '../../../lib/stats-format';
import type { MemberRow } from './members-table';

export type ParameterRow = ReviewComparison['parameters'][number];
export type Thresholds = { pull: number; constraint: number };

/** Whether a parameter's pull or constraint changes between the members by more than the thresholds. */
export function moves(p: ParameterRow, t: Thresholds): boolean {
  return p.pullSpread > t.pull || p.constraintSpread > t.constraint;
}

/**
 * The cells that make a moving row move: the members at the ends of its pull range (when that
 * range passes the threshold), and at the ends of its constraint range (likewise).
 */
export function extremes(p: ParameterRow, t: Thresholds): Set<number> {
  const marked = new Set<number>();
  const free = p.cells.map((c, i) => ({ c, i })).filter((x): x is { c: NonNullable<ParameterRow['cells'][number]>; i: number } => x.c !== null && !x.c.fixed);
  const mark = (values: { v: number; i: number }[], spread: number, threshold: number) => {
    if (spread <= threshold || values.length < 2) return;
    const lo = Math.min(...values.map((x) => x.v));
    const hi = Math.max(...values.map((x) => x.v));
    for (const x of values) if (x.v === lo || x.v === hi) marked.add(x.i);
  };
  mark(free.map((x) => ({ v: x.c.pull, i: x.i })), p.pullSpread, t.pull);
  mark(free.filter((x) => x.c.constraint !== null).map((x) => ({ v: x.c.constraint!, i: x.i })), p.constraintSpread, t.constraint);
  return marked;
}

const PULL_STEPS = [0.25, 0.5, 1] as const;
const CONSTRAINT_STEPS = [0.1, 0.2, 0.3] as const;

const col = dataColumns<ParameterRow>();

function VariantHeader({ row }: { row: MemberRow | undefined; variant: string }) {
  if (!row) return null;
  const trouble = row.status === 'failed' ? 'not converged' : row.state !== 'succeeded' ? row.state : null;
  return (
    <span className="flex flex-col items-end leading-tight">
      <span>{variantShortName(row.variant)}</span>
      {trouble && <span className="text-2xs font-semibold text-danger">{trouble}</span>}
      {!trouble && row.warnings > 0 && <span className="text-2xs font-semibold text-amber-ink">⚠ {row.warnings}</span>}
    </span>
  );
}

function makeColumns(slug: string, variants: string[], rows: MemberRow[], t: Thresholds) {
  const byVariant = new Map(rows.map((r) => [r.variant, r]));
  return col.columns([
    col.accessor('name', {
      header: 'Parameter',
      cell: (c) => (
        <>
          <span className="font-mono text-xs">{c.getValue()}</span>
          <span className="block text-2xs text-ink-muted">{groupName(c.row.original.group)}</span>
        </>
      ),
    }),
    ...variants.map((v, i) =>
      col.display({
        id: `v${i}`,
        header: () => <VariantHeader row={byVariant.get(v)} variant={v} />,
        meta: {
          numeric: true,
          nowrap: true,
          headerTitle: byVariant.get(v)?.title ?? v,
          cellClass: (p) => (extremes(p, t).has(i) ? 'bg-amber-soft/70' : ''),
          cellTitle: (p) => {
            const cell = p.cells[i];
            const where = byVariant.get(v)?.title ?? v;
            if (!cell) return `${where}: no result for ${p.name}`;
            if (cell.fixed) return `${where}: ${p.name} is held`;
            return `${where}: pull (θ̂ − 0)/1 = ${formatSigned(cell.pull, 2)}, constraint σ̂/1 = ${formatFixed(cell.constraint, 2)}${extremes(p, t).has(i) ? ' — at an end of the range that moves' : ''}`;
          },
        },
        cell: (c) => {
          const cell = c.row.original.cells[i];
          const row = byVariant.get(v);
          if (!cell) return <span className="text-ink-muted">–</span>;
          if (cell.fixed) return <span className="text-2xs text-ink-muted">held</span>;
          return (
            <>
              {row ? (
                <Link to={diagnosisPath(slug, row.fitId, c.row.original.name)} className="text-ink hover:text-teal-ink hover:underline" aria-label={`${c.row.original.name} in ${variantShortName(v)}: pull ${formatSigned(cell.pull, 2)}`}>
                  {formatSigned(cell.pull, 2)}
                </Link>
              ) : (
                formatSigned(cell.pull, 2)
              )}
              <span className="block text-2xs text-ink-muted">σ̂ {formatFixed(cell.constraint, 2)}</span>
            </>
          );
        },
      }),
    ),
    col.display({
      id: 'spread',
      header: 'Spread',
      meta: { numeric: true, nowrap: true, headerTitle: 'Largest minus smallest pull, and constraint, over the members where the parameter is free' },
      cell: (c) => {
        const p = c.row.original;
        return (
          <>
            <span className={p.pullSpread > t.pull ? 'font-semibold text-amber-ink' : ''}>Δ {formatFixed(p.pullSpread, 2)}</span>
            <span className={`block text-2xs ${p.constraintSpread > t.constraint ? 'font-semibold text-amber-ink' : 'text-ink-muted'}`}>Δσ̂ {formatFixed(p.constraintSpread, 2)}</span>
          </>
        );
      },
    }),
  ]);
}

/**
 * Pulls and constraints of every nuisance parameter across the members of a set: a row per
 * parameter, a column per member. The filter keeps the parameters whose pull or constraint
 * changes between members by more than a threshold, and the cells at the ends of that change are
 * marked. Each number opens the parameter's diagnosis in that member's fit.
 */
export function PullsGrid({ slug, comparison }: { slug: string; comparison: ReviewComparison }) {
  const [only, setOnly] = useState<'moves' | 'all'>('moves');
  const [t, setT] = useState<Thresholds>({ pull: MOVES.pull, constraint: MOVES.constraint });
  const moving = useMemo(() => comparison.parameters.filter((p) => moves(p, t)), [comparison.parameters, t]);
  const rows = only === 'moves' ? moving : comparison.parameters;
  const columns = useMemo(() => makeColumns(slug, comparison.variants, comparison.rows, t), [slug, comparison.variants, comparison.rows, t]);
  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-end gap-x-6 gap-y-2">
        <SegmentedField
          legend="Parameters"
          value={only}
          onChange={setOnly}
          options={[
            { value: 'moves', label: `That move (${moving.length})`, title: 'Only the parameters whose pull or constraint changes between members beyond the thresholds' },
            { value: 'all', label: `All (${comparison.parameters.length})` },
          ]}
        />
        <SegmentedField
          legend="Pull moves by more than"
          value={t.pull}
          onChange={(pull) => setT({ ...t, pull })}
          options={PULL_STEPS.map((s) => ({ value: s, label: String(s), title: `in units of the prior width` }))}
        />
        <SegmentedField
          legend="Constraint moves by more than"
          value={t.constraint}
          onChange={(constraint) => setT({ ...t, constraint })}
          options={CONSTRAINT_STEPS.map((s) => ({ value: s, label: String(s), title: `σ̂ in units of the prior width` }))}
        />
      </div>
      <DataTable
        columns={columns}
        data={rows}
        getRowId={(p) => p.name}
        label="Pulls and constraints across the set"
        rowHeader="name"
        stickyFirstColumn
        frame="plain"
        frameClass="max-h-[36rem]"
        empty={only === 'moves' ? 'No parameter moves beyond these thresholds between the fits of the set.' : 'No fit of the set has a result yet.'}
      />
      <p className="text-xs text-ink-muted">
        Each cell: the pull (θ̂ − 0)/1 and beneath it the constraint σ̂/1 in that fit; “held” where the fit holds the parameter, “–” where the fit has no result. Marked cells are the
        ends of a range that moves. A number opens the parameter’s diagnosis in that fit.
      </p>
    </div>
  );
}
