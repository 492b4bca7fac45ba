/**
 * Persistent homology of the clique (Vietoris–Rips) filtration of a weighted graph.
 *
 * The pipeline, top to bottom:
 *   distances → threshold (cap, or the enclosing radius) → H0 by union-find over sorted edges
 *   → for d = 1 … maxDim: persistent cohomology of dimension d by column reduction with
 *     clearing, emergent (apparent) pairs and implicit coboundaries → diagrams
 *   → H1 cycle representatives by reducing only the needed boundary columns.
 *
 * References:
 *   U. Bauer (2021), Ripser: efficient computation of Vietoris–Rips persistence barcodes. J Appl Comput Topol 5.
 *   V. de Silva, D. Morozov, M. Vejdemo-Johansson (2011), Dualities in persistent (co)homology. Inverse Problems 27.
 *   C. Chen, M. Kerber (2011), Persistent homology computation with a twist. EuroCG.
 *   M. Čufar, Ž. Virk (2023), Fast computation of persistent homology representatives with involuted persistent homology.
 *
 * Simplices are named by the combinatorial number system: the simplex with vertices
 * v_k > … > v_0 has index Σ_i C(v_i, i+1). An index is a float64 and is exact below 2^53
 * (C(1000, 4) ≈ 4.1e10 is far below). The filtration order of d-simplices is
 * (diameter ascending, index descending); every result is a function of it, so it is deterministic.
 */
import { EntryHeap } from './heap.ts';
import { IndexMap } from './index-map.ts';
import { sortByValue, stableOrder } from './radix.ts';
import type {
  CycleRepresentative,
  DistanceMatrix,
  Interval,
  MergeEvent,
  PersistenceOptions,
  PersistenceResult,
} from './types.ts';

export const DEFAULT_PERSISTENCE_OPTIONS: PersistenceOptions = {
  maxDim: 1,
  cap: { kind: 'none' },
  representatives: false,
  h0Representatives: false,
  keepZeroLength: false,
};

/** Where a running computation is: `done` of `total` units (edges, columns, top vertices, pairs) of one phase. */
export interface PersistenceProgress {
  phase: 'edges' | 'columns' | 'reduction' | 'representatives';
  /** Homology dimension of the phase (0 for the edges). */
  dim: number;
  done: number;
  total: number;
}

/** Progress reports and cancellation for a long computation; both are polled every `every` units of work. */
export interface PersistenceControl {
  onProgress?: (p: PersistenceProgress) => void;
  /** Returns true to stop: the computation then throws a PersistenceCancelledError. */
  isCancelled?: () => boolean;
  /** Units of work (columns, added columns, …) between two polls; default 16384. */
  every?: number;
}

/** Thrown by computePersistence when its control's isCancelled() returned true. */
export class PersistenceCancelledError extends Error {
  constructor() {
    super('persistence computation cancelled');
    this.name = 'PersistenceCancelledError';
  }
}

class Watch {
  readonly every: number;
  private readonly control: PersistenceControl;
  constructor(control: PersistenceControl) {
    this.control = control;
    this.every = Math.max(1, Math.floor(control.every ?? 16384));
  }

  /** Reports progress, then stops the run if cancelled. */
  poll(phase: PersistenceProgress['phase'], dim: number, done: number, total: number): void {
    this.control.onProgress?.({ phase, dim, done, total });
    if (this.control.isCancelled?.()) throw new PersistenceCancelledError();
  }
}

/** Binomial coefficients C(v, k) for v ≤ n, k ≤ kMax, as a flat table: table[k * (n + 1) + v]. */
function binomialTable(n: number, kMax: number): Float64Array {
  const t = new Float64Array((kMax + 1) * (n + 1));
  for (let v = 0; v <= n; v++) {
    t[v] = 1;
    for (let k = 1; k <= Math.min(v, kMax); k++) {
      t[k * (n + 1) + v] = t[(k - 1) * (n + 1) + v - 1] + (k <= v - 1 ? t[k * (n + 1) + v - 1] : 0);
    }
  }
  return t;
}

