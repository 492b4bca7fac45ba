/**
 * Whole-diagram group comparison for one homology dimension: the subject × subject distance
 * matrix under each metric, then the joint-loss test (Robinson & Turner 2017) and PERMANOVA
 * (Anderson 2001) on it, ready for diagram-tests.tsv. Both tests of a metric use the same seed.
 *
 *   diagramGroupTests('H1', diagrams, design.group, design.levels, [{ kind: 'wasserstein', p: 2 }], { seed: 1 })
 */
import type { SquareMatrix } from '../types.ts';
import {
  diagramDistanceMatrix,
  metricName,
  type DiagramInput,
  type DiagramMetric,
  type InfiniteHandling,
} from './diagram-distance.ts';
import { jointLossTest, permanova } from './diagram-tests.ts';
import type { DiagramTestEntry } from './tables.ts';

export interface DiagramFamilyOptions {
  permutations?: number;
  seed: number;
  infinite?: InfiniteHandling;
  /** Exponent of the distances in the joint loss (default 2). */
  q?: number;
}

export function diagramGroupTests(
  family: string,
  diagrams: DiagramInput[],
  group: Int32Array,
  levels: string[],
  metrics: DiagramMetric[],
  options: DiagramFamilyOptions,
): { entries: DiagramTestEntry[]; distances: Array<{ metric: string; matrix: SquareMatrix }> } {
  if (diagrams.length !== group.length) {
    throw new Error(`${family}: ${diagrams.length} diagrams for ${group.length} group labels`);
  }
  const groupSizes = levels.map((level, g) => ({ level, n: group.filter((x) => x === g).length }));
  const entries: DiagramTestEntry[] = [];
  const distances: Array<{ metric: string; matrix: SquareMatrix }> = [];
  for (const metric of metrics) {
    const name = metricName(metric);
    const matrix = diagramDistanceMatrix(diagrams, metric, options.infinite ?? 'drop');
    distances.push({ metric: name, matrix });
    const opts = { permutations: options.permutations, seed: options.seed };
    entries.push({
      family,
      metric: name,
      result: jointLossTest(matrix, group, { ...opts, q: options.q }),
      groupSizes,
    });
    entries.push({ family, metric: name, result: permanova(matrix, group, opts), groupSizes });
  }
  return { entries, distances };
}
