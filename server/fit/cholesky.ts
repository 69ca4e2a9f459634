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
export function cholesky(A: Float64Array, n: number, relTol = 1e-13, out?: Float64Array): CholeskyResult {
  const L = out && out.length >= n * n ? out : new Float64Array(n * n);
  if (L === out) L.fill(0, 0, n * n);
  for (let j = 0; j < n; j++) {
    const rj = j * n;
    const d = A[rj + j] - rowDot(L, rj, rj, j);
    if (!(d > relTol * Math.abs(A[rj + j])) || !(d > 0)) return { L, failedAt: j };
    const ljj = Math.sqrt(d);
    L[rj + j] = ljj;
    const inv = 1 / ljj;
    for (let i = j + 1; i < n; i++) {
      const ri = i * n;
      L[ri + j] = (A[ri + j] - rowDot(L, ri, rj, j)) * inv;
    }
  }
  return { L, failedAt: -1 };
}

/** Σ_{k<len} X[a + k] X[b + k], with four partial sums so that the additions do not wait on each other. */
function rowDot(X: Float64Array, a: number, b: number, len: number): number {
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  let k = 0;
  for (; k + 3 < len; k += 4) {
    s0 += X[a + k] * X[b + k];
    s1 += X[a + k + 1] * X[b + k + 1];
    s2 += X[a + k + 2] * X[b + k + 2];
    s3 += X[a + k + 3] * X[b + k + 3];
  }
  for (; k < len; k++) s0 += X[a + k] * X[b + k];
  return s0 + s1 + (s2 + s3);
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
  // T = (L⁻¹)ᵀ, upper triangular, built one row at a time: row j of T is column j of L⁻¹,
  // T_jj = 1/L_jj and T_ji = −(Σ_{j≤k<i} L_ik T_jk)/L_ii for i > j. Rows of T and L are
  // contiguous, so both loops below are contiguous dot products.
  const T = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    const tj = j * n;
    T[tj + j] = 1 / L[j * n + j];
    for (let i = j + 1; i < n; i++) {
      const ri = i * n;
      let s = 0;
      for (let k = j; k < i; k++) s -= L[ri + k] * T[tj + k];
      T[tj + i] = s / L[ri + i];
    }
  }
  // A⁻¹_ij = Σ_k (L⁻¹)_ki (L⁻¹)_kj = Σ_{k ≥ max(i, j)} T_ik T_jk.
  const inv = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    const ti = i * n;
    for (let j = 0; j <= i; j++) {
      const tj = j * n;
      let s0 = 0;
      let s1 = 0;
      let k = i;
      for (; k + 1 < n; k += 2) {
        s0 += T[ti + k] * T[tj + k];
        s1 += T[ti + k + 1] * T[tj + k + 1];
      }
      if (k < n) s0 += T[ti + k] * T[tj + k];
      inv[ti + j] = s0 + s1;
      inv[tj + i] = s0 + s1;
    }
  }
  return inv;
}