/** The smallest r such that some node lies within r of every other node: from there on the complex is a cone. */
export function enclosingRadius(d: DistanceMatrix): number {
  const { n, values } = d;
  if (n <= 1) return 0;
  const rowMax = new Float64Array(n);
  let k = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < i; j++, k++) {
      const x = values[k];
      if (x > rowMax[i]) rowMax[i] = x;
      if (x > rowMax[j]) rowMax[j] = x;
    }
  }
  let r = Infinity;
  for (let i = 0; i < n; i++) r = Math.min(r, rowMax[i]);
  return r;
}

/** The distance below which a fraction `density` of all node pairs lie (ties at the value are all included). */
export function densityThreshold(d: DistanceMatrix, density: number): number {
  if (!(density > 0 && density <= 1)) throw new RangeError(`edge density must lie in (0, 1], got ${density}`);
  const m = d.values.length;
  if (m === 0) return 0;
  const sorted = Float64Array.from(d.values).sort();
  const k = Math.max(1, Math.ceil(density * m));
  return sorted[k - 1];
}

/** Checks the distances and picks the threshold of the filtration (the cap, or the enclosing radius). */
function filtrationThreshold(
  d: DistanceMatrix,
  options: PersistenceOptions,
): Pick<PersistenceResult, 'threshold' | 'thresholdSource'> {
  const { n } = d;
  if (d.values.length !== (n * (n - 1)) / 2) {
    throw new RangeError(
      `distance array has ${d.values.length} entries, expected ${(n * (n - 1)) / 2} for n = ${n}`,
    );
  }
  // Edge indices are kept as 32-bit integers.
  if (d.values.length > 0xffffffff) throw new RangeError(`n = ${n} nodes is more than the engine handles`);
  for (let k = 0; k < d.values.length; k++) {
    const x = d.values[k];
    if (!(x >= 0)) throw new RangeError(`distance ${x} at compressed index ${k} is negative or missing`);
  }
  const radius = enclosingRadius(d);
  const capValue =
    options.cap.kind === 'distance'
      ? options.cap.value
      : options.cap.kind === 'density'
        ? densityThreshold(d, options.cap.value)
        : Infinity;
  if (capValue < radius) {
    return {
      threshold: capValue,
      thresholdSource: options.cap.kind === 'density' ? 'density-cap' : 'distance-cap',
    };
  }
  // Beyond the enclosing radius nothing changes in dimensions ≥ 1 and H0 is connected.
  if (Number.isFinite(radius)) return { threshold: radius, thresholdSource: 'enclosing-radius' };
  return { threshold: Infinity, thresholdSource: 'all-finite-edges' };
}

/** What a computation will take, known before it starts (see estimatePersistence). */
export interface PersistenceEstimate {
  n: number;
  threshold: number;
  /** Edges in the filtration (distance ≤ threshold). */
  edges: number;
  /** Estimated columns to reduce per dimension 1 … maxDim (index 0 unused, 0): H1 exactly edges − (n − 1) at most; H2 from a sample of node triples. */
  columns: number[];
  /** Estimated bytes of the engine's own arrays (dense distances, edges, columns, pivot tables), not counting stored reductions. */
  bytes: number;
  /** Far beyond a usual subject (about a thousand nodes, H0–H1): worth a warning before starting. */
  large: boolean;
}

/** Above these a computation is `large`: about 1700 nodes in H1, or 10⁷ columns or 1.5 GB in any case. */
export const LARGE_EDGES = 1_500_000;
export const LARGE_COLUMNS = 10_000_000;
export const LARGE_BYTES = 1.5 * 2 ** 30;

/**
 * The size of computePersistence(d, opts) before running it: edges below the threshold exactly,
 * columns estimated, memory of the fixed arrays. Linear in the number of node pairs.
 *
 *   estimatePersistence(d, {maxDim: 1}) → {n: 3000, edges: 4.4e6, columns: [0, 4.4e6], bytes: 2.6e8, large: true, …}
 */
