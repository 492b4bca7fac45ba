/**
 * Distances between persistence diagrams.
 *
 * A diagram is a list of [birth, death] points with finite deaths. Points of infinite death
 * (essential classes) are dropped by default, or clipped to a given death value
 * (`{ clip: v }`), before any distance is taken: essential classes of a Vietoris–Rips
 * filtration of one connected brain graph are the same for every subject (one H0 class), so
 * dropping them loses nothing a group comparison could use.
 *
 * Ground metric L∞ between points, and the diagonal Δ at L∞ distance (d − b)/2, as in
 * Cohen-Steiner, Edelsbrunner, Harer & Mileyko 2010 (Found. Comput. Math.) and Edelsbrunner &
 * Harer, Computational Topology (2010), ch. VIII:
 *   W_p(A, B) = ( min over matchings of Σ ‖a − γ(a)‖∞^p )^(1/p), unmatched points going to Δ;
 *   W_∞ = bottleneck = min over matchings of the largest matched distance.
 * W_p is exact: an assignment on the (|A| + |B|)-square matrix that gives every point a private
 * diagonal copy (Kuhn–Munkres). The bottleneck is exact: binary search over the candidate
 * distances for the smallest one that admits a matching leaving no point farther than it.
 *
 * Sliced Wasserstein (Carrière, Cuturi & Oudot 2017, ICML): the average over directions θ of
 * the 1-D W1 between the projections of A ∪ π_Δ(B) and B ∪ π_Δ(A) on the line of angle θ;
 * the integral over the half circle is taken on `directions` equally spaced angles
 * θ_k = −π/2 + kπ/M, k = 0…M−1 (default M = 50).
 *
 *   wasserstein([[0, 1]], [[0, 2]], 1)  // 1
 *   bottleneck([[0, 4]], [])            // 2
 */
import type { SquareMatrix } from '../types.ts';
import { minimumAssignment } from './assignment.ts';

export type DiagramPoint = [number, number];
/** A diagram as given: death null or Infinity for an essential class. */
export type DiagramInput = ReadonlyArray<readonly [number, number | null]>;
export type InfiniteHandling = 'drop' | { clip: number };

export const DEFAULT_SLICED_DIRECTIONS = 50;

/** The finite points of a diagram, after the infinite ones are dropped or clipped. */
export function finiteDiagram(diagram: DiagramInput, infinite: InfiniteHandling = 'drop'): DiagramPoint[] {
  const out: DiagramPoint[] = [];
  diagram.forEach(([b, d], i) => {
    if (!Number.isFinite(b)) throw new Error(`diagram point ${i} has a non-finite birth (${b})`);
    if (d === null || d === Infinity) {
      if (infinite === 'drop') return;
      if (infinite.clip < b)
        throw new Error(`clip value ${infinite.clip} is below the birth ${b} of point ${i}`);
      out.push([b, infinite.clip]);
      return;
    }
    if (!Number.isFinite(d) || d < b)
      throw new Error(`diagram point ${i} has an invalid death (${d}) for birth ${b}`);
    out.push([b, d]);
  });
  return out;
}

const linf = (a: DiagramPoint, b: DiagramPoint) => Math.max(Math.abs(a[0] - b[0]), Math.abs(a[1] - b[1]));
const toDiagonal = (a: DiagramPoint) => (a[1] - a[0]) / 2;

/** Exact Wasserstein-p distance (p ≥ 1), ground metric L∞. */
export function wasserstein(a: DiagramPoint[], b: DiagramPoint[], p: number): number {
  if (!(p >= 1) || !Number.isFinite(p)) throw new Error(`Wasserstein order must be a finite p ≥ 1; got ${p}`);
  const n1 = a.length;
  const n2 = b.length;
  const n = n1 + n2;
  if (n === 0) return 0;
  // Rows: points of a, then diagonal copies for b. Columns: points of b, then diagonal copies for a.
  const cost = new Float64Array(n * n);
  for (let i = 0; i < n1; i++) {
    for (let j = 0; j < n2; j++) cost[i * n + j] = linf(a[i], b[j]) ** p;
    const toDiag = toDiagonal(a[i]) ** p;
    for (let k = 0; k < n1; k++) cost[i * n + n2 + k] = toDiag;
  }
  for (let k = 0; k < n2; k++) for (let j = 0; j < n2; j++) cost[(n1 + k) * n + j] = toDiagonal(b[j]) ** p;
  return minimumAssignment(cost, n).cost ** (1 / p);
}

