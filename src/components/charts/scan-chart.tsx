import { useRef } from 'react';
import { scaleLinear } from 'd3-scale';
import { line } from 'd3-shape';
import type { ParameterScan } from '@shared/schemas/fit';
import { BottomAxis, GridLines, LeftAxis } from './axes';
import { ChartFigure } from './chart-figure';
import { theme } from '../../lib/palette';
import { formatFixed } from '../../lib/stats-format';
import { PlotLabel } from './plot-label';

const W = 520;
const H = 260;
const M = { left: 52, right: 44, top: 28, bottom: 40 };

/** Wilks: q = 1 and q = 3.84 bound the 68.27 % and 95 % intervals of one parameter. */
const LEVELS = [
  { q: 1, label: '68 %' },
  { q: 3.84, label: '95 %' },
];

/** The profile-likelihood ratio q(μ) = 2ΔNLL along the scan, with the 68 % and 95 % levels and crossings. */
export function ScanChart({ scan, parameterLabel = 'μ' }: { scan: ParameterScan; parameterLabel?: string }) {
  const ref = useRef<SVGSVGElement>(null);
  const pts = [...scan.points].sort((a, b) => a.value - b.value);
  if (pts.length < 2) return <p className="text-sm text-ink-muted">{scan.failure ?? 'The scan has too few points to draw.'}</p>;
  const x = scaleLinear()
    .domain([pts[0].value, pts[pts.length - 1].value])
    .range([M.left, W - M.right]);
  const qMax = Math.max(4.5, ...pts.map((p) => p.q));
  const y = scaleLinear().domain([0, qMax * 1.05]).range([H - M.bottom, M.top]).nice();
  const path = line<{ value: number; q: number }>()
    .x((p) => x(p.value))
    .y((p) => y(Math.min(p.q, y.domain()[1])))(pts);
  const crossings = [
    { c: scan.crossings68, level: 1 },
    ...(scan.crossings95 ? [{ c: scan.crossings95, level: 3.84 }] : []),
  ];
  const title = `Likelihood scan of ${parameterLabel}`;
  const lo68 = scan.crossings68.low;
  const hi68 = scan.crossings68.high;
  return (
    <ChartFigure title={title} svg={ref}>
      <svg
        ref={ref}
        viewBox={`0 0 ${W} ${H}`}
        className="h-auto w-full max-w-[40rem]"
        role="img"
        aria-label={`${title}: q = 2ΔNLL over ${pts.length} points from ${formatFixed(pts[0].value, 2)} to ${formatFixed(pts[pts.length - 1].value, 2)}; best fit ${formatFixed(scan.bestFit, 3)}, 68 % interval ${formatFixed(lo68, 3)} to ${formatFixed(hi68, 3)}.`}
      >
        <PlotLabel x={M.left} y={13} />
        <GridLines scale={y} x0={M.left} x1={W - M.right} />
        {LEVELS.map((l) => (
          <g key={l.q}>
            <line x1={M.left} x2={W - M.right} y1={y(l.q)} y2={y(l.q)} stroke={theme.amber} strokeDasharray="5 3" strokeWidth={1} />
            <text x={W - M.right + 4} y={y(l.q)} dy="0.32em" style={{ fontSize: 10, fill: '#7c4c05' }}>
              {l.label}
            </text>
          </g>
        ))}
        {crossings.flatMap(({ c, level }) =>
          [c.low, c.high]
            .filter((v): v is number => v !== null && v >= x.domain()[0] && v <= x.domain()[1])
            .map((v, i) => <line key={`${level}-${i}`} x1={x(v)} x2={x(v)} y1={y(0)} y2={y(level)} stroke={theme.amber} strokeWidth={0.8} />),
        )}
        <path d={path ?? ''} fill="none" stroke={theme.teal} strokeWidth={1.8} />
        {pts.map((p) => (
          <circle key={p.value} cx={x(p.value)} cy={y(Math.min(p.q, y.domain()[1]))} r={2.4} fill={theme.paperRaised} stroke={theme.teal} strokeWidth={1.2}>
            <title>{`${parameterLabel} = ${formatFixed(p.value, 3)}: q = ${formatFixed(p.q, 3)} (twice the rise of the profiled NLL above its minimum)`}</title>
          </circle>
        ))}
        <line x1={x(scan.bestFit)} x2={x(scan.bestFit)} y1={y(0)} y2={M.top} stroke={theme.ink} strokeWidth={0.8} strokeDasharray="2 3" />
        <LeftAxis scale={y} x={M.left} title="q = 2ΔNLL" />
        <BottomAxis scale={x} y={H - M.bottom} title={parameterLabel} />
      </svg>
    </ChartFigure>
  );
}