export function estimatePersistence(
  d: DistanceMatrix,
  opts: Partial<PersistenceOptions> = {},
): PersistenceEstimate {
  const options: PersistenceOptions = { ...DEFAULT_PERSISTENCE_OPTIONS, ...opts };
  const { n, values } = d;
  const { threshold } = filtrationThreshold(d, options);
  let edges = 0;
  for (let k = 0; k < values.length; k++) if (values[k] <= threshold) edges++;
  const columns = [0, Math.max(0, edges - (n - 1))];
  // Bytes per column: index and diameter (16), pivot-table slot at load ≤ 1/2 (≥ 24).
  let bytes = 8 * n * n + 9 * edges + 40 * columns[1];
  if (options.maxDim >= 2 && n >= 3) {
    // Triangles below the threshold, from a fixed sample of node triples.
    const samples = 20000;
    let inside = 0;
    let state = 0x9e3779b9;
    const next = (): number => {
      state = (Math.imul(state ^ (state >>> 15), 0x2c1b3c6d) + 0x6d2b79f5) >>> 0;
      return state / 4294967296;
    };
    for (let s = 0; s < samples; s++) {
      const i = Math.floor(next() * n);
      const j = Math.floor(next() * n);
      const k = Math.floor(next() * n);
      if (i === j || j === k || i === k) {
        s--;
        continue;
      }
      const dij = values[i > j ? (i * (i - 1)) / 2 + j : (j * (j - 1)) / 2 + i];
      const dik = values[i > k ? (i * (i - 1)) / 2 + k : (k * (k - 1)) / 2 + i];
      const djk = values[j > k ? (j * (j - 1)) / 2 + k : (k * (k - 1)) / 2 + j];
      if (dij <= threshold && dik <= threshold && djk <= threshold) inside++;
    }
    const triangles = Math.round(((n * (n - 1) * (n - 2)) / 6) * (inside / samples));
    columns.push(Math.max(0, triangles - columns[1]));
    bytes += 40 * columns[2] + 16 * triangles;
  }
  const large = edges > LARGE_EDGES || columns.some((c) => c > LARGE_COLUMNS) || bytes > LARGE_BYTES;
  return { n, threshold, edges, columns, bytes, large };
}

/**
 * The persistence diagrams (and optionally cycle representatives) of the clique filtration.
 * `control` reports progress and can cancel (a PersistenceCancelledError).
 *
 *   computePersistence(distancesFromRows([[0,1,2,1],[1,0,1,2],[2,1,0,1],[1,2,1,0]]), {maxDim: 1})
 *   → diagrams[1] = [{birth: 1, death: 2}]   (a square with diagonals 2: one loop)
 */
export function computePersistence(
  d: DistanceMatrix,
  opts: Partial<PersistenceOptions> = {},
  control: PersistenceControl = {},
): PersistenceResult {
  const options: PersistenceOptions = { ...DEFAULT_PERSISTENCE_OPTIONS, ...opts };
  const { n } = d;
  const { threshold, thresholdSource } = filtrationThreshold(d, options);
  const watch = new Watch(control);

  const ctx = new Context(d, options.maxDim + 2, threshold);
  const diagrams: Interval[][] = [];
  for (let dim = 0; dim <= options.maxDim; dim++) diagrams.push([]);

  // H0 by union-find over edges in filtration order (Kruskal).
  watch.poll('edges', 0, 0, d.values.length);
  const edges = ctx.sortedEdges(); // ascending filtration order
  const h0 = unionFind(ctx, edges, options.h0Representatives);
  for (const ev of h0.mergeTree) {
    if (ev.value > 0 || options.keepZeroLength) diagrams[0].push({ birth: 0, death: ev.value });
  }
  for (let c = 0; c < h0.components; c++) diagrams[0].push({ birth: 0, death: Infinity });

  // Columns of dimension 1: edges that did not merge components (clearing), in reverse filtration order.
  const m = edges.length;
  let cols: Columns = {
    idx: new Float64Array(m - h0.mergeTree.length),
    diam: new Float64Array(m - h0.mergeTree.length),
  };
  for (let e = m - 1, c = 0; e >= 0; e--) {
    if (h0.isMstEdge[e]) continue;
    cols.idx[c] = edges[e];
    cols.diam[c++] = ctx.values[edges[e]];
  }

  const columnsReduced: number[] = [m];
  const apparentPairs: number[] = [0];
  let h1: { cols: Columns; red: Reduction } | null = null;
  for (let dim = 1; dim <= options.maxDim; dim++) {
    const red = reduceCohomology(ctx, dim, cols, options.keepZeroLength, watch);
    columnsReduced.push(cols.idx.length);
    apparentPairs.push(red.apparent);
    for (let p = 0; p < red.pairs.count; p++) {
      diagrams[dim].push({ birth: red.pairs.birthDiam[p], death: red.pairs.deathDiam[p] });
    }
    if (dim === 1) h1 = { cols, red };
    if (dim < options.maxDim) cols = ctx.simplicesAbove(dim, red.pivotOf, watch);
  }

  let representatives: CycleRepresentative[] | undefined;
  if (options.representatives && h1) {
    representatives = cycleRepresentatives(ctx, h1.cols, h1.red, edges, h0.isMstEdge, watch);
    representatives.sort(byInterval);
  }
  for (const dg of diagrams) dg.sort(byInterval);

  return {
    n,
    threshold,
    thresholdSource,
    diagrams,
    representatives,
    mergeTree: h0.mergeTree,
    counts: { edges: m, columnsReduced, apparentPairs },
  };
}

