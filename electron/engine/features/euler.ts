/**
 * The Euler characteristic curve of the clique (Vietoris–Rips) complex, from simplex counts alone:
 * no homology is reduced.
 *
 *   χ_K(t) = Σ_{k=0..K} (−1)^k c_k(t),   c_k(t) = #{k-simplices (cliques of k+1 nodes) with diameter ≤ t}
 *
 * This is the Euler characteristic of the K-skeleton of the complex at t. With K = maxDim + 1 (the
 * skeleton the persistence engine builds) the Euler–Poincaré formula gives
 *   χ_K(t) = β0(t) − β1(t) + … + (−1)^K β_K^(K)(t),
 * where β_k for k < K are those of the whole clique complex and β_K^(K) = dim Z_K is the top Betti
 * number of the skeleton itself (no (K+1)-simplices fill its cycles). (Euler–Poincaré formula:
 * H. Edelsbrunner, J. Harer (2010), Computational Topology, IV.2. Euler characteristic curves as
 * shape descriptors: E. Richardson, M. Werman (2014), Pattern Recognition Letters 47 — from memory.)
 *
 * Counting: edges in ascending order; when edge {u, v} enters, the triangles it completes are the
 * common neighbours of u and v among earlier edges, and the tetrahedra it completes are the edges
 * among those common neighbours. Bitset rows make each a popcount of ANDed words. Every simplex is
 * counted once, at the value of its longest edge, which is its diameter.
 */
import { sortByValue } from '../radix.ts';
import type { DistanceMatrix } from '../types.ts';

function popcount(x: number): number {
  x -= (x >>> 1) & 0x55555555;
  x = (x & 0x33333333) + ((x >>> 2) & 0x33333333);
  return (Math.imul((x + (x >>> 4)) & 0x0f0f0f0f, 0x01010101) >>> 24) as number;
}

/** Index of the first grid value ≥ x (grid ascending); grid.length when none. */
function lowerBound(grid: ArrayLike<number>, x: number): number {
  let lo = 0;
  let hi = grid.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (grid[mid] < x) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/**
 * Calls visit(k, value, count) for every batch of `count` k-simplices (k = 1 … topDim ≤ 3) whose
 * diameter is `value` ≤ limit, in ascending order of value. Vertices (k = 0, value 0) are not visited.
 */
export function visitSimplices(
  d: DistanceMatrix,
  topDim: 1 | 2 | 3,
  limit: number,
  visit: (k: number, value: number, count: number) => void,
): void {
  const { n, values } = d;
  // Edges that can enter before the limit, ascending by length (ties in index order: stable).
  let m = 0;
  let negative = false;
  for (let k = 0; k < values.length; k++) {
    if (values[k] <= limit) m++;
    if (values[k] < 0) negative = true;
  }
  const ei = new Int32Array(m);
  const ej = new Int32Array(m);
  const ew = new Float64Array(m);
  let k = 0;
  let e = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < i; j++, k++) {
      const w = values[k];
      if (w <= limit) {
        ei[e] = i;
        ej[e] = j;
        ew[e++] = w;
      }
    }
  }
  const order = new Uint32Array(m);
  for (let q = 0; q < m; q++) order[q] = q;
  if (negative) order.sort((a, b) => ew[a] - ew[b] || a - b);
  else sortByValue(order, ew); // stable radix sort (radix.ts): the same order as a stable comparison sort
  const words = (n + 31) >>> 5;
  const adj = new Int32Array(n * words);
  const common = new Int32Array(words);
  for (const e of order) {
    const u = ei[e];
    const v = ej[e];
    const w = ew[e];
    visit(1, w, 1);
    if (topDim >= 2) {
      let tri = 0;
      const ru = u * words;
      const rv = v * words;
      for (let q = 0; q < words; q++) {
        common[q] = adj[ru + q] & adj[rv + q];
        tri += popcount(common[q]);
      }
      if (tri > 0) visit(2, w, tri);
      if (topDim >= 3 && tri > 1) {
        let twice = 0;
        for (let q = 0; q < words; q++) {
          let bits = common[q];
          while (bits !== 0) {
            const low = bits & -bits;
            const x = (q << 5) + 31 - Math.clz32(low);
            bits ^= low;
            const rx = x * words;
            for (let y = 0; y < words; y++) twice += popcount(adj[rx + y] & common[y]);
          }
        }
        if (twice > 0) visit(3, w, twice / 2);
      }
    }
    adj[u * words + (v >>> 5)] |= 1 << (v & 31);
    adj[v * words + (u >>> 5)] |= 1 << (u & 31);
  }
}

/**
 * The simplices of visitSimplices recorded once, so that Euler curves and areas can be evaluated
 * later on a grid not known yet (the cohort's), without the distances: per edge in the order
 * visitSimplices enters them, its value and the triangles (and tetrahedra) it completes.
 * replaySimplices calls a visitor exactly as visitSimplices would have (same batches, same order),
 * so every sum over them is the same to the bit. 12 bytes per edge (16 with tetrahedra).
 */
export interface SimplexEvents {
  kind: 'simplex-events';
  /** Vertices of the complex (the distance matrix's n). */
  n: number;
  topDim: 1 | 2 | 3;
  /** Values were recorded up to this limit (inclusive). */
  limit: number;
  values: Float64Array;
  triangles: Int32Array | null;
  tetrahedra: Int32Array | null;
}

/**
 * Records visitSimplices(d, topDim, limit) as SimplexEvents.
 *
 *   simplexEvents(square with sides 1 and diagonals 2, 2) → values [1, 1, 1, 1, 2, 2], triangles [0, 0, 0, 0, 2, 2]
 */
