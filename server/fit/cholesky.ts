/**
 * Cholesky factorisation A = L Lᵀ on a flat row-major Float64Array (n × n), with solves
 * and the inverse. Written here because the Newton loop factorises a few-hundred-square
 * matrix every iteration; a general matrix library is too slow there.
 */

export interface CholeskyResult {
  /** Lower factor, row-major; the upper triangle is zero. */
  L: Float64Array;
  /** -1 when A is positive definite, else the index of the first pivot that failed. */
  failedAt: number;
}

/**
 * Factorises A (only its lower triangle is read). A pivot below `relTol` times the
 * corresponding diagonal element of A counts as a failure (numerically singular).
 */
export function cholesky(A: Float64Array, n: number, relTol = 1e-13): CholeskyResult {
  const L = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    const rj = j * n;
    let d = A[rj + j];
    for (let k = 0; k < j; k++) d -= L[rj + k] * L[rj + k];
    if (!(d > relTol * Math.abs(A[rj + j])) || !(d > 0)) return { L, failedAt: j };
    const ljj = Math.sqrt(d);
    L[rj + j] = ljj;
    const inv = 1 / ljj;
    for (let i = j + 1; i < n; i++) {
      const ri = i * n;
      let s = A[ri + j];
      for (let k = 0; k < j; k++) s -= L[ri + k] * L[rj + k];
      L[ri + j] = s * inv;
    }
  }
  return { L, failedAt: -1 };
}

/** Solves L y = b in place (forward substitution). */
export function forwardSolve(L: Float64Array, n: number, b: Float64Array): void {
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    let s = b[i];
    for (let k = 0; k < i; k++) s -= L[ri + k] * b[k];
    b[i] = s / L[ri + i];
  }
}

/** Solves Lᵀ x = y in place (back substitution). */
export function backSolve(L: Float64Array, n: number, y: Float64Array): void {
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i];
    for (let k = i + 1; k < n; k++) s -= L[k * n + i] * y[k];
    y[i] = s / L[i * n + i];
  }
}

/** Solves A x = b given A's factor; b is overwritten with x. */
export function choleskySolve(L: Float64Array, n: number, b: Float64Array): void {
  forwardSolve(L, n, b);
  backSolve(L, n, b);
}

/** A⁻¹ = L⁻ᵀ L⁻¹ from the factor, row-major and symmetric. */
export function choleskyInverse(L: Float64Array, n: number): Float64Array {
  // M = L⁻¹ (lower triangular), column by column.
  const M = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    M[j * n + j] = 1 / L[j * n + j];
    for (let i = j + 1; i < n; i++) {
      const ri = i * n;
      let s = 0;
      for (let k = j; k < i; k++) s -= L[ri + k] * M[k * n + j];
      M[ri + j] = s / L[ri + i];
    }
  }
  // A⁻¹_ij = Σ_k M_ki M_kj over k ≥ max(i, j).
  const inv = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let k = i; k < n; k++) s += M[k * n + i] * M[k * n + j];
      inv[i * n + j] = s;
      inv[j * n + i] = s;
    }
  }
  return inv;
}
