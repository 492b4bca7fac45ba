/**
 * Node participation: H1 measures from cycle representatives, H0 measures from the merge tree,
 * the participation embedding and its clustering, network means. External checks: H0 lifetimes
 * against GUDHI's H0 deaths (goldens), the join value against a brute-force component count.
 */
import { describe, expect, it } from 'vitest';
import { h0BirthComponentLifetime, h0JoinValue } from '../../../electron/engine/features/h0-merge-tree.ts';
import { h1Participation, participationMatrix } from '../../../electron/engine/features/h1-participation.ts';
import { networkMeans } from '../../../electron/engine/features/networks.ts';
import { computePersistence } from '../../../electron/engine/persistence.ts';
import { createRng } from '../../../electron/engine/random.ts';
import { pairIndex } from '../../../electron/engine/transform.ts';
import type { CycleRepresentative, DistanceMatrix } from '../../../electron/engine/types.ts';
import { curves, distancesOf } from './goldens.ts';

const rep = (birth: number, death: number, nodes: number[]): CycleRepresentative => ({
  birth,
  death,
  nodes,
  edges: [],
});

describe('H1 participation', () => {
  const reps = [rep(1, 3, [0, 1, 2]), rep(2, 3, [2, 3, 4])];
  it('counts, lifetime sums and their share of the total', () => {
    // lifetimes 2 and 1, total 3; node 2 is in both.
    const p = h1Participation(6, reps);
    expect(Array.from(p.count)).toEqual([1, 1, 2, 1, 1, 0]);
    expect(Array.from(p.weighted)).toEqual([2, 2, 3, 1, 1, 0]);
    expect(Array.from(p.weightedNorm)).toEqual([2 / 3, 2 / 3, 1, 1 / 3, 1 / 3, 0]);
  });
  it('a persistence floor and a birth band select cycles', () => {
    expect(Array.from(h1Participation(6, reps, { floor: 1.5 }).count)).toEqual([1, 1, 1, 0, 0, 0]);
    // only the second cycle (born at 2) is in the band; it is then the whole total.
    expect(Array.from(h1Participation(6, reps, { birthBand: [1.5, 2.5] }).weightedNorm)).toEqual([
      0, 0, 1, 1, 1, 0,
    ]);
    expect(Array.from(h1Participation(6, reps, { floor: 5 }).weightedNorm)).toEqual([0, 0, 0, 0, 0, 0]);
  });
  it('an essential cycle needs the threshold and is clipped there', () => {
    const ess = [rep(1, Infinity, [0, 1])];
    expect(() => h1Participation(2, ess)).toThrow(/never dies/);
    expect(Array.from(h1Participation(2, ess, { threshold: 4 }).weighted)).toEqual([3, 3]);
  });
  it('the participation matrix: 0/1 or lifetimes, nodes × cycles', () => {
    const m = participationMatrix(5, reps, {}, 'lifetime');
    expect(m.cols).toBe(2);
    // rows: node 0 → [2, 0], node 2 → [2, 1], node 4 → [0, 1]
    expect(Array.from(m.values)).toEqual([2, 0, 2, 0, 2, 1, 0, 1, 0, 1]);
    expect(Array.from(participationMatrix(5, reps).values)).toEqual([1, 0, 1, 0, 1, 1, 0, 1, 0, 1]);
  });
  it('on the engine: the square loop holds every node with lifetime 1', () => {
    const square: DistanceMatrix = { n: 4, values: Float64Array.of(1, 2, 1, 1, 2, 1) };
    const r = computePersistence(square, { representatives: true });
    const p = h1Participation(4, r.representatives!, { threshold: r.threshold });
    expect(Array.from(p.count)).toEqual([1, 1, 1, 1]);
    expect(Array.from(p.weightedNorm)).toEqual([1, 1, 1, 1]);
  });
});

/** Components of the graph with edges ≤ t, by depth-first search (independent of the merge tree). */
function components(d: DistanceMatrix, t: number): number[][] {
  const seen = new Uint8Array(d.n);
  const out: number[][] = [];
  for (let s = 0; s < d.n; s++) {
    if (seen[s]) continue;
    const comp: number[] = [];
    const stack = [s];
    seen[s] = 1;
    while (stack.length) {
      const v = stack.pop()!;
      comp.push(v);
      for (let u = 0; u < d.n; u++) {
        if (!seen[u] && u !== v && d.values[pairIndex(u, v)] <= t) {
          seen[u] = 1;
          stack.push(u);
        }
      }
    }
    out.push(comp.sort((a, b) => a - b));
  }
  return out;
}

