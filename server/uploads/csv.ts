import Papa from 'papaparse';
import { unprocessable } from '../errors';

export type CsvRow = { line: number; get: (column: string) => string };

/** Collects every problem of a file, so a person can fix them all at once; the upload is refused if any. */
export class FileProblems {
  readonly list: { path: (string | number)[]; message: string; line: number }[] = [];
  constructor(private readonly filename: string) {}
  at(line: number | null, column: string | null, message: string) {
    const where = [line !== null ? `Row ${line}` : null, column ? `column "${column}"` : null].filter(Boolean).join(', ');
    if (this.list.length < 200)
      this.list.push({ path: [...(line !== null ? ['row', line] : []), ...(column ? [column] : [])], message: where ? `${where}: ${message}` : message, line: line ?? Infinity });
  }
  get any() {
    return this.list.length > 0;
  }
  throwIfAny() {
    if (!this.any) return;
    // in file order, problems of the file as a whole last
    this.list.sort((a, b) => a.line - b.line);
    const shown = this.list.slice(0, 5).map((p) => p.message);
    const more = this.list.length > 5 ? ` (and ${this.list.length - 5} more problems)` : '';
    const issues = this.list.map(({ path, message }) => ({ path, message }));
    throw unprocessable(`Nothing was saved. "${this.filename}" has ${this.list.length === 1 ? 'a problem' : `${this.list.length} problems`}: ${shown.join('; ')}${more}.`, issues);
  }
}

/**
 * Reads a CSV with a header row. Column names are matched without case or surrounding spaces; the
 * file is refused when a required column is missing or an unknown one is present. Row numbers
 * count the header as row 1, as a spreadsheet shows them.
 */
export function readCsv(text: string, filename: string, columns: { required: string[]; optional?: string[] }, problems = new FileProblems(filename)) {
  const parsed = Papa.parse<string[]>(text, { skipEmptyLines: 'greedy' });
  for (const e of parsed.errors.slice(0, 20)) problems.at(e.row !== undefined ? e.row + 1 : null, null, `the CSV cannot be read (${e.message})`);
  problems.throwIfAny();
  const [header, ...body] = parsed.data;
  const names = (header ?? []).map((h) => h.trim().toLowerCase());
  const allowed = [...columns.required, ...(columns.optional ?? [])];
  const expected = `Expected the header: ${allowed.join(',')}`;
  const missing = columns.required.filter((c) => !names.includes(c));
  if (missing.length) problems.at(1, null, `missing column${missing.length > 1 ? 's' : ''} ${missing.map((m) => `"${m}"`).join(', ')}. ${expected}`);
  names.forEach((n, i) => {
    if (!allowed.includes(n)) problems.at(1, n || `#${i + 1}`, `unknown column. ${expected}`);
    else if (names.indexOf(n) !== i) problems.at(1, n, 'appears twice');
  });
  if (!body.length) problems.at(null, null, 'has a header but no data rows');
  problems.throwIfAny();
  // a row longer or shorter than the header is a shifted or cut row: its cells cannot be trusted
  body.forEach((cells, i) => {
    if (cells.length !== names.length) problems.at(i + 2, null, `has ${cells.length} cell${cells.length === 1 ? '' : 's'}, but the header has ${names.length} columns`);
  });
  const index = new Map(names.map((n, i) => [n, i]));
  const rows: CsvRow[] = body.map((cells, i) => ({ line: i + 2, get: (c: string) => (index.has(c) ? (cells[index.get(c)!] ?? '').trim() : '') }));
  return { rows, problems };
}

/** A number cell: refuses text, NaN and infinities with the row and column. Returns null for an empty cell. */
export function numberCell(problems: FileProblems, row: CsvRow, column: string, rule: { min?: number; max?: number; positive?: boolean; integer?: boolean } = {}): number | null {
  const raw = row.get(column);
  if (raw === '') return null;
  const value = Number(raw);
  if (!/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(raw) || !Number.isFinite(value)) {
    problems.at(row.line, column, `"${raw.slice(0, 40)}" is not a finite number`);
    return null;
  }
  if (rule.integer && !Number.isInteger(value)) problems.at(row.line, column, `${raw} is not a whole number`);
  else if (rule.positive && !(value > 0)) problems.at(row.line, column, `${raw} must be greater than 0`);
  else if (rule.min !== undefined && value < rule.min) problems.at(row.line, column, rule.min === 0 ? `${raw} must not be negative` : `${raw} must be at least ${rule.min}`);
  else if (rule.max !== undefined && value > rule.max) problems.at(row.line, column, `${raw} must be at most ${rule.max.toExponential(0)} (check the units)`);
  else return value;
  return null;
}

/**
 * A bin-number cell of a per-bin file: a whole number from 1 to `bins`, given once per template
 * (`seen` maps bin to the row that gave it). Returns the bin, or null after naming the problem.
 */
export function binCell(problems: FileProblems, row: CsvRow, at: { region: string; bins: number; of: string; seen: Map<number, number>; emptyHint?: string }): number | null {
  if (row.get('bin') === '') {
    problems.at(row.line, 'bin', at.emptyHint ?? `is empty: give the bin, 1 to ${at.bins}`);
    return null;
  }
  const bin = numberCell(problems, row, 'bin', { integer: true });
  if (bin === null) return null;
  if (bin < 1 || bin > at.bins) {
    problems.at(row.line, 'bin', `${bin} is outside region "${at.region}", which has bins 1 to ${at.bins}`);
    return null;
  }
  if (at.seen.has(bin)) {
    problems.at(row.line, 'bin', `bin ${bin} of ${at.of} appears twice (also row ${at.seen.get(bin)})`);
    return null;
  }
  at.seen.set(bin, row.line);
  return bin;
}
