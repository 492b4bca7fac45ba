/**
 * Shared value types of the engine. Plain data only: everything here survives
 * structured cloning (worker threads) and JSON (with Infinity mapped to null).
 */

/** A square matrix, row-major, n × n. */
export interface SquareMatrix {
  n: number;
  values: Float64Array;
}

/**
 * Pairwise distances as the compressed lower triangle: the distance between
 * nodes i > j sits at index i(i−1)/2 + j, so the array has n(n−1)/2 entries.
 * +Infinity marks an absent edge (it never enters the filtration).
 */
export interface DistanceMatrix {
  n: number;
  values: Float64Array;
}

/** One interval of a persistence diagram. death = Infinity for an essential class. */
export interface Interval {
  birth: number;
  death: number;
}

/**
 * A cycle representative of an H1 interval: a set of edges whose every node
 * has even degree (a mod-2 cycle), present at `birth` and not yet a boundary
 * just before `death`. Node indices are 0-based in file order; each edge is [i, j] with i > j.
 */
export interface CycleRepresentative {
  birth: number;
  death: number;
  edges: Array<[number, number]>;
  nodes: number[];
}

/**
 * One merge of the H0 filtration: at `value`, the edge [i, j] joins two
 * components; the one holding the smaller node index (`survivor`, its
 * smallest node) absorbs the other (`absorbed`, its smallest node).
 * All nodes are born at 0, so this is the elder rule with ties broken by node index.
 */
export interface MergeEvent {
  value: number;
  edge: [number, number];
  survivor: number;
  absorbed: number;
  /** The nodes of the absorbed component just before the merge (only when H0 representatives are asked for). */
  absorbedNodes?: number[];
}

export type CapSetting =
  { kind: 'none' } | { kind: 'distance'; value: number } | { kind: 'density'; value: number };

export interface PersistenceOptions {
  /** Highest homology dimension computed: 1 (H0, H1) or 2 (H0, H1, H2). */
  maxDim: 1 | 2;
  /** Where the filtration stops. 'none' stops at the enclosing radius, which gives the full filtration's diagram. */
  cap: CapSetting;
  /** Compute an H1 cycle representative for every H1 interval of positive length. */
  representatives: boolean;
  /** Keep the node lists of each absorbed H0 component in the merge tree. */
  h0Representatives: boolean;
  /** Keep intervals of zero length (birth = death). Off by default. */
  keepZeroLength: boolean;
}

export interface PersistenceResult {
  n: number;
  /** The filtration value the complex was built up to (edges with distance ≤ threshold). */
  threshold: number;
  /** How the threshold was chosen. */
  thresholdSource: 'enclosing-radius' | 'distance-cap' | 'density-cap' | 'all-finite-edges';
  /** diagrams[d] is the H_d diagram, sorted by birth, then death. */
  diagrams: Interval[][];
  /** Present when options.representatives: aligned with diagrams[1] (same order, same length). */
  representatives?: CycleRepresentative[];
  /** The H0 merge tree, in filtration order. */
  mergeTree: MergeEvent[];
  /** Counts of the work done, for benchmarks and tests (no timings). */
  counts: { edges: number; columnsReduced: number[]; apparentPairs: number[] };
}
