/**
 * One subject's filtration, as run inside a worker thread: drop regions, transform to distances
 * (electron/engine/transform.ts), compute persistence (electron/engine/persistence.ts), and pack
 * the result into typed arrays that cross the thread boundary by transfer, not by copy.
 * No node:* imports, so the same code runs in-process where threads are unavailable.
 */
import { computePersistence } from '../engine/persistence.ts';
import { dropRegions, toDistances } from '../engine/transform.ts';
import type { InputKind, TransformName } from '../engine/transform.ts';
import type { CapSetting, DistanceMatrix, PersistenceResult, SquareMatrix } from '../engine/types.ts';
import type { AnalysisSettings, SubjectEntry } from '../api.ts';
import { grid } from '../engine/features/grid.ts';
import { subjectOnGrid, subjectSummary } from '../engine/features/rows.ts';
import type { FeatureRow, SubjectSummary } from '../engine/features/rows.ts';
import { CACHE_FORMAT, resultFromCache } from '../shared/filtration-record.ts';
import type { CachedFiltration } from '../shared/filtration-record.ts';
import { ENGINE_VERSION } from '../engine/version.ts';

export interface FiltrationSettings {
  input: InputKind;
  transform: TransformName;
  maxDim: 1 | 2;
  cap: CapSetting;
  representatives: boolean;
  dropRegions: number[];
}

export interface FiltrationTask {
  taskId: number;
  n: number;
  values: Float64Array;
  settings: FiltrationSettings;
}

/**
 * A subject the worker reads itself (through the cohort readers), so that parsing files and hashing
 * run in parallel too, not on the coordinating thread. The worker hashes the matrix, and when
 * `cacheDir` holds the filtration already (and not `recompute`) it only says so.
 */
export interface SubjectTask {
  taskId: number;
  entry: SubjectEntry;
  /** The cohort's N: a matrix of another size is refused. */
  expectedN: number | null;
  settings: FiltrationSettings;
  cacheDir: string;
  recompute: boolean;
  /** Also hash the file's bytes (a file of its own; a stack shared by many subjects is hashed once elsewhere). */
  hashFile: boolean;
  /** Also compute the subject's features from the same read (subjectFeatures); the reply then carries them. */
  features?: FeatureTaskSettings;
}

/** What a subject's features depend on beyond its filtration. */
export type FeatureTaskSettings = Pick<
  AnalysisSettings,
  'maxDim' | 'persistenceFloor' | 'landscapeLevels' | 'dropRegions' | 'gridPoints' | 'gridRange'
> & {
  /** Also send the matrix as read back (for the group means the run gathers as subjects finish). */
  keepMatrix?: boolean;
};

/** The feature settings of a run's settings. */
export function featureTaskSettings(s: AnalysisSettings): FeatureTaskSettings {
  return {
    maxDim: s.maxDim,
    persistenceFloor: s.persistenceFloor,
    landscapeLevels: s.landscapeLevels,
    dropRegions: s.dropRegions,
    gridPoints: s.gridPoints,
    gridRange: s.gridRange,
  };
}

/**
 * One subject's features as its worker computes them from the one read of its matrix: the
 * grid-free summary (engine/features/rows.ts subjectSummary), and, when the grid is fixed by the
 * settings (gridRange), the features and curves on it, the summary then without its simplex events.
 */
export interface SubjectFeatures {
  summary: SubjectSummary;
  onGrid: { features: FeatureRow; curves: Record<string, Float64Array> } | null;
  /** The matrix as read (row-major n × n), when the task asked for it (keepMatrix). */
  matrix?: Float64Array;
}

export type WorkerTask = ({ kind: 'matrix' } & FiltrationTask) | ({ kind: 'subject' } & SubjectTask);

export type WorkerReply =
  | {
      kind: 'computed';
      result: PackedFiltration;
      matrixSha256: string | null;
      key: string | null;
      fileSha256?: string | null;
      features?: SubjectFeatures;
    }
  | {
      kind: 'cached';
      taskId: number;
      matrixSha256: string;
      key: string;
      n: number;
      fileSha256?: string | null;
      features?: SubjectFeatures;
    };

