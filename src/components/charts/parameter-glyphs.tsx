import type { NuisanceReport } from '@shared/schemas/fit';
import { theme } from '../../lib/palette';
import { formatFixed, formatSigned } from '../../lib/stats-format';
import { isStronglyPulled, STRONG_PULL } from '../../lib/fits';

/**
 * Small inline glyphs for one nuisance parameter, drawn in a table cell. Each carries its
 * numbers in a <title>, so hovering shows them and the table stays dense.
 */

/** Colour of a parameter's mark: amber when over-constrained, plum when strongly pulled, ink otherwise. */
export function markColour(n: NuisanceReport): string {
  if (n.overConstrained) return theme.amber;
  if (isStronglyPulled(n)) return theme.plum;
  return theme.ink;
}

const METER_W = 56;
const METER_H = 10;

/** The frame of a meter: a track from 0 to its end. */
function Track() {
  return <rect x={0.5} y={2} width={METER_W - 1} height={METER_H - 4} fill={theme.paper} stroke={theme.rule} strokeWidth={0.8} rx={1.5} />;
}

/** Where the pull meter ends, in prior widths. */
const PULL_END = 3;

/**
 * How far the data moved a parameter: |pull| as a meter filled from the left up to 3 prior
 * widths, with a mark at the strong-pull level (1). The sign is the number's beside it.
 */
export function PullMeter({ n }: { n: NuisanceReport }) {
  const x = (v: number) => 0.5 + (Math.min(PULL_END, Math.max(0, v)) / PULL_END) * (METER_W - 1);
  const a = Math.abs(n.pull);
  const strong = isStronglyPulled(n);
  return (
    <svg width={METER_W} height={METER_H} viewBox={`0 0 ${METER_W} ${METER_H}`} className="block shrink-0" role="img" aria-label={`pull ${formatSigned(n.pull, 2)}`}>
      <title>{`Pull (θ̂ − 0)/1 = ${formatSigned(n.pull, 3)}: the data moved θ by ${formatFixed(a, 2)} of its prior width. The meter runs to ${PULL_END}; the mark is at ${STRONG_PULL}${strong ? ' (passed: strongly pulled)' : ''}.`}</title>
      <Track />
      {a > 0 && <rect x={0.5} y={2} width={Math.max(0.8, x(a) - 0.5)} height={METER_H - 4} fill={strong ? theme.plum : theme.inkMuted} fillOpacity={strong ? 1 : 0.7} rx={1.5} />}
      <line x1={x(STRONG_PULL)} x2={x(STRONG_PULL)} y1={0} y2={METER_H} stroke={theme.ink} strokeWidth={1} />
      {a > PULL_END && <path d={`M${METER_W - 1},${METER_H / 2} l-4,-3 v6 z`} fill={theme.paperRaised} />}
    </svg>
  );
}

/** The constraint σ̂/1 as a filled meter from 0 to 1.2 prior widths, with the prior (1) and the over-constraint threshold marked. */
export function ConstraintMeter({ n, threshold }: { n: NuisanceReport; threshold: number }) {
  const x = (v: number) => 0.5 + (Math.min(1.2, Math.max(0, v)) / 1.2) * (METER_W - 1);
  const c = n.constraint;
  return (
    <svg width={METER_W} height={METER_H} viewBox={`0 0 ${METER_W} ${METER_H}`} className="block shrink-0" role="img" aria-label={c === null ? 'held' : `constraint ${formatFixed(c, 2)}`}>
      <title>
        {c === null
          ? 'Held at its start value: no post-fit width'
          : `Constraint σ̂/1 = ${formatFixed(c, 3)}: the data narrowed the prior to ${Math.round(c * 100)} % of its width${n.overConstrained ? ` (below the ${threshold} threshold: over-constrained)` : ''}. Marks: the ${threshold} threshold (dashed) and the prior width 1.`}
      </title>
      <Track />
      {c !== null && <rect x={0.5} y={2} width={Math.max(0.8, x(c) - 0.5)} height={METER_H - 4} fill={n.overConstrained ? theme.amber : theme.teal} rx={1.5} />}
      <line x1={x(threshold)} x2={x(threshold)} y1={0} y2={METER_H} stroke={theme.amber} strokeWidth={1} strokeDasharray="1.5 1" />
      <line x1={x(1)} x2={x(1)} y1={0} y2={METER_H} stroke={theme.ink} strokeWidth={1} />
    </svg>
  );
}

export type ImpactRangeProps = {
  /** Δμ with θ raised (to θ̂ + σ̂, or by the quick estimate) */
  up: number | null;
  /** Δμ with θ lowered */
  down: number | null;
  /** the pre-fit Δμ (θ at θ̂ ± 1), drawn as two ticks */
  preUp?: number | null;
  preDown?: number | null;
  /** the |Δμ| at either end of the glyph */
  scale: number;
  /** a quick estimate from the covariance rather than refits: drawn hollow */
  estimated?: boolean;
  width?: number;
  /** the parameter of interest the impact is on, as a symbol (μ unless told) */
  symbol?: string;
};

