import { scaleLinear } from 'd3-scale';
import { curveStepAfter, line } from 'd3-shape';
import type { ShiftPrecisionView } from '@shared/schemas/register';
import { BottomAxis, LeftAxis } from '../../../components/charts/axes';
import { formatCount, formatEdge } from '../../../lib/format';
import { theme } from '../../../lib/palette';
import { PlotLabel } from '../../../components/charts/plot-label';

const W = 320;
const H = 128;
const M = { left: 44, right: 16, top: 24, bottom: 20 };

export type VariationShape = {
  kind: 'scale' | 'shape';
  up: number | number[];
  down: number | number[];
  nominal: number[];
  edges: number[];
  /** shape effects: the error of each shift per bin, drawn as error bars */
  precision?: { up: ShiftPrecisionView; down: ShiftPrecisionView } | null;
};

/** The error of a side's ratio to the nominal per bin: σ(shift)/nominal; null where there is none. */
export function ratioErrors(v: VariationShape, side: 'up' | 'down'): (number | null)[] {
  const errors = v.precision?.[side].errors;
  const bins = Math.max(0, v.edges.length - 1);
  return Array.from({ length: bins }, (_, b) => {
    const e = errors?.[b];
    const n = v.nominal[b];
    return e === null || e === undefined || !(n > 0) ? null : e / n;
  });
}

/** Up and down as ratios to the nominal per bin; a scale effect is the same ratio in every bin. Null where the nominal is 0. */
export function variationRatios(v: VariationShape): { up: (number | null)[]; down: (number | null)[] } {
  const bins = Math.max(0, v.edges.length - 1);
  const ratio = (side: number | number[], b: number) => {
    if (typeof side === 'number') return side;
    const n = v.nominal[b];
    return n > 0 && side[b] !== undefined ? side[b] / n : null;
  };
  return { up: Array.from({ length: bins }, (_, b) => ratio(v.up, b)), down: Array.from({ length: bins }, (_, b) => ratio(v.down, b)) };
}

const pct = (r: number) => `${r >= 1 ? '+' : '−'}${Math.abs((r - 1) * 100).toFixed(Math.abs(r - 1) >= 0.1 ? 1 : 2)} %`;

function binTitle(v: VariationShape, b: number, up: number | null, down: number | null, unit: string): string {
  const lines = [`Bin ${b + 1}: ${formatEdge(v.edges[b])}–${formatEdge(v.edges[b + 1])}${unit ? ` ${unit}` : ''}`, `Nominal: ${formatCount(round2(v.nominal[b] ?? 0))} events`];
  const side = (name: string, s: number | number[], r: number | null) => {
    if (typeof s === 'number') return `${name}: ×${s} (${pct(s)})`;
    return `${name}: ${formatCount(round2(s[b] ?? 0))} events${r !== null ? ` (${pct(r)})` : ' (nominal is 0)'}`;
  };
  lines.push(side('Up', v.up, up), side('Down', v.down, down));
  const err = (name: string, s: 'up' | 'down') => {
    const e = v.precision?.[s].errors[b];
    return e === null || e === undefined ? null : `${name} shift error: ±${formatCount(round2(e))} events${v.nominal[b] > 0 ? ` (±${((e / v.nominal[b]) * 100).toFixed(1)} % of nominal)` : ''}`;
  };
  for (const l of [err('Up', 'up'), err('Down', 'down')]) if (l) lines.push(l);
  return lines.join('\n');
}
const round2 = (x: number) => Math.round(x * 100) / 100;

/**
 * A small preview of one variation: up and down over the nominal per bin, with a line at 1, and
 * for a shape effect each shift's error as a bar (up left of the bin's centre, down right of it).
 * Bins named by a warning are shaded amber.
 */
