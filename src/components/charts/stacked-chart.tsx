import { useId, useMemo, type Ref } from 'react';
import { scaleLinear } from 'd3-scale';
import { area, curveStepAfter, stack } from 'd3-shape';
import { formatCount, formatEdge, round1 } from '../../lib/format';
import { theme } from '../../lib/palette';
import { garwoodInterval } from '../../lib/poisson';
import { BottomAxis, GridLines, LeftAxis } from './axes';
import { PlotLabel } from './plot-label';

const W = 560;
const M = { left: 60, right: 22, top: 26 };
const MAIN_H = 190;
const GAP = 16;
const RATIO_H = 72;
const AXIS_H = 34;
const H = M.top + MAIN_H + GAP + RATIO_H + AXIS_H;

export type StackLayer = { key: string; label: string; colour: string; values: number[] };

/** Everything one stacked view of a region needs; the model screen and the fit result fill it differently. */
export type StackedChartData = {
  /** e.g. "Pre-fit", "Post-fit" */
  stage: string;
  regionLabel: string;
  observable: string;
  unit: string | null;
  edges: number[];
  /** bottom first */
  layers: StackLayer[];
  expected: number[];
  /** ±1σ of the expected total per bin; null when not known */
  band: number[] | null;
  bandInfo: { label: string; title: string; inMain: boolean };
  /** counts drawn as points with their Garwood interval; null when absent or withheld */
  data: number[] | null;
  dataLabel: string;
  withheld: boolean;
};

/**
 * Bins to point out on the chart, e.g. where one parameter's information comes from: each bin's
 * weight (0–1, its share) sets the strength of an amber wash behind the stack; `label` names it.
 */
export type BinHighlight = { weights: number[]; label: string; describe: (bin: number) => string };

function binTitle(d: StackedChartData, b: number, highlight?: BinHighlight): string {
  const unit = d.unit ? ` ${d.unit}` : '';
  const lines = [`Bin ${b + 1}: ${formatEdge(d.edges[b])}–${formatEdge(d.edges[b + 1])}${unit}`];
  if (highlight && highlight.weights[b] > 0) lines.push(highlight.describe(b));
  for (const l of [...d.layers].reverse()) lines.push(`${l.label}: ${formatCount(round1(l.values[b]))} events`);
  lines.push(`${d.stage} expected in total: ${formatCount(round1(d.expected[b]))} events${d.band ? ` ± ${d.band[b].toFixed(1)}` : ''}`);
  if (d.data) {
    const [lo, hi] = garwoodInterval(d.data[b]);
    lines.push(`${d.dataLabel}: ${formatCount(round1(d.data[b]))} events (68 % interval ${lo.toFixed(1)}–${hi.toFixed(1)})`);
    if (d.expected[b] > 0) lines.push(`${d.dataLabel} / expected: ${(d.data[b] / d.expected[b]).toFixed(3)}`);
  }
  return lines.join('\n');
}

type StepPoint = { x: number; y0: number; y1: number };

/**
 * One region as a stack of processes, the data as points with their Poisson interval, and
 * below them data / expected with the expectation's ±1σ band. The band can also be drawn
 * around the total in the main panel, as a stippled strip.
 */
