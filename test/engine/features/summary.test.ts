/**
 * A subject's features from its summary (what its worker computes from the one read of its matrix,
 * before the cohort grid is known) are the same to the bit as from its distances: the Euler curve
 * and area replayed from recorded simplex events equal those counted from the distances, and
 * subjectSummary + subjectOnGrid equal subjectFeatureRow + subjectCurves, on grids inside and
 * beyond the subject's filtration range, capped or not, for maxDim 1 and 2. The events also
 * reproduce the GUDHI-derived Euler goldens (test/reference/make_feature_refs.py).
 */
import { describe, expect, it } from 'vitest';
import { subjectCurves } from '../../../electron/engine/features/curves.ts';
import {
  eulerArea,
  eulerCurve,
  replaySimplices,
  simplexEvents,
  visitSimplices,
} from '../../../electron/engine/features/euler.ts';
import { filtrationEnd, grid } from '../../../electron/engine/features/grid.ts';
import { subjectFeatureRow, subjectOnGrid, subjectSummary } from '../../../electron/engine/features/rows.ts';
import { computePersistence } from '../../../electron/engine/persistence.ts';
import { createRng } from '../../../electron/engine/random.ts';
import type { DistanceMatrix } from '../../../electron/engine/types.ts';
import { curves, distancesOf } from './goldens.ts';

/** Distances with many ties (values on a coarse lattice), so the order of equal edges matters. */
function latticeDistances(n: number, seed: number, steps: number): DistanceMatrix {
  const rng = createRng(seed);
  const values = new Float64Array((n * (n - 1)) / 2);
  for (let k = 0; k < values.length; k++) values[k] = (1 + Math.floor(rng.next() * steps)) / steps;
  return { n, values };
}

const sameBits = (a: ArrayLike<number>, b: ArrayLike<number>): boolean =>
  a.length === b.length && Array.from(a).every((x, i) => Object.is(x, b[i]));

describe('simplex events', () => {
  it('reproduce the Euler goldens (GUDHI simplex counts) from the events alone', () => {
    for (const c of curves.cases) {
      const d = distancesOf(c);
      const ev = simplexEvents(d, c.topDim);
      expect(Array.from(eulerCurve(ev, c.grid, c.topDim)), c.name).toEqual(c.euler);
      const a = c.grid[0];
      const b = c.grid[c.grid.length - 1];
      expect(eulerArea(ev, a, b, c.topDim)).toBeCloseTo(c.eulerArea, 9);
    }
  });

  it('replay visitSimplices call for call, and refuse a limit beyond the recorded one', () => {
    const d = latticeDistances(25, 3, 7);
    const seen: number[][] = [];
    const ev = simplexEvents(d, 3, 0.6);
    replaySimplices(ev, 3, 0.6, (k, v, c) => seen.push([k, v, c]));
    const direct: number[][] = [];
    visitSimplices(d, 3, 0.6, (k, v, c) => direct.push([k, v, c]));
    expect(seen).toEqual(direct);
    expect(seen.filter(([k]) => k === 1).length).toBe(Array.from(d.values).filter((w) => w <= 0.6).length);
    expect(() => replaySimplices(ev, 3, 0.7, () => {})).toThrow(/up to 0.6/);
  });

  for (const topDim of [2, 3] as const) {
    it(`give the same Euler curve and area to the bit as the distances (top dimension ${topDim})`, () => {
      for (const seed of [1, 2, 3]) {
        const d = latticeDistances(30, seed, 9);
        const ev = simplexEvents(d, topDim);
        for (const g of [grid(0.1, 0.7, 37), grid(0, 1.5, 100), grid(0.5, 0.5, 1)]) {
          for (const cap of [Infinity, 0.45]) {
            expect(sameBits(eulerCurve(ev, g, topDim, cap), eulerCurve(d, g, topDim, cap))).toBe(true);
            const a = g[0];
            const b = g[g.length - 1];
            expect(Object.is(eulerArea(ev, a, b, topDim, cap), eulerArea(d, a, b, topDim, cap))).toBe(true);
          }
        }
      }
    });
  }
});

describe('subject summary', () => {
  for (const maxDim of [1, 2] as const) {
    for (const cap of [{ kind: 'none' as const }, { kind: 'distance' as const, value: 0.5 }]) {
      it(`summary + grid = the features and curves from the distances (maxDim ${maxDim}, cap ${cap.kind})`, () => {
        const d = latticeDistances(24, 11 + maxDim, 13);
        const r = computePersistence(d, { maxDim, cap, representatives: true });
        const settings = { maxDim, persistenceFloor: 0.05, landscapeLevels: 2, dropRegions: [] };
        const s = subjectSummary(r, settings, d);
        expect(s.end).toBe(filtrationEnd(r));
        expect(s.first).toBe(r.mergeTree[0].value);
        // The grid-free half is complete before any grid: the interval statistics are there, the grid's are not.
        expect(s.features['h1_count']).toBe(r.diagrams[1].length);
        expect(s.features['betti1_area']).toBeNull();
        expect(s.features['euler_area']).toBeNull();
        for (const g of [grid(s.first!, s.end, 50), grid(0, 2, 100)]) {
          const on = subjectOnGrid(s, r, g, settings);
          const row = subjectFeatureRow(r, g, settings, d);
          expect(Object.keys(on.features)).toEqual(Object.keys(row));
          for (const k of Object.keys(row)) expect(Object.is(on.features[k], row[k]), k).toBe(true);
          const direct = subjectCurves(r, g, settings, d);
          expect(Object.keys(on.curves)).toEqual(Object.keys(direct));
          for (const k of Object.keys(direct)) expect(sameBits(on.curves[k], direct[k]), k).toBe(true);
        }
      });
    }
  }

  it('masks the node scores of dropped regions as NaN', () => {
    const d = latticeDistances(12, 5, 11);
    const r = computePersistence(d, { maxDim: 1, representatives: true });
    const s = subjectSummary(
      r,
      { maxDim: 1, persistenceFloor: 0, landscapeLevels: 1, dropRegions: [3, 7] },
      d,
    );
    for (const v of Object.values(s.nodeScores)) {
      expect(Number.isNaN(v[3]) && Number.isNaN(v[7])).toBe(true);
      expect(v.filter((x) => Number.isNaN(x))).toHaveLength(2);
    }
  });
});