function byInterval(a: Interval, b: Interval): number {
  return a.birth - b.birth || (a.death === b.death ? 0 : a.death < b.death ? -1 : 1);
}

/** Simplices to reduce, in reverse filtration order: combinatorial index and diameter. */
interface Columns {
  idx: Float64Array;
  diam: Float64Array;
}

/**
 * Shared lookups: distances, binomials, vertex decoding. The caller's compressed lower triangle
 * serves edge diameters (d(i, j) for i > j is values[row(i) + j]); the coface scan reads a dense
 * n × n copy, whose row of a vertex is contiguous in w (measured 30% faster at n = 1000 than the
 * strided column reads of the compressed triangle, for 8n² bytes).
 */
class Context {
  readonly n: number;
  readonly values: Float64Array; // the diameter of edge e is values[e]
  readonly dist: Float64Array; // n × n, dense: dist[a * n + w] = d(a, w)
  readonly binom: Float64Array;
  readonly threshold: number;
  private readonly stride: number;

  constructor(d: DistanceMatrix, kMax: number, threshold: number) {
    const { n, values } = d;
    this.n = n;
    this.values = values;
    // Internally an infinite threshold becomes the largest finite double, so that absent
    // edges (+∞) stay out of the filtration while every finite edge enters.
    this.threshold = Number.isFinite(threshold) ? threshold : Number.MAX_VALUE;
    this.binom = binomialTable(n, kMax);
    this.stride = n + 1;
    this.dist = new Float64Array(n * n);
    let k = 0;
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < i; j++, k++) {
        this.dist[i * n + j] = values[k];
        this.dist[j * n + i] = values[k];
      }
    }
  }

  /** Where row i of the compressed lower triangle starts: d(i, j) = values[row(i) + j] for j < i. */
  row(i: number): number {
    return (i * (i - 1)) / 2;
  }

  choose(v: number, k: number): number {
    return this.binom[k * this.stride + v];
  }

  /** Writes the vertices of the simplex `idx` with `k` vertices into out[0..k-1], largest first. */
  vertices(idx: number, k: number, out: Int32Array): void {
    let top = this.n;
    for (let pos = 0; k > 0; k--, pos++) {
      // Largest v < top with C(v, k) ≤ idx, by binary search.
      const row = k * this.stride;
      let lo = k - 1;
      let hi = top - 1;
      while (lo < hi) {
        const mid = (lo + hi + 1) >> 1;
        if (this.binom[row + mid] <= idx) lo = mid;
        else hi = mid - 1;
      }
      out[pos] = lo;
      idx -= this.binom[row + lo];
      top = lo;
    }
  }

  /**
   * Edges with distance ≤ threshold, in filtration order (distance ascending, index descending),
   * as edge indices; an edge's index is its position in the compressed lower triangle.
   */
  sortedEdges(): Uint32Array {
    const { values, threshold } = this;
    let count = 0;
    for (let e = 0; e < values.length; e++) if (values[e] <= threshold) count++;
    // Collected in index-descending order, so that a stable sort by diameter yields the
    // filtration order (diameter ascending, index descending).
    const edges = new Uint32Array(count);
    for (let e = values.length - 1, c = 0; e >= 0; e--) if (values[e] <= threshold) edges[c++] = e;
    sortByValue(edges, values);
    return edges;
  }

  /**
   * All (dim+1)-simplices with diameter ≤ threshold that are not pivots of the dimension-dim
   * reduction (clearing: their columns would reduce to zero), in reverse filtration order.
   * Each simplex is enumerated once, its vertices chosen largest first, pruning a prefix whose
   * diameter already exceeds the threshold.
   */
  simplicesAbove(dim: number, pivots: IndexMap, watch: Watch): Columns {
    const { n, values, threshold } = this;
    const k = dim + 1; // vertices of a dim-simplex
    let idxOut = new Float64Array(1 << 12);
    let diamOut = new Float64Array(1 << 12);
    let count = 0;
    // Vertices are chosen largest first, each from the top down: the simplices come out in
    // decreasing combinatorial index, so a stable sort by diameter gives the filtration order.
    const stack = new Int32Array(k + 2);
    const enumerate = (depth: number, top: number, diamSoFar: number, idxSoFar: number): void => {
      const remaining = k - depth; // vertices still to choose below this one
      for (let v = top; v >= remaining; v--) {
        if (depth === 0) watch.poll('columns', dim + 1, n - 1 - v, n);
        let dm = diamSoFar;
        for (let q = 0; q < depth; q++) {
          const x = values[this.row(stack[q]) + v]; // stack[q] > v
          if (x > dm) dm = x;
        }
        if (dm > threshold) continue;
        const id = idxSoFar + this.choose(v, remaining + 1);
        stack[depth] = v;
        if (remaining === 0) {
          if (!pivots.has(id)) {
            if (count === idxOut.length) {
              const bigger = new Float64Array(2 * count);
              bigger.set(idxOut);
              idxOut = bigger;
              const biggerDiam = new Float64Array(2 * count);
              biggerDiam.set(diamOut);
              diamOut = biggerDiam;
            }
            idxOut[count] = id;
            diamOut[count++] = dm;
          }
        } else {
          enumerate(depth + 1, v - 1, dm, id);
        }
      }
    };
    enumerate(0, n - 1, 0, 0);
    const diam = diamOut.subarray(0, count);
    const order = stableOrder(diam);
    // Reverse filtration order: diameter descending, index ascending.
    order.reverse();
    const out: Columns = { idx: new Float64Array(count), diam: new Float64Array(count) };
    for (let i = 0; i < count; i++) {
      out.idx[i] = idxOut[order[i]];
      out.diam[i] = diamOut[order[i]];
    }
    return out;
  }
}