export function StackedChart({ d, svgRef, highlight }: { d: StackedChartData; svgRef?: Ref<SVGSVGElement>; highlight?: BinHighlight }) {
  const stippleId = `stipple-${useId().replace(/[^a-zA-Z0-9_-]/g, '')}`;
  const bins = d.expected.length;
  const edges = d.edges;
  const intervals = useMemo(() => (d.data ? d.data.map((n) => garwoodInterval(n)) : null), [d.data]);

  if (bins === 0 || d.layers.length === 0)
    return <p className="py-6 text-center text-sm text-ink-muted">No templates in this region yet, so there is nothing to stack.</p>;

  const x = scaleLinear().domain([edges[0], edges[bins]]).range([M.left, W - M.right]);
  const top = Math.max(...d.expected.map((e, b) => e + (d.band ? d.band[b] : 0)), ...(intervals ? intervals.map((i) => i[1]) : [0]), 1);
  const y = scaleLinear().domain([0, top * 1.12]).range([M.top + MAIN_H, M.top]).nice();

  // Ratio panel: data / expected with the data's interval scaled alike, and the expectation's relative band.
  const ratioPoints = intervals
    ? d.data!.map((n, b) => (d.expected[b] > 0 ? { b, r: n / d.expected[b], lo: intervals[b][0] / d.expected[b], hi: intervals[b][1] / d.expected[b] } : null)).filter((p) => p !== null)
    : [];
  const relBand = d.band ? d.band.map((s, b) => (d.expected[b] > 0 ? s / d.expected[b] : 0)) : null;
  const spread = Math.max(0.2, ...ratioPoints.map((p) => Math.max(Math.abs(p.r - 1), p.hi - 1, 1 - p.lo)), ...(relBand ?? [0]));
  const m = Math.min(1, Math.ceil(spread * 1.1 * 10) / 10);
  const ratioTop = M.top + MAIN_H + GAP;
  const ry = scaleLinear()
    .domain([Math.max(0, 1 - m), 1 + m])
    .range([ratioTop + RATIO_H, ratioTop])
    .clamp(true);

  const stacked = stack<number[], number>()
    .keys(d.layers.map((_, i) => i))
    .value((row, i) => row[i])(Array.from({ length: bins }, (_, b) => d.layers.map((l) => l.values[b])));
  const layerArea = area<StepPoint>()
    .x((p) => x(p.x))
    .y0((p) => y(p.y0))
    .y1((p) => y(p.y1))
    .curve(curveStepAfter);
  const ratioArea = area<StepPoint>()
    .x((p) => x(p.x))
    .y0((p) => ry(p.y0))
    .y1((p) => ry(p.y1))
    .curve(curveStepAfter);
  // A step area needs a point at every edge: the last bin is repeated at the upper edge.
  const stepPoints = (lo: (b: number) => number, hi: (b: number) => number): StepPoint[] =>
    Array.from({ length: bins + 1 }, (_, i) => {
      const b = Math.min(i, bins - 1);
      return { x: edges[i], y0: lo(b), y1: hi(b) };
    });

  const unit = d.unit ? ` [${d.unit}]` : '';
  const dataTotal = d.data ? d.data.reduce((s, v) => s + v, 0) : null;
  const expectedTotal = d.expected.reduce((s, v) => s + v, 0);
  const label = `${d.stage} distribution of ${d.regionLabel} in ${d.observable}: ${d.layers.length} processes stacked, ${formatCount(round1(expectedTotal))} events expected${
    d.withheld ? '; observed data withheld while blinded' : dataTotal !== null ? `, ${formatCount(round1(dataTotal))} ${d.dataLabel === 'Observed' ? 'observed' : `in the ${d.dataLabel.toLowerCase()}`}` : '; no observed data recorded'
  }.`;

  return (
    <figure className="flex flex-col gap-2">
      <svg ref={svgRef} viewBox={`0 0 ${W} ${H}`} className="h-auto w-full max-w-[46rem]" role="img" aria-label={label}>
        <PlotLabel x={M.left} y={13} />
        <defs>
          <pattern id={stippleId} width={4} height={4} patternUnits="userSpaceOnUse">
            <rect width={4} height={4} fill={theme.paperRaised} fillOpacity={0.35} />
            <rect x={1} y={1} width={1.3} height={1.3} fill={theme.ink} fillOpacity={0.75} />
          </pattern>
        </defs>
        <GridLines scale={y} x0={M.left} x1={W - M.right} />
        {stacked.map((s, i) => (
          <path key={d.layers[i].key} d={layerArea(stepPoints((b) => s[b][0], (b) => s[b][1])) ?? ''} fill={d.layers[i].colour} stroke={theme.paperRaised} strokeWidth={0.6} />
        ))}
        {highlight && <HighlightWash highlight={highlight} x={(v) => x(v)} edges={edges} top={M.top} height={MAIN_H} />}
        {d.band && d.bandInfo.inMain && (
          <path d={layerArea(stepPoints((b) => Math.max(0, d.expected[b] - d.band![b]), (b) => d.expected[b] + d.band![b])) ?? ''} fill={`url(#${stippleId})`} stroke="none" />
        )}
        {/* outline of the total expectation */}
        <path d={layerArea.lineY1()(stepPoints(() => 0, (b) => d.expected[b])) ?? ''} fill="none" stroke={theme.ink} strokeWidth={1} />
        {d.withheld && (
          <g>
            <rect x={W - M.right - 204} y={M.top + 6} width={196} height={22} rx={4} fill={theme.paperRaised} stroke={theme.amber} />
            <text x={W - M.right - 106} y={M.top + 21} textAnchor="middle" style={{ fontSize: 11, fill: '#7c4c05', fontWeight: 600 }}>
              data withheld while blinded
            </text>
          </g>
        )}
        {intervals &&
          d.data!.map((n, b) => {
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
        {relBand && <path d={ratioArea(stepPoints((b) => 1 - relBand[b], (b) => 1 + relBand[b])) ?? ''} fill={d.bandInfo.inMain ? `url(#${stippleId})` : theme.rule} />}
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
        {d.withheld && (
          <text x={(M.left + W - M.right) / 2} y={ratioTop + 12} textAnchor="middle" style={{ fontSize: 10, fill: theme.inkMuted }}>
            no ratio while the data are withheld
          </text>
        )}
        <LeftAxis scale={ry} x={M.left} ticks={3} format={(v) => v.toFixed(1)} />
        <text transform={`translate(${M.left - 44},${ratioTop + RATIO_H}) rotate(-90)`} style={{ fontSize: 10, fill: theme.ink }}>
          {d.dataLabel === 'Observed' ? 'Obs. / exp.' : 'Data / exp.'}
        </text>
        <BottomAxis scale={x} y={ratioTop + RATIO_H} title={`${d.observable}${unit}`} format={formatEdge} />

        {/* one hover target per bin, carrying its numbers */}
        {Array.from({ length: bins }, (_, b) => (
          <rect key={b} x={x(edges[b])} y={M.top} width={Math.max(0, x(edges[b + 1]) - x(edges[b]))} height={MAIN_H + GAP + RATIO_H} fill="transparent">
            <title>{binTitle(d, b, highlight)}</title>
          </rect>
        ))}
      </svg>
      <figcaption>
        <ul className="flex flex-wrap gap-x-4 gap-y-1 text-xs text-ink-soft" aria-label={`Legend of ${d.regionLabel}`}>
          {[...d.layers].reverse().map((l) => (
            <li key={l.key} className="flex items-center gap-1.5">
              <span aria-hidden className="inline-block size-3 rounded-sm border border-ink/15" style={{ background: l.colour }} />
              {l.label}
            </li>
          ))}
          {!d.withheld && d.data && (
            <li className="flex items-center gap-1.5" title={`${d.dataLabel} events; bars show the Garwood 68 % Poisson interval`}>
              <svg aria-hidden viewBox="0 0 12 12" className="size-3">
                <line x1={6} x2={6} y1={1} y2={11} stroke={theme.ink} strokeWidth={1.2} />
                <circle cx={6} cy={6} r={2.6} fill={theme.ink} />
              </svg>
              {d.dataLabel} (68 % Poisson interval)
            </li>
          )}
          {d.band && (
            <li className="flex items-center gap-1.5" title={d.bandInfo.title}>
              {d.bandInfo.inMain ? (
                <svg aria-hidden viewBox="0 0 16 12" className="h-3 w-4">
                  {Array.from({ length: 12 }, (_, i) => (
                    <rect key={i} x={1 + (i % 4) * 4} y={1 + Math.floor(i / 4) * 4} width={1.3} height={1.3} fill={theme.ink} />
                  ))}
                </svg>
              ) : (
                <span aria-hidden className="inline-block h-3 w-4 rounded-sm" style={{ background: theme.rule }} />
              )}
              {d.bandInfo.label}
            </li>
          )}
          {highlight && (
            <li className="flex items-center gap-1.5">
              <span aria-hidden className="inline-block h-3 w-4 rounded-sm" style={{ background: theme.amber, opacity: 0.45 }} />
              {highlight.label}
            </li>
          )}
          {d.withheld && <li className="font-medium text-amber-ink">Observed data withheld while blinded</li>}
          {!d.withheld && !d.data && <li className="text-ink-muted">No observed data recorded</li>}
        </ul>
      </figcaption>
    </figure>
  );
}

/** The amber wash behind highlighted bins, stronger where the weight is larger, with a bar along the top. */
function HighlightWash({ highlight, x, edges, top, height }: { highlight: BinHighlight; x: (v: number) => number; edges: number[]; top: number; height: number }) {
  const max = Math.max(0, ...highlight.weights);
  if (max <= 0) return null;
  return (
    <g aria-hidden>
      {highlight.weights.map((w, b) =>
        w > 0 ? (
          <g key={b}>
            <rect x={x(edges[b])} y={top} width={Math.max(0, x(edges[b + 1]) - x(edges[b]))} height={height} fill={theme.amber} fillOpacity={0.06 + 0.3 * (w / max)} />
            <rect x={x(edges[b])} y={top} width={Math.max(0, x(edges[b + 1]) - x(edges[b]))} height={3} fill={theme.amber} fillOpacity={0.25 + 0.75 * (w / max)} />
          </g>
        ) : null,
      )}
    </g>
  );
}
