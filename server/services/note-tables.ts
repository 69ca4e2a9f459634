import Papa from 'papaparse';
import type { FitResult } from '@shared/schemas/fit';
import type { ExchangeModel } from '@shared/schemas/exchange';

/**
 * Tables for an analysis note: one description of a table, written as CSV (RFC 4180, through
 * papaparse, which quotes a field holding a comma, a quote or a line break) or as a LaTeX
 * `table` with a `tabular`, a caption and a label.
 */

/** A cell: text, a plain number, a value with its error, or nothing (a number withheld or not computed). */
export type Cell =
  | string
  | number
  | boolean
  | null
  | { value: number; error: number | null }
  /** a number printed with a fixed count of decimal places (correlations) */
  | { value: number; places: number }
  /** an uncertainty or a shift printed alone: two significant digits, with its sign */
  | { value: number; signed: true };

export type Column = {
  /** The CSV header(s): two for a column of value ± error (value, then error). */
  csv: string[];
  /** The LaTeX header, already LaTeX (text in it escaped by the caller). */
  latex: string;
  align: 'l' | 'r' | 'c';
};

export type NoteTable = {
  /** The caption, already LaTeX. */
  caption: string;
  label: string;
  columns: Column[];
  rows: Cell[][];
  /** Columns and cells for LaTeX when they differ from the CSV's (cells already LaTeX). */
  latex?: { columns: Column[]; rows: string[][] };
};

/**
 * The characters LaTeX treats specially in text: # $ % & ~ _ ^ \ { } (Lamport, "LaTeX: A Document
 * Preparation System", 2nd ed., 1994, §2.2.1; cited from memory). Each becomes a command or an
 * escaped form that prints the character itself.
 */
const LATEX_ESCAPES: Record<string, string> = {
  '\\': '\\textbackslash{}',
  '{': '\\{',
  '}': '\\}',
  _: '\\_',
  '%': '\\%',
  '&': '\\&',
  '#': '\\#',
  $: '\\$',
  '^': '\\textasciicircum{}',
  '~': '\\textasciitilde{}',
};