/** The join value by its definition: the first value from which the node stays in the largest component. */
function joinByDefinition(d: DistanceMatrix, values: number[]): number[] {
  const ts = [0, ...new Set(values)].sort((a, b) => a - b);
  const inLargest = ts.map((t) => {
    const comps = components(d, t);
    comps.sort((a, b) => b.length - a.length || a[0] - b[0]);
    return new Set(comps[0]);
  });
  return Array.from({ length: d.n }, (_, v) => {
    let join = NaN;
    for (let i = ts.length - 1; i >= 0 && inLargest[i].has(v); i--) join = ts[i];
    return join;
  });
}

function randomDistances(n: number, seed: number): DistanceMatrix {
  const rng = createRng(seed);
  const values = new Float64Array((n * (n - 1)) / 2);
  for (let k = 0; k < values.length; k++) values[k] = Math.round(rng.next() * 1000) / 1000 + 0.001;
  return { n, values };
}

describe('H0 from the merge tree', () => {
  const tree = [
    { value: 1, edge: [2, 1] as [number, number], survivor: 1, absorbed: 2 },
    { value: 2, edge: [1, 0] as [number, number], survivor: 0, absorbed: 1 },
  ];
  it('by hand: 1–2 join at 1 and are the largest; 0 joins them at 2', () => {
    expect(Array.from(h0JoinValue(3, tree))).toEqual([2, 1, 1]);
    // node 2's class dies at 1, node 1's at 2 (absorbed by the component of node 0), node 0 survives
    expect(Array.from(h0BirthComponentLifetime(3, tree, 5))).toEqual([5, 2, 1]);
  });

  for (const seed of [1, 2, 3, 4]) {
    it(`join value equals its definition by brute-force components (random graph, seed ${seed})`, () => {
      const d = randomDistances(14, seed);
      const r = computePersistence(d);
      const values = r.mergeTree.map((e) => e.value);
      expect(Array.from(h0JoinValue(14, r.mergeTree))).toEqual(joinByDefinition(d, values));
    });
  }

  it('a capped filtration can end disconnected: nodes outside the largest component get NaN', () => {
    // Two pairs: {0,1} at 1 and {2,3} at 1.5, bridged only at 10; cap 5.
    const d: DistanceMatrix = { n: 4, values: Float64Array.of(1, 10, 10, 10, 10, 1.5) };
    const r = computePersistence(d, { cap: { kind: 'distance', value: 5 } });
    expect(Array.from(h0JoinValue(4, r.mergeTree))).toEqual([0, 1, NaN, NaN]);
    expect(joinByDefinition(d, [1, 1.5])).toEqual([0, 1, NaN, NaN]);
  });

  for (const c of curves.cases) {
    it(`${c.name}: lifetimes of the absorbed nodes are GUDHI's finite H0 deaths`, () => {
      const r = computePersistence(distancesOf(c), { maxDim: 1 });
      const life = h0BirthComponentLifetime(c.n, r.mergeTree, r.threshold);
      const absorbed = new Set(r.mergeTree.map((e) => e.absorbed));
      const ours = [...absorbed].map((v) => life[v]).sort((a, b) => a - b);
      const ref = c.dims[0].diagram
        .filter(([, d]) => d !== null)
        .map(([, d]) => d as number)
        .sort((a, b) => a - b);
      expect(ours).toEqual(ref);
      expect(absorbed.size).toBe(c.n - 1);
    });
  }
});

describe('network means', () => {
  it('averages per network, skipping NaN and unassigned nodes, in node-table order', () => {
    expect(networkMeans([1, 2, 3, NaN, 9], ['DMN', 'DMN', 'VIS', 'VIS', null])).toEqual([
      { network: 'DMN', mean: 1.5, nodes: 2 },
      { network: 'VIS', mean: 3, nodes: 1 },
    ]);
    expect(() => networkMeans([1], ['A', 'B'])).toThrow(/1 node values but 2 network labels/);
  });
});
