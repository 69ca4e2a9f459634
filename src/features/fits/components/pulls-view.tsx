import { useEffect, useMemo, useRef, useState, type KeyboardEvent } from 'react';
import { Link, useNavigate } from 'react-router';
import { scaleLinear } from 'd3-scale';
import type { NuisanceReport } from '@shared/schemas/fit';
import type { FitResultHead } from '@shared/schemas/fits';
import { BottomAxis } from '../../../components/charts/axes';
import { ChartFigure } from '../../../components/charts/chart-figure';
import { CheckboxField, SelectField } from '../../../components/ui/field';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { theme } from '../../../lib/palette';
import { formatFixed, formatSigned } from '../../../lib/stats-format';
import { markColour } from '../../../components/charts/parameter-glyphs';
import { QuestionMarker, type QuestionMark } from '../../../components/status/question-marker';
import { diagnosisPath, groupName, isStronglyPulled, STRONG_PULL } from '../../../lib/fits';
import { labelsOf } from '../result-helpers';
import { GroupFilter, groupsOf } from './group-filter';
import { PlotLabel } from '../../../components/charts/plot-label';

export type PullSort = 'group' | 'name' | 'pull' | 'absPull' | 'constraint' | 'normalisedPull';

const SORTS: { id: PullSort; label: string }[] = [
  { id: 'group', label: 'group, then name' },
  { id: 'name', label: 'name' },
  { id: 'absPull', label: '|pull|, largest first' },
  { id: 'pull', label: 'pull, low to high' },
  { id: 'constraint', label: 'constraint, tightest first' },
  { id: 'normalisedPull', label: '|normalised pull|, largest first' },
];

/** Order nuisance parameters for the pulls view; ties and missing values fall back to the name. */
export function sortPulls(list: NuisanceReport[], by: PullSort): NuisanceReport[] {
  const name = (a: NuisanceReport, b: NuisanceReport) => a.name.localeCompare(b.name);
  const largestFirst = (v: number | null) => (v === null ? null : -Math.abs(v));
  const nullLast = (x: number | null, y: number | null) => (x === null ? (y === null ? 0 : 1) : y === null ? -1 : x - y);
  const cmp: Record<PullSort, (a: NuisanceReport, b: NuisanceReport) => number> = {
    group: (a, b) => groupName(a.group).localeCompare(groupName(b.group)) || name(a, b),
    name,
    pull: (a, b) => a.pull - b.pull || name(a, b),
    absPull: (a, b) => Math.abs(b.pull) - Math.abs(a.pull) || name(a, b),
    constraint: (a, b) => nullLast(a.constraint, b.constraint) || name(a, b),
    normalisedPull: (a, b) => nullLast(largestFirst(a.normalisedPull), largestFirst(b.normalisedPull)) || name(a, b),
  };
  return [...list].sort(cmp[by]);
}

const ROW = 17;
const W = 640;
const M = { left: 178, right: 96, top: 24, bottom: 36 };

/** A row of the pulls chart: a group's heading or one parameter. */
type Line = { kind: 'group'; name: string } | { kind: 'parameter'; r: NuisanceReport };

