import { scaleLinear } from 'd3-scale';
import type { PlotLabels } from '@shared/schemas/api';
import { esc, num, plotLabelParts } from './format';

/**
 * The approval pack's charts as SVG text, drawn by hand with d3-scale: no script, no external
 * resource, so that a printed or saved page keeps them. Every chart carries the analysis's plot
 * labels in its top band (class "plot-label"). Colours are the product's theme (src/styles.css).
 */

export const COLOURS = {
  paper: '#f6f1e7',
  raised: '#fcfaf5',
  sunk: '#ede6d8',
  rule: '#d9cfbd',
  ruleStrong: '#b9ad97',
  ink: '#1d1b18',
  muted: '#5f574c',
  teal: '#0e7c74',
  tealSoft: '#d5ece8',
  amber: '#c07a12',
  amberSoft: '#f7e6c4',
  plum: '#6e2a5e',
  danger: '#9b2c22',
} as const;

/** The product's categorical process colours (src/lib/palette.ts), used where a process has none stored. */
const PROCESS_PALETTE = ['#3b6ea5', '#d9822b', '#5e8c31', '#a4416b', '#7a5aa6', '#c9b037', '#4f9b96', '#8a5a3c'];
export const processColour = (index: number, stored: string | null | undefined) =>
  stored && /^#[0-9a-f]{6}$/i.test(stored) ? stored : PROCESS_PALETTE[index % PROCESS_PALETTE.length];

const LABEL_BAND = 24;
const FONT = 'font-family="system-ui, -apple-system, Segoe UI, sans-serif"';

/** The plot labels as an SVG text line: the experiment and status in bold, then luminosity and energy. */
export function plotLabelSvg(labels: PlotLabels, x: number, y: number, anchor: 'start' | 'end' = 'start'): string {
  const { lead, rest } = plotLabelParts(labels);
  if (!lead && !rest) return `<text class="plot-label" x="${x}" y="${y}" font-size="11" fill="${COLOURS.muted}" text-anchor="${anchor}">(no plot labels set)</text>`;
  return `<text class="plot-label" x="${x}" y="${y}" font-size="12" fill="${COLOURS.ink}" text-anchor="${anchor}"><tspan font-weight="700">${esc(lead)}</tspan>${rest ? `<tspan fill="${COLOURS.muted}">${lead ? ' · ' : ''}${esc(rest)}</tspan>` : ''}</text>`;
}

/** An <svg> with the plot labels in its top band and a title for screen readers. */
function svg(width: number, height: number, title: string, labels: PlotLabels, body: string): string {
  return `<svg class="chart" viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" aria-label="${esc(title)}" ${FONT}><title>${esc(title)}</title><rect x="0" y="0" width="${width}" height="${height}" fill="${COLOURS.raised}"/>${plotLabelSvg(labels, 10, 16)}<line x1="0" x2="${width}" y1="${LABEL_BAND - 2}" y2="${LABEL_BAND - 2}" stroke="${COLOURS.rule}"/>${body}</svg>`;
}

const ticksOf = (scale: ReturnType<typeof scaleLinear<number, number>>, n: number) => scale.ticks(n);

function xAxis(scale: ReturnType<typeof scaleLinear<number, number>>, y: number, top: number, label: string, n = 7): string {
  const ticks = ticksOf(scale, n)
    .map((t) => `<line x1="${scale(t)}" x2="${scale(t)}" y1="${top}" y2="${y}" stroke="${COLOURS.rule}" stroke-width="0.6"/><text x="${scale(t)}" y="${y + 13}" font-size="10" fill="${COLOURS.muted}" text-anchor="middle">${esc(num(t, 3))}</text>`)
    .join('');
  const [a, b] = scale.range();
  return `${ticks}<line x1="${a}" x2="${b}" y1="${y}" y2="${y}" stroke="${COLOURS.ruleStrong}"/><text x="${(a + b) / 2}" y="${y + 28}" font-size="11" fill="${COLOURS.ink}" text-anchor="middle">${esc(label)}</text>`;
}

