/**
 * Hand-checkable filtrations, each with its reasoning. Distances are given as full matrices;
 * Infinity marks an absent edge.
 */
import { describe, expect, it } from 'vitest';
import { computePersistence, densityThreshold, enclosingRadius } from '../../electron/engine/persistence.ts';
import { distancesFromRows } from '../../electron/engine/transform.ts';
import type { Interval } from '../../electron/engine/types.ts';

/** Distance matrix of the cycle graph C_n under the shortest-path metric, scaled by `unit`. */
function cycleMetric(n: number, unit = 1): number[][] {
  return Array.from({ length: n }, (_, i) =>
    Array.from({ length: n }, (_, j) => unit * Math.min(Math.abs(i - j), n - Math.abs(i - j))),
  );
}

const pairs = (d: Interval[]): Array<[number, number]> => d.map((iv) => [iv.birth, iv.death]);

describe('hand-checkable filtrations', () => {
  it('square with diagonals 2: one loop born at 1 (the four sides), filled at 2 (the diagonals)', () => {
    // At t = 1 the four sides form a 4-cycle with no triangle (a triangle needs a diagonal).
    // At t = 2 both diagonals enter; every triple is then a clique and the loop is a boundary.
    const r = computePersistence(distancesFromRows(cycleMetric(4)), { maxDim: 1, representatives: true });
    expect(pairs(r.diagrams[0])).toEqual([
      [0, 1],
      [0, 1],
      [0, 1],
      [0, Infinity],
    ]);
    expect(pairs(r.diagrams[1])).toEqual([[1, 2]]);
    // The representative is the square itself.
    expect(r.representatives![0].edges).toEqual([
      [1, 0],
      [2, 1],
      [3, 0],
      [3, 2],
    ]);
    expect(r.representatives![0].nodes).toEqual([0, 1, 2, 3]);
  });

  it('pentagon: one loop [1, 2); at 2 every pair is joined and the complex is a full simplex', () => {
    // In C5 every non-adjacent pair is at path distance 2, so at t = 2 the graph is K5.
    const r = computePersistence(distancesFromRows(cycleMetric(5)), { maxDim: 2 });
    expect(pairs(r.diagrams[1])).toEqual([[1, 2]]);
    expect(r.diagrams[2]).toEqual([]);
  });

  it('hexagon: a loop [1, 2), then an octahedral sphere [2, 3) in H2', () => {
    // At t = 2 each node of C6 is joined to all but its opposite: the graph is K_{2,2,2}, whose
    // clique complex is the boundary of the octahedron, a 2-sphere: β1 = 0, β2 = 1.
    // At t = 3 the opposite pairs join and the sphere is filled.
    const r = computePersistence(distancesFromRows(cycleMetric(6)), { maxDim: 2 });
    expect(pairs(r.diagrams[1])).toEqual([[1, 2]]);
    expect(pairs(r.diagrams[2])).toEqual([[2, 3]]);
  });

  it('two triangles joined at a node: every cycle is filled the moment it appears', () => {
    // Nodes 0,1,2 and 2,3,4 form unit triangles; other pairs are at 2. Node 2 is within 1 of
    // everyone, so the filtration stops at the enclosing radius 1 (a cone on node 2). Of the 6 edges
    // at 1, 4 join components (H0) and the other 2 each close a cycle that its triangle, of the
    // same diameter, fills at once: no H1 interval of positive length, two of length 0.
    const D = [
      [0, 1, 1, 2, 2],
      [1, 0, 1, 2, 2],
      [1, 1, 0, 1, 1],
      [2, 2, 1, 0, 1],
      [2, 2, 1, 1, 0],
    ];
    expect(computePersistence(distancesFromRows(D), { maxDim: 1 }).diagrams[1]).toEqual([]);
    const kept = computePersistence(distancesFromRows(D), { maxDim: 1, keepZeroLength: true });
    expect(kept.threshold).toBe(1);
    expect(pairs(kept.diagrams[1])).toEqual([
      [1, 1],
      [1, 1],
    ]);
    // Without the cone shortcut (a cap above 2 is replaced by the radius, same answer) the same holds.
    const capped = computePersistence(distancesFromRows(D), {
      maxDim: 1,
      cap: { kind: 'distance', value: 5 },
    });
    expect(capped.diagrams[1]).toEqual([]);
  });

  it('cycle graph C_n with equal weights and no other edges: one H1 class born at the weight, never dying', () => {
    // Common practice: without chords the clique complex of C_n (n ≥ 4) has no triangles, so the
    // n-cycle is born when its edges enter and is never a boundary.
    for (const n of [4, 7, 12]) {
      const D = Array.from({ length: n }, (_, i) =>
        Array.from({ length: n }, (_, j) =>
          i === j ? 0 : (i - j + n) % n === 1 || (j - i + n) % n === 1 ? 0.4 : Infinity,
        ),
      );
      const r = computePersistence(distancesFromRows(D), { maxDim: 1, representatives: true });
      expect(r.thresholdSource).toBe('all-finite-edges');
      expect(pairs(r.diagrams[1])).toEqual([[0.4, Infinity]]);
      expect(r.diagrams[0].filter((iv) => iv.death === Infinity)).toHaveLength(1);
      expect(r.diagrams[0].filter((iv) => iv.death === 0.4)).toHaveLength(n - 1);
      // Its representative is the whole cycle.
      expect(r.representatives![0].edges).toHaveLength(n);
      expect(r.representatives![0].nodes).toEqual(Array.from({ length: n }, (_, i) => i));
    }
  });

  it('absent edges split the graph: one essential H0 class per component', () => {
    const D = [
      [0, 1, Infinity, Infinity],
      [1, 0, Infinity, Infinity],
      [Infinity, Infinity, 0, 3],
      [Infinity, Infinity, 3, 0],
    ];
    const r = computePersistence(distancesFromRows(D), { maxDim: 1 });
    expect(pairs(r.diagrams[0])).toEqual([
      [0, 1],
      [0, 3],
      [0, Infinity],
      [0, Infinity],
    ]);
  });

  it('a cap below a death makes the class essential; the density cap keeps the shortest edges', () => {
    const square = distancesFromRows(cycleMetric(4));
    // The loop is born at 1 and would die at 2; capped at 1.5 it never dies.
    const capped = computePersistence(square, { maxDim: 1, cap: { kind: 'distance', value: 1.5 } });
    expect(pairs(capped.diagrams[1])).toEqual([[1, Infinity]]);
    expect(capped.thresholdSource).toBe('distance-cap');
    // 4 of the 6 pairs have distance 1: density 4/6 keeps exactly the sides.
    expect(densityThreshold(square, 4 / 6)).toBe(1);
    expect(densityThreshold(square, 0.7)).toBe(2);
    const dens = computePersistence(square, { maxDim: 1, cap: { kind: 'density', value: 0.5 } });
    expect(dens.thresholdSource).toBe('density-cap');
    expect(pairs(dens.diagrams[1])).toEqual([[1, Infinity]]);
  });

  it('stops at the enclosing radius, where the complex is a cone', () => {
    // Node 0 is within 2 of everyone; no node is within less of all others.
    const D = [
      [0, 1, 2, 2],
      [1, 0, 3, 3],
      [2, 3, 0, 3],
      [2, 3, 3, 0],
    ];
    const d = distancesFromRows(D);
    expect(enclosingRadius(d)).toBe(2);
    const r = computePersistence(d, { maxDim: 1 });
    expect(r.threshold).toBe(2);
    expect(r.thresholdSource).toBe('enclosing-radius');
  });

  it('the merge tree follows the elder rule with ties to the smaller node', () => {
    // Edges: (1,0) at 1, (3,2) at 2, (2,1) at 3. The last merge joins {0,1} and {2,3}:
    // {0,1} holds the smaller node and survives.
    const D = [
      [0, 1, 5, 5],
      [1, 0, 3, 5],
      [5, 3, 0, 2],
      [5, 5, 2, 0],
    ];
    const r = computePersistence(distancesFromRows(D), { maxDim: 1, h0Representatives: true });
    expect(r.mergeTree.map((e) => [e.value, e.survivor, e.absorbed, e.absorbedNodes])).toEqual([
      [1, 0, 1, [1]],
      [2, 2, 3, [3]],
      [3, 0, 2, [2, 3]],
    ]);
  });

  it('is deterministic under ties and independent of node relabelling for the diagram', () => {
    const D = cycleMetric(8);
    const a = computePersistence(distancesFromRows(D), { maxDim: 2, representatives: true });
    const b = computePersistence(distancesFromRows(D), { maxDim: 2, representatives: true });
    expect(b).toEqual(a);
    const perm = [3, 0, 7, 1, 6, 2, 5, 4];
    const P = perm.map((i) => perm.map((j) => D[i][j]));
    const c = computePersistence(distancesFromRows(P), { maxDim: 2 });
    expect(c.diagrams).toEqual(a.diagrams);
  });
});
