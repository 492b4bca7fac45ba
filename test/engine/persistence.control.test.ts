/**
 * Size estimate, progress and cancellation of computePersistence. The estimate's counts are
 * checked against NumPy (Debian's /usr/bin/python3; skipped when absent) computing the enclosing
 * radius, the edges below it and the triangles among them from the same 6-digit decimals.
 * Cancellation is deterministic: it is asked for after K progress reports, never by time.
 */
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import {
  LARGE_EDGES,
  PersistenceCancelledError,
  computePersistence,
  estimatePersistence,
} from '../../electron/engine/persistence.ts';
import type { PersistenceProgress } from '../../electron/engine/persistence.ts';
import { randomCase } from './support/random-matrices.ts';

const PYTHON = '/usr/bin/python3';
const haveNumpy = spawnSync(PYTHON, ['-c', 'import numpy'], { encoding: 'utf8' }).status === 0;

/** NumPy: enclosing radius, edges ≤ it, triangles with all three edges ≤ it (trace(A³)/6). */
function numpyCounts(n: number, text: string[]): { radius: number; edges: number; triangles: number } {
  const script = `
import sys, json, numpy as np
n = ${n}
v = np.array([float(x) for x in sys.stdin.read().split()])
D = np.zeros((n, n)); D[np.tril_indices(n, -1)] = v; D = D + D.T
r = float(np.min(np.max(D, axis=1)))
A = (D <= r).astype(np.int64); np.fill_diagonal(A, 0)
print(json.dumps({"radius": r, "edges": int(A.sum() // 2), "triangles": int(np.trace(A @ A @ A) // 6)}))
`;
  // np.tril_indices walks rows i, columns j < i: the compressed lower triangle's order.
  const res = spawnSync(PYTHON, ['-c', script], { input: text.join('\n'), encoding: 'utf8' });
  if (res.status !== 0) throw new Error(res.stderr);
  return JSON.parse(res.stdout);
}

describe('estimatePersistence', () => {
  it.skipIf(!haveNumpy)(
    'counts the edges below the enclosing radius and estimates the columns, as NumPy counts them',
    () => {
      for (const [kind, n, seed] of [
        ['correlation', 80, 3],
        ['euclidean', 70, 4],
        ['nonmetric', 60, 5],
      ] as const) {
        const c = randomCase(kind, n, seed);
        const ref = numpyCounts(n, c.text);
        const est = estimatePersistence({ n, values: c.values }, { maxDim: 2 });
        expect(est.threshold).toBe(ref.radius);
        expect(est.edges).toBe(ref.edges);
        // At the enclosing radius the graph is connected: n − 1 edges merge components, the rest are H1 columns.
        expect(est.columns[1]).toBe(ref.edges - (n - 1));
        const run = computePersistence({ n, values: c.values }, { maxDim: 2 });
        expect(run.counts.edges).toBe(ref.edges);
        expect(run.counts.columnsReduced[1]).toBe(est.columns[1]);
        // H2 columns: triangles minus the H1 pivots (each a triangle). The estimate samples 20 000
        // triples; its relative error is a few per cent for these densities.
        const triEstimate = est.columns[2] + est.columns[1];
        expect(Math.abs(triEstimate - ref.triangles) / ref.triangles).toBeLessThan(0.1);
        expect(est.large).toBe(false);
      }
    },
  );

  it('calls a computation large beyond LARGE_EDGES edges and not below', () => {
    // All distances 1: every pair is an edge at the enclosing radius 1.
    const nLarge = Math.ceil((1 + Math.sqrt(1 + 8 * LARGE_EDGES)) / 2) + 1;
    const large = estimatePersistence({
      n: nLarge,
      values: new Float64Array((nLarge * (nLarge - 1)) / 2).fill(1),
    });
    expect(large.edges).toBe((nLarge * (nLarge - 1)) / 2);
    expect(large.edges).toBeGreaterThan(LARGE_EDGES);
    expect(large.large).toBe(true);
    expect(large.bytes).toBeGreaterThan(8 * nLarge * nLarge);
    const small = estimatePersistence({ n: 1000, values: new Float64Array(499500).fill(1) });
    expect(small.large).toBe(false);
  });
});

describe('progress and cancellation', () => {
  const c = randomCase('correlation', 100, 11);
  const d = { n: c.n, values: c.values };

  it('reports every phase with done ≤ total and leaves the result unchanged', () => {
    const seen: PersistenceProgress[] = [];
    const plain = computePersistence(d, { maxDim: 2, representatives: true });
    const watched = computePersistence(
      d,
      { maxDim: 2, representatives: true },
      { onProgress: (p) => seen.push(p), isCancelled: () => false, every: 500 },
    );
    expect(watched).toEqual(plain);
    expect(new Set(seen.map((p) => `${p.phase}${p.dim}`))).toEqual(
      new Set(['edges0', 'reduction1', 'columns2', 'reduction2', 'representatives1']),
    );
    const h1 = seen.filter((p) => p.phase === 'reduction' && p.dim === 1);
    expect(h1[0]).toEqual({ phase: 'reduction', dim: 1, done: 0, total: plain.counts.columnsReduced[1] });
    // One report per 500 columns at least (more where one column needs many additions).
    expect(h1.length).toBeGreaterThanOrEqual(Math.ceil(plain.counts.columnsReduced[1] / 500));
    for (let i = 1; i < h1.length; i++) expect(h1[i].done).toBeGreaterThanOrEqual(h1[i - 1].done);
    for (const p of seen) expect(p.done).toBeLessThanOrEqual(p.total);
  });

  it('stops with a PersistenceCancelledError at the first poll after cancel, wherever it is asked', () => {
    for (const K of [1, 2, 5, 20]) {
      let reports = 0;
      let polls = 0;
      const run = (): unknown =>
        computePersistence(
          d,
          { maxDim: 2 },
          {
            onProgress: () => reports++,
            isCancelled: () => ++polls >= K,
            every: 256,
          },
        );
      expect(run).toThrow(PersistenceCancelledError);
      // Cancelled at poll K: no work reported after it.
      expect(polls).toBe(K);
      expect(reports).toBe(K);
    }
  });

  it('cancels a large H1 run (N = 1200, 10⁵ columns and more) within the first columns', () => {
    const n = 1200;
    const values = new Float64Array((n * (n - 1)) / 2);
    // A deterministic generic metric: points on a circle with a small pseudo-random radial jitter.
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const r = 1 + 0.05 * Math.sin(i * 12.9898);
      x[i] = r * Math.cos((2 * Math.PI * i) / n);
      y[i] = r * Math.sin((2 * Math.PI * i) / n);
    }
    for (let i = 0, k = 0; i < n; i++)
      for (let j = 0; j < i; j++) values[k++] = Math.hypot(x[i] - x[j], y[i] - y[j]);
    const est = estimatePersistence({ n, values });
    expect(est.columns[1]).toBeGreaterThan(100000);
    const seen: PersistenceProgress[] = [];
    expect(() =>
      computePersistence(
        { n, values },
        {},
        { onProgress: (p) => seen.push(p), isCancelled: () => seen.length >= 3, every: 1000 },
      ),
    ).toThrow(PersistenceCancelledError);
    expect(seen.map((p) => `${p.phase}${p.dim}:${p.done}`)).toEqual([
      'edges0:0',
      'reduction1:0',
      'reduction1:1000',
    ]);
    expect(seen[2].total).toBe(est.columns[1]);
  });
});
