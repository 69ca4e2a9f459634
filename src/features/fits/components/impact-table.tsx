import { useMemo, useState } from 'react';
import { Link, useNavigate } from 'react-router';
import type { NuisanceReport } from '@shared/schemas/fit';
import type { FitResultHead } from '@shared/schemas/fits';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { SelectField } from '../../../components/ui/field';
import { formatFixed, formatSigned } from '../../../lib/stats-format';
import { ConstraintMeter, ImpactGlyph, PullGlyph } from '../../../components/charts/parameter-glyphs';
import { QuestionMarker, type QuestionMark } from '../../../components/status/question-marker';
import { diagnosisPath, groupName, isStronglyPulled } from '../../../lib/fits';
import { impactMode, impactSize, labelsOf, rankByImpact, type ImpactMode } from '../result-helpers';
import { GroupFilter, groupsOf } from './group-filter';

export type ImpactRow = NuisanceReport & { label: string; position: number; size: number | null };

const col = dataColumns<ImpactRow>();

type Review = { marks?: Map<string, QuestionMark>; onRaise?: (name: string) => void };

function makeColumns(slug: string, fitId: number, mode: ImpactMode, scale: number, threshold: number, review: Review) {
  return col.columns([
    col.accessor('position', {
      header: '#',
      sortFn: 'basic',
      meta: { numeric: true },
      cell: (c) => (
        <span className="text-ink-muted tabular-nums" title={mode === 'none' ? 'Row number' : `Rank by ${mode === 'postfit' ? 'post-fit' : 'quick'} impact, 1 = largest`}>
          {c.getValue()}
        </span>
      ),
    }),
    col.accessor('name', {
      header: 'Parameter',
      sortFn: 'alphanumeric',
      cell: (c) => {
        const r = c.row.original;
        const mark = review.marks?.get(r.name);
        return (
          <span className="flex items-baseline gap-2">
            {mark && <QuestionMarker state={mark.state} count={mark.count} />}
            <Link
              to={diagnosisPath(slug, fitId, r.name)}
              onClick={(e) => e.stopPropagation()}
              className="font-mono text-xs font-medium text-teal-ink hover:underline"
              title={`Open the diagnosis of ${r.name}`}
            >
              {r.name}
            </Link>
            {r.label && r.label !== r.name && (
              <span className="max-w-[16rem] truncate text-2xs text-ink-muted" title={r.label}>
                {r.label}
              </span>
            )}
          </span>
        );
      },
    }),
    col.accessor((r) => groupName(r.group), { id: 'group', header: 'Group', sortFn: 'text', cell: (c) => <span className="text-xs">{c.getValue()}</span> }),
    col.accessor('pull', {
      header: 'Pull',
      sortFn: 'basic',
      cell: (c) => {
        const r = c.row.original;
        return (
          <span className="flex items-center gap-1.5">
            <PullGlyph n={r} />
            <span className={`w-11 text-right text-xs tabular-nums ${isStronglyPulled(r) ? 'font-semibold text-plum' : ''}`}>{formatSigned(r.pull, 2)}</span>
          </span>
        );
      },
    }),
    col.accessor((r) => r.constraint ?? undefined, {
      id: 'constraint',
      header: 'Constraint',
      sortFn: 'basic',
      sortUndefined: 'last',
      cell: (c) => {
        const r = c.row.original;
        return (
          <span className="flex items-center gap-1.5">
            <ConstraintMeter n={r} threshold={threshold} />
            <span className={`w-9 text-right text-xs tabular-nums ${r.overConstrained ? 'font-semibold text-amber-ink' : ''}`}>{formatFixed(r.constraint, 2)}</span>
          </span>
        );
      },
    }),
    ...(mode === 'none'
      ? []
      : [
          col.accessor((r) => r.size ?? undefined, {
            id: 'impact',
            header: mode === 'postfit' ? 'Δμ, θ raised / lowered' : 'Δμ (quick estimate)',
            sortFn: 'basic',
            sortUndefined: 'last',
            cell: (c) => {
              const r = c.row.original;
              return mode === 'postfit' ? (
                <ImpactGlyph up={r.postfitImpact?.up ?? null} down={r.postfitImpact?.down ?? null} preUp={r.prefitImpact?.up} preDown={r.prefitImpact?.down} scale={scale} />
              ) : (
                <ImpactGlyph up={r.quickImpact} down={r.quickImpact === null ? null : -r.quickImpact} scale={scale} estimated />
              );
            },
          }),
          col.accessor((r) => r.size ?? undefined, {
            id: 'size',
            header: 'max |Δμ|',
            sortFn: 'basic',
            sortUndefined: 'last',
            meta: { numeric: true },
            cell: (c) => (
              <span className="text-xs tabular-nums" title={mode === 'postfit' ? 'max(|Δμ+|, |Δμ−|) of the post-fit refits, in units of μ' : '|ρ(μ, θ)·σ_μ|, in units of μ'}>
                {formatFixed(c.row.original.size, 4)}
              </span>
            ),
          }),
        ]),
    ...(review.onRaise
      ? [
          col.display({
            id: 'ask',
            header: 'Actions',
            enableSorting: false,
            meta: { srOnlyHeader: true },
            cell: (c) => (
              <button
                type="button"
                onClick={(e) => {
                  e.stopPropagation();
                  review.onRaise?.(c.row.original.name);
                }}
                className="rounded px-1.5 py-0.5 text-xs font-medium text-teal-ink hover:bg-teal-soft hover:underline"
                aria-label={`Raise a question on ${c.row.original.name}`}
                data-raise={c.row.original.name}
                title={`Raise a question on ${c.row.original.name}`}
              >
                Raise…
              </button>
            ),
          }),
        ]
      : []),
  ]);
}