function yAxis(scale: ReturnType<typeof scaleLinear<number, number>>, x: number, right: number, label: string, n = 5): string {
  const ticks = ticksOf(scale, n)
    .map((t) => `<line x1="${x}" x2="${right}" y1="${scale(t)}" y2="${scale(t)}" stroke="${COLOURS.rule}" stroke-width="0.6"/><text x="${x - 4}" y="${scale(t) + 3}" font-size="10" fill="${COLOURS.muted}" text-anchor="end">${esc(num(t, 3))}</text>`)
    .join('');
  const [a, b] = scale.range();
  return `${ticks}<line x1="${x}" x2="${x}" y1="${a}" y2="${b}" stroke="${COLOURS.ruleStrong}"/><text transform="translate(${x - 44} ${(a + b) / 2}) rotate(-90)" font-size="11" fill="${COLOURS.ink}" text-anchor="middle">${esc(label)}</text>`;
}

const cut = (s: string, n: number) => (s.length > n ? `${s.slice(0, n - 1)}…` : s);

export type PullRow = { name: string; pull: number; constraint: number | null; overConstrained: boolean };

/** Pulls (θ̂ − 0)/1 with the post-fit width σ̂ as a bar, the ±1 and ±2 prior widths shaded. */
export function pullsChart(rows: PullRow[], labels: PlotLabels, title: string): string {
  const W = 720;
  const L = 210;
  const R = 24;
  const rowH = 15;
  const top = LABEL_BAND + 10;
  const H = top + rows.length * rowH + 44;
  const reach = Math.max(2.5, ...rows.map((r) => Math.abs(r.pull) + (r.constraint ?? 0)));
  const x = scaleLinear().domain([-reach, reach]).range([L, W - R]).nice();
  const bottom = top + rows.length * rowH;
  const bands = `<rect x="${x(-2)}" y="${top}" width="${x(2) - x(-2)}" height="${bottom - top}" fill="${COLOURS.amberSoft}" opacity="0.55"/><rect x="${x(-1)}" y="${top}" width="${x(1) - x(-1)}" height="${bottom - top}" fill="${COLOURS.tealSoft}"/>`;
  const marks = rows
    .map((r, i) => {
      const cy = top + i * rowH + rowH / 2;
      const colour = r.overConstrained ? COLOURS.plum : COLOURS.ink;
      const bar = r.constraint === null ? '' : `<line x1="${x(r.pull - r.constraint)}" x2="${x(r.pull + r.constraint)}" y1="${cy}" y2="${cy}" stroke="${colour}" stroke-width="1.4"/>`;
      return `<text x="${L - 6}" y="${cy + 3.5}" font-size="10.5" fill="${COLOURS.ink}" text-anchor="end">${esc(cut(r.name, 34))}</text>${bar}<circle cx="${x(r.pull)}" cy="${cy}" r="3.2" fill="${colour}"/>`;
    })
    .join('');
  return svg(W, H, title, labels, `${bands}${xAxis(x, bottom, top, '(θ̂ − θ₀)/Δθ, bar: σ̂ (plum: over-constrained)')}<line x1="${x(0)}" x2="${x(0)}" y1="${top}" y2="${bottom}" stroke="${COLOURS.ruleStrong}"/>${marks}`);
}

export type ImpactRow = { name: string; up: number | null; down: number | null; kind: 'post-fit' | 'quick' };