interface UnionFindResult {
  mergeTree: MergeEvent[];
  isMstEdge: Uint8Array; // by position in the sorted edge list
  components: number;
}

/** H0: Kruskal over edges in filtration order; the component holding the smaller node survives. */
function unionFind(ctx: Context, edges: Uint32Array, keepNodes: boolean): UnionFindResult {
  const n = ctx.n;
  const parent = new Int32Array(n);
  const minNode = new Int32Array(n);
  const next = new Int32Array(n); // circular lists of component members
  for (let i = 0; i < n; i++) parent[i] = minNode[i] = next[i] = i;
  const find = (x: number): number => {
    while (parent[x] !== x) {
      parent[x] = parent[parent[x]];
      x = parent[x];
    }
    return x;
  };
  const isMstEdge = new Uint8Array(edges.length);
  const mergeTree: MergeEvent[] = [];
  const vs = new Int32Array(2);
  let components = n;
  for (let e = 0; e < edges.length && components > 1; e++) {
    ctx.vertices(edges[e], 2, vs);
    const a = find(vs[0]);
    const b = find(vs[1]);
    if (a === b) continue;
    isMstEdge[e] = 1;
    components--;
    const win = minNode[a] < minNode[b] ? a : b;
    const lose = win === a ? b : a;
    const ev: MergeEvent = {
      value: ctx.values[edges[e]],
      edge: [vs[0], vs[1]],
      survivor: minNode[win],
      absorbed: minNode[lose],
    };
    if (keepNodes) {
      const nodes: number[] = [];
      let x = lose;
      do {
        nodes.push(x);
        x = next[x];
      } while (x !== lose);
      ev.absorbedNodes = nodes.sort((p, q) => p - q);
    }
    mergeTree.push(ev);
    parent[lose] = win;
    const t = next[win];
    next[win] = next[lose];
    next[lose] = t;
  }
  return { mergeTree, isMstEdge, components };
}

