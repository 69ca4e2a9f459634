import { useRef } from 'react';
import { scaleLinear } from 'd3-scale';
import { area, line } from 'd3-shape';
import type { HypothesisScanResult } from '@shared/schemas/hypothesis-scan';
import { BottomAxis, GridLines, LeftAxis } from '../../../components/charts/axes';
import { ChartFigure } from '../../../components/charts/chart-figure';
import { theme } from '../../../lib/palette';
import { formatFixed } from '../../../lib/stats-format';
import { valueLabel } from '../scan-words';
import { PlotLabel } from '../../../components/charts/plot-label';

const W = 560;
const H = 280;
const M = { left: 60, right: 40, top: 28, bottom: 42 };

type Bands = { minus2: number; minus1: number; median: number; plus1: number; plus2: number };

/**
 * Which hypotheses the data exclude: the 95 % CL upper limit on μ against the hypothesis value,
 * the expected limit's median (dashed) inside its ±1σ and ±2σ bands, the observed limit (solid),
 * and μ = 1, the signal as modelled: a hypothesis whose limit lies below that line is excluded.
 */
export function LimitChart({ result }: { result: HypothesisScanResult }) {
  const ref = useRef<SVGSVGElement>(null);
  const pts = [...result.points].sort((a, b) => a.value - b.value).filter((p) => p.status === 'converged' && p.limit);
  if (pts.length === 0) return <p className="text-sm text-ink-muted">No hypothesis has a limit: the scan was run without limits, or every limit fit failed.</p>;
  const withBands = pts.filter((p) => p.limit!.expected) as ((typeof pts)[number] & { limit: { expected: Bands } })[];
  const observed = pts.filter((p) => p.limit!.observed !== null);
  const top = Math.max(1.2, ...withBands.map((p) => p.limit.expected.plus2), ...observed.map((p) => p.limit!.observed!)) * 1.08;
  const x = scaleLinear()
    .domain([pts[0].value, pts[pts.length - 1].value === pts[0].value ? pts[0].value + 1 : pts[pts.length - 1].value])
    .range([M.left, W - M.right]);
  const y = scaleLinear().domain([0, top]).range([H - M.bottom, M.top]).nice();
  const band = (lo: keyof Bands, hi: keyof Bands) =>
    area<(typeof withBands)[number]>()
      .x((p) => x(p.value))
      .y0((p) => y(p.limit.expected[lo]))
      .y1((p) => y(p.limit.expected[hi]))(withBands) ?? '';
  const median = line<(typeof withBands)[number]>()
    .x((p) => x(p.value))
    .y((p) => y(p.limit.expected.median))(withBands);
  const obs = line<(typeof observed)[number]>()
    .x((p) => x(p.value))
    .y((p) => y(p.limit!.observed!))(observed);
  const title = `Upper limit on μ (95 % CL, CLs) against ${result.parameter.name}`;
  const excluded = observed.filter((p) => p.limit!.observed! < 1).length;
  return (
    <ChartFigure title={title} svg={ref}>
      <svg
        ref={ref}
        viewBox={`0 0 ${W} ${H}`}
        className="h-auto w-full max-w-[44rem]"
        role="img"
        aria-label={`${title}: ${withBands.length} expected limits with bands${observed.length ? `, ${observed.length} observed limits, ${excluded} of them below μ = 1` : ''}.`}
      >
        <PlotLabel x={M.left} y={13} />
        <GridLines scale={y} x0={M.left} x1={W - M.right} />
        <path d={band('minus2', 'plus2')} fill={theme.amber} fillOpacity={0.16} />
        <path d={band('minus1', 'plus1')} fill={theme.amber} fillOpacity={0.34} />
        <path d={median ?? ''} fill="none" stroke={theme.ink} strokeWidth={1.3} strokeDasharray="5 3" />
        <line x1={M.left} x2={W - M.right} y1={y(1)} y2={y(1)} stroke={theme.plum} strokeWidth={1} />
        <text x={W - M.right + 4} y={y(1)} dy="0.32em" style={{ fontSize: 10, fill: theme.plum, fontWeight: 600 }}>
          μ = 1
        </text>
        {observed.length > 0 && <path d={obs ?? ''} fill="none" stroke={theme.teal} strokeWidth={1.8} />}
        {observed.map((p) => (
          <circle key={p.key} cx={x(p.value)} cy={y(p.limit!.observed!)} r={2.4} fill={theme.paperRaised} stroke={theme.teal} strokeWidth={1.2}>
            <title>{`${p.label || p.key}: observed limit μ < ${formatFixed(p.limit!.observed, 3)}${p.limit!.expected ? `, expected ${formatFixed(p.limit!.expected.median, 3)}` : ''}`}</title>
          </circle>
        ))}
        <LeftAxis scale={y} x={M.left} title="μ upper limit" />
        <BottomAxis scale={x} y={H - M.bottom} title={valueLabel(result.parameter)} />
      </svg>
      <p className="text-xs text-ink-muted">
        Expected median <span className="font-semibold text-ink">dashed</span>, within its ±1σ (darker) and ±2σ bands{observed.length > 0 && <>; observed <span className="font-semibold text-teal-ink">solid</span></>}. Below μ = 1 a
        hypothesis’s signal, as modelled, is excluded at 95 % CL.
      </p>
    </ChartFigure>
  );
}