/** Every nuisance parameter's pull (dot) and post-fit width (bar) against the prior band [−1, 1], ±2 lighter. */
export function PullsChart({
  rows,
  labels,
  threshold,
  title,
  groupHeadings = false,
  onOpen,
  marks,
}: {
  rows: NuisanceReport[];
  labels: Map<string, string>;
  threshold: number;
  title: string;
  groupHeadings?: boolean;
  /** open a parameter's diagnosis when its line is clicked */
  onOpen?: (name: string) => void;
  marks?: Map<string, QuestionMark>;
}) {
  const ref = useRef<SVGSVGElement>(null);
  // The parameter the keyboard is on (index into rows) while the chart has focus.
  const [active, setActive] = useState<number | null>(null);
  const activeRef = useRef<SVGRectElement>(null);
  // Focus from a click leaves the outline off until a key is pressed.
  const byPointer = useRef(false);
  const current = active !== null && active < rows.length ? rows[active] : null;
  useEffect(() => {
    if (current) activeRef.current?.scrollIntoView?.({ block: 'nearest' });
  }, [current]);
  const onKey = (e: KeyboardEvent<SVGSVGElement>) => {
    if (!onOpen || rows.length === 0) return;
    const last = rows.length - 1;
    const at = active ?? 0;
    const to: Record<string, number> = { ArrowDown: Math.min(last, at + 1), ArrowUp: Math.max(0, at - 1), Home: 0, End: last, PageDown: Math.min(last, at + 10), PageUp: Math.max(0, at - 10) };
    if (e.key in to) {
      e.preventDefault();
      setActive(active === null ? 0 : to[e.key]);
    } else if ((e.key === 'Enter' || e.key === ' ') && current) {
      e.preventDefault();
      onOpen(current.name);
    }
  };
  const lines: Line[] = [];
  rows.forEach((r, i) => {
    if (groupHeadings && (i === 0 || groupName(rows[i - 1].group) !== groupName(r.group))) lines.push({ kind: 'group', name: groupName(r.group) });
    lines.push({ kind: 'parameter', r });
  });
  const extent = Math.max(2.5, ...rows.map((r) => Math.abs(r.pull) + (r.constraint ?? 0)));
  const lim = Math.min(6, Math.ceil(extent * 2) / 2);
  const plotH = lines.length * ROW;
  const H = M.top + plotH + M.bottom;
  const x = scaleLinear().domain([-lim, lim]).range([M.left, W - M.right]);
  const y0 = M.top;
  const clampX = (v: number) => x(Math.max(-lim, Math.min(lim, v)));
  return (
    <ChartFigure title={title} svg={ref}>
      <svg
        ref={ref}
        viewBox={`0 0 ${W} ${H}`}
        className="h-auto w-full max-w-[48rem] focus-visible:outline-2 focus-visible:outline-teal"
        role="img"
        aria-label={`${title}: ${rows.length} nuisance parameters; the numbers are in the table below.${onOpen ? ' Focus the chart and use the arrow keys to move between parameters; Enter opens the diagnosis.' : ''}`}
        tabIndex={onOpen ? 0 : undefined}
        onKeyDown={onOpen ? onKey : undefined}
        onPointerDown={onOpen ? () => (byPointer.current = true) : undefined}
        onFocus={
          onOpen
            ? () => {
                if (!byPointer.current) setActive((a) => a ?? 0);
                byPointer.current = false;
              }
            : undefined
        }
        onBlur={
          onOpen
            ? () => {
                setActive(null);
                byPointer.current = false;
              }
            : undefined
        }
      >
        <PlotLabel x={M.left} y={13} />
        <rect x={x(-2)} y={y0} width={x(2) - x(-2)} height={plotH} fill={theme.teal} fillOpacity={0.07} />
        <rect x={x(-1)} y={y0} width={x(1) - x(-1)} height={plotH} fill={theme.teal} fillOpacity={0.18} />
        {[-2, -1, 0, 1, 2].map((v) => (
          <line key={v} x1={x(v)} x2={x(v)} y1={y0} y2={y0 + plotH} stroke={v === 0 ? theme.inkMuted : theme.rule} strokeWidth={v === 0 ? 0.8 : 0.6} />
        ))}
        {lines.map((line, i) => {
          const cy = y0 + i * ROW + ROW / 2;
          if (line.kind === 'group')
            return (
              <g key={`group:${line.name}`}>
                {i > 0 && <line x1={0} x2={W} y1={cy - ROW / 2} y2={cy - ROW / 2} stroke={theme.rule} />}
                <text x={4} y={cy} dy="0.32em" style={{ fontSize: 10, fill: theme.inkMuted, fontWeight: 600, letterSpacing: '0.04em' }}>
                  {line.name.toUpperCase()}
                </text>
              </g>
            );
          const r = line.r;
          const colour = markColour(r);
          const c = r.constraint;
          const flagged = r.overConstrained || isStronglyPulled(r);
          return (
            <g key={r.name}>
              <text x={M.left - 10} y={cy} dy="0.32em" textAnchor="end" style={{ fontSize: 10.5, fill: flagged ? colour : theme.ink, fontWeight: flagged ? 600 : 400 }}>
                {r.name.length > 28 ? `${r.name.slice(0, 27)}…` : r.name}
              </text>
              {marks?.get(r.name) && (
                <text x={4} y={cy} dy="0.32em" style={{ fontSize: 10, fontWeight: 700, fill: marks.get(r.name)!.state === 'open' ? theme.amber : theme.teal }}>
                  ?<title>{`Question not yet resolved on ${r.name} (${marks.get(r.name)!.state})`}</title>
                </text>
              )}
              {c !== null && (
                <g stroke={colour} strokeWidth={1.5}>
                  <line x1={clampX(r.pull - c)} x2={clampX(r.pull + c)} y1={cy} y2={cy} />
                  <line x1={clampX(r.pull - c)} x2={clampX(r.pull - c)} y1={cy - 3} y2={cy + 3} />
                  <line x1={clampX(r.pull + c)} x2={clampX(r.pull + c)} y1={cy - 3} y2={cy + 3} />
                </g>
              )}
              {r.overConstrained ? (
                <rect x={clampX(r.pull) - 3.6} y={cy - 3.6} width={7.2} height={7.2} transform={`rotate(45 ${clampX(r.pull)} ${cy})`} fill={colour} stroke={theme.paperRaised} strokeWidth={0.8} />
              ) : (
                <circle cx={clampX(r.pull)} cy={cy} r={3.6} fill={r.fixed ? theme.paperRaised : colour} stroke={r.fixed ? theme.inkMuted : theme.paperRaised} strokeWidth={r.fixed ? 1.2 : 0.8} />
              )}
              <text x={W - M.right + 8} y={cy} dy="0.32em" style={{ fontSize: 9.5, fill: theme.inkMuted }}>
                {r.fixed || c === null ? 'held' : `${formatSigned(r.pull, 2)} ± ${formatFixed(c, 2)}`}
              </text>
              <rect x={0} y={cy - ROW / 2} width={W} height={ROW} fill="transparent" onClick={onOpen ? () => onOpen(r.name) : undefined} style={onOpen ? { cursor: 'pointer' } : undefined}>
                <title>
                  {[
                    `${r.name}${labels.get(r.name) ? ` (${labels.get(r.name)})` : ''}, group ${groupName(r.group)}`,
                    `pull (θ̂ − 0)/1 = ${formatSigned(r.pull, 3)}`,
                    `constraint σ̂/1 = ${formatFixed(r.constraint, 3)}${r.overConstrained ? ` (below ${threshold}: over-constrained)` : ''}`,
                    `normalised pull θ̂/√(1 − σ̂²) = ${formatSigned(r.normalisedPull, 3)}`,
                    ...(r.fixed ? ['held at its start value'] : []),
                    ...(isStronglyPulled(r) ? [`|pull| above ${STRONG_PULL}: strongly pulled`] : []),
                    ...(onOpen ? ['Click for its diagnosis'] : []),
                  ].join('\n')}
                </title>
              </rect>
            </g>
          );
        })}
        {current && (
          <rect
            ref={activeRef}
            x={1}
            y={y0 + lines.findIndex((l) => l.kind === 'parameter' && l.r.name === current.name) * ROW}
            width={W - 2}
            height={ROW}
            fill="none"
            stroke={theme.ink}
            strokeWidth={1.2}
            pointerEvents="none"
          />
        )}
        <BottomAxis scale={x} y={y0 + plotH} ticks={Math.min(12, lim * 2)} title="pull (θ̂ − 0)/1, with the post-fit ±σ̂ as bars" />
      </svg>
      {onOpen && (
        <p className="text-xs text-ink-muted" aria-live="polite">
          {current
            ? `${current.name}: pull ${formatSigned(current.pull, 3)}, constraint ${formatFixed(current.constraint, 3)}${current.overConstrained ? ' (over-constrained)' : ''}. Enter opens its diagnosis.`
            : 'Click a parameter, or focus the chart and use the arrow keys and Enter, to open its diagnosis.'}
        </p>
      )}
      <ul className="flex flex-wrap gap-x-4 gap-y-1 text-xs text-ink-soft" aria-label="Legend of the pulls">
        <li className="flex items-center gap-1.5">
          <span aria-hidden className="inline-block h-3 w-5" style={{ background: theme.teal, opacity: 0.3 }} />
          prior ±1 (±2 lighter)
        </li>
        <li className="flex items-center gap-1.5">
          <span aria-hidden className="inline-block size-2.5 rounded-full bg-ink" />
          pull with post-fit ±σ̂
        </li>
        <li className="flex items-center gap-1.5">
          <span aria-hidden className="inline-block size-2.5 rotate-45 bg-amber" />
          over-constrained (σ̂ below {threshold})
        </li>
        <li className="flex items-center gap-1.5">
          <span aria-hidden className="inline-block size-2.5 rounded-full bg-plum" />
          strongly pulled (|pull| above {STRONG_PULL})
        </li>
        <li className="flex items-center gap-1.5">
          <span aria-hidden className="inline-block size-2.5 rounded-full border border-ink-muted" />
          held at its start value
        </li>
      </ul>
    </ChartFigure>
  );
}