/**
 * The intervals of one dimension that go into the diagram (positive length, or all with
 * keepZeroLength), as simplex indices and diameters; death = Infinity (index −1) when essential.
 * Growable typed arrays: zero-length pairs, the vast majority, are counted but not stored.
 */
class PairList {
  count = 0;
  birthIdx: Float64Array = new Float64Array(256);
  birthDiam: Float64Array = new Float64Array(256);
  deathIdx: Float64Array = new Float64Array(256);
  deathDiam: Float64Array = new Float64Array(256);

  add(bi: number, bd: number, di: number, dd: number): void {
    if (this.count === this.birthIdx.length) {
      const grow = (a: Float64Array): Float64Array => {
        const b = new Float64Array(2 * a.length);
        b.set(a);
        return b;
      };
      this.birthIdx = grow(this.birthIdx);
      this.birthDiam = grow(this.birthDiam);
      this.deathIdx = grow(this.deathIdx);
      this.deathDiam = grow(this.deathDiam);
    }
    const p = this.count++;
    this.birthIdx[p] = bi;
    this.birthDiam[p] = bd;
    this.deathIdx[p] = di;
    this.deathDiam[p] = dd;
  }
}

interface Reduction {
  pairs: PairList;
  /** Every pair of finite death, zero length included: pivot (coface index) → column position. */
  pivotOf: IndexMap;
  apparent: number;
}

/**
 * Persistent cohomology in dimension `dim`: columns are dim-simplices in reverse filtration
 * order; a column's entries are its cofaces (never stored: enumerated from the vertices);
 * its pivot is its earliest coface. Reduction adds earlier columns with the same pivot;
 * what is stored per column is only its reduction (which simplices were added), as in Ripser.
 * Nothing is allocated per column: two heaps and the stores are reused and grow by doubling.
 */