/** Text as LaTeX that prints it: every special character escaped, line breaks as spaces. */
export function escapeLatex(text: string): string {
  return text.replace(/[\\{}_%&#$^~]/g, (c) => LATEX_ESCAPES[c]).replace(/\r\n|\r|\n/g, ' ');
}

/** A number in LaTeX math: 4 significant digits, powers of ten written out. */
export function latexNumber(x: number): string {
  if (!Number.isFinite(x)) return '--';
  if (Number.isInteger(x) && Math.abs(x) < 1e6) return `$${x}$`;
  const [mantissa, exponent] = x.toPrecision(4).split('e');
  const m = String(Number(mantissa));
  return exponent ? `$${m}\\times10^{${Number(exponent)}}$` : `$${m}$`;
}

/**
 * A value and its error rounded for print: the error to two significant digits, the value to the
 * same decimal place (an error that rounds up to a new digit, 0.0996 → 0.10, keeps two digits).
 */
export function roundWithError(value: number, error: number): { value: string; error: string } {
  if (!Number.isFinite(error) || error <= 0) return { value: Number(value.toPrecision(4)).toString(), error: String(error) };
  let place = Math.floor(Math.log10(error)) - 1;
  if (Math.round(error / 10 ** place) >= 100) place += 1;
  const at = (x: number) => (place < 0 ? x.toFixed(-place) : String(Math.round(x / 10 ** place) * 10 ** place));
  const v = at(value);
  return { value: /^-0(\.0*)?$/.test(v) ? v.slice(1) : v, error: at(error) };
}

function latexCell(cell: Cell): string {
  if (cell === null) return '--';
  if (typeof cell === 'string') return escapeLatex(cell);
  if (typeof cell === 'boolean') return cell ? 'yes' : 'no';
  if (typeof cell === 'number') return latexNumber(cell);
  if ('places' in cell) return Number.isFinite(cell.value) ? `$${(Math.abs(cell.value) < 0.5 * 10 ** -cell.places ? 0 : cell.value).toFixed(cell.places)}$` : '--';
  if ('signed' in cell) return Number.isFinite(cell.value) ? `$${cell.value < 0 ? '-' : '+'}${Number(Math.abs(cell.value).toPrecision(2))}$` : '--';
  if (cell.error === null) return latexNumber(cell.value);
  const r = roundWithError(cell.value, cell.error);
  return `$${r.value} \\pm ${r.error}$`;
}

/** A label LaTeX's \label accepts: letters, digits, colons and hyphens. */
const labelKey = (s: string) => s.replace(/[^A-Za-z0-9:-]+/g, '-');

export function toLatex(t: NoteTable): string {
  const columns = t.latex?.columns ?? t.columns;
  const head = columns.map((c) => c.latex).join(' & ');
  const cells = t.latex?.rows ?? t.rows.map((r) => r.map(latexCell));
  const body = cells.map((r) => `    ${r.join(' & ')} \\\\`);
  return [
    '\\begin{table}[htbp]',
    '  \\centering',
    `  \\caption{${t.caption}}`,
    `  \\label{${labelKey(t.label)}}`,
    `  \\begin{tabular}{${columns.map((c) => c.align).join('')}}`,
    '    \\hline',
    `    ${head} \\\\`,
    '    \\hline',
    ...body,
    '    \\hline',
    '  \\end{tabular}',
    '\\end{table}',
    '',
  ].join('\n');
}

export function toCsv(t: NoteTable): string {
  const header = t.columns.flatMap((c) => c.csv);
  const rows = t.rows.map((r) =>
    r.flatMap((cell, i) => {
      const raw = cell !== null && typeof cell === 'object' ? cell.value : cell;
      if (t.columns[i].csv.length === 1) return [raw];
      return [raw, cell !== null && typeof cell === 'object' && 'error' in cell ? cell.error : null];
    }),
  );
  return Papa.unparse([header, ...rows], { newline: '\n' }) + '\n';
}

/**
 * A table given as CSV-like rows (first row the header): text columns left, the rest right; with
 * `places`, every number is printed in LaTeX with that many decimals (correlations).
 */
export function plainTable(caption: string, label: string, rows: (string | number | boolean | null)[][], places?: number): NoteTable {
  const [header, ...body] = rows;
  const numeric = header.map((_, i) => body.length > 0 && body.every((r) => r[i] === null || typeof r[i] === 'number'));
  const cells = places === undefined ? body : body.map((r) => r.map((c): Cell => (typeof c === 'number' ? { value: c, places } : c)));
  return { caption, label, columns: header.map((h, i) => ({ csv: [String(h)], latex: escapeLatex(String(h)), align: numeric[i] ? 'r' : 'l' })), rows: cells };
}

const text = (csv: string, latex = escapeLatex(csv), align: Column['align'] = 'l'): Column => ({ csv: [csv], latex, align });
const pm = (csv: string, latex: string, error = `${csv}_error`): Column => ({ csv: [csv, error], latex, align: 'r' });

/**
 * The sum of a region's bins: the value, and an error from the per-bin errors added in quadrature.
 * The per-bin errors of one process are correlated across bins (every nuisance parameter moves
 * them together) and the result carries no covariance of the sums, so this neglects those
 * correlations; the caption says so.
 */
export function sumOverBins(series: { values: number[]; errors: number[] }): { value: number; error: number } {
  return { value: series.values.reduce((s, v) => s + v, 0), error: Math.sqrt(series.errors.reduce((s, e) => s + e * e, 0)) };
}

/** Yields per region and process (and the region's total), pre- and post-fit, each summed over the region's bins. */
export function yieldsTable(result: Pick<FitResult, 'yields'>, caption: string, label: string): NoteTable {
  const postfit = new Map((result.yields.postfit ?? []).map((r) => [r.region, r]));
  const rows: Cell[][] = [];
  for (const region of result.yields.prefit) {
    const post = postfit.get(region.region);
    const postOf = (process: string | null) => {
      const series = process === null ? post?.total : post?.processes.find((p) => p.process === process);
      return series ? sumOverBins(series) : null;
    };
    for (const p of region.processes) rows.push([region.region, region.role, p.process, sumOverBins(p), postOf(p.process)]);
    rows.push([region.region, region.role, 'total', sumOverBins(region.total), postOf(null)]);
  }
  // CSV has no caption: the error columns' names say how they are made
  return { caption, label, columns: [text('region', 'Region'), text('role', 'Role'), text('process', 'Process'), pm('prefit', 'Pre-fit', 'prefit_error_bins_in_quadrature'), pm('postfit', 'Post-fit', 'postfit_error_bins_in_quadrature')], rows };
}

/** Percent change of a yield from its nominal; null where the nominal is zero (no relative change). */
const percent = (varied: number, nominal: number) => (nominal > 0 ? (varied / nominal - 1) * 100 : null);

export type EffectRange = { key: string; label: string; group: string; region: string; upMin: number; upMax: number; downMin: number; downMax: number };

/**
 * Each register entry's range of effect per region: the smallest and largest relative change of
 * the yield, in percent, at +1σ (up) and at −1σ (down), over the region's processes and bins (bins
 * whose nominal is zero have no relative change and are skipped).
 */
export function effectRanges(model: Pick<ExchangeModel, 'regions' | 'templates' | 'systematics'>): EffectRange[] {
  const nominal = new Map(model.templates.map((t) => [`${t.region}\u0000${t.process}`, t.nominal]));
  const out: EffectRange[] = [];
  for (const s of model.systematics) {
    for (const region of model.regions) {
      const up: number[] = [];
      const down: number[] = [];
      for (const e of s.effects.filter((x) => x.region === region.key)) {
        const nom = nominal.get(`${e.region}\u0000${e.process}`) ?? [];
        nom.forEach((n, i) => {
          const u = percent(e.kind === 'scale' ? n * e.up : e.up[i], n);
          const d = percent(e.kind === 'scale' ? n * e.down : e.down[i], n);
          if (u !== null) up.push(u);
          if (d !== null) down.push(d);
        });
      }
      if (!up.length && !down.length) continue;
      const lo = (xs: number[]) => (xs.length ? Math.min(...xs) : NaN);
      const hi = (xs: number[]) => (xs.length ? Math.max(...xs) : NaN);
      out.push({ key: s.key, label: s.label ?? '', group: s.group ?? '', region: region.key, upMin: lo(up), upMax: hi(up), downMin: lo(down), downMax: hi(down) });
    }
  }
  return out;
}

const round2 = (x: number) => (Number.isFinite(x) ? Math.round(x * 100) / 100 : null);
const signedPercent = (x: number) => (Number.isFinite(x) ? `${x >= 0 ? '+' : '-'}${Math.abs(x).toFixed(1)}` : '--');
const rangeCell = (min: number, max: number) => `$${signedPercent(min)}$ to $${signedPercent(max)}$`;

export function systematicsTable(model: Pick<ExchangeModel, 'regions' | 'templates' | 'systematics'>, caption: string, label: string): NoteTable {
  const ranges = effectRanges(model);
  const names = [text('entry', 'Entry'), text('label', 'Label'), text('group', 'Group'), text('region', 'Region')];
  return {
    caption,
    label,
    columns: [...names, text('up_min_percent', 'Up min (\\%)', 'r'), text('up_max_percent', 'Up max (\\%)', 'r'), text('down_min_percent', 'Down min (\\%)', 'r'), text('down_max_percent', 'Down max (\\%)', 'r')],
    rows: ranges.map((r) => [r.key, r.label, r.group, r.region, round2(r.upMin), round2(r.upMax), round2(r.downMin), round2(r.downMax)]),
    // in LaTeX each range is one cell, "from … to …"
    latex: {
      columns: [...names, text('up', 'Up (\\%)', 'r'), text('down', 'Down (\\%)', 'r')],
      rows: ranges.map((r) => [escapeLatex(r.key), escapeLatex(r.label), escapeLatex(r.group), escapeLatex(r.region), rangeCell(r.upMin, r.upMax), rangeCell(r.downMin, r.downMax)]),
    },
  };
}

const shift = (x: number | null | undefined): Cell => (x === null || x === undefined ? null : { value: x, signed: true });

/** Pulls (θ̂ ± σ̂), and the post-fit impacts on μ, ranked by impact (unranked ones after, as stored). */
export function pullsTable(result: Pick<FitResult, 'nuisance'>, caption: string, label: string): NoteTable {
  const order = result.nuisance.map((n, i) => ({ n, i })).sort((a, b) => (a.n.rank ?? Infinity) - (b.n.rank ?? Infinity) || a.i - b.i);
  return {
    caption,
    label,
    columns: [text('rank', 'Rank', 'r'), text('parameter', 'Parameter'), text('group', 'Group'), pm('pull', 'Pull $\\hat\\theta \\pm \\sigma_{\\hat\\theta}$', 'constraint'), text('impact_up', '$\\Delta\\mu$ ($+\\sigma$)', 'r'), text('impact_down', '$\\Delta\\mu$ ($-\\sigma$)', 'r')],
    rows: order.map(({ n }) => [n.rank, n.name, n.group ?? '', { value: n.pull, error: n.constraint }, shift(n.postfitImpact?.up), shift(n.postfitImpact?.down)]),
  };
}