const pull = dataColumns<NuisanceReport>();

/** The pulls as numbers, each name a link to its diagnosis when there is one. */
function pullColumns(linkTo: ((name: string) => string) | null, marks?: Map<string, QuestionMark>) {
  return [
    pull.accessor('name', {
      header: 'Parameter',
      meta: { cellClass: 'font-mono text-xs' },
      cell: (c) => {
        const name = c.getValue();
        const mark = marks?.get(name);
        return (
          <span className="flex items-center gap-1.5">
            {linkTo ? (
              <Link to={linkTo(name)} className="text-teal-ink hover:underline" title={`Open the diagnosis of ${name}`}>
                {name}
              </Link>
            ) : (
              name
            )}
            {mark && <QuestionMarker state={mark.state} count={mark.count} />}
          </span>
        );
      },
    }),
    pull.accessor((r) => groupName(r.group), { id: 'group', header: 'Group', meta: { cellClass: 'text-xs' } }),
    pull.accessor('pull', { header: 'Pull', meta: { numeric: true, headerTitle: '(θ̂ − 0)/1' }, cell: (c) => formatSigned(c.getValue(), 3) }),
    pull.accessor('constraint', { header: 'Constraint', meta: { numeric: true, headerTitle: 'σ̂/1' }, cell: (c) => formatFixed(c.getValue(), 3) }),
    pull.accessor('normalisedPull', { header: 'Normalised pull', meta: { numeric: true, headerTitle: 'θ̂/√(1 − σ̂²) when σ̂ < 1' }, cell: (c) => formatSigned(c.getValue(), 3) }),
    pull.display({
      id: 'flags',
      header: 'Flags',
      meta: { cellClass: 'text-xs' },
      cell: (c) => {
        const r = c.row.original;
        return [r.fixed && 'held', r.overConstrained && 'over-constrained', isStronglyPulled(r) && 'strongly pulled'].filter(Boolean).join(', ');
      },
    }),
  ];
}