export function simplexEvents(d: DistanceMatrix, topDim: 1 | 2 | 3, limit = Infinity): SimplexEvents {
  let m = 0;
  for (let k = 0; k < d.values.length; k++) if (d.values[k] <= limit) m++;
  const values = new Float64Array(m);
  const triangles = topDim >= 2 ? new Int32Array(m) : null;
  const tetrahedra = topDim >= 3 ? new Int32Array(m) : null;
  let e = -1;
  visitSimplices(d, topDim, limit, (k, value, count) => {
    if (k === 1) values[++e] = value;
    else if (k === 2) triangles![e] = count;
    else tetrahedra![e] = count;
  });
  return { kind: 'simplex-events', n: d.n, topDim, limit, values, triangles, tetrahedra };
}

/** Calls visit as visitSimplices(d, topDim, limit, visit) would have, from recorded events (topDim ≤ the events', limit ≤ theirs). */
export function replaySimplices(
  ev: SimplexEvents,
  topDim: 1 | 2 | 3,
  limit: number,
  visit: (k: number, value: number, count: number) => void,
): void {
  if (topDim > ev.topDim || limit > ev.limit)
    throw new RangeError(
      `simplex events hold dimensions ≤ ${ev.topDim} up to ${ev.limit}; asked ${topDim} up to ${limit}`,
    );
  const { values, triangles, tetrahedra } = ev;
  for (let e = 0; e < values.length; e++) {
    const w = values[e];
    if (!(w <= limit)) break; // ascending: the rest lie beyond the limit too
    visit(1, w, 1);
    if (topDim >= 2 && triangles![e] > 0) visit(2, w, triangles![e]);
    if (topDim >= 3 && tetrahedra![e] > 0) visit(3, w, tetrahedra![e]);
  }
}

/** The simplices of a distance matrix, or of its recorded events: one source for the curves and areas below. */
export type SimplexSource = DistanceMatrix | SimplexEvents;

function visitSource(
  src: SimplexSource,
  topDim: 1 | 2 | 3,
  limit: number,
  visit: (k: number, value: number, count: number) => void,
): void {
  if ('kind' in src && src.kind === 'simplex-events') replaySimplices(src, topDim, limit, visit);
  else visitSimplices(src as DistanceMatrix, topDim, limit, visit);
}

/**
 * counts[k][g] = number of k-simplices with diameter ≤ grid[g] (and ≤ cap), k = 0 … topDim (≤ 3).
 * Vertices enter at 0.
 *
 *   simplexCountCurves(square with sides 1 and diagonals 2, [1, 2], 3)
 *   → [[4, 4], [4, 6], [0, 4], [0, 1]]
 */
export function simplexCountCurves(
  d: SimplexSource,
  gridValues: ArrayLike<number>,
  topDim: 1 | 2 | 3,
  cap = Infinity,
): Float64Array[] {
  const G = gridValues.length;
  const counts: Float64Array[] = [];
  for (let k = 0; k <= topDim; k++) counts.push(new Float64Array(G));
  if (G === 0) return counts;
  for (let g = 0; g < G; g++) counts[0][g] = gridValues[g] >= 0 ? d.n : 0;
  const bins: Float64Array[] = [];
  for (let q = 0; q <= topDim; q++) bins.push(new Float64Array(G + 1));
  visitSource(d, topDim, Math.min(cap, gridValues[G - 1]), (q, value, count) => {
    bins[q][lowerBound(gridValues, value)] += count;
  });
  for (let q = 1; q <= topDim; q++) {
    let run = 0;
    for (let g = 0; g < G; g++) {
      run += bins[q][g];
      counts[q][g] = run;
    }
  }
  return counts;
}

/**
 * The exact integral of the step function χ_K over [a, b] (0 ≤ a ≤ b): every k-simplex of diameter
 * w contributes (−1)^k (b − max(a, w)) when w ≤ b. Independent of any grid.
 *
 *   eulerArea(square with sides 1 and diagonals 2, 0, 3, 2) → 4·3 − (4·2 + 2·1) + 4·1 = 6
 */
export function eulerArea(d: SimplexSource, a: number, b: number, topDim: 1 | 2 | 3, cap = Infinity): number {
  if (!(b >= a)) return 0;
  let area = d.n * (b - Math.max(a, 0));
  visitSource(d, topDim, Math.min(cap, b), (q, value, count) => {
    area += (q % 2 === 0 ? 1 : -1) * count * (b - Math.max(a, value));
  });
  return area;
}

/**
 * χ_K(t) on the grid, K = topDim (the Euler characteristic of the K-skeleton; see above).
 *
 *   eulerCurve(square with sides 1 and diagonals 2, [0, 1, 2], 2) → [4, 0, 2]
 *   (at 1 a 4-cycle: 4 − 4 = 0 = β0 − β1; at 2 a hollow tetrahedron: 4 − 6 + 4 = 2 = 1 − 0 + 1)
 */
export function eulerCurve(
  d: SimplexSource,
  gridValues: ArrayLike<number>,
  topDim: 1 | 2 | 3,
  cap = Infinity,
): Float64Array {
  const counts = simplexCountCurves(d, gridValues, topDim, cap);
  const chi = new Float64Array(gridValues.length);
  for (let q = 0; q <= topDim; q++) {
    const sign = q % 2 === 0 ? 1 : -1;
    for (let g = 0; g < chi.length; g++) chi[g] += sign * counts[q][g];
  }
  return chi;
}

/** Trapezoid integral of samples y over the grid x (for curves that are not step functions of known breakpoints). */
export function trapezoid(y: ArrayLike<number>, x: ArrayLike<number>): number {
  let s = 0;
  for (let i = 1; i < x.length; i++) s += ((y[i] + y[i - 1]) / 2) * (x[i] - x[i - 1]);
  return s;
}
