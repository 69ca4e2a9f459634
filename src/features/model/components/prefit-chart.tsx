import { useMemo } from 'react';
import { scaleLinear } from 'd3-scale';
import { area, curveStepAfter, stack } from 'd3-shape';
import type { Model, Region } from '@shared/schemas/api';
import { BottomAxis, GridLines, LeftAxis } from '../../../components/charts/axes';
import { formatCount, formatEdge } from '../../../lib/format';
import { processColour, theme } from '../../../lib/palette';
import { garwoodInterval } from '../../../lib/poisson';

const W = 560;
const M = { left: 60, right: 22, top: 10 };
const MAIN_H = 190;
const GAP = 16;
const RATIO_H = 72;
const AXIS_H = 34;
const H = M.top + MAIN_H + GAP + RATIO_H + AXIS_H;

type Layer = { key: string; label: string; colour: string; values: number[] };

export type PrefitData = {
  layers: Layer[];
  expected: number[];
  /** variance of the expectation from limited template statistics, per bin; null when no template has variances */
  variance: number[] | null;
  observed: number[] | null;
};

/** The stack of a region: backgrounds in model order at the bottom, signal processes on top. */
export function prefitData(model: Model, region: Region): PrefitData {
  const bins = Math.max(0, region.edges.length - 1);
  const byProcess = new Map(model.templates.filter((t) => t.region === region.key).map((t) => [t.process, t]));
  const ordered = model.processes
    .map((p, index) => ({ p, index }))
    .sort((a, b) => (a.p.kind === b.p.kind ? a.index - b.index : a.p.kind === 'background' ? -1 : 1));
  const layers: Layer[] = [];
  let anyVariance = false;
  const expected = new Array<number>(bins).fill(0);
  const variance = new Array<number>(bins).fill(0);
  for (const { p, index } of ordered) {
    const t = byProcess.get(p.key);
    if (!t) continue;
    const values = Array.from({ length: bins }, (_, b) => t.nominal[b] ?? 0);
    values.forEach((v, b) => (expected[b] += v));
    if (t.variance) {
      anyVariance = true;
      t.variance.forEach((v, b) => b < bins && (variance[b] += v));
    }
    layers.push({ key: p.key, label: p.label || p.key, colour: processColour(index, p.colour), values });
  }
  return { layers, expected, variance: anyVariance ? variance : null, observed: region.observed };
}

function binTitle(region: Region, d: PrefitData, b: number): string {
  const unit = region.unit ? ` ${region.unit}` : '';
  const lines = [`Bin ${b + 1}: ${formatEdge(region.edges[b])}–${formatEdge(region.edges[b + 1])}${unit}`];
  for (const l of [...d.layers].reverse()) lines.push(`${l.label}: ${formatCount(round1(l.values[b]))} events`);
  lines.push(`Expected in total: ${formatCount(round1(d.expected[b]))} events`);
  if (d.observed) {
    const [lo, hi] = garwoodInterval(d.observed[b]);
    lines.push(`Observed: ${formatCount(d.observed[b])} events (68 % interval ${lo.toFixed(1)}–${hi.toFixed(1)})`);
    if (d.expected[b] > 0) lines.push(`Observed / expected: ${(d.observed[b] / d.expected[b]).toFixed(3)}`);
  }
  return lines.join('\n');
}

const round1 = (x: number) => Math.round(x * 10) / 10;

/**
 * The pre-fit view of one region: the nominal templates stacked by process, the observed counts
 * as points with their Poisson interval, and below them observed / expected.
 */