export function VariationChart({ v, unit = '', warnBins = [], label }: { v: VariationShape; unit?: string; warnBins?: number[]; label: string }) {
  const bins = v.edges.length - 1;
  if (bins < 1) return null;
  const { up, down } = variationRatios(v);
  const all = [...up, ...down].filter((r): r is number => r !== null);
  const errors = { up: ratioErrors(v, 'up'), down: ratioErrors(v, 'down') };
  const shifts = Math.max(0.02, ...all.map((r) => Math.abs(r - 1)));
  // The error bars widen the scale, but never beyond four times the largest shift (longer bars end in the frame).
  const reach = (rs: (number | null)[], es: (number | null)[]) => rs.map((r, b) => (r === null || es[b] === null ? 0 : Math.abs(r - 1) + es[b]!));
  const m = Math.min(Math.max(shifts, ...reach(up, errors.up), ...reach(down, errors.down)), 4 * shifts) * 1.25;
  const x = scaleLinear().domain([v.edges[0], v.edges[bins]]).range([M.left, W - M.right]);
  const y = scaleLinear().domain([1 - m, 1 + m]).range([H - M.bottom, M.top]).nice(4);
  const step = (rs: (number | null)[]) =>
    line<{ x: number; r: number | null }>()
      .defined((p) => p.r !== null)
      .x((p) => x(p.x))
      .y((p) => y(p.r ?? 1))
      .curve(curveStepAfter)(Array.from({ length: bins + 1 }, (_, i) => ({ x: v.edges[i], r: rs[Math.min(i, bins - 1)] }))) ?? '';
  const warned = new Set(warnBins);
  const largest = all.length ? Math.max(...all.map((r) => Math.abs(r - 1))) : 0;
  return (
    <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full max-w-[22rem]" role="img" aria-label={`${label}: up and down over nominal per bin${v.precision && v.precision.up.source !== 'none' ? ', each shift with its error' : ''}; largest change ${(largest * 100).toFixed(1)} %`}>
      <PlotLabel x={M.left} y={13} />
      {[...warned].map((b) =>
        b < bins ? <rect key={b} x={x(v.edges[b])} y={M.top} width={x(v.edges[b + 1]) - x(v.edges[b])} height={H - M.top - M.bottom} fill={theme.amber} opacity={0.18} /> : null,
      )}
      <line x1={M.left} x2={W - M.right} y1={y(1)} y2={y(1)} stroke={theme.inkMuted} strokeWidth={1} />
      {(['up', 'down'] as const).map((side) =>
        (side === 'up' ? up : down).map((r, b) => {
          const e = errors[side][b];
          if (r === null || e === null || b >= bins) return null;
          const w = x(v.edges[b + 1]) - x(v.edges[b]);
          const cx = x(v.edges[b]) + w * (side === 'up' ? 0.38 : 0.62);
          const [y0, y1] = [y.range()[1], y.range()[0]];
          const lo = Math.min(y1, Math.max(y0, y(r - e)));
          const hi = Math.min(y1, Math.max(y0, y(r + e)));
          return (
            <g key={`${side}${b}`} stroke={side === 'up' ? theme.teal : theme.plum} strokeWidth={1} opacity={0.75}>
              <line x1={cx} x2={cx} y1={lo} y2={hi} />
              <line x1={cx - 2} x2={cx + 2} y1={lo} y2={lo} />
              <line x1={cx - 2} x2={cx + 2} y1={hi} y2={hi} />
            </g>
          );
        }),
      )}
      <path d={step(up)} fill="none" stroke={theme.teal} strokeWidth={1.8} />
      <path d={step(down)} fill="none" stroke={theme.plum} strokeWidth={1.8} strokeDasharray="5 3" />
      <LeftAxis scale={y} x={M.left} ticks={4} format={(r) => r.toFixed(m < 0.05 ? 3 : 2)} />
      <BottomAxis scale={x} y={H - M.bottom} ticks={4} format={formatEdge} />
      {Array.from({ length: bins }, (_, b) => (
        <rect key={b} x={x(v.edges[b])} y={M.top} width={Math.max(0, x(v.edges[b + 1]) - x(v.edges[b]))} height={H - M.top - M.bottom} fill="transparent">
          <title>{binTitle(v, b, up[b], down[b], unit)}</title>
        </rect>
      ))}
    </svg>
  );
}

export function VariationLegend({ errors = false }: { errors?: boolean }) {
  return (
    <p className="flex flex-wrap gap-x-3 text-2xs text-ink-muted" aria-hidden>
      <span className="inline-flex items-center gap-1">
        <svg viewBox="0 0 16 6" className="h-1.5 w-4"><line x1={0} x2={16} y1={3} y2={3} stroke={theme.teal} strokeWidth={2} /></svg> up / nominal
      </span>
      <span className="inline-flex items-center gap-1">
        <svg viewBox="0 0 16 6" className="h-1.5 w-4"><line x1={0} x2={16} y1={3} y2={3} stroke={theme.plum} strokeWidth={2} strokeDasharray="5 3" /></svg> down / nominal
      </span>
      {errors && (
        <span className="inline-flex items-center gap-1">
          <svg viewBox="0 0 6 10" className="h-2.5 w-1.5"><g stroke={theme.inkMuted} strokeWidth={1}><line x1={3} x2={3} y1={1} y2={9} /><line x1={1} x2={5} y1={1} y2={1} /><line x1={1} x2={5} y1={9} y2={9} /></g></svg> ±1 σ of each shift (shape effects)
        </span>
      )}
    </p>
  );
}
