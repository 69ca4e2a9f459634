import { scaleLinear } from 'd3-scale';
import { curveStepAfter, line } from 'd3-shape';
import { BottomAxis, LeftAxis } from '../../../components/charts/axes';
import { formatCount, formatEdge } from '../../../lib/format';
import { theme } from '../../../lib/palette';

const W = 320;
const H = 128;
const M = { left: 44, right: 16, top: 8, bottom: 20 };

export type VariationShape = {
  kind: 'scale' | 'shape';
  up: number | number[];
  down: number | number[];
  nominal: number[];
  edges: number[];
};

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
  return lines.join('\n');
}
const round2 = (x: number) => Math.round(x * 100) / 100;

/**
 * A small preview of one variation: up and down over the nominal per bin, with a line at 1.
 * Bins named by a warning are shaded amber.
 */
export function VariationChart({ v, unit = '', warnBins = [], label }: { v: VariationShape; unit?: string; warnBins?: number[]; label: string }) {
  const bins = v.edges.length - 1;
  if (bins < 1) return null;
  const { up, down } = variationRatios(v);
  const all = [...up, ...down].filter((r): r is number => r !== null);
  const m = Math.max(0.02, ...all.map((r) => Math.abs(r - 1))) * 1.25;
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
    <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full max-w-[22rem]" role="img" aria-label={`${label}: up and down over nominal per bin; largest change ${(largest * 100).toFixed(1)} %`}>
      {[...warned].map((b) =>
        b < bins ? <rect key={b} x={x(v.edges[b])} y={M.top} width={x(v.edges[b + 1]) - x(v.edges[b])} height={H - M.top - M.bottom} fill={theme.amber} opacity={0.18} /> : null,
      )}
      <line x1={M.left} x2={W - M.right} y1={y(1)} y2={y(1)} stroke={theme.inkMuted} strokeWidth={1} />
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

export function VariationLegend() {
  return (
    <p className="flex flex-wrap gap-x-3 text-2xs text-ink-muted" aria-hidden>
      <span className="inline-flex items-center gap-1">
        <svg viewBox="0 0 16 6" className="h-1.5 w-4"><line x1={0} x2={16} y1={3} y2={3} stroke={theme.teal} strokeWidth={2} /></svg> up / nominal
      </span>
      <span className="inline-flex items-center gap-1">
        <svg viewBox="0 0 16 6" className="h-1.5 w-4"><line x1={0} x2={16} y1={3} y2={3} stroke={theme.plum} strokeWidth={2} strokeDasharray="5 3" /></svg> down / nominal
      </span>
    </p>
  );
}