/**
 * Exact bottleneck distance, ground metric L∞. At a threshold ε a point farther than ε from Δ
 * ("heavy") must be matched to a point of the other diagram within ε; everything else can go to Δ.
 * By the Mendelsohn–Dulmage theorem (1958, Canad. J. Math.) a matching covering the heavy points
 * of both diagrams exists iff one covers the heavy points of A and another those of B, so each
 * test is two small bipartite matchings (augmenting paths, Kuhn 1955) rather than one on the
 * (|A| + |B|)-square graph.
 */
export function bottleneck(a: DiagramPoint[], b: DiagramPoint[]): number {
  const n1 = a.length;
  const n2 = b.length;
  if (n1 + n2 === 0) return 0;
  const pairCost = new Float64Array(n1 * n2);
  for (let i = 0; i < n1; i++) for (let j = 0; j < n2; j++) pairCost[i * n2 + j] = linf(a[i], b[j]);
  const pairCostT = new Float64Array(n1 * n2);
  for (let i = 0; i < n1; i++) for (let j = 0; j < n2; j++) pairCostT[j * n1 + i] = pairCost[i * n2 + j];
  const diagA = Float64Array.from(a, toDiagonal);
  const diagB = Float64Array.from(b, toDiagonal);
  const candidates = Float64Array.from([0, ...pairCost, ...diagA, ...diagB]).sort();
  const feasible = (eps: number) =>
    coversHeavy(diagA, n2, pairCost, eps) && coversHeavy(diagB, n1, pairCostT, eps);
  let lo = 0;
  let hi = candidates.length - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (feasible(candidates[mid])) hi = mid;
    else lo = mid + 1;
  }
  return candidates[lo];
}

/**
 * Whether every row whose diagonal distance exceeds eps can be matched to its own column within
 * eps (`cost` rows × `cols`, row-major).
 */
function coversHeavy(diag: Float64Array, cols: number, cost: Float64Array, eps: number): boolean {
  const heavy: number[] = [];
  for (let i = 0; i < diag.length; i++) if (diag[i] > eps) heavy.push(i);
  if (heavy.length > cols) return false;
  const adjacency = heavy.map((i) => {
    const list: number[] = [];
    for (let j = 0; j < cols; j++) if (cost[i * cols + j] <= eps) list.push(j);
    return list;
  });
  if (adjacency.some((l) => l.length === 0)) return false;
  const colMatch = new Int32Array(cols).fill(-1);
  const stamp = new Int32Array(cols).fill(-1);
  const augment = (h: number, round: number): boolean => {
    for (const j of adjacency[h]) {
      if (stamp[j] === round) continue;
      stamp[j] = round;
      if (colMatch[j] < 0 || augment(colMatch[j], round)) {
        colMatch[j] = h;
        return true;
      }
    }
    return false;
  };
  for (let h = 0; h < heavy.length; h++) if (!augment(h, h)) return false;
  return true;
}

/** Sliced Wasserstein distance with `directions` equally spaced angles on [−π/2, π/2). */
export function slicedWasserstein(
  a: DiagramPoint[],
  b: DiagramPoint[],
  directions = DEFAULT_SLICED_DIRECTIONS,
): number {
  const n = a.length + b.length;
  if (n === 0) return 0;
  const pa = new Float64Array(n);
  const pb = new Float64Array(n);
  let total = 0;
  for (let k = 0; k < directions; k++) {
    const theta = -Math.PI / 2 + (k * Math.PI) / directions;
    const c = Math.cos(theta);
    const s = Math.sin(theta);
    // A point's projection onto Δ is ((b + d)/2, (b + d)/2), whose coordinate on the line is (b + d)/2 · (c + s).
    a.forEach(([x, y], i) => {
      pa[i] = x * c + y * s;
      pb[b.length + i] = ((x + y) / 2) * (c + s);
    });
    b.forEach(([x, y], j) => {
      pb[j] = x * c + y * s;
      pa[a.length + j] = ((x + y) / 2) * (c + s);
    });
    pa.sort();
    pb.sort();
    for (let i = 0; i < n; i++) total += Math.abs(pa[i] - pb[i]);
  }
  return total / directions;
}