const TOP_CHOICES = [10, 20, 50, 0] as const;

/** The scale of the impact glyphs: the largest |Δμ| among the rows shown, post- and pre-fit. */
export function impactScale(rows: NuisanceReport[], mode: ImpactMode): number {
  let m = 0;
  for (const r of rows) {
    if (mode === 'postfit') for (const v of [r.postfitImpact?.up, r.postfitImpact?.down, r.prefitImpact?.up, r.prefitImpact?.down]) if (v != null) m = Math.max(m, Math.abs(v));
    if (mode === 'quick' && r.quickImpact !== null) m = Math.max(m, Math.abs(r.quickImpact));
  }
  return m || 1;
}

/**
 * The ranked impacts as a dense table: one row per nuisance parameter, with its pull on the
 * prior band, its constraint meter and its Δμ bars. A click on a row opens its diagnosis.
 */
export function ImpactTable({ slug, fitId, result, marks, onRaise }: { slug: string; fitId: number; result: FitResultHead } & Review) {
  const navigate = useNavigate();
  const mode = impactMode(result);
  const threshold = result.options.overConstraintThreshold;
  const [top, setTop] = useState<number>(20);
  const [group, setGroup] = useState<string | null>(null);

  const ranked = useMemo(() => {
    const labels = labelsOf(result);
    return rankByImpact(
      result.nuisance.filter((n) => !n.fixed),
      mode,
    ).map((n, i): ImpactRow => ({ ...n, label: labels.get(n.name) ?? '', position: i + 1, size: impactSize(n, mode) }));
  }, [result, mode]);
  const rows = useMemo(() => {
    const inGroup = group === null ? ranked : ranked.filter((r) => groupName(r.group) === group);
    return top > 0 ? inGroup.slice(0, top) : inGroup;
  }, [ranked, group, top]);
  const scale = useMemo(() => impactScale(ranked, mode), [ranked, mode]);
  const columns = useMemo(() => makeColumns(slug, fitId, mode, scale, threshold, { marks, onRaise }), [slug, fitId, mode, scale, threshold, marks, onRaise]);
  const held = result.nuisance.filter((n) => n.fixed);

  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-end gap-3">
        <SelectField label="Show" value={top} onChange={(e) => setTop(Number(e.target.value))}>
          {TOP_CHOICES.map((n) => (
            <option key={n} value={n}>
              {n === 0 ? 'all' : `top ${n}`}
            </option>
          ))}
        </SelectField>
        <GroupFilter groups={groupsOf(ranked)} value={group} onChange={setGroup} />
        <p className="text-xs text-ink-muted" aria-live="polite">
          {rows.length} of {ranked.length} free nuisance parameters
          {held.length > 0 && `; ${held.length} held at their start value`}
        </p>
      </div>
      <p className="text-xs text-ink-soft">
        {mode === 'postfit' && (
          <>
            Ranked by post-fit impact, max(|Δμ+|, |Δμ−|) from refits with θ fixed at θ̂ ± σ̂. Bars: <span className="font-semibold text-teal-ink">θ raised</span> above,{' '}
            <span className="font-semibold text-amber-ink">θ lowered</span> below; solid for post-fit, light outline for pre-fit (θ̂ ± 1). Common scale ±{formatFixed(scale, 3)} in μ.
          </>
        )}
        {mode === 'quick' && (
          <span className="font-medium text-amber-ink">
            Ranked by quick impact ρ(μ, θ)·σ_μ, an estimate from the covariance without refits. Run the fit with full impacts for the real Δμ and the pre-fit comparison.
          </span>
        )}
        {mode === 'none' && 'This fit was run without impacts: the table lists pulls and constraints only, by name.'}
        {' '}Click a row for the parameter's diagnosis.{marks && marks.size > 0 && ' A “?” marks a parameter with a question not yet resolved.'}
      </p>
      <DataTable
        columns={columns}
        data={rows}
        sortable
        getRowId={(r) => r.name}
        label="Impact ranking"
        cellClass="py-1 align-middle whitespace-nowrap"
        onRowClick={(r) => navigate(diagnosisPath(slug, fitId, r.name))}
        empty="No nuisance parameter in this group."
      />
    </div>
  );
}
