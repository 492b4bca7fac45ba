/**
 * The statistics stage's work as tasks for worker threads: chunks of a family's permutation test
 * (permutation.ts, permutationChunk), a family's result from its merged test (family.ts,
 * familyResult: the GLM and bootstrap effect sizes) and rows of a subject × subject diagram
 * distance matrix. A
 * task's answer depends on the task alone, never on the thread or the order it runs in, so the
 * merged results are the same for any number of workers and the same as in-process.
 * No node:* imports: the same code runs in this thread when there are no workers.
 */
import type { Contrast, Design, Exchangeability } from '../engine/stats/design.ts';
import { diagramDistance } from '../engine/stats/diagram-distance.ts';
import type { DiagramMetric, DiagramPoint } from '../engine/stats/diagram-distance.ts';
import { familyResult } from '../engine/stats/family.ts';
import type { FamilyOptions, FamilyResult, FeatureFamily } from '../engine/stats/family.ts';
import {
  permutationChunk,
  preparePermutationTest,
  type PermutationChunk,
  type PermutationTest,
} from '../engine/stats/permutation.ts';

/** Some chunks of one family's permutation test; the worker prepares the test from these inputs. */
export interface PermutationChunkTask {
  kind: 'permutation-chunks';
  taskId: number;
  columns: Float64Array[];
  contrast: Contrast;
  /** One array per feature, aligned with the design rows. */
  features: Float64Array[];
  exchangeability: Exchangeability | null;
  invariantColumns: number[];
  permutations: number;
  seed: number;
  chunks: number[];
}

/** Rows [from, to) of the lower triangle of a diagram distance matrix (pairs j < i). */
export interface DistanceRowsTask {
  kind: 'distance-rows';
  taskId: number;
  diagrams: DiagramPoint[][];
  metric: DiagramMetric;
  from: number;
  to: number;
}

/** A family's result from its merged permutation test: GLM, FDR and the bootstrap effect sizes. */
export interface FamilyResultTask {
  kind: 'family-result';
  taskId: number;
  design: Design;
  contrast: Contrast;
  family: FeatureFamily;
  aligned: Float64Array[];
  permutation: PermutationTest;
  options: FamilyOptions;
}

export type StatisticsTask = PermutationChunkTask | DistanceRowsTask | FamilyResultTask;

export type StatisticsReply =
  | { kind: 'permutation-chunks'; taskId: number; chunks: PermutationChunk[] }
  | { kind: 'family-result'; taskId: number; result: FamilyResult }
  /** d(i, j) for i in [from, to), j < i, row after row. */
  | { kind: 'distance-rows'; taskId: number; from: number; to: number; values: Float64Array };

export function runStatisticsTask(task: StatisticsTask): StatisticsReply {
  if (task.kind === 'permutation-chunks') {
    const prep = preparePermutationTest(task.columns, task.contrast, task.features, {
      permutations: task.permutations,
      seed: task.seed,
      exchangeability: task.exchangeability,
      invariantColumns: task.invariantColumns,
    });
    return {
      kind: 'permutation-chunks',
      taskId: task.taskId,
      chunks: task.chunks.map((c) => permutationChunk(prep, c)),
    };
  }
  if (task.kind === 'family-result') {
    const { design, contrast, family, aligned, permutation, options } = task;
    return {
      kind: 'family-result',
      taskId: task.taskId,
      result: familyResult(design, contrast, family, aligned, permutation, options),
    };
  }
  const { diagrams, metric, from, to } = task;
  const values = new Float64Array(pairsBefore(to) - pairsBefore(from));
  let k = 0;
  for (let i = from; i < to; i++)
    for (let j = 0; j < i; j++) values[k++] = diagramDistance(diagrams[i], diagrams[j], metric);
  return { kind: 'distance-rows', taskId: task.taskId, from, to, values };
}

/** Pairs (i, j), j < i, in the rows before row `row`. */
export function pairsBefore(row: number): number {
  return (row * (row - 1)) / 2;
}

/** Buffers a reply can hand over by transfer. */
export function statisticsTransferList(reply: StatisticsReply): ArrayBuffer[] {
  if (reply.kind === 'distance-rows') return [reply.values.buffer as ArrayBuffer];
  if (reply.kind === 'family-result') return [];
  return reply.chunks.flatMap((c) => [c.count.buffer as ArrayBuffer, c.maxima.buffer as ArrayBuffer]);
}

/**
 * Cuts the rows of an n × n lower triangle into about `parts` ranges of similar pair counts
 * (row i holds i pairs), in order.
 */
export function distanceRowRanges(n: number, parts: number): Array<[number, number]> {
  const total = pairsBefore(n);
  const ranges: Array<[number, number]> = [];
  let from = 1;
  for (let p = 1; p <= parts && from < n; p++) {
    let to = from;
    const target = (total * p) / parts;
    while (to < n && (pairsBefore(to + 1) <= target || to === from)) to++;
    if (p === parts) to = n;
    ranges.push([from, to]);
    from = to;
  }
  if (from < n) ranges.push([from, n]);
  return ranges;
}
