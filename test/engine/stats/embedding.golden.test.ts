// Classical MDS vs numpy.linalg.eigh of −½ J D² J (test/reference/make_stats_refs.py), up to the sign
// of each axis; UMAP (umap-js) fed a precomputed distance matrix, seeded through our generator.
import { describe, expect, it } from 'vitest';
import { classicalMds, umapEmbedding } from '../../../electron/engine/stats/embedding.ts';
import { symmetricEigen } from '../../../electron/engine/stats/linalg.ts';
import type { SquareMatrix } from '../../../electron/engine/types.ts';
import { golden } from './golden.ts';

const ref = golden<{
  cases: Array<{ distances: number[][]; coordinates: number[][]; eigenvalues: number[] }>;
}>('mds.json');
const square = (rows: number[][]): SquareMatrix => ({
  n: rows.length,
  values: Float64Array.from(rows.flat()),
});

describe('classical MDS vs numpy eigh', () => {
  ref.cases.forEach((c, k) => {
    it(`case ${k}: eigenvalues and coordinates up to sign`, () => {
      const res = classicalMds(square(c.distances));
      c.eigenvalues.forEach((l, i) => expect(res.eigenvalues![i]).toBeCloseTo(l, 9));
      for (const axis of [0, 1]) {
        const sign = Math.sign(res.coordinates[0][axis]) === Math.sign(c.coordinates[0][axis]) ? 1 : -1;
        res.coordinates.forEach((p, i) => expect(sign * p[axis]).toBeCloseTo(c.coordinates[i][axis], 9));
      }
    });
  });
});

describe('Jacobi eigensolver', () => {
  it('reconstructs A = V Λ Vᵀ with orthonormal V', () => {
    const n = 12;
    const a = new Float64Array(n * n);
    for (let i = 0; i < n; i++)
      for (let j = 0; j <= i; j++) a[i * n + j] = a[j * n + i] = Math.sin(i * 7 + j * 3);
    const { values, vectors } = symmetricEigen(a, n);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        let s = 0;
        let o = 0;
        for (let k = 0; k < n; k++) {
          s += vectors[k][i] * values[k] * vectors[k][j];
          o += vectors[i][k] * vectors[j][k];
        }
        expect(s).toBeCloseTo(a[i * n + j], 12);
        expect(o).toBeCloseTo(i === j ? 1 : 0, 12);
      }
    }
    for (let k = 1; k < n; k++) expect(values[k]).toBeLessThanOrEqual(values[k - 1]);
  });
});

describe('UMAP on a precomputed distance matrix', () => {
  // Two tight clusters far apart on a line.
  const n = 24;
  const x = Array.from({ length: n }, (_, i) => (i < n / 2 ? 0 : 10) + (i % 6) * 0.1);
  const d: SquareMatrix = { n, values: new Float64Array(n * n) };
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) d.values[i * n + j] = Math.abs(x[i] - x[j]);

  it('is reproducible from the seed and separates the clusters', () => {
    const a = umapEmbedding(d, { seed: 5, neighbours: 5, epochs: 200 });
    const b = umapEmbedding(d, { seed: 5, neighbours: 5, epochs: 200 });
    expect(a.coordinates).toEqual(b.coordinates);
    expect(a.seed).toBe(5);
    const centre = (lo: number, hi: number) =>
      [0, 1].map((k) => a.coordinates.slice(lo, hi).reduce((s, p) => s + p[k], 0) / (hi - lo));
    const c0 = centre(0, n / 2);
    const c1 = centre(n / 2, n);
    const spread = (lo: number, hi: number, c: number[]) =>
      Math.max(...a.coordinates.slice(lo, hi).map((p) => Math.hypot(p[0] - c[0], p[1] - c[1])));
    const gap = Math.hypot(c0[0] - c1[0], c0[1] - c1[1]);
    expect(gap).toBeGreaterThan(spread(0, n / 2, c0) + spread(n / 2, n, c1));
  });
  it('a different seed gives a different map', () => {
    const a = umapEmbedding(d, { seed: 5, neighbours: 5, epochs: 50 });
    const b = umapEmbedding(d, { seed: 6, neighbours: 5, epochs: 50 });
    expect(a.coordinates).not.toEqual(b.coordinates);
  });
});
