// Diagram distances vs GUDHI 3.7.1 (test/reference/make_stats_refs.py): hera Wasserstein with
// internal_p = inf for p = 1, 2; bottleneck_distance (exact, e = 0); SlicedWassersteinDistance
// with the same number of directions (M = 10, 50).
import { describe, expect, it } from 'vitest';
import {
  bottleneck,
  diagramDistanceMatrix,
  finiteDiagram,
  slicedWasserstein,
  wasserstein,
  type DiagramPoint,
} from '../../../electron/engine/stats/diagram-distance.ts';
import { golden } from './golden.ts';

interface Pair {
  a: DiagramPoint[];
  b: DiagramPoint[];
  w1: number;
  w2: number;
  w1_lsa: number;
  w2_lsa: number;
  bottleneck: number;
  bottleneck_exact: number;
  sw10?: number;
  sw50?: number;
}
const ref = golden<{
  pairs: Pair[];
  infinite: {
    a: Array<[number, number | null]>;
    b: Array<[number, number | null]>;
    clip: number;
    w2_drop: number;
    w2_clip: number;
    bottleneck_clip: number;
  };
}>('diagram_distances.json');

const close = (x: number, y: number, rel: number) =>
  expect(Math.abs(x - y)).toBeLessThanOrEqual(rel * Math.max(1, y));

describe('diagram distances vs GUDHI', () => {
  for (const p of ref.pairs) {
    it(`|A| = ${p.a.length}, |B| = ${p.b.length}`, () => {
      // hera run with relative error delta = 1e-12, and scipy's exact linear_sum_assignment.
      close(wasserstein(p.a, p.b, 1), p.w1, 1e-10);
      close(wasserstein(p.a, p.b, 2), p.w2, 1e-10);
      close(wasserstein(p.a, p.b, 1), p.w1_lsa, 1e-10);
      close(wasserstein(p.a, p.b, 2), p.w2_lsa, 1e-10);
      close(bottleneck(p.a, p.b), p.bottleneck_exact, 1e-12);
      close(bottleneck(p.a, p.b), p.bottleneck, 1e-9);
      if (p.sw10 !== undefined) close(slicedWasserstein(p.a, p.b, 10), p.sw10, 1e-12);
      if (p.sw50 !== undefined) close(slicedWasserstein(p.a, p.b, 50), p.sw50, 1e-12);
      // Symmetry.
      close(wasserstein(p.b, p.a, 2), p.w2, 1e-9);
      close(bottleneck(p.b, p.a), p.bottleneck_exact, 1e-12);
    });
  }

  it('infinite points: dropped, or clipped at a given death', () => {
    const inf = ref.infinite;
    const a = finiteDiagram(inf.a);
    const b = finiteDiagram(inf.b);
    close(wasserstein(a, b, 2), inf.w2_drop, 1e-9);
    const ac = finiteDiagram(inf.a, { clip: inf.clip });
    const bc = finiteDiagram(inf.b, { clip: inf.clip });
    close(wasserstein(ac, bc, 2), inf.w2_clip, 1e-9);
    close(bottleneck(ac, bc), inf.bottleneck_clip, 1e-12);
  });

  it('the subject matrix is symmetric with a zero diagonal and matches pairwise calls', () => {
    const ds = ref.pairs.slice(3, 7).map((p) => p.a);
    const m = diagramDistanceMatrix(ds, { kind: 'wasserstein', p: 2 });
    for (let i = 0; i < m.n; i++) {
      expect(m.values[i * m.n + i]).toBe(0);
      for (let j = 0; j < m.n; j++) {
        expect(m.values[i * m.n + j]).toBe(m.values[j * m.n + i]);
        if (i !== j) close(m.values[i * m.n + j], wasserstein(ds[i], ds[j], 2), 1e-12);
      }
    }
  });
});

describe('diagram distances by hand', () => {
  it('one point against the empty diagram goes to the diagonal at L∞ distance (d − b)/2', () => {
    expect(bottleneck([[1, 5]], [])).toBe(2);
    expect(wasserstein([[1, 5]], [], 1)).toBe(2);
    // Two points to the diagonal: (2^2 + 1^2)^(1/2).
    expect(
      wasserstein(
        [
          [1, 5],
          [0, 2],
        ],
        [],
        2,
      ),
    ).toBeCloseTo(Math.sqrt(5), 14);
  });
  it('matching across beats the diagonal when points are close', () => {
    // ‖(0,4) − (0.5,4)‖∞ = 0.5 < 2.
    expect(wasserstein([[0, 4]], [[0.5, 4]], 1)).toBeCloseTo(0.5, 14);
  });
  it('bad points are refused with the point named', () => {
    expect(() => finiteDiagram([[2, 1]])).toThrow(/point 0 has an invalid death/);
    expect(() => finiteDiagram([[0, null]], { clip: -1 })).toThrow(/clip value -1/);
    expect(() => wasserstein([], [], 0.5)).toThrow(/p ≥ 1/);
    expect(() =>
      diagramDistanceMatrix(
        [
          [[0, 1]],
          [
            [0, 1],
            [NaN, 2],
          ],
        ],
        { kind: 'bottleneck' },
      ),
    ).toThrow(/diagram 1: diagram point 1 has a non-finite birth/);
  });
});