export function PrefitChart({ model, region }: { model: Model; region: Region }) {
  const d = useMemo(() => prefitData(model, region), [model, region]);
  const bins = d.expected.length;
  const edges = region.edges;
  const withheld = region.withheld;
  const intervals = useMemo(() => (d.observed ? d.observed.map((n) => garwoodInterval(n)) : null), [d.observed]);

  if (bins === 0 || d.layers.length === 0)
    return <p className="py-6 text-center text-sm text-ink-muted">No nominal templates in this region yet, so there is nothing to stack.</p>;

  const x = scaleLinear().domain([edges[0], edges[bins]]).range([M.left, W - M.right]);
  const top = Math.max(...d.expected.map((e, b) => e + (d.variance ? Math.sqrt(d.variance[b]) : 0)), ...(intervals ? intervals.map((i) => i[1]) : [0]), 1);
  const y = scaleLinear().domain([0, top * 1.12]).range([M.top + MAIN_H, M.top]).nice();

  // Ratio panel: observed / expected with the data's interval scaled alike, and the template-statistics band.
  const ratioPoints = intervals
    ? d.observed!.map((n, b) => (d.expected[b] > 0 ? { b, r: n / d.expected[b], lo: intervals[b][0] / d.expected[b], hi: intervals[b][1] / d.expected[b] } : null)).filter((p) => p !== null)
    : [];
  const band = d.variance ? d.variance.map((v, b) => (d.expected[b] > 0 ? Math.sqrt(v) / d.expected[b] : 0)) : null;
  const spread = Math.max(0.2, ...ratioPoints.map((p) => Math.max(Math.abs(p.r - 1), p.hi - 1, 1 - p.lo)), ...(band ?? [0]));
  const m = Math.min(1, Math.ceil(spread * 1.1 * 10) / 10);
  const ratioTop = M.top + MAIN_H + GAP;
  const ry = scaleLinear()
    .domain([Math.max(0, 1 - m), 1 + m])
    .range([ratioTop + RATIO_H, ratioTop])
    .clamp(true);

  const stacked = stack<number[], number>()
    .keys(d.layers.map((_, i) => i))
    .value((row, i) => row[i])(Array.from({ length: bins }, (_, b) => d.layers.map((l) => l.values[b])));
  // A step area needs a point at every edge: the last bin is repeated at the upper edge.
  const layerArea = area<{ x: number; y0: number; y1: number }>()
    .x((p) => x(p.x))
    .y0((p) => y(p.y0))
    .y1((p) => y(p.y1))
    .curve(curveStepAfter);
  const stepPoints = (lo: (b: number) => number, hi: (b: number) => number) =>
    Array.from({ length: bins + 1 }, (_, i) => {
      const b = Math.min(i, bins - 1);
      return { x: edges[i], y0: lo(b), y1: hi(b) };
    });

  const unit = region.unit ? ` [${region.unit}]` : '';
  const observedTotal = d.observed ? d.observed.reduce((s, v) => s + v, 0) : null;
  const expectedTotal = d.expected.reduce((s, v) => s + v, 0);
  const label = `Pre-fit distribution of ${region.label || region.key} in ${region.observable}: ${d.layers.length} processes stacked, ${formatCount(round1(expectedTotal))} events expected${
    withheld ? '; observed data withheld while blinded' : observedTotal !== null ? `, ${formatCount(observedTotal)} observed` : '; no observed data recorded'
  }.`;

  return (
    <figure className="flex flex-col gap-2">
      <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full max-w-[46rem]" role="img" aria-label={label}>
        <GridLines scale={y} x0={M.left} x1={W - M.right} />
        {stacked.map((s, i) => (
          <path key={d.layers[i].key} d={layerArea(stepPoints((b) => s[b][0], (b) => s[b][1])) ?? ''} fill={d.layers[i].colour} stroke={theme.paperRaised} strokeWidth={0.6} />
        ))}
        {/* outline of the total expectation */}
        <path
          d={layerArea.lineY1()(stepPoints(() => 0, (b) => d.expected[b])) ?? ''}
          fill="none"
          stroke={theme.ink}
          strokeWidth={1}
        />
        {withheld && (
          <g>
            <rect x={W - M.right - 204} y={M.top + 6} width={196} height={22} rx={4} fill={theme.paperRaised} stroke={theme.amber} />
            <text x={W - M.right - 106} y={M.top + 21} textAnchor="middle" style={{ fontSize: 11, fill: '#7c4c05', fontWeight: 600 }}>
              data withheld while blinded
            </text>
          </g>
        )}
        {intervals &&
          d.observed!.map((n, b) => {
            const cx = x((edges[b] + edges[b + 1]) / 2);
            return (
              <g key={b}>
                <line x1={cx} x2={cx} y1={y(intervals[b][0])} y2={y(intervals[b][1])} stroke={theme.ink} strokeWidth={1.2} />
                <circle cx={cx} cy={y(n)} r={2.6} fill={theme.ink} />
              </g>
            );
          })}
        <LeftAxis scale={y} x={M.left} title="Events per bin" format={(v) => formatCount(v)} />

        {/* ratio panel */}
        {band && (
          <path
            d={
              area<{ x: number; y0: number; y1: number }>()
                .x((p) => x(p.x))
                .y0((p) => ry(p.y0))
                .y1((p) => ry(p.y1))
                .curve(curveStepAfter)(stepPoints((b) => 1 - band[b], (b) => 1 + band[b])) ?? ''
            }
            fill={theme.rule}
          />
        )}
        <line x1={M.left} x2={W - M.right} y1={ry(1)} y2={ry(1)} stroke={theme.inkMuted} strokeDasharray="3 3" />
        {ratioPoints.map((p) => {
          const cx = x((edges[p.b] + edges[p.b + 1]) / 2);
          return (
            <g key={p.b}>
              <line x1={cx} x2={cx} y1={ry(p.lo)} y2={ry(p.hi)} stroke={theme.ink} strokeWidth={1.2} />
              <circle cx={cx} cy={ry(p.r)} r={2.4} fill={theme.ink} />
            </g>
          );
        })}
        {withheld && (
          <text x={(M.left + W - M.right) / 2} y={ratioTop + 12} textAnchor="middle" style={{ fontSize: 10, fill: theme.inkMuted }}>
            no ratio while the data are withheld
          </text>
        )}
        <LeftAxis scale={ry} x={M.left} ticks={3} format={(v) => v.toFixed(1)} />
        <text transform={`translate(${M.left - 44},${ratioTop + RATIO_H}) rotate(-90)`} style={{ fontSize: 10, fill: theme.ink }}>
          Obs. / exp.
        </text>
        <BottomAxis scale={x} y={ratioTop + RATIO_H} title={`${region.observable}${unit}`} format={formatEdge} />

        {/* one hover target per bin, carrying its numbers */}
        {Array.from({ length: bins }, (_, b) => (
          <rect key={b} x={x(edges[b])} y={M.top} width={Math.max(0, x(edges[b + 1]) - x(edges[b]))} height={MAIN_H + GAP + RATIO_H} fill="transparent">
            <title>{binTitle(region, d, b)}</title>
          </rect>
        ))}
      </svg>
      <figcaption>
        <ul className="flex flex-wrap gap-x-4 gap-y-1 text-xs text-ink-soft" aria-label={`Legend of ${region.label || region.key}`}>
          {[...d.layers].reverse().map((l) => (
            <li key={l.key} className="flex items-center gap-1.5">
              <span aria-hidden className="inline-block size-3 rounded-sm border border-ink/15" style={{ background: l.colour }} />
              {l.label}
            </li>
          ))}
          {!withheld && d.observed && (
            <li className="flex items-center gap-1.5" title="Observed events; bars show the Garwood 68 % Poisson interval">
              <svg aria-hidden viewBox="0 0 12 12" className="size-3">
                <line x1={6} x2={6} y1={1} y2={11} stroke={theme.ink} strokeWidth={1.2} />
                <circle cx={6} cy={6} r={2.6} fill={theme.ink} />
              </svg>
              Observed (68 % Poisson interval)
            </li>
          )}
          {d.variance && (
            <li className="flex items-center gap-1.5" title="±1σ of the expectation from limited template statistics (square root of the summed variances), in the ratio panel">
              <span aria-hidden className="inline-block h-3 w-4 rounded-sm" style={{ background: theme.rule }} />
              Template statistics ±1σ
            </li>
          )}
          {withheld && <li className="font-medium text-amber-ink">Observed data withheld while blinded</li>}
          {!withheld && !d.observed && <li className="text-ink-muted">No observed data recorded</li>}
        </ul>
      </figcaption>
    </figure>
  );
}
