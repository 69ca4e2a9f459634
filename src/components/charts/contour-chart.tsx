import { useRef } from 'react';
import { scaleLinear } from 'd3-scale';
import { curveCatmullRom, curveCatmullRomClosed, line } from 'd3-shape';
import type { ProfileContour } from '@shared/schemas/fit';
import { BottomAxis, LeftAxis } from './axes';
import { ChartFigure } from './chart-figure';
import { theme } from '../../lib/palette';
import { formatFixed } from '../../lib/stats-format';
import { PlotLabel } from './plot-label';

const W = 640;
const H = 420;
const M = { left: 60, right: 214, top: 30, bottom: 46 };
const LEGEND_X = W - M.right + 22;

/** How each confidence level is drawn: solid for the inner region, dashed for the outer one, so they part without colour. */
export function contourLevelStyle(cl: number): { dash: string | undefined; width: number; colour: string } {
  return cl < 0.9 ? { dash: undefined, width: 2, colour: theme.teal } : { dash: '6 4', width: 1.6, colour: theme.plum };
}

/** "68.27 %" or "95 %": a confidence level in words, with the decimals it needs. */
export function clWords(cl: number): string {
  const p = cl * 100;
  return `${Number.isInteger(Math.round(p * 100) / 100) ? Math.round(p) : (Math.round(p * 100) / 100).toFixed(2)} %`;
}

type Axis = { name: string; label: string; symbol: string };

/**
 * Which pairs of values of two parameters of interest the data allow together: the lines where
 * the profile-likelihood ratio q(a, b) = 2ΔNLL, with every other parameter refitted, reaches 2.30
 * (68.27 %) and 5.99 (95 %) for two parameters at once. The best fit is a dot with its ±σ from the
 * covariance as two bars; the plot spans the grid the fit scanned. A contour that could not be
 * made shows its reason instead, and grid points whose fit did not converge are counted below.
 */