/** The pulls view: chart, sort and filters, the numbers as a table, and the floating normalisations apart. */
export function PullsView({ result, slug, fitId, marks }: { result: FitResultHead; slug?: string; fitId?: number; marks?: Map<string, QuestionMark> }) {
  const navigate = useNavigate();
  const linkTo = slug !== undefined && fitId !== undefined ? (name: string) => diagnosisPath(slug, fitId, name) : null;
  const [sort, setSort] = useState<PullSort>('group');
  const [group, setGroup] = useState<string | null>(null);
  const [flaggedOnly, setFlaggedOnly] = useState(false);
  const threshold = result.options.overConstraintThreshold;
  const labels = useMemo(() => labelsOf(result), [result]);
  const rows = useMemo(() => {
    let list = result.nuisance;
    if (group !== null) list = list.filter((n) => groupName(n.group) === group);
    if (flaggedOnly) list = list.filter((n) => n.overConstrained || isStronglyPulled(n));
    return sortPulls(list, sort);
  }, [result, group, flaggedOnly, sort]);
  const over = result.nuisance.filter((n) => n.overConstrained).length;
  const pulled = result.nuisance.filter(isStronglyPulled).length;
  const norms = result.parameters.filter((p) => p.kind === 'normalisation');
  const numberColumns = pullColumns(linkTo, marks);

  return (
    <div className="flex flex-col gap-4">
      <div className="flex flex-wrap items-end gap-3">
        <SelectField label="Sort by" value={sort} onChange={(e) => setSort(e.target.value as PullSort)}>
          {SORTS.map((s) => (
            <option key={s.id} value={s.id}>
              {s.label}
            </option>
          ))}
        </SelectField>
        <GroupFilter groups={groupsOf(result.nuisance)} value={group} onChange={setGroup} />
        <CheckboxField label="Only flagged parameters" checked={flaggedOnly} onChange={(e) => setFlaggedOnly(e.target.checked)} className="pb-1.5" />
        <p className="pb-1.5 text-xs text-ink-muted" aria-live="polite">
          {rows.length} of {result.nuisance.length} shown ·{' '}
          <span className={over ? 'font-semibold text-amber-ink' : ''} title={`Post-fit width below ${threshold} of the prior`}>
            {over} over-constrained
          </span>{' '}
          ·{' '}
          <span className={pulled ? 'font-semibold text-plum' : ''} title={`|pull| above ${STRONG_PULL}`}>
            {pulled} strongly pulled
          </span>
        </p>
      </div>
      {rows.length === 0 ? (
        <p className="text-sm text-ink-muted">No nuisance parameter matches these filters.</p>
      ) : (
        <Panel>
          <PullsChart
            rows={rows}
            labels={labels}
            threshold={threshold}
            title="Pulls and constraints"
            groupHeadings={sort === 'group'}
            marks={marks}
            onOpen={linkTo ? (name) => navigate(linkTo(name)) : undefined}
          />
        </Panel>
      )}
      <details className="rounded-lg border border-rule bg-paper-raised px-4 py-2">
        <summary className="cursor-pointer text-sm font-semibold text-ink">The numbers as a table</summary>
        <DataTable columns={numberColumns} data={rows} getRowId={(r) => r.name} label="Pulls and constraints" frame="plain" frameClass="mt-2" />
      </details>
      <Panel title="Floating normalisations">
        {norms.length === 0 ? (
          <p className="text-sm text-ink-muted">No floating normalisation in this model.</p>
        ) : (
          <ul className="grid gap-x-6 gap-y-1 text-sm sm:grid-cols-2">
            {norms.map((p) => (
              <li key={p.name} className="flex items-baseline justify-between gap-3" title="Free scale factor without a prior; 1 = nominal">
                <span>
                  {p.label || p.name} <span className="font-mono text-2xs text-ink-muted">{p.name}</span>
                </span>
                <span className="tabular-nums">
                  {formatFixed(p.value, 3)} ± {formatFixed(p.error, 3)}
                  {p.atBound && <span className="ml-1 text-xs font-semibold text-amber-ink">at a bound</span>}
                </span>
              </li>
            ))}
          </ul>
        )}
      </Panel>
    </div>
  );
}