function reduceCohomology(
  ctx: Context,
  dim: number,
  cols: Columns,
  keepZeroLength: boolean,
  watch: Watch,
): Reduction {
  const { n, threshold, dist } = ctx;
  const { idx: colIdx, diam: colDiam } = cols;
  const total = colIdx.length;
  const k = dim + 1; // vertices of a column simplex
  const pivotOf = new IndexMap(total);
  // Stored reductions: column c → start in vIdx/vDiam of the simplices added to it (besides
  // itself), ended by an index of −1. Only columns that needed additions have one.
  const reductionOf = new IndexMap(1024);
  let vIdx = new Float64Array(1024);
  let vDiam = new Float64Array(1024);
  let vUsed = 0;
  const pairs = new PairList();
  const coboundary = new EntryHeap(); // the working column: cofaces of the simplices added
  const added = new EntryHeap(256); // the simplices added, mod 2 once drained
  const vs = new Int32Array(k);
  let apparent = 0;

  // Simplices are passed as (array, position), and a found coface comes back in found[0]: a double
  // passed to or returned from a call that is not inlined is boxed, a heap allocation per column.
  const found = new Float64Array(1);
  /**
   * Cofaces of simplex src[at] (diameter srcDiam[at]) with diameter ≤ threshold, enumerated in
   * decreasing index (w descending). Pushes them all onto the working column; or, with
   * `findFirst`, pushes nothing and stops at the first of the simplex's own diameter (into
   * found[0], returning true): among the cofaces of least diameter the one of largest index, the
   * column's pivot before any reduction.
   */
  const scanCofaces = (src: Float64Array, srcDiam: Float64Array, at: number, findFirst: boolean): boolean => {
    const idx = src[at];
    const diam = srcDiam[at];
    ctx.vertices(idx, k, vs);
    let above = 0;
    let below = idx;
    let j = 0; // vs[j] is the next vertex of the simplex at or below w
    for (let w = n - 1; w >= 0; w--) {
      if (j < k && vs[j] === w) {
        below -= ctx.choose(w, k - j);
        above += ctx.choose(w, k - j + 1);
        j++;
        continue;
      }
      let dm = diam;
      for (let q = 0; q < k; q++) {
        const x = dist[vs[q] * n + w];
        if (x > dm) dm = x;
      }
      if (dm > threshold) continue;
      const cof = above + ctx.choose(w, k - j + 1) + below;
      if (!findFirst) {
        coboundary.push(dm, cof);
      } else if (dm === diam) {
        found[0] = cof;
        return true;
      }
    }
    return false;
  };
  /** Adds simplex src[at] to the working reduction and its coboundary to the working column. */
  const add = (src: Float64Array, srcDiam: Float64Array, at: number): void => {
    added.push(srcDiam[at], src[at]);
    scanCofaces(src, srcDiam, at, false);
  };
  const keep = (bi: number, bd: number, di: number, dd: number): void => {
    if (dd > bd || keepZeroLength) pairs.add(bi, bd, di, dd);
  };

  /** Stores column c's reduction mod 2 (equal simplices cancel in pairs in the heap), ended by −1. */
  const storeReduction = (c: number): void => {
    const start = vUsed;
    while (added.settle()) {
      if (vUsed + 2 > vIdx.length) {
        const ni = new Float64Array(2 * vIdx.length);
        const nd = new Float64Array(2 * vIdx.length);
        ni.set(vIdx);
        nd.set(vDiam);
        vIdx = ni;
        vDiam = nd;
      }
      vIdx[vUsed] = added.topIndex();
      vDiam[vUsed++] = added.topValue();
      added.pop();
    }
    if (vUsed === start) return;
    vIdx[vUsed++] = -1;
    reductionOf.set(c, start);
  };

  for (let c = 0; c < total; c++) {
    if (c % watch.every === 0) watch.poll('reduction', dim, c, total);
    // Shortcut 1 (emergent pair): the column's first coface is nobody's pivot yet; found by a
    // scan that stops there, before any coface is pushed. The pair has length zero.
    if (scanCofaces(colIdx, colDiam, c, true) && !pivotOf.has(found[0])) {
      pivotOf.set(found[0], c);
      if (keepZeroLength) pairs.add(colIdx[c], colDiam[c], found[0], colDiam[c]);
      apparent++;
      continue;
    }
    const sIdx = colIdx[c];
    const sDiam = colDiam[c];
    coboundary.clear();
    added.clear();
    scanCofaces(colIdx, colDiam, c, false);
    let paired = false;
    let additions = 0;
    while (coboundary.settle()) {
      const p = coboundary.topIndex();
      const other = pivotOf.get(p);
      if (other === -1) {
        pivotOf.set(p, c);
        keep(sIdx, sDiam, p, coboundary.topValue());
        paired = true;
        break;
      }
      // Add column `other`: its own coboundary and those of the simplices in its reduction.
      add(colIdx, colDiam, other);
      for (let s = reductionOf.get(other); s >= 0 && vIdx[s] >= 0; s++) add(vIdx, vDiam, s);
      // A single column can take long: poll within it too.
      if (++additions % watch.every === 0) watch.poll('reduction', dim, c, total);
    }
    if (!paired) {
      keep(sIdx, sDiam, -1, Infinity);
      continue;
    }
    // Shortcut 2 (nothing to store): a column that needed no additions has an empty reduction.
    if (additions === 0) continue;
    storeReduction(c);
  }
  return { pairs, pivotOf, apparent };
}

/**
 * H1 cycle representatives by involuted persistence: for a pair (edge σ, triangle τ) found by
 * cohomology, the boundary-matrix column of τ, reduced left to right, is a cycle whose latest
 * edge is σ: born at diam(σ), a boundary from diam(τ) on. Its reduction only ever adds columns of
 * earlier death triangles τ′ — the lowest edge e of the working column is the pivot of exactly
 * one earlier reduced column, and cohomology has already told us which (the pair (e, τ′)).
 * A column whose boundary's lowest edge is already its partner needs no reduction at all; the
 * others are reduced on demand and remembered.
 * For an essential class (only with a cap) the representative is σ plus the path between its
 * ends in the spanning forest of earlier H0 edges, the standard reduction of σ's own column.
 */