/** Impacts on μ̂, ranked: Δμ with θ at θ̂ + σ̂ (teal) and θ̂ − σ̂ (amber), or ρσ_μ where only the quick estimate exists. */
export function impactsChart(rows: ImpactRow[], labels: PlotLabels, title: string, poi = 'μ'): string {
  const W = 720;
  const L = 210;
  const R = 24;
  const rowH = 16;
  const top = LABEL_BAND + 24;
  const H = top + rows.length * rowH + 44;
  const reach = Math.max(1e-9, ...rows.flatMap((r) => [Math.abs(r.up ?? 0), Math.abs(r.down ?? 0)]));
  const x = scaleLinear().domain([-reach, reach]).range([L, W - R]).nice();
  const bottom = top + rows.length * rowH;
  const bar = (v: number | null, cy: number, fill: string, dy: number) =>
    v === null ? '' : `<rect x="${Math.min(x(0), x(v))}" y="${cy + dy}" width="${Math.abs(x(v) - x(0))}" height="5.5" fill="${fill}"/>`;
  const marks = rows
    .map((r, i) => {
      const cy = top + i * rowH + rowH / 2;
      return `<text x="${L - 6}" y="${cy + 3.5}" font-size="10.5" fill="${COLOURS.ink}" text-anchor="end">${i + 1}. ${esc(cut(r.name, 30))}</text>${bar(r.up, cy, COLOURS.teal, -6)}${bar(r.down, cy, COLOURS.amber, 0.5)}`;
    })
    .join('');
  const legend = `<rect x="${L}" y="${LABEL_BAND + 6}" width="10" height="8" fill="${COLOURS.teal}"/><text x="${L + 14}" y="${LABEL_BAND + 14}" font-size="10.5" fill="${COLOURS.ink}">θ at θ̂ + σ̂</text><rect x="${L + 100}" y="${LABEL_BAND + 6}" width="10" height="8" fill="${COLOURS.amber}"/><text x="${L + 114}" y="${LABEL_BAND + 14}" font-size="10.5" fill="${COLOURS.ink}">θ at θ̂ − σ̂</text>`;
  return svg(W, H, title, labels, `${legend}${xAxis(x, bottom, top, `Δ${poi}̂ (impact on ${poi})`)}<line x1="${x(0)}" x2="${x(0)}" y1="${top}" y2="${bottom}" stroke="${COLOURS.ruleStrong}"/>${marks}`);
}

/** ρ ∈ [−1, 1] as a colour: teal for anti-correlation, white at 0, plum for correlation (as on screen). */
function correlationColour(r: number): string {
  const c = Math.max(-1, Math.min(1, r));
  const mix = (a: string, t: number) => {
    const from = [255, 255, 255];
    const to = [1, 3, 5].map((i) => parseInt(a.slice(i, i + 2), 16));
    return `rgb(${from.map((f, k) => Math.round(f + (to[k] - f) * t)).join(',')})`;
  };
  return c < 0 ? mix(COLOURS.teal, -c) : mix(COLOURS.plum, c);
}

/** The correlation matrix as a heat map (up to 45 parameters; the pack lists the strongest pairs beyond). */
export function correlationChart(names: string[], values: number[], labels: PlotLabels, title: string): string {
  const n = names.length;
  const cell = Math.max(9, Math.min(18, Math.floor(460 / Math.max(1, n))));
  const longest = Math.min(30, Math.max(4, ...names.map((nm) => nm.length)));
  const L = 16 + longest * 6;
  const top = LABEL_BAND + 16 + Math.min(24, longest) * 5.4;
  const W = Math.max(360, L + n * cell + 90);
  const H = top + n * cell + 20;
  const cells: string[] = [];
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      const r = values[i * n + j];
      cells.push(`<rect x="${L + j * cell}" y="${top + i * cell}" width="${cell}" height="${cell}" fill="${correlationColour(r)}" stroke="${COLOURS.paper}" stroke-width="0.5"><title>${esc(names[i])} × ${esc(names[j])}: ρ = ${esc(num(r, 3))}</title></rect>`);
    }
  const rowNames = names.map((nm, i) => `<text x="${L - 4}" y="${top + i * cell + cell / 2 + 3.5}" font-size="${Math.min(10.5, cell - 1)}" fill="${COLOURS.ink}" text-anchor="end">${esc(cut(nm, 30))}</text>`).join('');
  const colNames = names
    .map((nm, j) => `<text transform="translate(${L + j * cell + cell / 2 + 3.5} ${top - 4}) rotate(-60)" font-size="${Math.min(10.5, cell - 1)}" fill="${COLOURS.ink}">${esc(cut(nm, 24))}</text>`)
    .join('');
  const kx = L + n * cell + 22;
  const key = [-1, -0.5, 0, 0.5, 1]
    .map((r, k) => `<rect x="${kx}" y="${top + k * 18}" width="14" height="14" fill="${correlationColour(r)}" stroke="${COLOURS.rule}"/><text x="${kx + 18}" y="${top + k * 18 + 11}" font-size="10" fill="${COLOURS.ink}">ρ = ${esc(num(r, 2))}</text>`)
    .join('');
  return svg(W, H, title, labels, `${cells.join('')}${rowNames}${colNames}${key}`);
}

