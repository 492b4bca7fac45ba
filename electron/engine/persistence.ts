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
import { stableOrder } from './radix.ts';
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

/**
 * The persistence diagrams (and optionally cycle representatives) of the clique filtration.
 *
 *   computePersistence(distancesFromRows([[0,1,2,1],[1,0,1,2],[2,1,0,1],[1,2,1,0]]), {maxDim: 1})
 *   → diagrams[1] = [{birth: 1, death: 2}]   (a square with diagonals 2: one loop)
 */
export function computePersistence(
  d: DistanceMatrix,
  opts: Partial<PersistenceOptions> = {},
): PersistenceResult {
  const options: PersistenceOptions = { ...DEFAULT_PERSISTENCE_OPTIONS, ...opts };
  const { n } = d;
  if (d.values.length !== (n * (n - 1)) / 2) {
    throw new RangeError(
      `distance array has ${d.values.length} entries, expected ${(n * (n - 1)) / 2} for n = ${n}`,
    );
  }
  for (let k = 0; k < d.values.length; k++) {
    const x = d.values[k];
    if (!(x >= 0)) throw new RangeError(`distance ${x} at compressed index ${k} is negative or missing`);
  }

  // Threshold.
  const radius = enclosingRadius(d);
  let threshold: number;
  let thresholdSource: PersistenceResult['thresholdSource'];
  const capValue =
    options.cap.kind === 'distance'
      ? options.cap.value
      : options.cap.kind === 'density'
        ? densityThreshold(d, options.cap.value)
        : Infinity;
  if (capValue < radius) {
    threshold = capValue;
    thresholdSource = options.cap.kind === 'density' ? 'density-cap' : 'distance-cap';
  } else if (Number.isFinite(radius)) {
    // Beyond the enclosing radius nothing changes in dimensions ≥ 1 and H0 is connected.
    threshold = radius;
    thresholdSource = 'enclosing-radius';
  } else {
    threshold = Infinity;
    thresholdSource = 'all-finite-edges';
  }

  const ctx = new Context(d, options.maxDim + 2, threshold);
  const diagrams: Interval[][] = [];
  for (let dim = 0; dim <= options.maxDim; dim++) diagrams.push([]);

  // H0 by union-find over edges in filtration order (Kruskal).
  const edges = ctx.sortedEdges(); // ascending filtration order
  const h0 = unionFind(ctx, edges, options.h0Representatives);
  for (const ev of h0.mergeTree) {
    if (ev.value > 0 || options.keepZeroLength) diagrams[0].push({ birth: 0, death: ev.value });
  }
  for (let c = 0; c < h0.components; c++) diagrams[0].push({ birth: 0, death: Infinity });

  // Columns of dimension 1: edges that did not merge components (clearing), in reverse filtration order.
  const m = edges.count;
  let colIdx: Float64Array = new Float64Array(m - h0.mergeTree.length);
  let colDiam: Float64Array = new Float64Array(colIdx.length);
  for (let e = m - 1, c = 0; e >= 0; e--) {
    if (h0.isMstEdge[e]) continue;
    colIdx[c] = edges.idx[e];
    colDiam[c++] = edges.diam[e];
  }

  const columnsReduced: number[] = [edges.count];
  const apparentPairs: number[] = [0];
  let h1Pairs: PairList | null = null;
  for (let dim = 1; dim <= options.maxDim; dim++) {
    const red = reduceCohomology(ctx, dim, colIdx, colDiam);
    columnsReduced.push(colIdx.length);
    apparentPairs.push(red.apparent);
    for (let p = 0; p < red.pairs.count; p++) {
      const b = red.pairs.birthDiam[p];
      const dd = red.pairs.deathDiam[p];
      if (dd > b || options.keepZeroLength) diagrams[dim].push({ birth: b, death: dd });
    }
    if (dim === 1) {
      h1Pairs = red.pairs;
    }
    if (dim < options.maxDim) {
      const next = ctx.simplicesAbove(dim, red.pivotOf);
      colIdx = next.idx;
      colDiam = next.diam;
    }
  }

  let representatives: CycleRepresentative[] | undefined;
  if (options.representatives && h1Pairs) {
    representatives = cycleRepresentatives(ctx, h1Pairs, edges, h0.isMstEdge, options.keepZeroLength);
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
    counts: { edges: edges.count, columnsReduced, apparentPairs },
  };
}