function cycleRepresentatives(
  ctx: Context,
  cols: Columns,
  red: Reduction,
  edges: Uint32Array,
  isMstEdge: Uint8Array,
  watch: Watch,
): CycleRepresentative[] {
  const { n, values } = ctx;
  const { pairs } = red;
  // partner: birth edge → death triangle, for every pair of dimension 1 (zero length included).
  const deathOfEdge = new Float64Array(values.length).fill(-1);
  red.pivotOf.forEach((tri, c) => {
    deathOfEdge[cols.idx[c]] = tri;
  });
  const memo = new Map<number, Float64Array>(); // triangle → reduced column (edge indices)
  const heaps: EntryHeap[] = [];
  const tv = new Int32Array(3);

  // Latest edge first: the heap orders by (−diam, −index), i.e. diam descending, index ascending.
  const pushEdge = (heap: EntryHeap, p: number, q: number): void => {
    const e = ctx.row(p) + q;
    heap.push(-values[e], -e);
  };
  const pushBoundary = (heap: EntryHeap, tri: number): void => {
    ctx.vertices(tri, 3, tv);
    pushEdge(heap, tv[0], tv[1]);
    pushEdge(heap, tv[0], tv[2]);
    pushEdge(heap, tv[1], tv[2]);
  };

  const reduced = (tri: number, partner: number, depth: number): Float64Array => {
    const cached = memo.get(tri);
    if (cached) return cached;
    if (!heaps[depth]) heaps[depth] = new EntryHeap(64);
    const heap = heaps[depth];
    heap.clear();
    pushBoundary(heap, tri);
    let reducedAny = false;
    while (heap.settle()) {
      const low = -heap.topIndex();
      if (low === partner) break;
      const earlier = deathOfEdge[low];
      if (earlier < 0) throw new Error(`internal: edge ${low} has no partner while reducing triangle ${tri}`);
      const col = reduced(earlier, low, depth + 1);
      for (let t = 0; t < col.length; t++) heap.push(-values[col[t]], -col[t]);
      reducedAny = true;
    }
    const out = heap.drainIndices();
    for (let t = 0; t < out.length; t++) out[t] = -out[t];
    if (reducedAny) memo.set(tri, out);
    return out;
  };

  // Spanning forest of H0 edges, for essential classes.
  let forest: number[][] | null = null;
  const forestPath = (u: number, v: number): Array<[number, number]> => {
    if (!forest) {
      forest = Array.from({ length: n }, () => []);
      const ev = new Int32Array(2);
      for (let e = 0; e < edges.length; e++) {
        if (!isMstEdge[e]) continue;
        ctx.vertices(edges[e], 2, ev);
        forest[ev[0]].push(ev[1]);
        forest[ev[1]].push(ev[0]);
      }
    }
    const prev = new Int32Array(n).fill(-1);
    prev[u] = u;
    const queue = [u];
    for (let qi = 0; qi < queue.length && prev[v] < 0; qi++) {
      for (const y of forest[queue[qi]]) {
        if (prev[y] < 0) {
          prev[y] = queue[qi];
          queue.push(y);
        }
      }
    }
    const path: Array<[number, number]> = [];
    for (let x = v; x !== u; x = prev[x]) path.push(x > prev[x] ? [x, prev[x]] : [prev[x], x]);
    return path;
  };

  const out: CycleRepresentative[] = [];
  const ev = new Int32Array(2);
  for (let p = 0; p < pairs.count; p++) {
    if (p % watch.every === 0) watch.poll('representatives', 1, p, pairs.count);
    const birth = pairs.birthDiam[p];
    const death = pairs.deathDiam[p];
    let edgeList: Array<[number, number]>;
    if (pairs.deathIdx[p] < 0) {
      ctx.vertices(pairs.birthIdx[p], 2, ev);
      edgeList = [[ev[0], ev[1]], ...forestPath(ev[0], ev[1])];
    } else {
      const col = reduced(pairs.deathIdx[p], pairs.birthIdx[p], 0);
      edgeList = Array.from(col, (e) => {
        ctx.vertices(e, 2, ev);
        return [ev[0], ev[1]] as [number, number];
      });
    }
    edgeList.sort((a, b) => a[0] - b[0] || a[1] - b[1]);
    const nodes = [...new Set(edgeList.flat())].sort((a, b) => a - b);
    out.push({ birth, death, edges: edgeList, nodes });
  }
  return out;
}