export type StackLayer = { label: string; colour: string; values: number[] };
export type RegionChartInput = {
  title: string;
  stage: string;
  observable: string;
  edges: number[];
  layers: StackLayer[];
  total: number[];
  totalErrors: number[];
  /** observed or Asimov counts, or null (withheld while blinded, or not in the result) */
  data: number[] | null;
  dataLabel: string;
  dataNote: string | null;
};

/** One region: the processes stacked as steps, the expectation's ±1σ hatched, data as points with ±√n, and data / expected below. */
export function regionChart(d: RegionChartInput, labels: PlotLabels, id: string): string {
  const hatch = `hatch-${id}`;
  const W = 560;
  const L = 62;
  const R = 170;
  const top = LABEL_BAND + 12;
  const mainH = 190;
  const ratioTop = top + mainH + 12;
  const ratioH = d.data ? 64 : 0;
  const bottom = d.data ? ratioTop + ratioH : top + mainH;
  const H = bottom + 42;
  const bins = d.total.length;
  const x = scaleLinear().domain([d.edges[0], d.edges[bins]]).range([L, W - R]);
  const peak = Math.max(1, ...d.total.map((t, b) => t + (d.totalErrors[b] ?? 0)), ...(d.data ?? []).map((n) => n + Math.sqrt(n)));
  const y = scaleLinear().domain([0, peak * 1.1]).range([top + mainH, top]).nice();
  const parts: string[] = [];
  // stacked layers, bin by bin
  const base = new Array<number>(bins).fill(0);
  for (const layer of d.layers) {
    for (let b = 0; b < bins; b++) {
      const lo = base[b];
      const hi = lo + Math.max(0, layer.values[b] ?? 0);
      if (hi > lo) parts.push(`<rect x="${x(d.edges[b])}" y="${y(hi)}" width="${Math.max(0, x(d.edges[b + 1]) - x(d.edges[b]))}" height="${y(lo) - y(hi)}" fill="${layer.colour}" opacity="0.88"/>`);
      base[b] = hi;
    }
  }
  // the total with its ±1σ band
  for (let b = 0; b < bins; b++) {
    const x0 = x(d.edges[b]);
    const x1 = x(d.edges[b + 1]);
    const e = d.totalErrors[b] ?? 0;
    if (e > 0) parts.push(`<rect x="${x0}" y="${y(d.total[b] + e)}" width="${x1 - x0}" height="${Math.max(0, y(d.total[b] - e) - y(d.total[b] + e))}" fill="url(#${hatch})" />`);
    parts.push(`<line x1="${x0}" x2="${x1}" y1="${y(d.total[b])}" y2="${y(d.total[b])}" stroke="${COLOURS.ink}" stroke-width="1.2"/>`);
  }
  if (d.data)
    d.data.forEach((n, b) => {
      const cx = (x(d.edges[b]) + x(d.edges[b + 1])) / 2;
      const s = Math.sqrt(Math.max(0, n));
      parts.push(`<line x1="${cx}" x2="${cx}" y1="${y(n + s)}" y2="${y(Math.max(0, n - s))}" stroke="${COLOURS.ink}" stroke-width="1.2"/><circle cx="${cx}" cy="${y(n)}" r="3" fill="${COLOURS.ink}"/>`);
    });
  parts.push(yAxis(y, L, W - R, 'events per bin'));
  if (d.data) {
    const ratios = d.data.map((n, b) => (d.total[b] > 0 ? { r: n / d.total[b], e: Math.sqrt(Math.max(0, n)) / d.total[b] } : null));
    const spread = Math.max(0.25, ...ratios.map((q) => (q ? Math.abs(q.r - 1) + q.e : 0)));
    const ry = scaleLinear().domain([1 - Math.min(spread, 1.5) * 1.1, 1 + Math.min(spread, 1.5) * 1.1]).range([ratioTop + ratioH, ratioTop]).nice();
    parts.push(yAxis(ry, L, W - R, 'data / exp.', 3));
    parts.push(`<line x1="${L}" x2="${W - R}" y1="${ry(1)}" y2="${ry(1)}" stroke="${COLOURS.ruleStrong}" stroke-dasharray="3 3"/>`);
    for (let b = 0; b < bins; b++) {
      const e = d.total[b] > 0 ? (d.totalErrors[b] ?? 0) / d.total[b] : 0;
      if (e > 0) parts.push(`<rect x="${x(d.edges[b])}" y="${ry(1 + e)}" width="${x(d.edges[b + 1]) - x(d.edges[b])}" height="${Math.max(0, ry(1 - e) - ry(1 + e))}" fill="url(#${hatch})"/>`);
      const q = ratios[b];
      if (!q) continue;
      const cx = (x(d.edges[b]) + x(d.edges[b + 1])) / 2;
      const [dlo, dhi] = ry.domain();
      const clamp = (v: number) => Math.max(dlo, Math.min(dhi, v));
      parts.push(`<line x1="${cx}" x2="${cx}" y1="${ry(clamp(q.r + q.e))}" y2="${ry(clamp(q.r - q.e))}" stroke="${COLOURS.ink}"/><circle cx="${cx}" cy="${ry(clamp(q.r))}" r="2.6" fill="${COLOURS.ink}"/>`);
    }
  }
  parts.push(xAxis(x, bottom, top, d.observable, 6));
  // legend: processes top first, then the total and the data
  const legend = [...d.layers].reverse().map((l) => ({ swatch: `<rect width="11" height="11" fill="${l.colour}"/>`, text: l.label }));
  legend.push({ swatch: `<line x1="0" x2="11" y1="6" y2="6" stroke="${COLOURS.ink}" stroke-width="1.4"/><rect y="2" width="11" height="8" fill="url(#${hatch})"/>`, text: `${d.stage} total ± 1σ` });
  if (d.data) legend.push({ swatch: `<circle cx="5.5" cy="6" r="3" fill="${COLOURS.ink}"/>`, text: `${d.dataLabel} ± √n` });
  const lx = W - R + 14;
  parts.push(legend.map((l, i) => `<g transform="translate(${lx} ${top + i * 17})">${l.swatch}<text x="16" y="10" font-size="10.5" fill="${COLOURS.ink}">${esc(cut(l.text, 24))}</text></g>`).join(''));
  if (d.dataNote) parts.push(`<text x="${lx}" y="${top + legend.length * 17 + 14}" font-size="10" fill="${COLOURS.danger}">${esc(d.dataNote)}</text>`);
  const defs = `<defs><pattern id="${hatch}" width="5" height="5" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><line x1="0" y1="0" x2="0" y2="5" stroke="${COLOURS.ink}" stroke-width="1" opacity="0.45"/></pattern></defs>`;
  return svg(W, H, d.title, labels, `${defs}${parts.join('')}`);
}