/** Diagrams and representatives as flat typed arrays (transferable). Node indices are those of the matrix as given. */
export interface PackedFiltration {
  taskId: number;
  n: number;
  threshold: number;
  thresholdSource: string;
  /** births[d], deaths[d]: the H_d intervals (death Infinity for an essential class). */
  births: Float64Array[];
  deaths: Float64Array[];
  /** H1 representatives: nodes of representative k are repNodes[repNodeStart[k] .. repNodeStart[k+1]); edges likewise, as pairs. */
  repNodeStart: Int32Array | null;
  repNodes: Int32Array | null;
  repEdgeStart: Int32Array | null;
  repEdges: Int32Array | null;
  /** The H0 merge tree, 5 numbers per merge: value, edge i, edge j, survivor, absorbed. */
  mergeTree: Float64Array;
}

export interface FiltrationFailure {
  taskId: number;
  error: string;
}

export { dropRegions };

/**
 * The one filtration of a matrix, for a subject (runFiltration) and a group's mean matrix (the
 * group stage) alike: drop regions → distances (transform.ts) → persistence (persistence.ts) →
 * node indices mapped back to the matrix as read (so dropped regions do not shift node names).
 * `analysed` is the number of regions kept; `distances` those the filtration ran on (kept regions only).
 */
export function filtrationAsRead(
  m: SquareMatrix,
  settings: FiltrationSettings,
): { result: PersistenceResult; analysed: number; distances: DistanceMatrix } {
  const { matrix, kept } = dropRegions(m, settings.dropRegions);
  const distances = toDistances(matrix, { input: settings.input, transform: settings.transform });
  const r = computePersistence(distances, {
    maxDim: settings.maxDim,
    cap: settings.cap,
    representatives: settings.representatives,
  });
  const result: PersistenceResult = {
    ...r,
    n: m.n,
    representatives: r.representatives?.map((rep) => ({
      ...rep,
      edges: rep.edges.map(([i, j]) => [kept[i], kept[j]] as [number, number]),
      nodes: rep.nodes.map((v) => kept[v]),
    })),
    mergeTree: r.mergeTree.map((ev) => ({
      ...ev,
      edge: [kept[ev.edge[0]], kept[ev.edge[1]]] as [number, number],
      survivor: kept[ev.survivor],
      absorbed: kept[ev.absorbed],
    })),
  };
  return { result, analysed: matrix.n, distances };
}

export function runFiltration(task: FiltrationTask): PackedFiltration {
  const { result: r, analysed } = filtrationAsRead({ n: task.n, values: task.values }, task.settings);
  const births = r.diagrams.map((d) => Float64Array.from(d, (iv) => iv.birth));
  const deaths = r.diagrams.map((d) => Float64Array.from(d, (iv) => iv.death));
  let repNodeStart: Int32Array | null = null;
  let repNodes: Int32Array | null = null;
  let repEdgeStart: Int32Array | null = null;
  let repEdges: Int32Array | null = null;
  if (r.representatives) {
    const reps = r.representatives;
    const nodeStart = new Int32Array(reps.length + 1);
    const edgeStart = new Int32Array(reps.length + 1);
    reps.forEach((rep, k) => {
      nodeStart[k + 1] = nodeStart[k] + rep.nodes.length;
      edgeStart[k + 1] = edgeStart[k] + rep.edges.length;
    });
    const nodes = new Int32Array(nodeStart[reps.length]);
    const edges = new Int32Array(2 * edgeStart[reps.length]);
    reps.forEach((rep, k) => {
      rep.nodes.forEach((v, t) => (nodes[nodeStart[k] + t] = v));
      rep.edges.forEach(([i, j], t) => {
        edges[2 * (edgeStart[k] + t)] = i;
        edges[2 * (edgeStart[k] + t) + 1] = j;
      });
    });
    [repNodeStart, repNodes, repEdgeStart, repEdges] = [nodeStart, nodes, edgeStart, edges];
  }
  const mergeTree = new Float64Array(5 * r.mergeTree.length);
  r.mergeTree.forEach((ev, k) => {
    mergeTree.set([ev.value, ev.edge[0], ev.edge[1], ev.survivor, ev.absorbed], 5 * k);
  });
  return {
    taskId: task.taskId,
    n: analysed,
    threshold: r.threshold,
    thresholdSource: r.thresholdSource,
    births,
    deaths,
    repNodeStart,
    repNodes,
    repEdgeStart,
    repEdges,
    mergeTree,
  };
}

