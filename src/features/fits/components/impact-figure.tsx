import { useRef } from 'react';
import { scaleLinear } from 'd3-scale';
import { BottomAxis } from '../../../components/charts/axes';
import { ChartFigure } from '../../../components/charts/chart-figure';
import { ImpactRangeMarks, impactRangeText } from '../../../components/charts/parameter-glyphs';
import { isStronglyPulled } from '../../../lib/fits';
import { theme } from '../../../lib/palette';
import { formatFixed, formatSigned } from '../../../lib/stats-format';
import type { Cut, CutLevel, ImpactMode } from '../result-helpers';
import { MU_WORDS, type PoiWords } from '../poi';
import type { ImpactRow } from './impact-ranking';
import { PlotLabel } from '../../../components/charts/plot-label';

const W = 820;
const ROW = 20;
const TOP = 46;
const NAME_RIGHT = 178;
const RANGE = { x: 190, w: 250 };
const SHARE = { x: 468, w: 96 };
const CUM_RIGHT = 664;
const PULL_RIGHT = 730;
const CONSTRAINT_RIGHT = 806;

const small = { fontSize: 10, fill: theme.inkMuted } as const;
const head = { fontSize: 10, fill: theme.ink, fontWeight: 600 } as const;
const pct = (v: number | null, d = 1) => (v === null || !Number.isFinite(v) ? '–' : `${(v * 100).toFixed(d)} %`);

/**
 * The impact ranking as a figure for slides and notes (its SVG and PNG downloads): the rows the
 * cut keeps, each with its signed range of Δμ and the pre-fit ticks, its share of σ_μ² as a bar
 * with the running share beside it, and its pull and constraint as numbers; what the cut keeps
 * and how to read the marks are written into the figure, so the file stands on its own.
 */
