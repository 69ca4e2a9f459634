import { useRef } from 'react';
import { scaleLinear, scaleLog } from 'd3-scale';
import { line } from 'd3-shape';
import type { HypothesisScanResult } from '@shared/schemas/hypothesis-scan';
import { BottomAxis, LeftAxis } from '../../../components/charts/axes';
import { ChartFigure } from '../../../components/charts/chart-figure';
import { pFromZ } from '../../../lib/normal';
import { theme } from '../../../lib/palette';
import { formatFixed, formatProbability } from '../../../lib/stats-format';
import { valueLabel } from '../scan-words';
import { PlotLabel } from '../../../components/charts/plot-label';

const W = 560;
const H = 280;
const M = { left: 60, right: 40, top: 28, bottom: 42 };

/** Significance levels marked across the chart: 3σ and 5σ drawn firmly, 1σ, 2σ and 4σ faintly (common practice, no source). */
const LEVELS = [1, 2, 3, 4, 5].map((z) => ({ z, p: pFromZ(z), strong: z === 3 || z === 5 }));

/**
 * How unlikely each hypothesis's excess is under the background alone: the local p0 against the
 * hypothesis value on a log scale, observed (solid) and expected for μ = 1 (dashed), with the
 * significance levels. A failed fit leaves a gap and a mark under the axis.
 */
export function LocalP0Chart({ result }: { result: HypothesisScanResult }) {
  const ref = useRef<SVGSVGElement>(null);
  const pts = [...result.points].sort((a, b) => a.value - b.value);
  if (pts.length === 0) return null;
  const observed = result.dataset === 'observed';
  const ps = pts.flatMap((p) => [p.local?.p0, p.expected?.p0]).filter((p): p is number => p !== undefined && p !== null && p > 0);
  // down to a power of ten below every p0 shown (at least 1e-3), so the ticks end on the axis's end
  const pMin = 10 ** Math.floor(Math.log10(Math.max(1e-12, Math.min(1e-3, ...ps.map((p) => p / 3)))));
  const x = scaleLinear()
    .domain([pts[0].value, pts[pts.length - 1].value === pts[0].value ? pts[0].value + 1 : pts[pts.length - 1].value])
    .range([M.left, W - M.right]);
  const y = scaleLog().domain([1, pMin]).range([M.top, H - M.bottom]).clamp(true);
  // one tick per power of ten (every other one past eight decades)
  const nDecades = Math.ceil(-Math.log10(y.domain()[1]));
  const decades = Array.from({ length: nDecades + 1 }, (_, k) => 10 ** -k).filter((v, k) => v >= y.domain()[1] * (1 - 1e-9) && (nDecades <= 8 || k % 2 === 0));
  const segments = (get: (p: (typeof pts)[number]) => number | null | undefined) => {
    // a failed point breaks the line rather than being bridged
    const runs: { value: number; p: number }[][] = [[]];
    for (const p of pts) {
      const v = p.status === 'converged' ? get(p) : null;
      if (v === null || v === undefined) runs.push([]);
      else runs[runs.length - 1].push({ value: p.value, p: Math.max(v, 1e-300) });
    }
    return runs.filter((r) => r.length > 0);
  };
  const path = line<{ value: number; p: number }>()
    .x((d) => x(d.value))
    .y((d) => y(d.p));
  const name = valueLabel(result.parameter);
  const title = observed ? `Local p0 against ${result.parameter.name}` : `Expected local p0 against ${result.parameter.name}`;
  const lowest = pts.filter((p) => p.local).sort((a, b) => a.local!.p0 - b.local!.p0)[0];
  return (
    <ChartFigure title={title} svg={ref}>
      <svg
        ref={ref}
        viewBox={`0 0 ${W} ${H}`}
        className="h-auto w-full max-w-[44rem]"
        role="img"
        aria-label={`${title} over ${pts.length} hypotheses from ${formatFixed(pts[0].value, 0)} to ${formatFixed(pts[pts.length - 1].value, 0)}${lowest ? `; smallest observed p0 ${formatProbability(lowest.local!.p0)} at ${formatFixed(lowest.value, 1)}` : ''}.`}
      >
        <PlotLabel x={M.left} y={13} />
        {LEVELS.filter((l) => l.p >= y.domain()[1]).map((l) => (
          <g key={l.z}>
            <line x1={M.left} x2={W - M.right} y1={y(l.p)} y2={y(l.p)} stroke={l.strong ? theme.plum : theme.rule} strokeWidth={l.strong ? 1 : 0.8} strokeDasharray={l.strong ? '6 3' : '2 3'} />
            <text x={W - M.right + 4} y={y(l.p)} dy="0.32em" style={{ fontSize: 10, fill: l.strong ? theme.plum : theme.inkMuted, fontWeight: l.strong ? 600 : 400 }}>
              {l.z}σ
            </text>
          </g>
        ))}
        {segments((p) => p.expected?.p0).map((run, i) => (
          <path key={`e${i}`} d={path(run) ?? ''} fill="none" stroke={theme.amber} strokeWidth={1.5} strokeDasharray="5 3" />
        ))}
        {observed &&
          segments((p) => p.local?.p0).map((run, i) => <path key={`o${i}`} d={path(run) ?? ''} fill="none" stroke={theme.teal} strokeWidth={1.8} />)}
        {observed &&
          pts
            .filter((p) => p.local)
            .map((p) => (
              <circle key={p.key} cx={x(p.value)} cy={y(Math.max(p.local!.p0, 1e-300))} r={2.4} fill={theme.paperRaised} stroke={theme.teal} strokeWidth={1.2}>
                <title>{`${p.label || p.key} (${formatFixed(p.value, 1)}${result.parameter.unit ? ` ${result.parameter.unit}` : ''}): local p0 = ${formatProbability(p.local!.p0)}, Z = ${formatFixed(p.local!.z, 2)}σ`}</title>
              </circle>
            ))}
        {pts
          .filter((p) => p.status !== 'converged')
          .map((p) => (
            <text key={`f${p.key}`} x={x(p.value)} y={H - M.bottom + 26} textAnchor="middle" style={{ fontSize: 11, fill: '#a1260d', fontWeight: 700 }}>
              ×<title>{`${p.label || p.key}: the fit did not converge (${p.message ?? 'no reason given'}); no number is shown`}</title>
            </text>
          ))}
        <LeftAxis scale={y} x={M.left} values={decades} title="local p0" format={(v) => (v >= 0.01 ? String(v) : `1e${Math.round(Math.log10(v))}`)} />
        <BottomAxis scale={x} y={H - M.bottom} title={name} />
      </svg>
      <p className="text-xs text-ink-muted">
        {observed ? (
          <>
            <span className="font-semibold text-teal-ink">Solid</span>: observed; <span className="font-semibold text-amber-ink">dashed</span>: expected for μ = 1 at each
            hypothesis.{' '}
          </>
        ) : (
          <>Expected for μ = 1 at each hypothesis (Asimov datasets built on the control regions’ fit); no observed data of a signal region were read. </>
        )}
        Local: each hypothesis on its own, before any correction for having looked at many.
      </p>
    </ChartFigure>
  );
}