export type DiagramMetric =
  | { kind: 'wasserstein'; p: number }
  | { kind: 'bottleneck' }
  | { kind: 'sliced-wasserstein'; directions?: number };

/** The distance between two finite diagrams under `metric`. */
export function diagramDistance(a: DiagramPoint[], b: DiagramPoint[], metric: DiagramMetric): number {
  switch (metric.kind) {
    case 'wasserstein':
      return wasserstein(a, b, metric.p);
    case 'bottleneck':
      return bottleneck(a, b);
    case 'sliced-wasserstein':
      return slicedWasserstein(a, b, metric.directions);
  }
}

/**
 * All pairwise sliced Wasserstein distances at once, equal to slicedWasserstein() pair by pair to
 * the last bit. Why it is faster: a point's projection, and its diagonal projection's, depend only
 * on the point and the direction, so each diagram's two sorted projection lists are made once per
 * direction; a pair then needs only two merges in lockstep (O(n)), not two sorts (O(n log n)).
 * Directions run in the outer loop, so memory holds one direction's lists at a time.
 */
export function slicedWassersteinMatrix(
  diagrams: DiagramPoint[][],
  directions = DEFAULT_SLICED_DIRECTIONS,
): SquareMatrix {
  const n = diagrams.length;
  const total = new Float64Array(n * n);
  const points: Float64Array[] = diagrams.map((d) => new Float64Array(d.length));
  const diagonal: Float64Array[] = diagrams.map((d) => new Float64Array(d.length));
  for (let k = 0; k < directions; k++) {
    const theta = -Math.PI / 2 + (k * Math.PI) / directions;
    const c = Math.cos(theta);
    const s = Math.sin(theta);
    diagrams.forEach((d, i) => {
      d.forEach(([x, y], t) => {
        points[i][t] = x * c + y * s;
        diagonal[i][t] = ((x + y) / 2) * (c + s);
      });
      points[i].sort();
      diagonal[i].sort();
    });
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < i; j++) {
        // sorted(points_i ∪ diagonal_j) against sorted(points_j ∪ diagonal_i), merged as we go.
        const A = points[i];
        const B = diagonal[j];
        const C = points[j];
        const D = diagonal[i];
        const m = A.length + B.length;
        let a = 0;
        let b = 0;
        let c2 = 0;
        let d2 = 0;
        let acc = total[i * n + j];
        for (let t = 0; t < m; t++) {
          const x = b >= B.length || (a < A.length && A[a] <= B[b]) ? A[a++] : B[b++];
          const y = d2 >= D.length || (c2 < C.length && C[c2] <= D[d2]) ? C[c2++] : D[d2++];
          acc += Math.abs(x - y);
        }
        total[i * n + j] = acc;
      }
    }
  }
  const values = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < i; j++) {
      const v = total[i * n + j] / directions;
      values[i * n + j] = v;
      values[j * n + i] = v;
    }
  }
  return { n, values };
}

/** The subject × subject matrix of diagram distances (row-major, symmetric, zero diagonal). */
export function diagramDistanceMatrix(
  diagrams: DiagramInput[],
  metric: DiagramMetric,
  infinite: InfiniteHandling = 'drop',
): SquareMatrix {
  const finite = diagrams.map((d, i) => {
    try {
      return finiteDiagram(d, infinite);
    } catch (e) {
      throw new Error(`diagram ${i}: ${(e as Error).message}`);
    }
  });
  if (metric.kind === 'sliced-wasserstein') return slicedWassersteinMatrix(finite, metric.directions);
  const n = finite.length;
  const values = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < i; j++) {
      const d = diagramDistance(finite[i], finite[j], metric);
      values[i * n + j] = d;
      values[j * n + i] = d;
    }
  }
  return { n, values };
}

export function metricName(metric: DiagramMetric): string {
  switch (metric.kind) {
    case 'wasserstein':
      return `wasserstein-${metric.p}`;
    case 'bottleneck':
      return 'bottleneck';
    case 'sliced-wasserstein':
      return `sliced-wasserstein-${metric.directions ?? DEFAULT_SLICED_DIRECTIONS}`;
  }
}