/** Grouped impacts (σ_μ attributed to each group of systematics) as horizontal bars. */
export function groupsChart(rows: { group: string; impact: number }[], labels: PlotLabels, title: string): string {
  const W = 720;
  const L = 210;
  const R = 40;
  const rowH = 18;
  const top = LABEL_BAND + 10;
  const bottom = top + rows.length * rowH;
  const H = bottom + 44;
  const x = scaleLinear().domain([0, Math.max(1e-9, ...rows.map((r) => r.impact))]).range([L, W - R]).nice();
  const marks = rows
    .map((r, i) => {
      const cy = top + i * rowH + rowH / 2;
      return `<text x="${L - 6}" y="${cy + 3.5}" font-size="10.5" fill="${COLOURS.ink}" text-anchor="end">${esc(cut(r.group, 32))}</text><rect x="${L}" y="${cy - 5}" width="${Math.max(0, x(r.impact) - L)}" height="10" fill="${COLOURS.teal}"/><text x="${x(r.impact) + 4}" y="${cy + 3.5}" font-size="10" fill="${COLOURS.muted}">${esc(num(r.impact, 3))}</text>`;
    })
    .join('');
  return svg(W, H, title, labels, `${xAxis(x, bottom, top, 'impact on μ (σ_μ attributed to the group)')}${marks}`);
}

