import type { ScaleLinear, ScaleLogarithmic } from 'd3-scale';
import { theme } from '../../lib/palette';

type Scale = ScaleLinear<number, number> | ScaleLogarithmic<number, number>;

const tickText = { fontSize: 10, fill: theme.inkMuted } as const;

/** A horizontal axis along y = `y`: tick marks, tick labels and an optional title below. */
export function BottomAxis({ scale, y, ticks = 6, title, format }: { scale: Scale; y: number; ticks?: number; title?: string; format?: (v: number) => string }) {
  const [x0, x1] = scale.range();
  const fmt = format ?? scale.tickFormat(ticks);
  return (
    <g aria-hidden>
      <line x1={x0} x2={x1} y1={y} y2={y} stroke={theme.ink} strokeWidth={1} />
      {scale.ticks(ticks).map((t) => (
        <g key={t} transform={`translate(${scale(t)},${y})`}>
          <line y2={4} stroke={theme.ink} />
          <text y={14} textAnchor="middle" style={tickText}>
            {fmt(t)}
          </text>
        </g>
      ))}
      {title && (
        <text x={x1} y={y + 28} textAnchor="end" style={{ fontSize: 11, fill: theme.ink }}>
          {title}
        </text>
      )}
    </g>
  );
}

/** A vertical axis along x = `x`, labels to its left, title written upwards. */
export function LeftAxis({ scale, x, ticks = 5, values, title, format }: { scale: Scale; x: number; ticks?: number; values?: number[]; title?: string; format?: (v: number) => string }) {
  const [y0, y1] = scale.range();
  const fmt = format ?? scale.tickFormat(ticks);
  return (
    <g aria-hidden>
      <line x1={x} x2={x} y1={y0} y2={y1} stroke={theme.ink} strokeWidth={1} />
      {(values ?? scale.ticks(ticks)).map((t) => (
        <g key={t} transform={`translate(${x},${scale(t)})`}>
          <line x2={-4} stroke={theme.ink} />
          <text x={-6} dy="0.32em" textAnchor="end" style={tickText}>
            {fmt(t)}
          </text>
        </g>
      ))}
      {title && (
        <text transform={`translate(${x - 44},${Math.min(y0, y1)}) rotate(-90)`} textAnchor="end" style={{ fontSize: 11, fill: theme.ink }}>
          {title}
        </text>
      )}
    </g>
  );
}

/** Faint horizontal grid lines at the ticks of a vertical scale. */
export function GridLines({ scale, x0, x1, ticks = 5 }: { scale: Scale; x0: number; x1: number; ticks?: number }) {
  return (
    <g aria-hidden>
      {scale.ticks(ticks).map((t) => (
        <line key={t} x1={x0} x2={x1} y1={scale(t)} y2={scale(t)} stroke={theme.rule} strokeWidth={0.75} />
      ))}
    </g>
  );
}
