import { useId, useRef } from 'react';
import { scaleLinear, scaleLog } from 'd3-scale';
import { curveStepAfter, line } from 'd3-shape';
import type { Histogram } from '@shared/schemas/toys';
import { BottomAxis, GridLines, LeftAxis } from '../../../components/charts/axes';
import { ChartFigure } from '../../../components/charts/chart-figure';
import { formatCount, formatEdge } from '../../../lib/format';
import { theme } from '../../../lib/palette';
import { uniformBins } from '../toy-stats';
import { PlotLabel } from '../../../components/charts/plot-label';

const W = 520;
const H = 250;
const M = { left: 56, right: 16, top: 30, bottom: 40 };
const CURVE_POINTS = 161;

export type ChartMarker = { value: number; label: string; title: string };

/**
 * A toy distribution as bars, with what the asymptotic formula expects drawn over it. With
 * `density` (expected toys per unit of x) and bins of one width, the expectation is the smooth
 * curve density(x)·width; otherwise it is the server's expected count per bin, as a step.
 * On a log count scale, empty bins draw nothing and the axis starts at 0.1 toys.
 */
export function ToyHistogramChart({
  histogram,
  title,
  description,
  xTitle,
  valueName,
  expectationLabel,
  density,
  log = false,
  marker,
}: {
  histogram: Histogram;
  title: string;
  /** what the chart shows, in a sentence, for screen readers */
  description: string;
  xTitle: string;
  /** what one toy's value is called in the bins' hover text, e.g. "standardised μ̂" */
  valueName: string;
  expectationLabel: string;
  density?: (x: number) => number;
  log?: boolean;
  marker?: ChartMarker | null;
}) {
  const ref = useRef<SVGSVGElement>(null);
  const descId = useId();
  const { edges, counts, expected } = histogram;
  const bins = counts.length;
  if (bins === 0 || edges.length !== bins + 1)
    return <p className="text-sm text-ink-muted">{`${title}: no toys fell in range, so there is nothing to draw.`}</p>;

  const x = scaleLinear().domain([edges[0], edges[bins]]).range([M.left, W - M.right]);
  const smooth = density && uniformBins(histogram) ? density : null;
  const width = (edges[bins] - edges[0]) / bins;
  const curve = smooth
    ? Array.from({ length: CURVE_POINTS }, (_, i) => {
        const v = edges[0] + ((edges[bins] - edges[0]) * i) / (CURVE_POINTS - 1);
        return { x: v, y: smooth(v) * width };
      })
    : null;

  const top = Math.max(1, ...counts, ...expected, ...(curve ? curve.map((p) => p.y) : []));
  // A log axis starts one decade below a single toy: an expectation far below that is drawn at the axis.
  const floor = log ? 0.1 : 0;
  const y = log
    ? scaleLog()
        .domain([floor, 10 ** Math.ceil(Math.log10(top * 1.5))])
        .range([H - M.bottom, M.top])
        .clamp(true)
    : scaleLinear()
        .domain([0, top * 1.1])
        .range([H - M.bottom, M.top])
        .nice();
  const yOf = (v: number) => y(log ? Math.max(floor, v) : v);
  const base = H - M.bottom;

  const expectationPath = curve
    ? line<{ x: number; y: number }>()
        .x((p) => x(p.x))
        .y((p) => yOf(p.y))(curve)
    : line<number>()
        .x((_, i) => x(edges[i]))
        .y((_, i) => yOf(expected[Math.min(i, bins - 1)]))
        .curve(curveStepAfter)(edges);
  const decades = log ? y.ticks().filter((t) => Math.abs(Math.log10(t) - Math.round(Math.log10(t))) < 1e-9) : [];
  const total = counts.reduce((s, c) => s + c, 0);
  const outside = [
    histogram.below > 0 || histogram.expectedBelow >= 0.5 ? `${formatCount(histogram.below)} below ${formatEdge(edges[0])} (expected ${histogram.expectedBelow.toFixed(1)})` : null,
    histogram.above > 0 || histogram.expectedAbove >= 0.5 ? `${formatCount(histogram.above)} above ${formatEdge(edges[bins])} (expected ${histogram.expectedAbove.toFixed(1)})` : null,
  ].filter((s): s is string => s !== null);

  return (
    <ChartFigure title={title} svg={ref}>
      <svg
        ref={ref}
        viewBox={`0 0 ${W} ${H}`}
        className="h-auto w-full max-w-[40rem]"
        role="img"
        aria-label={`${title}: ${formatCount(total)} toys in ${bins} bins from ${formatEdge(edges[0])} to ${formatEdge(edges[bins])}${log ? ', counts on a log scale' : ''}.`}
        aria-describedby={descId}
      >
        <PlotLabel x={M.left} y={13} />
        {log ? (
          <g aria-hidden>
            {decades.map((t) => (
              <line key={t} x1={M.left} x2={W - M.right} y1={y(t)} y2={y(t)} stroke={theme.rule} strokeWidth={0.75} />
            ))}
          </g>
        ) : (
          <GridLines scale={y} x0={M.left} x1={W - M.right} />
        )}
        {counts.map((c, b) =>
          c > 0 ? (
            <rect
              key={b}
              x={x(edges[b]) + 0.5}
              y={yOf(c)}
              width={Math.max(0, x(edges[b + 1]) - x(edges[b]) - 1)}
              height={Math.max(0, base - yOf(c))}
              fill={theme.teal}
              fillOpacity={0.32}
              stroke={theme.teal}
              strokeWidth={0.8}
            />
          ) : null,
        )}
        <path d={expectationPath ?? ''} fill="none" stroke={theme.ink} strokeWidth={1.6} />
        {marker && marker.value >= edges[0] && marker.value <= edges[bins] && (
          <g>
            <line x1={x(marker.value)} x2={x(marker.value)} y1={base} y2={M.top} stroke={theme.plum} strokeWidth={1.4} strokeDasharray="4 3" />
            <text
              x={x(marker.value) + (x(marker.value) > W - 140 ? -4 : 4)}
              y={M.top + 10}
              textAnchor={x(marker.value) > W - 140 ? 'end' : 'start'}
              style={{ fontSize: 10, fill: theme.plum, fontWeight: 600 }}
            >
              {marker.label}
            </text>
          </g>
        )}
        <LeftAxis
          scale={y}
          x={M.left}
          title={log ? 'Toys per bin (log)' : 'Toys per bin'}
          format={log ? (v) => (decades.includes(v) ? (v < 1 ? String(v) : formatCount(v)) : '') : (v) => formatCount(v)}
        />
        <BottomAxis scale={x} y={base} title={xTitle} format={formatEdge} />
        {counts.map((c, b) => (
          <rect key={`hover-${b}`} x={x(edges[b])} y={M.top} width={Math.max(0, x(edges[b + 1]) - x(edges[b]))} height={base - M.top} fill="transparent">
            <title>{`${valueName} ${formatEdge(edges[b])} to ${formatEdge(edges[b + 1])}: ${formatCount(c)} toy${c === 1 ? '' : 's'}; expected ${expected[b].toFixed(1)}`}</title>
          </rect>
        ))}
      </svg>
      <p id={descId} className="text-xs text-ink-muted">
        {description}
        {outside.length > 0 && ` Outside the axis: ${outside.join('; ')}.`}
      </p>
      <ul className="flex flex-wrap gap-x-4 gap-y-1 text-xs text-ink-soft" aria-label={`Legend of ${title}`}>
        <li className="flex items-center gap-1.5">
          <span aria-hidden className="inline-block h-3 w-4 border border-teal" style={{ background: theme.teal, opacity: 0.45 }} />
          toys
        </li>
        <li className="flex items-center gap-1.5">
          <span aria-hidden className="inline-block h-0.5 w-5 bg-ink" />
          {expectationLabel}
        </li>
        {marker && (
          <li className="flex items-center gap-1.5" title={marker.title}>
            <span aria-hidden className="inline-block h-3 w-0 border-l-2 border-dashed border-plum" />
            {marker.label}
          </li>
        )}
      </ul>
    </ChartFigure>
  );
}
