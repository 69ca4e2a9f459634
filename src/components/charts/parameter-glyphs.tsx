import type { NuisanceReport } from '@shared/schemas/fit';
import { theme } from '../../lib/palette';
import { formatFixed, formatSigned } from '../../lib/stats-format';
import { isStronglyPulled } from '../../lib/fits';

/**
 * Small inline glyphs for one nuisance parameter, drawn in a table cell. Each carries its
 * numbers in a <title>, so hovering shows them and the table stays dense.
 */

const PULL_W = 112;
const PULL_RANGE = 3;

/** Colour of a parameter's dot: amber when over-constrained, plum when strongly pulled, ink otherwise. */
export function markColour(n: NuisanceReport): string {
  if (n.overConstrained) return theme.amber;
  if (isStronglyPulled(n)) return theme.plum;
  return theme.ink;
}

/** The pull as a dot with its post-fit width as a bar, on the prior band [−1, 1] (and ±2 lighter). */
export function PullGlyph({ n }: { n: NuisanceReport }) {
  const h = 14;
  const x = (v: number) => PULL_W / 2 + (Math.max(-PULL_RANGE, Math.min(PULL_RANGE, v)) / PULL_RANGE) * (PULL_W / 2 - 4);
  const c = n.constraint ?? 0;
  const off = Math.abs(n.pull) > PULL_RANGE;
  return (
    <svg width={PULL_W} height={h} viewBox={`0 0 ${PULL_W} ${h}`} className="block" role="img" aria-label={`pull ${formatSigned(n.pull, 2)}, constraint ${formatFixed(n.constraint, 2)}`}>
      <title>{`Pull (θ̂ − 0)/1 = ${formatSigned(n.pull, 3)}; post-fit width σ̂ = ${formatFixed(n.constraint, 3)} of the prior. Bands: prior ±1 and ±2.`}</title>
      <rect x={x(-2)} y={2} width={x(2) - x(-2)} height={h - 4} fill={theme.teal} fillOpacity={0.08} />
      <rect x={x(-1)} y={2} width={x(1) - x(-1)} height={h - 4} fill={theme.teal} fillOpacity={0.2} />
      <line x1={x(0)} x2={x(0)} y1={1} y2={h - 1} stroke={theme.rule} />
      {n.constraint !== null && <line x1={x(n.pull - c)} x2={x(n.pull + c)} y1={h / 2} y2={h / 2} stroke={markColour(n)} strokeWidth={1.6} />}
      {off ? (
        <path d={n.pull > 0 ? `M${PULL_W - 1},${h / 2} l-6,-4 v8 z` : `M1,${h / 2} l6,-4 v8 z`} fill={markColour(n)} />
      ) : (
        <circle cx={x(n.pull)} cy={h / 2} r={3.2} fill={markColour(n)} stroke={theme.paperRaised} strokeWidth={0.8} />
      )}
    </svg>
  );
}

const METER_W = 64;

/** The constraint σ̂/1 as a filled meter from 0 to 1.2 prior widths, with the prior (1) and the over-constraint threshold marked. */
export function ConstraintMeter({ n, threshold }: { n: NuisanceReport; threshold: number }) {
  const h = 10;
  const x = (v: number) => 1 + (Math.min(1.2, Math.max(0, v)) / 1.2) * (METER_W - 2);
  const c = n.constraint;
  return (
    <svg width={METER_W} height={h} viewBox={`0 0 ${METER_W} ${h}`} className="block" role="img" aria-label={c === null ? 'held' : `constraint ${formatFixed(c, 2)}`}>
      <title>
        {c === null
          ? 'Held at its start value: no post-fit width'
          : `Constraint σ̂/1 = ${formatFixed(c, 3)}: the data narrowed the prior to ${Math.round(c * 100)} % of its width${n.overConstrained ? ` (below the ${threshold} threshold: over-constrained)` : ''}`}
      </title>
      <rect x={1} y={2} width={METER_W - 2} height={h - 4} fill={theme.paper} stroke={theme.rule} strokeWidth={0.8} rx={1.5} />
      {c !== null && <rect x={1} y={2} width={x(c) - 1} height={h - 4} fill={n.overConstrained ? theme.amber : theme.teal} rx={1.5} />}
      <line x1={x(threshold)} x2={x(threshold)} y1={0} y2={h} stroke={theme.amber} strokeWidth={1} strokeDasharray="1.5 1" />
      <line x1={x(1)} x2={x(1)} y1={0} y2={h} stroke={theme.ink} strokeWidth={1} />
    </svg>
  );
}

const IMPACT_W = 168;

/**
 * Δμ when θ is raised and when it is lowered, as two bars from a common zero: the upper bar for θ
 * raised, the lower for θ lowered, each pointing to the sign of Δμ. Post-fit impacts are solid;
 * the pre-fit impacts are drawn behind them as lighter outlines. `scale` is the |Δμ| at the ends.
 */
export function ImpactGlyph({ up, down, preUp, preDown, scale, estimated = false }: { up: number | null; down: number | null; preUp?: number | null; preDown?: number | null; scale: number; estimated?: boolean }) {
  const h = 18;
  const mid = IMPACT_W / 2;
  const x = (v: number) => mid + (Math.max(-scale, Math.min(scale, v)) / (scale || 1)) * (mid - 2);
  const bar = (v: number | null | undefined, y: number, colour: string, solid: boolean, key: string) =>
    v === null || v === undefined ? null : solid ? (
      <rect key={key} x={Math.min(x(v), mid)} y={y} width={Math.max(0.8, Math.abs(x(v) - mid))} height={5} fill={colour} fillOpacity={estimated ? 0.55 : 1} />
    ) : (
      <rect key={key} x={Math.min(x(v), mid)} y={y - 1} width={Math.max(0.8, Math.abs(x(v) - mid))} height={7} fill={colour} fillOpacity={0.14} stroke={colour} strokeOpacity={0.55} strokeWidth={0.8} />
    );
  const text = [
    `Δμ with θ raised${estimated ? ' (estimate ρσ_μ)' : ' by σ̂'}: ${formatSigned(up, 4)}`,
    `Δμ with θ lowered${estimated ? ' (estimate)' : ' by σ̂'}: ${formatSigned(down, 4)}`,
    ...(preUp !== undefined || preDown !== undefined ? [`Pre-fit (θ̂ ± 1): raised ${formatSigned(preUp ?? null, 4)}, lowered ${formatSigned(preDown ?? null, 4)}`] : []),
  ].join('\n');
  return (
    <svg width={IMPACT_W} height={h} viewBox={`0 0 ${IMPACT_W} ${h}`} className="block" role="img" aria-label={`impact raised ${formatSigned(up, 3)}, lowered ${formatSigned(down, 3)}`}>
      <title>{text}</title>
      {bar(preUp, 3, theme.teal, false, 'pu')}
      {bar(preDown, 10, theme.amber, false, 'pd')}
      {bar(up, 3, theme.teal, true, 'u')}
      {bar(down, 10, theme.amber, true, 'd')}
      <line x1={mid} x2={mid} y1={0} y2={h} stroke={theme.ink} strokeWidth={0.8} />
    </svg>
  );
}
