import { EigenvalueDecomposition, Matrix } from 'ml-matrix';

/**
 * One systematic from N alternative templates of one (region, process): what a contact has when
 * a theory or modelling uncertainty comes as a set of variations rather than one up and one down.
 *
 * - Envelope of alternatives (e.g. scale choices): per bin, up = the largest and down = the
 *   smallest of the nominal and the alternatives. So up ≥ nominal ≥ down in every bin (the sign
 *   convention: "up" is the upper edge of the envelope, not a particular alternative).
 * - Standard deviation of replicas (e.g. a parton-density replica set): per bin,
 *   s_b = √(Σ_k (t_kb − t̄_b)² / (N − 1)), and up/down = nominal ± s_b.
 * - Principal components of the replicas: the covariance C = Σ_k (t_k − t̄)(t_k − t̄)ᵀ / (N − 1)
 *   is decomposed, C = Σ_j λ_j e_j e_jᵀ; the leading components are kept until they hold the
 *   chosen fraction of Σ λ (the trace), and each becomes a systematic of its own with
 *   up/down = nominal ± √λ_j e_j. The sign of e_j is chosen so that its largest entry in
 *   absolute value is positive (a convention, so that the same replicas give the same result).
 */
export type ReplicaEffect = { up: number[]; down: number[] };

export function envelope(nominal: readonly number[], alternatives: readonly (readonly number[])[]): ReplicaEffect {
  return {
    up: nominal.map((n, b) => Math.max(n, ...alternatives.map((t) => t[b]))),
    down: nominal.map((n, b) => Math.min(n, ...alternatives.map((t) => t[b]))),
  };
}

export function replicaSpread(nominal: readonly number[], replicas: readonly (readonly number[])[]): ReplicaEffect {
  const N = replicas.length;
  const sd = nominal.map((_, b) => {
    const mean = replicas.reduce((s, t) => s + t[b], 0) / N;
    return Math.sqrt(replicas.reduce((s, t) => s + (t[b] - mean) ** 2, 0) / (N - 1));
  });
  return { up: nominal.map((n, b) => n + sd[b]), down: nominal.map((n, b) => Math.max(0, n - sd[b])) };
}

export type Component = ReplicaEffect & { eigenvalue: number; fraction: number; vector: number[] };

/** The leading principal components of a replica set, holding at least `keep` of the variance (0 < keep ≤ 1). */
export function principalComponents(nominal: readonly number[], replicas: readonly (readonly number[])[], keep: number): { components: Component[]; total: number } {
  const N = replicas.length;
  const mean = nominal.map((_, b) => replicas.reduce((s, t) => s + t[b], 0) / N);
  const centred = new Matrix(replicas.map((t) => t.map((v, b) => v - mean[b])));
  const covariance = centred.transpose().mmul(centred).div(N - 1);
  const eig = new EigenvalueDecomposition(covariance, { assumeSymmetric: true });
  const values = eig.realEigenvalues;
  const vectors = eig.eigenvectorMatrix;
  const order = values.map((_, j) => j).sort((a, b) => values[b] - values[a]);
  const total = values.reduce((s, v) => s + Math.max(0, v), 0);
  const components: Component[] = [];
  let held = 0;
  for (const j of order) {
    if (total <= 0 || values[j] <= 0 || held >= keep * total * (1 - 1e-12)) break;
    let e = vectors.getColumn(j);
    const largest = e.reduce((a, v, b) => (Math.abs(v) > Math.abs(e[a]) ? b : a), 0);
    if (e[largest] < 0) e = e.map((v) => -v);
    const scale = Math.sqrt(values[j]);
    components.push({
      eigenvalue: values[j],
      fraction: values[j] / total,
      vector: e,
      up: nominal.map((n, b) => n + scale * e[b]),
      down: nominal.map((n, b) => Math.max(0, n - scale * e[b])),
    });
    held += values[j];
  }
  return { components, total };
}