export function ImpactFigure({
  title,
  rows,
  mode,
  scale,
  sigmaMu,
  cut,
  level,
  listed,
  below,
  belowShare,
  threshold,
  words: w = MU_WORDS,
}: {
  title: string;
  rows: ImpactRow[];
  mode: Exclude<ImpactMode, 'none'>;
  scale: number;
  sigmaMu: number | null;
  cut: Cut;
  level: CutLevel;
  listed: number;
  below: number;
  belowShare: number;
  threshold: number;
  /** the parameter of interest the impacts are on (μ unless told) */
  words?: PoiWords;
}) {
  const ref = useRef<SVGSVGElement>(null);
  const plotH = rows.length * ROW;
  const footer = below > 0 ? 18 : 0;
  const H = TOP + plotH + footer + 70;
  const axis = scaleLinear().domain([-scale, scale]).range([RANGE.x + 4, RANGE.x + RANGE.w - 4]);
  const maxShare = Math.max(1e-12, ...rows.map((r) => r.share ?? 0));
  const shareX = (v: number) => SHARE.x + (v / maxShare) * SHARE.w;
  const kept =
    sigmaMu === null
      ? `${rows.length} parameters`
      : level === 1
        ? `all ${listed} parameters: ${pct(cut.total)} of ${w.sigma}² together`
        : `${cut.kept} of ${listed} parameters: ${pct(cut.keptShare)} of ${w.sigma}², ${pct(cut.keptShare / cut.total, 0)} of the ${pct(cut.total)} they hold together (cut at ${Math.round(level * 100)} %)`;
  const plotBottom = TOP + plotH + footer;
  return (
    <ChartFigure title={title} svg={ref}>
      <svg
        ref={ref}
        viewBox={`0 0 ${W} ${H}`}
        className="h-auto w-full max-w-[52rem]"
        role="img"
        aria-label={`${title}: ${kept}. ${rows.map((r) => `${r.name} ${pct(r.share)}`).join('; ')}. The numbers are in the table above.`}
      >
        <PlotLabel x={W - 4} y={13} anchor="end" />
        <text x={4} y={13} style={{ fontSize: 11, fill: theme.ink }}>
          {sigmaMu !== null && <tspan fontWeight={600}>{w.sigma} = ±{formatFixed(sigmaMu, 4)}</tspan>}
          <tspan dx={sigmaMu !== null ? 8 : 0}>Kept: {kept}</tspan>
        </text>
        {mode === 'quick' && (
          <text x={4} y={26} style={{ fontSize: 10, fill: theme.amber }}>
            Quick impacts: estimates ρ({w.sym}, θ)·{w.sigma} from the covariance, no refits
          </text>
        )}
        <g>
          <text x={NAME_RIGHT} y={TOP - 6} textAnchor="end" style={head}>
            parameter
          </text>
          <text x={RANGE.x + RANGE.w / 2} y={TOP - 6} textAnchor="middle" style={head}>
            {mode === 'postfit' ? `${w.delta} as θ moves by ±σ̂` : `${w.delta}, quick estimate`}
          </text>
          <text x={SHARE.x} y={TOP - 6} style={head}>
            share of {w.sigma}²
          </text>
          <text x={CUM_RIGHT} y={TOP - 6} textAnchor="end" style={head}>
            cumulative
          </text>
          <text x={PULL_RIGHT} y={TOP - 6} textAnchor="end" style={head}>
            pull
          </text>
          <text x={CONSTRAINT_RIGHT} y={TOP - 6} textAnchor="end" style={head}>
            constraint
          </text>
        </g>
        {rows.map((r, i) => {
          const cy = TOP + i * ROW + ROW / 2;
          const p =
            mode === 'postfit'
              ? { up: r.postfitImpact?.up ?? null, down: r.postfitImpact?.down ?? null, preUp: r.prefitImpact?.up ?? null, preDown: r.prefitImpact?.down ?? null, scale, symbol: w.sym }
              : { up: r.quickImpact, down: r.quickImpact === null ? null : -r.quickImpact, scale, estimated: true, symbol: w.sym };
          return (
            <g key={r.name}>
              {i % 2 === 1 && <rect x={0} y={cy - ROW / 2} width={W} height={ROW} fill={theme.paper} fillOpacity={0.6} />}
              <text x={4} y={cy} dy="0.32em" style={small}>
                {r.position}
              </text>
              <text x={NAME_RIGHT} y={cy} dy="0.32em" textAnchor="end" style={{ fontSize: 10.5, fill: theme.ink }}>
                {r.name.length > 26 ? `${r.name.slice(0, 25)}…` : r.name}
              </text>
              <ImpactRangeMarks p={p} x0={RANGE.x} width={RANGE.w} cy={cy} />
              <title>{`${r.name}\n${impactRangeText(p)}`}</title>
              {r.share !== null && <rect x={SHARE.x} y={cy - 5} width={Math.max(0.8, shareX(r.share) - SHARE.x)} height={10} fill={theme.inkMuted} fillOpacity={0.55} rx={1} />}
              <text x={SHARE.x + SHARE.w + 4} y={cy} dy="0.32em" style={{ fontSize: 10, fill: theme.ink, fontWeight: 600 }}>
                {pct(r.share)}
              </text>
              <text x={CUM_RIGHT} y={cy} dy="0.32em" textAnchor="end" style={{ fontSize: 10, fill: theme.inkMuted }}>
                {pct(r.cumulative)}
              </text>
              <text x={PULL_RIGHT} y={cy} dy="0.32em" textAnchor="end" style={{ fontSize: 10, fill: isStronglyPulled(r) ? theme.plum : theme.ink, fontWeight: isStronglyPulled(r) ? 600 : 400 }}>
                {formatSigned(r.pull, 2)}
              </text>
              <text x={CONSTRAINT_RIGHT} y={cy} dy="0.32em" textAnchor="end" style={{ fontSize: 10, fill: r.overConstrained ? theme.amber : theme.ink, fontWeight: r.overConstrained ? 600 : 400 }}>
                {formatFixed(r.constraint, 2)}
              </text>
            </g>
          );
        })}
        {below > 0 && (
          <g>
            <line x1={0} x2={W} y1={TOP + plotH + 2} y2={TOP + plotH + 2} stroke={theme.teal} strokeWidth={1} strokeDasharray="4 3" />
            <text x={NAME_RIGHT} y={TOP + plotH + 13} textAnchor="end" style={{ fontSize: 9.5, fill: theme.teal }}>
              cut
            </text>
            <text x={RANGE.x} y={TOP + plotH + 13} style={small}>
              {`${below} more parameter${below === 1 ? '' : 's'} below the cut${belowShare > 0 ? `: ${pct(belowShare)} of ${w.sigma}² together` : ''}`}
            </text>
          </g>
        )}
        <BottomAxis scale={axis} y={plotBottom + 4} ticks={5} format={(v) => (v === 0 ? '0' : formatSigned(v, scale < 0.1 ? 3 : 2))} />
        <g style={{ fontSize: 9.5, fill: theme.inkMuted }}>
          {mode === 'postfit' ? (
            <g transform={`translate(${RANGE.x},${plotBottom + 34})`}>
              <circle cx={3} cy={-3} r={2.6} fill={theme.ink} />
              <text x={9}>θ held at θ̂ + σ̂</text>
              <circle cx={93} cy={-3} r={2.6} fill={theme.paperRaised} stroke={theme.ink} strokeWidth={1.2} />
              <text x={99}>θ̂ − σ̂</text>
              <line x1={143} x2={143} y1={-9} y2={3} stroke={theme.ink} strokeWidth={1.3} />
              <text x={149}>pre-fit, θ̂ ± 1; the rest refitted</text>
            </g>
          ) : (
            <g transform={`translate(${RANGE.x},${plotBottom + 34})`}>
              <circle cx={3} cy={-3} r={2.6} fill={theme.ink} />
              <text x={9}>θ raised; the bar runs from −|ρ({w.sym}, θ)·{w.sigma}| to +|ρ({w.sym}, θ)·{w.sigma}|</text>
            </g>
          )}
          <text x={RANGE.x} y={plotBottom + 48}>
            {`share = s²/${w.sigma}², s = ${mode === 'postfit' ? `(|${w.delta}⁺| + |${w.delta}⁻|)/2` : `|ρ(${w.sym}, θ)·${w.sigma}|`}; shares overlap where parameters are correlated`}
          </text>
          <text x={RANGE.x} y={plotBottom + 62}>
            {`pull (θ̂ − 0)/1; constraint σ̂/1 (below ${threshold}: over-constrained)`}
          </text>
        </g>
      </svg>
    </ChartFigure>
  );
}