function byInterval(a: Interval, b: Interval): number {
  return a.birth - b.birth || (a.death === b.death ? 0 : a.death < b.death ? -1 : 1);
}

/** Shared lookups: dense distances, binomials, vertex decoding, coface enumeration. */
class Context {
  readonly n: number;
  readonly dist: Float64Array; // n × n, dense, for fast lookups in the hot loops
  readonly binom: Float64Array;
  readonly threshold: number;
  private readonly stride: number;

  constructor(d: DistanceMatrix, kMax: number, threshold: number) {
    const { n, values } = d;
    this.n = n;
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

  /** Edges with distance ≤ threshold, in filtration order (distance ascending, index descending). */
  sortedEdges(): EdgeList {
    const { n, dist, threshold } = this;
    let count = 0;
    for (let i = 0; i < n; i++) for (let j = 0; j < i; j++) if (dist[i * n + j] <= threshold) count++;
    // Collected in index-descending order, so that a stable sort by diameter yields the
    // filtration order (diameter ascending, index descending).
    const idx = new Float64Array(count);
    const diam = new Float64Array(count);
    let c = 0;
    for (let i = n - 1; i >= 1; i--) {
      const base = (i * (i - 1)) / 2;
      for (let j = i - 1; j >= 0; j--) {
        const x = dist[i * n + j];
        if (x <= threshold) {
          idx[c] = base + j;
          diam[c++] = x;
        }
      }
    }
    const order = stableOrder(diam);
    return { count, idx: permute(idx, order), diam: permute(diam, order) };
  }

  /**
   * All (dim+1)-simplices with diameter ≤ threshold that are not pivots of the dimension-dim
   * reduction (clearing: their columns would reduce to zero), in reverse filtration order.
   * Each simplex is enumerated once, its vertices chosen largest first, pruning a prefix whose
   * diameter already exceeds the threshold.
   */
  simplicesAbove(dim: number, pivots: IndexMap): { idx: Float64Array; diam: Float64Array } {
    const { n, dist, threshold } = this;
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
        let dm = diamSoFar;
        for (let q = 0; q < depth; q++) {
          const x = dist[stack[q] * n + v];
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
    const idx = idxOut.subarray(0, count);
    const diam = diamOut.subarray(0, count);
    const order = stableOrder(diam);
    // Reverse filtration order: diameter descending, index ascending.
    order.reverse();
    return { idx: permute(idx, order), diam: permute(diam, order) };
  }
}

interface EdgeList {
  count: number;
  idx: Float64Array;
  diam: Float64Array;
}

function permute(a: Float64Array, order: Uint32Array): Float64Array {
  const out = new Float64Array(a.length);
  for (let i = 0; i < order.length; i++) out[i] = a[order[i]];
  return out;
}

interface UnionFindResult {
  mergeTree: MergeEvent[];
  isMstEdge: Uint8Array; // by position in the sorted edge list
  components: number;
}

/** H0: Kruskal over edges in filtration order; the component holding the smaller node survives. */
function unionFind(ctx: Context, edges: EdgeList, keepNodes: boolean): UnionFindResult {
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
  const isMstEdge = new Uint8Array(edges.count);
  const mergeTree: MergeEvent[] = [];
  const vs = new Int32Array(2);
  let components = n;
  for (let e = 0; e < edges.count && components > 1; e++) {
    ctx.vertices(edges.idx[e], 2, vs);
    const a = find(vs[0]);
    const b = find(vs[1]);
    if (a === b) continue;
    isMstEdge[e] = 1;
    components--;
    const [win, lose] = minNode[a] < minNode[b] ? [a, b] : [b, a];
    const ev: MergeEvent = {
      value: edges.diam[e],
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

/** Persistence pairs of one dimension, as simplex indices and diameters; death = Infinity when essential. */
interface PairList {
  count: number;
  birthIdx: Float64Array;
  birthDiam: Float64Array;
  deathIdx: Float64Array;
  deathDiam: Float64Array;
}

/**
 * Persistent cohomology in dimension `dim`: columns are dim-simplices in reverse filtration
 * order; a column's entries are its cofaces (never stored: enumerated from the vertices);
 * its pivot is its earliest coface. Reduction adds earlier columns with the same pivot;
 * what is stored per column is only its reduction (which simplices were added), as in Ripser.
 */
function reduceCohomology(
  ctx: Context,
  dim: number,
  colIdx: Float64Array,
  colDiam: Float64Array,
): { pairs: PairList; pivotOf: IndexMap; apparent: number } {
  const { n, dist, threshold } = ctx;
  const k = dim + 1; // vertices of a column simplex
  const pivotOf = new IndexMap(colIdx.length); // pivot (coface index) → column position
  // Stored reductions: for column c, the simplices added to it (besides itself), as a slice of vStore.
  const vStart = new Int32Array(colIdx.length).fill(-1);
  const vLen = new Int32Array(colIdx.length);
  let vIdx = new Float64Array(1024);
  let vDiam = new Float64Array(1024);
  let vUsed = 0;

  // Each column yields at most one pair.
  const pairs: PairList = {
    count: 0,
    birthIdx: new Float64Array(colIdx.length),
    birthDiam: new Float64Array(colIdx.length),
    deathIdx: new Float64Array(colIdx.length),
    deathDiam: new Float64Array(colIdx.length),
  };
  const addPair = (bi: number, bd: number, di: number, dd: number): void => {
    const p = pairs.count++;
    pairs.birthIdx[p] = bi;
    pairs.birthDiam[p] = bd;
    pairs.deathIdx[p] = di;
    pairs.deathDiam[p] = dd;
  };
  const heap = new EntryHeap();
  const vs = new Int32Array(k);
  const workIdx: number[] = [];
  const workDiam: number[] = [];
  let apparent = 0;

  /**
   * Pushes every coface of simplex (idx, diam) with diameter ≤ threshold, enumerated in decreasing
   * index (w descending). With `emergentCheck`, the first coface of the simplex's own diameter is,
   * among the cofaces of least diameter, the one of largest index: the column's pivot before any
   * reduction. If no earlier column holds that pivot, the reduction stops at once (an emergent
   * pair, of zero length): the enumeration stops and that coface is returned. Otherwise −1.
   */
  const pushCofaces = (idx: number, diam: number, emergentCheck: boolean): number => {
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
      if (emergentCheck && dm === diam) {
        if (!pivotOf.has(cof)) return cof;
        emergentCheck = false;
      }
      heap.push(dm, cof);
    }
    return -1;
  };

  for (let c = 0; c < colIdx.length; c++) {
    const sIdx = colIdx[c];
    const sDiam = colDiam[c];
    heap.clear();
    const emergent = pushCofaces(sIdx, sDiam, true);
    if (emergent >= 0) {
      pivotOf.set(emergent, c);
      addPair(sIdx, sDiam, emergent, sDiam);
      apparent++;
      continue;
    }

    workIdx.length = 0;
    workDiam.length = 0;
    let paired = false;
    while (heap.settle()) {
      const p = heap.topIndex();
      const other = pivotOf.get(p);
      if (other === -1) {
        pivotOf.set(p, c);
        addPair(sIdx, sDiam, p, heap.topValue());
        paired = true;
        break;
      }
      // Add column `other`: its own coboundary and those of the simplices in its reduction.
      workIdx.push(colIdx[other]);
      workDiam.push(colDiam[other]);
      pushCofaces(colIdx[other], colDiam[other], false);
      const s = vStart[other];
      for (let t = 0; t < vLen[other]; t++) {
        workIdx.push(vIdx[s + t]);
        workDiam.push(vDiam[s + t]);
        pushCofaces(vIdx[s + t], vDiam[s + t], false);
      }
    }
    if (!paired) {
      addPair(sIdx, sDiam, -1, Infinity);
    } else if (workIdx.length > 0) {
      // Store the reduction mod 2: sort by index and drop pairs.
      const order = workIdx.map((_, i) => i).sort((a, b) => workIdx[a] - workIdx[b]);
      const keepIdx: number[] = [];
      const keepDiam: number[] = [];
      for (let i = 0; i < order.length;) {
        let r = i + 1;
        while (r < order.length && workIdx[order[r]] === workIdx[order[i]]) r++;
        if ((r - i) % 2 === 1) {
          keepIdx.push(workIdx[order[i]]);
          keepDiam.push(workDiam[order[i]]);
        }
        i = r;
      }
      if (keepIdx.length > 0) {
        if (vUsed + keepIdx.length > vIdx.length) {
          const cap = Math.max(vIdx.length * 2, vUsed + keepIdx.length);
          const ni = new Float64Array(cap);
          const nd = new Float64Array(cap);
          ni.set(vIdx.subarray(0, vUsed));
          nd.set(vDiam.subarray(0, vUsed));
          vIdx = ni;
          vDiam = nd;
        }
        vStart[c] = vUsed;
        vLen[c] = keepIdx.length;
        vIdx.set(keepIdx, vUsed);
        vDiam.set(keepDiam, vUsed);
        vUsed += keepIdx.length;
      }
    }
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
  pairs: PairList,
  edges: EdgeList,
  isMstEdge: Uint8Array,
  keepZeroLength: boolean,
): CycleRepresentative[] {
  const { n, dist } = ctx;
  // partner: birth edge → death triangle, for every pair of dimension 1 (zero length included).
  const deathOfEdge = new Float64Array((n * (n - 1)) / 2).fill(-1);
  for (let p = 0; p < pairs.count; p++) {
    if (pairs.deathIdx[p] >= 0) deathOfEdge[pairs.birthIdx[p]] = pairs.deathIdx[p];
  }
  const memo = new Map<number, Float64Array>(); // triangle → reduced column (edge indices)
  const heaps: EntryHeap[] = [];
  const tv = new Int32Array(3);

  const edgeDiam = (e: number): number => {
    // e = C(i, 2) + j with i > j
    let i = Math.floor((1 + Math.sqrt(1 + 8 * e)) / 2);
    while ((i * (i - 1)) / 2 > e) i--;
    while (((i + 1) * i) / 2 <= e) i++;
    const j = e - (i * (i - 1)) / 2;
    return dist[i * n + j];
  };
  const pushBoundary = (heap: EntryHeap, tri: number): void => {
    ctx.vertices(tri, 3, tv);
    const [a, b, c] = [tv[0], tv[1], tv[2]];
    // Latest edge first: the heap orders by (−diam, −index), i.e. diam descending, index ascending.
    for (const [p, q] of [
      [a, b],
      [a, c],
      [b, c],
    ]) {
      const e = (p * (p - 1)) / 2 + q;
      heap.push(-dist[p * n + q], -e);
    }
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
      for (let t = 0; t < col.length; t++) heap.push(-edgeDiam(col[t]), -col[t]);
      reducedAny = true;
    }
    const { indices } = heap.drain();
    const out = Float64Array.from(indices, (x) => -x);
    if (reducedAny) memo.set(tri, out);
    return out;
  };

  // Spanning forest of H0 edges, for essential classes.
  let forest: number[][] | null = null;
  const forestPath = (u: number, v: number): Array<[number, number]> => {
    if (!forest) {
      forest = Array.from({ length: n }, () => []);
      const ev = new Int32Array(2);
      for (let e = 0; e < edges.count; e++) {
        if (!isMstEdge[e]) continue;
        ctx.vertices(edges.idx[e], 2, ev);
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
    const birth = pairs.birthDiam[p];
    const death = pairs.deathDiam[p];
    if (!(death > birth) && !keepZeroLength) continue;
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
