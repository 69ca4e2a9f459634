/** Parsing the number lists people type or paste: bin edges, templates, observed counts. */

export type ParsedList = { values: number[]; error: null } | { values: null; error: string };

/**
 * Split on commas, semicolons, tabs, spaces or new lines (what a spreadsheet column or a
 * comma list pastes as) and read each piece as a number. The first piece that is not a finite
 * number is named, with its 1-based position.
 */
export function parseNumberList(text: string): ParsedList {
  const pieces = text
    .split(/[\s,;]+/)
    .map((p) => p.trim())
    .filter((p) => p !== '');
  const values: number[] = [];
  for (let i = 0; i < pieces.length; i++) {
    const v = Number(pieces[i]);
    if (!Number.isFinite(v)) return { values: null, error: `value ${i + 1} (“${pieces[i]}”) is not a number` };
    values.push(v);
  }
  return { values, error: null };
}

/** A number list written back for editing. */
export function formatNumberList(values: readonly number[] | null | undefined): string {
  return values ? values.map((v) => String(Number.isInteger(v) ? v : Number(v.toPrecision(10)))).join(', ') : '';
}

export function sum(values: readonly number[]): number {
  let s = 0;
  for (const v of values) s += v;
  return s;
}
