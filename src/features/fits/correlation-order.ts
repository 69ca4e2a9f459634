/**
 * Orderings and selections of a correlation matrix for display. The matrix is square, row-major,
 * symmetric with ones on the diagonal; every function returns indices into it and leaves it as it is.
 */

export type CorrelationMatrix = { names: string[]; values: number[] };

export function size(m: CorrelationMatrix): number {
  return m.names.length;
}

export function rho(m: CorrelationMatrix, i: number, j: number): number {
  return m.values[i * m.names.length + j];
}

/**
 * Group order: parameters of the same group next to each other, groups in the order given
 * (unlisted groups after them, by first appearance), and the input order kept within a group.
 */
export function orderByGroup(m: CorrelationMatrix, groupOf: (name: string) => string, groupOrder: string[] = []): number[] {
  const rank = new Map<string, number>(groupOrder.map((g, i) => [g, i]));
  const seen = new Map<string, number>();
  m.names.forEach((n) => {
    const g = groupOf(n);
    if (!rank.has(g) && !seen.has(g)) seen.set(g, groupOrder.length + seen.size);
  });
  const key = (g: string) => rank.get(g) ?? seen.get(g)!;
  return m.names.map((_, i) => i).sort((a, b) => key(groupOf(m.names[a])) - key(groupOf(m.names[b])) || a - b);
}

/**
 * A greedy clustering order. Start from the parameter with the largest Σ_j |ρ_ij| (the most
 * connected one); then repeatedly append the unplaced parameter with the largest |ρ| to any of
 * the last `memory` placed ones (ties to the earlier index). Strongly correlated parameters end up
 * next to each other, so blocks of the matrix show as squares on its diagonal. O(n² · memory).
 */
export function orderByClustering(m: CorrelationMatrix, memory = 3): number[] {
  const n = size(m);
  if (n === 0) return [];
  const placed = new Uint8Array(n);
  let start = 0;
  let best = -1;
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) if (j !== i) s += Math.abs(rho(m, i, j));
    if (s > best) {
      best = s;
      start = i;
    }
  }
  const order = [start];
  placed[start] = 1;
  while (order.length < n) {
    const recent = order.slice(-memory);
    let next = -1;
    let score = -1;
    for (let j = 0; j < n; j++) {
      if (placed[j]) continue;
      let s = 0;
      for (const i of recent) s = Math.max(s, Math.abs(rho(m, i, j)));
      if (s > score) {
        score = s;
        next = j;
      }
    }
    order.push(next);
    placed[next] = 1;
  }
  return order;
}

/** The indices (in the given order) of parameters that have |ρ| ≥ threshold with some other parameter. */
export function keepCorrelated(m: CorrelationMatrix, order: number[], threshold: number): number[] {
  if (threshold <= 0) return order;
  const n = size(m);
  return order.filter((i) => {
    for (let j = 0; j < n; j++) if (j !== i && Math.abs(rho(m, i, j)) >= threshold) return true;
    return false;
  });
}

export type Pair = { a: number; b: number; rho: number };

/** The `limit` pairs among `indices` with the largest |ρ|, largest first. */
export function strongestPairs(m: CorrelationMatrix, indices: number[], limit = 12): Pair[] {
  const pairs: Pair[] = [];
  for (let x = 0; x < indices.length; x++)
    for (let y = x + 1; y < indices.length; y++) {
      const a = Math.min(indices[x], indices[y]);
      const b = Math.max(indices[x], indices[y]);
      pairs.push({ a, b, rho: rho(m, a, b) });
    }
  return pairs.sort((p, q) => Math.abs(q.rho) - Math.abs(p.rho) || p.a - q.a || p.b - q.b).slice(0, limit);
}