/** The cached record of a worker's packed result. */
export function unpack(p: PackedFiltration, key: string, matrixSha256: string): CachedFiltration {
  const diagrams = p.births.map((b, d) =>
    Array.from(b, (birth, k): [number, number | null] => {
      const death = p.deaths[d][k];
      return [birth, Number.isFinite(death) ? death : null];
    }),
  );
  let representatives: CachedFiltration['representatives'] = null;
  if (p.repNodeStart && p.repNodes && p.repEdgeStart && p.repEdges) {
    representatives = [];
    for (let k = 0; k + 1 < p.repNodeStart.length; k++) {
      const nodes = Array.from(p.repNodes.subarray(p.repNodeStart[k], p.repNodeStart[k + 1]));
      const edges: Array<[number, number]> = [];
      for (let t = p.repEdgeStart[k]; t < p.repEdgeStart[k + 1]; t++)
        edges.push([p.repEdges[2 * t], p.repEdges[2 * t + 1]]);
      representatives.push({ nodes, edges });
    }
  }
  const mergeTree: CachedFiltration['mergeTree'] = [];
  for (let k = 0; k < p.mergeTree.length; k += 5) {
    const t = p.mergeTree;
    mergeTree.push([t[k], t[k + 1], t[k + 2], t[k + 3], t[k + 4]]);
  }
  return {
    format: CACHE_FORMAT,
    key,
    engineVersion: ENGINE_VERSION,
    matrixSha256,
    n: p.n,
    threshold: Number.isFinite(p.threshold) ? p.threshold : null,
    thresholdSource: p.thresholdSource,
    diagrams,
    representatives,
    mergeTree,
  };
}

/**
 * A subject's features (SubjectFeatures) from its cached filtration and its matrix as read: the
 * distances the filtration saw (regions dropped, transform applied; none when they cannot be made,
 * and then no Euler values), the summary, and the grid's values when the grid is fixed. The one
 * function the worker and the service's features stage both call.
 */
export function subjectFeatures(
  cached: CachedFiltration,
  matrix: SquareMatrix | null,
  nRead: number,
  filtration: Pick<FiltrationSettings, 'input' | 'transform'>,
  settings: FeatureTaskSettings,
): SubjectFeatures {
  const r = resultFromCache(cached, nRead);
  let distances: DistanceMatrix | undefined;
  if (matrix) {
    try {
      distances = toDistances(dropRegions(matrix, settings.dropRegions).matrix, {
        input: filtration.input,
        transform: filtration.transform,
      });
    } catch {
      distances = undefined;
    }
  }
  const summary = subjectSummary(r, settings, distances);
  const kept = settings.keepMatrix && matrix ? { matrix: matrix.values.slice() } : {};
  if (!settings.gridRange) return { summary, onGrid: null, ...kept };
  const g = grid(settings.gridRange[0], settings.gridRange[1], settings.gridPoints);
  const onGrid = subjectOnGrid(summary, r, g, settings);
  return { summary: { ...summary, euler: null }, onGrid, ...kept };
}

/** The buffers of a features reply, for postMessage's transfer list. */
export function featureTransferList(f: SubjectFeatures | undefined): ArrayBuffer[] {
  if (!f) return [];
  const out: ArrayBuffer[] = [];
  const ev = f.summary.euler;
  if (ev) for (const a of [ev.values, ev.triangles, ev.tetrahedra]) if (a) out.push(a.buffer as ArrayBuffer);
  if (f.onGrid) for (const c of Object.values(f.onGrid.curves)) out.push(c.buffer as ArrayBuffer);
  if (f.matrix) out.push(f.matrix.buffer as ArrayBuffer);
  return out;
}

/** The buffers of a packed result, for postMessage's transfer list. */
export function transferList(p: PackedFiltration): ArrayBuffer[] {
  const arrays = [
    ...p.births,
    ...p.deaths,
    p.repNodeStart,
    p.repNodes,
    p.repEdgeStart,
    p.repEdges,
    p.mergeTree,
  ];
  return arrays.filter((a): a is Float64Array | Int32Array => a !== null).map((a) => a.buffer as ArrayBuffer);
}
