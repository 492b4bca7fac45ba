/**
 * Two-dimensional maps of subjects from a distance matrix.
 *
 * Classical multidimensional scaling (Torgerson 1952, Psychometrika; Gower 1966, Biometrika):
 * B = −½ J D⁽²⁾ J with J = I − 11ᵀ/n, coordinates v_k √λ_k of the top eigenpairs of B. Eigenpairs
 * by Jacobi rotations. An axis's sign is arbitrary; we make its entry of largest magnitude positive.
 * A non-positive eigenvalue (a non-Euclidean distance) leaves its axis at 0, with a warning.
 *
 * UMAP (McInnes, Healy & Melville 2018, arXiv:1802.03426) through the umap-js package. It is fed
 * the distance matrix itself: the exact k nearest neighbours of every subject (itself first, at
 * distance 0, as UMAP's fuzzy-set construction expects) are given with setPrecomputedKNN, and
 * each "point" is just its row index, looked up by a distance function on the matrix. Its random
 * initialisation and sampling use our seeded generator, so a seed reproduces the map.
 *
 *   classicalMds(distances).coordinates  // [[x0, y0], [x1, y1], …]
 */
import { UMAP } from 'umap-js';
import { createRng } from '../random.ts';
import type { SquareMatrix } from '../types.ts';
import { symmetricEigen } from './linalg.ts';

export interface Embedding {
  method: 'mds' | 'umap';
  coordinates: Array<[number, number]>;
  warnings: string[];
  /** MDS: the top eigenvalues of B. */
  eigenvalues?: number[];
  /** UMAP: the seed and neighbourhood size used. */
  seed?: number;
  neighbours?: number;
}

/** Classical (Torgerson–Gower) MDS in two dimensions. */
export function classicalMds(distances: SquareMatrix): Embedding {
  const { n, values } = distances;
  const b = new Float64Array(n * n);
  for (let i = 0; i < n * n; i++) b[i] = -0.5 * values[i] * values[i];
  // Double centring.
  const rowMean = new Float64Array(n);
  let grand = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) rowMean[i] += b[i * n + j];
    rowMean[i] /= n;
    grand += rowMean[i];
  }
  grand /= n;
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) b[i * n + j] += grand - rowMean[i] - rowMean[j];
  const { values: lambda, vectors } = symmetricEigen(b, n);
  const warnings: string[] = [];
  const axes = [0, 1].map((k) => {
    const vec = vectors[k] ?? new Float64Array(n);
    const l = lambda[k] ?? 0;
    if (!(l > 1e-12 * Math.abs(lambda[0] || 1))) {
      warnings.push(`MDS axis ${k + 1} has no positive eigenvalue (${l}); its coordinates are 0`);
      return new Float64Array(n);
    }
    let big = 0;
    for (let i = 0; i < n; i++) if (Math.abs(vec[i]) > Math.abs(vec[big])) big = i;
    const sign = vec[big] < 0 ? -1 : 1;
    return Float64Array.from(vec, (x) => sign * x * Math.sqrt(l));
  });
  return {
    method: 'mds',
    coordinates: Array.from({ length: n }, (_, i) => [axes[0][i], axes[1][i]] as [number, number]),
    eigenvalues: Array.from(lambda.slice(0, Math.min(n, 10))),
    warnings,
  };
}

export interface UmapOptions {
  seed: number;
  /** Neighbourhood size; default min(15, n − 1). */
  neighbours?: number;
  minDist?: number;
  epochs?: number;
}

/** UMAP in two dimensions from a precomputed distance matrix. */
export function umapEmbedding(distances: SquareMatrix, options: UmapOptions): Embedding {
  const { n, values } = distances;
  if (n < 3) throw new Error(`UMAP needs at least 3 subjects; got ${n}`);
  const k = Math.min(options.neighbours ?? 15, n - 1);
  const knnIndices: number[][] = [];
  const knnDistances: number[][] = [];
  for (let i = 0; i < n; i++) {
    const order = Array.from({ length: n }, (_, j) => j)
      .filter((j) => j !== i)
      .sort((a, b) => values[i * n + a] - values[i * n + b] || a - b)
      .slice(0, k - 1);
    knnIndices.push([i, ...order]);
    knnDistances.push([0, ...order.map((j) => values[i * n + j])]);
  }
  const rng = createRng(options.seed);
  const umap = new UMAP({
    nComponents: 2,
    nNeighbors: k,
    minDist: options.minDist ?? 0.1,
    nEpochs: options.epochs,
    random: () => rng.next(),
    distanceFn: (x, y) => values[x[0] * n + y[0]],
  });
  umap.setPrecomputedKNN(knnIndices, knnDistances);
  const out = umap.fit(Array.from({ length: n }, (_, i) => [i]));
  return {
    method: 'umap',
    coordinates: out.map((p) => [p[0], p[1]] as [number, number]),
    warnings: [],
    seed: options.seed,
    neighbours: k,
  };
}