export function ContourChart({ contour, axes }: { contour: ProfileContour; axes: [Axis, Axis] }) {
  const ref = useRef<SVGSVGElement>(null);
  const [ax, bx] = axes;
  const title = `Contour of ${ax.label} and ${bx.label}`;
  if (contour.failure)
    return (
      <div className="flex flex-col gap-1">
        <p className="text-sm font-semibold text-ink">{title}</p>
        <p role="note" className="rounded-md border border-amber/40 bg-amber-soft/60 px-3 py-2 text-sm text-amber-ink">
          No contour: {contour.failure}
        </p>
      </div>
    );
  const extent = (values: number[], best: number) => {
    const lo = Math.min(best, ...values);
    const hi = Math.max(best, ...values);
    return lo < hi ? [lo, hi] : [lo - 1, hi + 1];
  };
  const x = scaleLinear()
    .domain(extent(contour.a, contour.bestFit[0]))
    .range([M.left, W - M.right]);
  const y = scaleLinear()
    .domain(extent(contour.b, contour.bestFit[1]))
    .range([H - M.bottom, M.top]);
  // a smooth curve through every point the contour found: closed where the line comes back to its start
  const path = (ln: [number, number][]) => {
    const [first, last] = [ln[0], ln[ln.length - 1]];
    const closed = ln.length > 3 && Math.hypot(x(first[0]) - x(last[0]), y(first[1]) - y(last[1])) < 0.5;
    return line<[number, number]>()
      .x((p) => x(p[0]))
      .y((p) => y(p[1]))
      .curve(closed ? curveCatmullRomClosed.alpha(0.5) : curveCatmullRom.alpha(0.5))(closed ? ln.slice(0, -1) : ln);
  };
  const [sa, sb] = contour.errors;
  const [ba, bb] = contour.bestFit;
  const levels = [...contour.levels].sort((p, q) => q.cl - p.cl);
  const drawn = levels.filter((l) => l.lines.some((ln) => ln.length > 1));
  const axisTitle = (a: Axis) => (a.label === a.symbol ? a.symbol : `${a.label} (${a.symbol})`);
  const [x0, x1] = x.domain();
  const [y0, y1] = y.domain();
  const inside = (va: number, vb: number) => va >= x0 && va <= x1 && vb >= y0 && vb <= y1;
  const described = levels.map((l) => `${clWords(l.cl)} (q = ${formatFixed(l.q, 2)}): ${l.lines.length} line${l.lines.length === 1 ? '' : 's'}`).join('; ');
  let ly = M.top + 8;
  const next = (step = 18) => (ly += step) - step;
  return (
    <ChartFigure title={title} svg={ref}>
      <svg
        ref={ref}
        viewBox={`0 0 ${W} ${H}`}
        className="h-auto w-full max-w-[46rem]"
        role="img"
        aria-label={`${title}: best fit ${ax.symbol} = ${formatFixed(ba, 3)}, ${bx.symbol} = ${formatFixed(bb, 3)}; ${described}.`}
      >
        <PlotLabel x={M.left} y={13} />
        <rect x={M.left} y={M.top} width={W - M.left - M.right} height={H - M.top - M.bottom} fill={theme.paperRaised} stroke={theme.rule} strokeWidth={0.75} />
        {x.ticks(6).map((t) => (
          <line key={`gx${t}`} x1={x(t)} x2={x(t)} y1={M.top} y2={H - M.bottom} stroke={theme.rule} strokeWidth={0.6} />
        ))}
        {y.ticks(6).map((t) => (
          <line key={`gy${t}`} x1={M.left} x2={W - M.right} y1={y(t)} y2={y(t)} stroke={theme.rule} strokeWidth={0.6} />
        ))}
        {inside(1, 1) && (
          <g aria-hidden>
            <path d={`M${x(1) - 5},${y(1)}h10M${x(1)},${y(1) - 5}v10`} stroke={theme.inkMuted} strokeWidth={1.2} />
          </g>
        )}
        {levels.map((l) => {
          const s = contourLevelStyle(l.cl);
          return (
            <g key={l.cl} data-level={l.cl}>
              {l.lines
                .filter((ln) => ln.length > 1)
                .map((ln, i) => (
                  <path key={i} d={path(ln) ?? ''} fill="none" stroke={s.colour} strokeWidth={s.width} strokeDasharray={s.dash} strokeLinejoin="round" data-contour-line={l.cl}>
                    <title>{`${clWords(l.cl)} region: q(${ax.symbol}, ${bx.symbol}) = ${formatFixed(l.q, 2)}`}</title>
                  </path>
                ))}
            </g>
          );
        })}
        <g>
          {sa !== null && <line x1={x(ba - sa)} x2={x(ba + sa)} y1={y(bb)} y2={y(bb)} stroke={theme.ink} strokeWidth={1} />}
          {sb !== null && <line x1={x(ba)} x2={x(ba)} y1={y(bb - sb)} y2={y(bb + sb)} stroke={theme.ink} strokeWidth={1} />}
          <circle cx={x(ba)} cy={y(bb)} r={3.6} fill={theme.ink} data-best-fit>
            <title>{`Best fit: ${ax.symbol} = ${formatFixed(ba, 3)}${sa !== null ? ` ± ${formatFixed(sa, 3)}` : ''}, ${bx.symbol} = ${formatFixed(bb, 3)}${sb !== null ? ` ± ${formatFixed(sb, 3)}` : ''}`}</title>
          </circle>
        </g>
        <LeftAxis scale={y} x={M.left} ticks={6} title={axisTitle(bx)} />
        <BottomAxis scale={x} y={H - M.bottom} ticks={6} title={axisTitle(ax)} />

        <g style={{ fontSize: 10.5, fill: theme.ink }}>
          <text x={LEGEND_X} y={next(16)} style={{ fontSize: 11, fontWeight: 600, fill: theme.ink }}>
            Allowed together
          </text>
          {levels
            .slice()
            .reverse()
            .map((l) => {
              const s = contourLevelStyle(l.cl);
              const yy = next(30);
              return (
                <g key={l.cl}>
                  <line x1={LEGEND_X} x2={LEGEND_X + 26} y1={yy} y2={yy} stroke={s.colour} strokeWidth={s.width} strokeDasharray={s.dash} />
                  <text x={LEGEND_X + 32} y={yy} dy="0.32em">
                    {clWords(l.cl)} CL
                  </text>
                  <text x={LEGEND_X + 32} y={yy + 13} dy="0.32em" style={{ fontSize: 9.5, fill: theme.inkMuted }}>
                    {`q = ${formatFixed(l.q, 2)}${drawn.includes(l) ? '' : ', not reached'}`}
                  </text>
                </g>
              );
            })}
          {(() => {
            const yy = next(17);
            return (
              <g>
                <line x1={LEGEND_X + 5} x2={LEGEND_X + 21} y1={yy} y2={yy} stroke={theme.ink} strokeWidth={1} />
                <line x1={LEGEND_X + 13} x2={LEGEND_X + 13} y1={yy - 8} y2={yy + 8} stroke={theme.ink} strokeWidth={1} />
                <circle cx={LEGEND_X + 13} cy={yy} r={3.6} fill={theme.ink} />
                <text x={LEGEND_X + 32} y={yy} dy="0.32em">
                  best fit, ±σ
                </text>
              </g>
            );
          })()}
          {[
            [ax, ba, sa],
            [bx, bb, sb],
          ].map(([a, best, sigma], i) => {
            const yy = next(i === 1 ? 26 : 14);
            const axis = a as Axis;
            return (
              <text key={axis.name} x={LEGEND_X + 32} y={yy} dy="0.32em" style={{ fontSize: 9.5, fill: theme.inkMuted }}>
                {`${axis.symbol} = ${formatFixed(best as number, 3)}${sigma === null ? ' (held)' : ` ± ${formatFixed(sigma as number, 3)}`}`}
              </text>
            );
          })}
          {inside(1, 1) &&
            (() => {
              const yy = next(24);
              return (
                <g>
                  <path d={`M${LEGEND_X + 8},${yy}h10M${LEGEND_X + 13},${yy - 5}v10`} stroke={theme.inkMuted} strokeWidth={1.2} />
                  <text x={LEGEND_X + 32} y={yy} dy="0.32em">
                    both at 1 (nominal)
                  </text>
                </g>
              );
            })()}
          <text x={LEGEND_X} y={H - M.bottom + 4} style={{ fontSize: 9.5, fill: theme.inkMuted }}>
            {`q = 2ΔNLL, the other parameters refitted;`}
          </text>
          <text x={LEGEND_X} y={H - M.bottom + 17} style={{ fontSize: 9.5, fill: theme.inkMuted }}>
            {`grid of ${contour.a.length} × ${contour.b.length} points`}
          </text>
        </g>
      </svg>
      {contour.points.failed > 0 && (
        <p role="note" className="text-xs text-amber-ink">
          {contour.points.failed} grid point{contour.points.failed === 1 ? '' : 's'} did not converge and {contour.points.failed === 1 ? 'is' : 'are'} left out.
        </p>
      )}
    </ChartFigure>
  );
}