/** A profile-likelihood scan: q = −2 ln λ against the parameter, with q = 1 and q = 3.84 marked. */
export function scanChart(points: { value: number; q: number }[], bestFit: number, labels: PlotLabels, title: string, parameter: string): string {
  const W = 460;
  const L = 56;
  const R = 20;
  const top = LABEL_BAND + 12;
  const bottom = top + 200;
  const H = bottom + 42;
  const pts = [...points].sort((a, b) => a.value - b.value);
  const x = scaleLinear().domain([pts[0].value, pts[pts.length - 1].value]).range([L, W - R]);
  const y = scaleLinear().domain([0, Math.max(4.5, Math.min(12, ...pts.map((p) => p.q)))]).range([bottom, top]).nice();
  const [, qMax] = y.domain();
  const path = pts.map((p, i) => `${i ? 'L' : 'M'}${x(p.value).toFixed(2)},${y(Math.min(p.q, qMax)).toFixed(2)}`).join('');
  const level = (q: number, text: string) => `<line x1="${L}" x2="${W - R}" y1="${y(q)}" y2="${y(q)}" stroke="${COLOURS.amber}" stroke-dasharray="4 3"/><text x="${W - R - 2}" y="${y(q) - 3}" font-size="10" fill="${COLOURS.amber}" text-anchor="end">${esc(text)}</text>`;
  const body = `${yAxis(y, L, W - R, 'q = −2 ln λ')}${xAxis(x, bottom, top, parameter)}${level(1, 'q = 1 (68 %)')}${level(3.84, 'q = 3.84 (95 %)')}<path d="${path}" fill="none" stroke="${COLOURS.teal}" stroke-width="1.8"/>${pts.map((p) => `<circle cx="${x(p.value)}" cy="${y(Math.min(p.q, qMax))}" r="2" fill="${COLOURS.teal}"/>`).join('')}<line x1="${x(bestFit)}" x2="${x(bestFit)}" y1="${top}" y2="${bottom}" stroke="${COLOURS.ink}" stroke-width="0.8"/>`;
  return svg(W, H, title, labels, body);
}

/** A two-parameter contour: the 68.27 % line solid, the 95 % line dashed, the best fit as a cross. */
export function contourChart(c: { parameters: [string, string]; bestFit: [number, number]; a: number[]; b: number[]; levels: { cl: number; lines: [number, number][][] }[] }, labels: PlotLabels, title: string, axes: [string, string] = c.parameters): string {
  const W = 460;
  const L = 62;
  const R = 20;
  const top = LABEL_BAND + 28;
  const bottom = top + 260;
  const H = bottom + 42;
  const x = scaleLinear().domain([Math.min(...c.a), Math.max(...c.a)]).range([L, W - R]);
  const y = scaleLinear().domain([Math.min(...c.b), Math.max(...c.b)]).range([bottom, top]);
  const lines = c.levels
    .map((lv, k) =>
      lv.lines
        .map((ln) => `<path d="${ln.map(([a, b], i) => `${i ? 'L' : 'M'}${x(a).toFixed(2)},${y(b).toFixed(2)}`).join('')}" fill="none" stroke="${k === 0 ? COLOURS.teal : COLOURS.plum}" stroke-width="1.6"${k === 0 ? '' : ' stroke-dasharray="5 3"'}/>`)
        .join(''),
    )
    .join('');
  const [bx, by] = c.bestFit;
  const cross = `<path d="M${x(bx) - 5},${y(by)}h10M${x(bx)},${y(by) - 5}v10" stroke="${COLOURS.ink}" stroke-width="1.6"/>`;
  const legend = c.levels.map((lv, k) => `<line x1="${L + k * 120}" x2="${L + k * 120 + 20}" y1="${LABEL_BAND + 12}" y2="${LABEL_BAND + 12}" stroke="${k === 0 ? COLOURS.teal : COLOURS.plum}" stroke-width="1.6"${k === 0 ? '' : ' stroke-dasharray="5 3"'}/><text x="${L + k * 120 + 24}" y="${LABEL_BAND + 15}" font-size="10.5" fill="${COLOURS.ink}">${esc(num(lv.cl * 100, 4))} % CL</text>`).join('');
  return svg(W, H, title, labels, `${legend}${xAxis(x, bottom, top, axes[0])}${yAxis(y, L, W - R, axes[1])}${lines}${cross}`);
}
