import { describe, expect, it } from 'vitest';
import { keepCorrelated, orderByClustering, orderByGroup, strongestPairs, type CorrelationMatrix } from '../../src/features/fits/correlation-order';

/** A symmetric matrix with ones on the diagonal from its upper-triangle entries. */
function matrix(names: string[], upper: Record<string, number>): CorrelationMatrix {
  const n = names.length;
  const values = new Array<number>(n * n).fill(0);
  for (let i = 0; i < n; i++) values[i * n + i] = 1;
  for (const [key, r] of Object.entries(upper)) {
    const [a, b] = key.split('-').map((s) => names.indexOf(s));
    values[a * n + b] = r;
    values[b * n + a] = r;
  }
  return { names, values };
}

// Two blocks interleaved in the input: {a1, a2, a3} and {b1, b2}, weakly linked to each other.
const interleaved = matrix(['a1', 'b1', 'a2', 'b2', 'a3', 'lone'], {
  'a1-a2': 0.8,
  'a2-a3': 0.7,
  'a1-a3': 0.6,
  'b1-b2': -0.9,
  'a3-b1': 0.1,
  'lone-a1': 0.02,
});

const blockOf = (order: number[], names: string[]) => order.map((i) => names[i][0]).join('');

describe('ordering a correlation matrix by clustering', () => {
  it('puts each block of strongly correlated parameters next to each other, whatever the input order', () => {
    const order = orderByClustering(interleaved);
    expect([...order].sort()).toEqual([0, 1, 2, 3, 4, 5]);
    // the a-block and the b-block each appear as one contiguous run
    const s = blockOf(order, interleaved.names);
    expect(s.indexOf('b') + 1).toBe(s.lastIndexOf('b'));
    expect(s.lastIndexOf('a') - s.indexOf('a')).toBe(2);
  });

  it('starts from the most connected parameter and treats anti-correlation as strongly as correlation', () => {
    const m = matrix(['x', 'y', 'z'], { 'x-y': 0.1, 'y-z': -0.95, 'x-z': 0.05 });
    const order = orderByClustering(m);
    expect(order[0]).toBe(1); // y: |0.1| + |−0.95| is the largest sum
    expect(order[1]).toBe(2);
  });

  it('orders an empty matrix and a single parameter', () => {
    expect(orderByClustering({ names: [], values: [] })).toEqual([]);
    expect(orderByClustering({ names: ['mu'], values: [1] })).toEqual([0]);
  });
});

describe('ordering by group', () => {
  it('keeps groups together in the order given and the input order within each group', () => {
    const groups: Record<string, string> = { a1: 'jets', b1: 'theory', a2: 'jets', b2: 'theory', a3: 'leptons', lone: 'jets' };
    const order = orderByGroup(interleaved, (n) => groups[n], ['theory']);
    expect(order.map((i) => interleaved.names[i])).toEqual(['b1', 'b2', 'a1', 'a2', 'lone', 'a3']);
  });
});

describe('the |ρ| threshold and the strongest pairs', () => {
  it('keeps only parameters with some |ρ| at or above the threshold with another parameter', () => {
    const order = [0, 1, 2, 3, 4, 5];
    expect(keepCorrelated(interleaved, order, 0.75).map((i) => interleaved.names[i])).toEqual(['a1', 'b1', 'a2', 'b2']);
    expect(keepCorrelated(interleaved, order, 0)).toEqual(order);
    // the diagonal never counts
    expect(keepCorrelated(interleaved, order, 0.99)).toEqual([]);
  });

  it('lists pairs by |ρ|, largest first, each pair once', () => {
    const pairs = strongestPairs(interleaved, [0, 1, 2, 3, 4, 5], 3);
    expect(pairs.map((p) => [interleaved.names[p.a], interleaved.names[p.b], p.rho])).toEqual([
      ['b1', 'b2', -0.9],
      ['a1', 'a2', 0.8],
      ['a2', 'a3', 0.7],
    ]);
  });
});
