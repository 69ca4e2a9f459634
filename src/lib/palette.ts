import { scaleLinear } from 'd3-scale';

/** Theme colours, mirrored from the `@theme` block in src/styles.css for use in SVG and canvas. */
export const theme = {
  paper: '#f6f1e7',
  paperRaised: '#fcfaf5',
  rule: '#d9cfbd',
  ink: '#1d1b18',
  inkMuted: '#5f574c',
  teal: '#0e7c74',
  amber: '#c07a12',
  plum: '#6e2a5e',
} as const;

/**
 * Categorical colours for processes, chosen by hand to stay apart from one another on the
 * paper background and from the teal/amber accents: they differ in hue and in lightness,
 * so neighbouring stack layers remain distinguishable in greyscale too.
 */
export const processPalette = [
  '#3b6ea5', // lake blue
  '#d9822b', // saffron
  '#5e8c31', // moss
  '#a4416b', // raspberry
  '#7a5aa6', // violet
  '#c9b037', // mustard
  '#4f9b96', // sea glass
  '#8a5a3c', // walnut
] as const;

/** The colour of a process: its stored colour when it has one, else the palette entry at its position. */
export function processColour(index: number, stored?: string | null): string {
  if (stored && /^#[0-9a-f]{6}$/i.test(stored)) return stored;
  return processPalette[((index % processPalette.length) + processPalette.length) % processPalette.length];
}

/**
 * Diverging scale for correlation coefficients ρ ∈ [−1, 1]: teal for anti-correlation,
 * white at ρ = 0, plum for correlation. Values outside the domain are clamped.
 */
export const correlationScale = scaleLinear<string>()
  .domain([-1, 0, 1])
  .range([theme.teal, '#ffffff', theme.plum])
  .clamp(true);

export function correlationColour(rho: number): string {
  return Number.isFinite(rho) ? correlationScale(rho) : theme.rule;
}