/** The glyph's geometry, shared by the table cell and the exported figure. */
export function impactRangeGeometry(p: ImpactRangeProps, x0: number, width: number) {
  const mid = x0 + width / 2;
  const half = width / 2 - 4;
  const s = p.scale || 1;
  const x = (v: number) => mid + (Math.max(-s, Math.min(s, v)) / s) * half;
  const values = [p.up, p.down].filter((v): v is number => v !== null);
  const lo = Math.min(0, ...values);
  const hi = Math.max(0, ...values);
  return { mid, x, lo: x(lo), hi: x(hi), clipped: values.some((v) => Math.abs(v) > s) };
}

/**
 * One signed range per parameter: the bar covers the Δμ that θ reaches as it moves from θ̂ − σ̂ to
 * θ̂ + σ̂ (0 included, where θ = θ̂), with a filled dot where θ raised lands and a ring where θ
 * lowered lands. The pre-fit range (θ̂ ± 1) is two upright ticks. One colour: the sign is the side
 * of the zero line.
 */
export function ImpactRangeMarks({ p, x0, width, cy, barH = 6 }: { p: ImpactRangeProps; x0: number; width: number; cy: number; barH?: number }) {
  const g = impactRangeGeometry(p, x0, width);
  const tick = (v: number | null | undefined, key: string) =>
    v === null || v === undefined ? null : <line key={key} x1={g.x(v)} x2={g.x(v)} y1={cy - barH} y2={cy + barH} stroke={theme.ink} strokeWidth={1.3} />;
  return (
    <g>
      <line x1={g.mid} x2={g.mid} y1={cy - barH - 1} y2={cy + barH + 1} stroke={theme.inkMuted} strokeWidth={0.8} />
      {(p.up !== null || p.down !== null) && (
        <rect
          x={g.lo}
          y={cy - barH / 2}
          width={Math.max(1, g.hi - g.lo)}
          height={barH}
          rx={barH / 2}
          fill={theme.teal}
          fillOpacity={p.estimated ? 0.25 : 0.85}
          stroke={p.estimated ? theme.teal : 'none'}
          strokeDasharray={p.estimated ? '2 1.5' : undefined}
          strokeWidth={p.estimated ? 1 : 0}
        />
      )}
      {tick(p.preDown, 'pd')}
      {tick(p.preUp, 'pu')}
      {p.down !== null && <circle cx={g.x(p.down)} cy={cy} r={2.6} fill={theme.paperRaised} stroke={theme.ink} strokeWidth={1.2} />}
      {p.up !== null && <circle cx={g.x(p.up)} cy={cy} r={2.6} fill={theme.ink} />}
    </g>
  );
}

/** The words of a parameter's impact, for a title or a screen reader. */
export function impactRangeText(p: ImpactRangeProps): string {
  const m = p.symbol ?? 'μ';
  const sigma = m === 'μ' ? 'σ_μ' : `σ(${m})`;
  const lines = p.estimated
    ? [`Quick estimate ρ(${m}, θ)·${sigma} from the covariance (no refits): θ raised by σ̂ moves ${m} by about ${formatSigned(p.up, 4)}, θ lowered by ${formatSigned(p.down, 4)}.`]
    : [`Δ${m} with θ raised to θ̂ + σ̂ (filled dot): ${formatSigned(p.up, 4)}`, `Δ${m} with θ lowered to θ̂ − σ̂ (ring): ${formatSigned(p.down, 4)}`];
  if (p.preUp !== undefined || p.preDown !== undefined) lines.push(`Pre-fit, θ at θ̂ ± 1 (the ticks): ${formatSigned(p.preUp ?? null, 4)} / ${formatSigned(p.preDown ?? null, 4)}`);
  if (!p.estimated && (p.up === null || p.down === null)) lines.push('One refit gave no impact (see the convergence warnings).');
  return lines.join('\n');
}

/** The impact range as a glyph in a table cell. */
export function ImpactRange(p: ImpactRangeProps) {
  const w = p.width ?? 168;
  const h = 16;
  return (
    <svg width={w} height={h} viewBox={`0 0 ${w} ${h}`} className="block shrink-0" role="img" aria-label={`Δ${p.symbol ?? 'μ'} from ${formatSigned(p.down, 3)} (θ lowered) to ${formatSigned(p.up, 3)} (θ raised)${p.estimated ? ', estimated' : ''}`}>
      <title>{impactRangeText(p)}</title>
      <ImpactRangeMarks p={p} x0={0} width={w} cy={h / 2} />
    </svg>
  );
}
