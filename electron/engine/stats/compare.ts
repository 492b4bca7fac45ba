/**
 * Comparing two filtrations (two scans, a scan and its group's mean-matrix filtration, or two
 * groups' mean-matrix filtrations): the distance between their diagrams, where a value lies in a
 * group's distribution, which cycles run through the same regions, and the regions whose scores
 * differ most.
 *
 *   diagramDistances([[[0, 1]], [[0.2, 0.5]]], [[[0, 2]], []], wholeDiagramMetric(2))
 *   // → [1, 0.15]: W2 per dimension
 */
import { diagramDistance, finiteDiagram } from './diagram-distance.ts';
import type { DiagramInput, DiagramMetric } from './diagram-distance.ts';

/**
 * The distance the whole-diagram tests use for a cohort of `scans` scans: the exact
 * 2-Wasserstein distance up to 60 scans, the sliced Wasserstein distance beyond (its matrix is
 * linear in the diagrams' size where the exact one is cubic). One rule for the tests and for
 * every comparison the app shows, so a distance shown beside two diagrams is the one the tests use.
 */
export function wholeDiagramMetric(scans: number): DiagramMetric {
  return scans <= 60 ? { kind: 'wasserstein', p: 2 } : { kind: 'sliced-wasserstein' };
}

/**
 * The distance between two filtrations' diagrams, one per dimension (essential classes dropped,
 * as in the whole-diagram tests). Dimensions present in only one side are left out.
 */
export function diagramDistances(a: DiagramInput[], b: DiagramInput[], metric: DiagramMetric): number[] {
  const dims = Math.min(a.length, b.length);
  return Array.from({ length: dims }, (_, d) =>
    diagramDistance(finiteDiagram(a[d]), finiteDiagram(b[d]), metric),
  );
}

/**
 * The percentile rank of `x` among `values` (0–100), ties counted half: the mean of the share
 * of values strictly below x and the share at or below x (the "mean" definition of a
 * percentile rank, e.g. scipy.stats.percentileofscore(kind='mean')). Non-finite values are
 * ignored; null when no finite value is left.
 *
 *   percentileRank([1, 2, 3, 4], 3)  // 62.5
 */
export function percentileRank(values: ArrayLike<number>, x: number): number | null {
  if (!Number.isFinite(x)) return null;
  let n = 0;
  let below = 0;
  let equal = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (!Number.isFinite(v)) continue;
    n++;
    if (v < x) below++;
    else if (v === x) equal++;
  }
  if (n === 0) return null;
  return (100 * (below + equal / 2)) / n;
}

export interface CycleMatch {
  /** Index of the cycle on the first side (its position among the H1 intervals). */
  a: number;
  /** Index of the cycle on the second side with the largest overlap, or null when none shares a region. */
  b: number | null;
  /**
   * Jaccard index of the two cycles' region sets (|A ∩ B| / |A ∪ B|; Jaccard 1901): 1 when the
   * cycles run through the same regions.
   */
  overlap: number;
}

/**
 * For every cycle of `a`, the cycle of `b` whose regions overlap it most (Jaccard index; ties go
 * to the more persistent cycle of `b`, then the earlier one).
 */
export function matchCycles(
  a: ReadonlyArray<{ nodes: readonly number[] }>,
  b: ReadonlyArray<{ nodes: readonly number[]; birth?: number; death?: number | null }>,
): CycleMatch[] {
  const sets = b.map((c) => new Set(c.nodes));
  const life = b.map((c) =>
    c.birth === undefined || c.death === undefined || c.death === null ? Infinity : c.death - c.birth,
  );
  return a.map((cycle, i) => {
    const mine = new Set(cycle.nodes);
    let best: number | null = null;
    let bestOverlap = 0;
    sets.forEach((other, j) => {
      let shared = 0;
      for (const v of mine) if (other.has(v)) shared++;
      if (shared === 0) return;
      const overlap = shared / (mine.size + other.size - shared);
      if (overlap > bestOverlap || (overlap === bestOverlap && best !== null && life[j] > life[best])) {
        best = j;
        bestOverlap = overlap;
      }
    });
    return { a: i, b: best, overlap: bestOverlap };
  });
}

export interface NodeDifference {
  /** 0-based region index in file order. */
  node: number;
  a: number | null;
  b: number | null;
  /** b − a, or null when either is missing. */
  difference: number | null;
}

/**
 * One node measure on both sides, region by region, ranked by the size of b − a (largest first;
 * regions with a missing value last, in file order).
 */
export function rankedNodeDifferences(a: ArrayLike<number>, b: ArrayLike<number>): NodeDifference[] {
  if (a.length !== b.length)
    throw new Error(`the two sides have ${a.length} and ${b.length} regions; only equal sizes compare`);
  const rows: NodeDifference[] = [];
  for (let i = 0; i < a.length; i++) {
    const x = Number.isFinite(a[i]) ? a[i] : null;
    const y = Number.isFinite(b[i]) ? b[i] : null;
    rows.push({ node: i, a: x, b: y, difference: x === null || y === null ? null : y - x });
  }
  return rows.sort((p, q) => {
    if (p.difference === null || q.difference === null)
      return p.difference === null ? (q.difference === null ? p.node - q.node : 1) : -1;
    return Math.abs(q.difference) - Math.abs(p.difference) || p.node - q.node;
  });
}
