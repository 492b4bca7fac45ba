/**
 * Hand-checkable cases: each expected value is worked out in the comment beside it.
 */
import { describe, expect, it } from 'vitest';
import { bettiArea, bettiCurve } from '../../../electron/engine/features/betti.ts';
import { eulerArea, eulerCurve, simplexCountCurves } from '../../../electron/engine/features/euler.ts';
import { cohortGrid, grid } from '../../../electron/engine/features/grid.ts';
import {
  intervalStats,
  median,
  persistentEntropy,
} from '../../../electron/engine/features/interval-stats.ts';
import { landscapeNorms, landscapes } from '../../../electron/engine/features/landscape.ts';
import { computePersistence } from '../../../electron/engine/persistence.ts';
import { distancesFromRows } from '../../../electron/engine/transform.ts';

// A square with sides 1 and diagonals 2 (the persistence engine's own doc example).
const square = distancesFromRows([
  [0, 1, 2, 1],
  [1, 0, 1, 2],
  [2, 1, 0, 1],
  [1, 2, 1, 0],
]);

describe('grid', () => {
  it('is a linspace with both ends', () => {
    expect(Array.from(grid(0, 1, 5))).toEqual([0, 0.25, 0.5, 0.75, 1]);
    expect(Array.from(grid(2, 2, 1))).toEqual([2]);
    expect(grid(0.1, 0.7, 7)[6]).toBe(0.7);
  });
  it('refuses bad ranges and point counts', () => {
    expect(() => grid(1, 0, 3)).toThrow(/min ≤ max/);
    expect(() => grid(0, Infinity, 3)).toThrow(/finite/);
    expect(() => grid(0, 1, 0)).toThrow(/≥ 1/);
  });
  it('the cohort grid spans the shortest edge to the largest threshold', () => {
    // square: shortest edge 1, enclosing radius 2. Scaled by 3: shortest 3, radius 6.
    const big = { n: 4, values: square.values.map((x) => 3 * x) };
    const g = cohortGrid([computePersistence(square), computePersistence(big)], 11);
    expect(g[0]).toBe(1);
    expect(g[10]).toBe(6);
    expect(g.length).toBe(11);
  });
});

describe('interval statistics', () => {
  it('[1, 3) and [2, ∞): essential counted apart, lifetimes from the finite one', () => {
    const s = intervalStats(
      [
        { birth: 1, death: 3 },
        { birth: 2, death: Infinity },
      ],
      1,
    );
    expect(s).toMatchObject({
      count: 2,
      countEssential: 1,
      countFinite: 1,
      countFiniteAboveFloor: 1, // lifetime 2 ≥ floor 1
      totalPersistenceP1: 2,
      totalPersistenceP2: 4,
      maxPersistence: 2,
      meanBirth: 1.5, // both births
      medianBirth: 1.5,
      meanDeath: 3, // finite deaths only
      meanLifetime: 2,
      entropy: 0, // one finite interval: p = 1, −1·ln 1 = 0
    });
    expect(intervalStats([{ birth: 0, death: 1 }], 2).countFiniteAboveFloor).toBe(0);
  });
  it('an empty diagram: zero counts and sums, undefined means', () => {
    const s = intervalStats([]);
    expect(s.count).toBe(0);
    expect(s.maxPersistence).toBe(0);
    expect(s.meanBirth).toBeNaN();
    expect(s.entropy).toBeNaN();
  });
  it('persistent entropy by hand', () => {
    const iv = (l: number) => ({ birth: 0, death: l });
    // two equal bars: p = ½, ½ → ln 2
    expect(persistentEntropy([iv(1), iv(1)])).toBeCloseTo(Math.LN2, 15);
    // n equal bars reach the maximum ln n
    expect(persistentEntropy([iv(3), iv(3), iv(3), iv(3)])).toBeCloseTo(Math.log(4), 15);
    // lifetimes 1, 1, 2: p = ¼, ¼, ½ → −(2 · ¼ ln ¼ + ½ ln ½) = ln 2 + ½ ln 2 = 1.5 ln 2
    expect(persistentEntropy([iv(1), iv(1), iv(2)])).toBeCloseTo(1.5 * Math.LN2, 15);
    // essential and zero-length bars do not enter
    expect(persistentEntropy([iv(1), iv(1), iv(Infinity), { birth: 2, death: 2 }])).toBeCloseTo(Math.LN2, 15);
  });
  it('median of an even count averages the middle pair', () => {
    expect(median([4, 1, 3, 2])).toBe(2.5);
    expect(median([5])).toBe(5);
  });
});

