/** Small formatting helpers: every number leaves here with its unit or its meaning. */

const dateTime = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium', timeStyle: 'short' });
const date = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium' });

export function formatDateTime(iso: string): string {
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : dateTime.format(d);
}

export function formatDate(iso: string): string {
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : date.format(d);
}

/** A count of events, with thousands separators. */
export function formatCount(n: number): string {
  return Number.isInteger(n) ? n.toLocaleString('en-GB') : n.toLocaleString('en-GB', { maximumFractionDigits: 1 });
}

/** An expected yield in events, to one decimal place always, so that a column of them lines up. */
export function formatYield(n: number): string {
  return n.toLocaleString('en-GB', { minimumFractionDigits: 1, maximumFractionDigits: 1 });
}

/** A percentage with a precision that suits its size. */
export function formatPercent(p: number): string {
  const a = Math.abs(p);
  const digits = a >= 10 ? 0 : a >= 1 ? 1 : 2;
  return `${p.toFixed(digits)} %`;
}

/** A bin edge, without trailing zeros. */
export function formatEdge(x: number): string {
  return Number.isInteger(x) ? String(x) : String(Number(x.toPrecision(6)));
}

/** Rounded to one decimal place. */
export function round1(x: number): number {
  return Math.round(x * 10) / 10;
}

export function plural(n: number, one: string, many = `${one}s`): string {
  return `${n.toLocaleString('en-GB')} ${n === 1 ? one : many}`;
}
