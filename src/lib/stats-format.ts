/** Formatting of fit quantities: fixed decimals that suit the size of the uncertainty, signs where they matter. */

/** Digits after the point so that `error` shows two significant figures (at most 4, at least 0). */
export function decimalsFor(error: number | null | undefined): number {
  if (error === null || error === undefined || !Number.isFinite(error) || error <= 0) return 3;
  const d = 1 - Math.floor(Math.log10(error));
  return Math.min(4, Math.max(0, d));
}

export function formatFixed(x: number | null | undefined, decimals = 3): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '–';
  const s = x.toFixed(decimals);
  return /^-0\.?0*$/.test(s) ? s.slice(1) : s.replace('-', '−');
}

/** A signed number: "+0.12", "−0.05", with a real minus sign. */
export function formatSigned(x: number | null | undefined, decimals = 3): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '–';
  const s = formatFixed(x, decimals);
  return s.startsWith('−') || Number(s) === 0 ? s : `+${s}`;
}

/** A probability: scientific notation below 1e-3. */
export function formatProbability(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return '–';
  if (p === 0) return '0';
  if (p < 1e-3) {
    const [m, e] = p.toExponential(2).split('e');
    return `${m} × 10${superscript(Number(e))}`;
  }
  return p < 0.1 ? p.toFixed(4) : p.toFixed(3);
}

const SUP: Record<string, string> = { '-': '⁻', '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹' };
function superscript(n: number): string {
  return String(n)
    .split('')
    .map((c) => SUP[c] ?? c)
    .join('');
}

/** A significance in standard deviations. */
export function formatSigma(z: number | null | undefined): string {
  return z === null || z === undefined || !Number.isFinite(z) ? '–' : `${z.toFixed(2)} σ`;
}

/** A large or small number in a compact form (condition numbers, decrements). */
export function formatCompact(x: number | null | undefined): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '–';
  if (x === 0) return '0';
  const a = Math.abs(x);
  if (a >= 1e4 || a < 1e-3) {
    const [m, e] = x.toExponential(2).split('e');
    return `${m.replace('-', '−')} × 10${superscript(Number(e))}`;
  }
  return String(Number(x.toPrecision(4))).replace('-', '−');
}