describe('Betti curves', () => {
  const dg = [
    { birth: 1, death: 3 },
    { birth: 2, death: Infinity },
  ];
  it('half-open intervals: born at b, gone at d', () => {
    // t = 0: none; t = 1: [1,3) is born; t = 2: both; t = 3: [1,3) has died.
    expect(Array.from(bettiCurve(dg, [0, 1, 2, 3]))).toEqual([0, 1, 2, 1]);
  });
  it('area is the exact step-function integral', () => {
    // over [0, 4]: |[1,3)| + |[2,4]| = 2 + 2
    expect(bettiArea(dg, 0, 4)).toBe(4);
    expect(bettiArea([{ birth: 1, death: 3 }], 0, 2)).toBe(1);
  });
  it('the square: β1 = 1 on [1, 2), β0 = 4 then 1', () => {
    const r = computePersistence(square);
    expect(Array.from(bettiCurve(r.diagrams[1], [0.5, 1, 1.5, 2]))).toEqual([0, 1, 1, 0]);
    expect(Array.from(bettiCurve(r.diagrams[0], [0.5, 1, 1.5, 2]))).toEqual([4, 1, 1, 1]);
  });
});

describe('Euler characteristic curve of the square', () => {
  it('simplex counts: 4 edges at 1; 2 diagonals, 4 triangles and 1 tetrahedron at 2', () => {
    expect(simplexCountCurves(square, [1, 2], 3).map((x) => Array.from(x))).toEqual([
      [4, 4],
      [4, 6],
      [0, 4],
      [0, 1],
    ]);
  });
  it('χ of the 2-skeleton: 4, then 4 − 4 = 0 (β0 − β1 = 1 − 1), then 4 − 6 + 4 = 2 (hollow tetrahedron: 1 + 1)', () => {
    expect(Array.from(eulerCurve(square, [0, 1, 2], 2))).toEqual([4, 0, 2]);
  });
  it('χ of the 3-skeleton at 2 is 4 − 6 + 4 − 1 = 1, a solid tetrahedron', () => {
    expect(Array.from(eulerCurve(square, [2], 3))).toEqual([1]);
  });
  it('exact area over [0, 3] for K = 2: 12 − (4·2 + 2·1) + 4·1 = 6', () => {
    expect(eulerArea(square, 0, 3, 2)).toBe(6);
    // Riemann check on a fine grid: χ = 4 on [0,1), 0 on [1,2), 2 on [2,3] → 4 + 0 + 2 = 6
  });
  it('a cap freezes the complex: edges beyond it never enter', () => {
    expect(Array.from(eulerCurve(square, [2], 2, 1.5))).toEqual([0]);
  });
});

describe('landscapes', () => {
  it('two overlapping tents', () => {
    // [0,2): min(t, 2 − t) = 1, .5, 0 at t = 1, 1.5, 2; [1,3): min(t − 1, 3 − t) = 0, .5, 1.
    const [l1, l2] = landscapes(
      [
        { birth: 0, death: 2 },
        { birth: 1, death: 3 },
      ],
      [1, 1.5, 2],
      2,
    );
    expect(Array.from(l1)).toEqual([1, 0.5, 1]);
    expect(Array.from(l2)).toEqual([0, 0.5, 0]);
  });
  it('norms of the tent [0, 2) sampled at 0, 1, 2: L¹ = 1, L² = 1 by the trapezoid rule', () => {
    // exact L² of the tent would be √(2/3); the trapezoid on three samples gives √1 (documented).
    expect(landscapeNorms([0, 1, 0], [0, 1, 2])).toEqual({ l1: 1, l2: 1 });
  });
});
