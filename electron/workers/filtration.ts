/**
 * One subject's filtration, as run inside a worker thread: drop regions, transform to distances
 * (electron/engine/transform.ts), compute persistence (electron/engine/persistence.ts), and pack
 * the result into typed arrays that cross the thread boundary by transfer, not by copy.
 * No node:* imports, so the same code runs in-process where threads are unavailable.
 */
import { computePersistence } from '../engine/persistence.ts';
import { toDistances } from '../engine/transform.ts';
import type { InputKind, TransformName } from '../engine/transform.ts';
import type { CapSetting, SquareMatrix } from '../engine/types.ts';
import type { SubjectEntry } from '../api.ts';

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
}

export type WorkerTask = ({ kind: 'matrix' } & FiltrationTask) | ({ kind: 'subject' } & SubjectTask);

export type WorkerReply =
  | {
      kind: 'computed';
      result: PackedFiltration;
      matrixSha256: string | null;
      key: string | null;
      fileSha256?: string | null;
    }
  | {
      kind: 'cached';
      taskId: number;
      matrixSha256: string;
      key: string;
      n: number;
      fileSha256?: string | null;
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

/** The matrix without the rows and columns in `drop`, and the original index of each kept region. */
export function dropRegions(m: SquareMatrix, drop: number[]): { matrix: SquareMatrix; kept: Int32Array } {
  const dropSet = new Set(drop.filter((r) => r < m.n));
  const keptList: number[] = [];
  for (let i = 0; i < m.n; i++) if (!dropSet.has(i)) keptList.push(i);
  const kept = Int32Array.from(keptList);
  if (kept.length === m.n) return { matrix: m, kept };
  const k = kept.length;
  const values = new Float64Array(k * k);
  for (let a = 0; a < k; a++)
    for (let b = 0; b < k; b++) values[a * k + b] = m.values[kept[a] * m.n + kept[b]];
  return { matrix: { n: k, values }, kept };
}

export function runFiltration(task: FiltrationTask): PackedFiltration {
  const { settings } = task;
  const { matrix, kept } = dropRegions({ n: task.n, values: task.values }, settings.dropRegions);
  const distances = toDistances(matrix, { input: settings.input, transform: settings.transform });
  const r = computePersistence(distances, {
    maxDim: settings.maxDim,
    cap: settings.cap,
    representatives: settings.representatives,
  });
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
    // Back to the indices of the matrix as read, so dropped regions do not shift node names.
    reps.forEach((rep, k) => {
      rep.nodes.forEach((v, t) => (nodes[nodeStart[k] + t] = kept[v]));
      rep.edges.forEach(([i, j], t) => {
        edges[2 * (edgeStart[k] + t)] = kept[i];
        edges[2 * (edgeStart[k] + t) + 1] = kept[j];
      });
    });
    [repNodeStart, repNodes, repEdgeStart, repEdges] = [nodeStart, nodes, edgeStart, edges];
  }
  const mergeTree = new Float64Array(5 * r.mergeTree.length);
  r.mergeTree.forEach((ev, k) => {
    mergeTree.set(
      [ev.value, kept[ev.edge[0]], kept[ev.edge[1]], kept[ev.survivor], kept[ev.absorbed]],
      5 * k,
    );
  });
  return {
    taskId: task.taskId,
    n: matrix.n,
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
