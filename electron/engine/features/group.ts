/**
 * Group-level summaries: the group-mean connectivity matrix and mean curves with bootstrap bands.
 */
import type { CurveBand } from '../../api.ts';
import { createRng } from '../random.ts';
import { MatrixError } from '../transform.ts';
import type { SquareMatrix } from '../types.ts';

/** Largest |r| used inside atanh, so a correlation of exactly ±1 off the diagonal stays finite. */
export const FISHER_CLAMP = 1 - 1e-12;

/**
 * The group-mean matrix, cell by cell over the subjects with a finite value there (NaN = a dead
 * region in that subject; a cell missing in every subject stays NaN).
 *   correlation: r̄ = tanh(mean(atanh rᵢ)) — averaging in Fisher's z, where sampling variance does
 *     not depend on r (R. A. Fisher (1915), Biometrika 10; D. Silver, W. Dunlap (1987), J Appl
 *     Psychol 72). |r| is clamped to FISHER_CLAMP; the diagonal is set to 1.
 *   plain (distances, weights): the arithmetic mean, diagonal included.
 *
 *   groupMeanMatrix([{n: 2, values: [1, 0.5, 0.5, 1]}, {n: 2, values: [1, 0.9, 0.9, 1]}], 'correlation')
 *   → off-diagonal tanh((atanh 0.5 + atanh 0.9) / 2) ≈ 0.7661
 */
export function groupMeanMatrix(matrices: SquareMatrix[], kind: 'correlation' | 'plain'): SquareMatrix {
  if (matrices.length === 0) throw new MatrixError('group mean of no matrices');
  const acc = new GroupMeanAccumulator(kind);
  for (const m of matrices) acc.add(m);
  return acc.mean();
}

/**
 * groupMeanMatrix one matrix at a time, so a group's mean is gathered as its subjects are read
 * (never all held): add() each matrix, then mean(). The same sums in the same order.
 */
export class GroupMeanAccumulator {
  readonly kind: 'correlation' | 'plain';
  /** Matrices added so far. */
  count = 0;
  private n = -1;
  private sum: Float64Array | null = null;
  private cells: Float64Array | null = null;

  constructor(kind: 'correlation' | 'plain') {
    this.kind = kind;
  }

  /** The size of the matrices added (−1 before the first). */
  get size(): number {
    return this.n;
  }

  add(m: SquareMatrix): void {
    const s = this.count;
    if (this.n < 0) {
      this.n = m.n;
      this.sum = new Float64Array(m.n * m.n);
      this.cells = new Float64Array(m.n * m.n);
    }
    const n = this.n;
    const sum = this.sum!;
    const count = this.cells!;
    if (m.n !== n || m.values.length !== n * n) {
      throw new MatrixError(`matrix ${s + 1} of the group is ${m.n} × ${m.n}, the first is ${n} × ${n}`);
    }
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        const v = m.values[i * n + j];
        if (!Number.isFinite(v)) continue;
        if (this.kind === 'correlation') {
          if (i === j) continue;
          if (Math.abs(v) > 1 + 1e-9) {
            throw new MatrixError(
              `matrix ${s + 1} of the group: correlation ${v} at row ${i + 1}, column ${j + 1} lies outside [−1, 1]`,
              [i, j],
            );
          }
          sum[i * n + j] += Math.atanh(Math.max(-FISHER_CLAMP, Math.min(FISHER_CLAMP, v)));
        } else {
          sum[i * n + j] += v;
        }
        count[i * n + j]++;
      }
    }
    this.count++;
  }

  mean(): SquareMatrix {
    if (this.count === 0 || !this.sum || !this.cells) throw new MatrixError('group mean of no matrices');
    const n = this.n;
    const values = new Float64Array(n * n);
    for (let k = 0; k < n * n; k++) {
      const mean = this.cells[k] > 0 ? this.sum[k] / this.cells[k] : NaN;
      values[k] = this.kind === 'correlation' ? Math.tanh(mean) : mean;
    }
    if (this.kind === 'correlation') for (let i = 0; i < n; i++) values[i * n + i] = 1;
    return { n, values };
  }
}

/**
 * The q-quantile of sorted values by linear interpolation between order statistics (Hyndman & Fan
 * (1996) type 7, the default of R's quantile and numpy.percentile).
 *
 *   quantileSorted([1, 2, 3, 4], 0.5) → 2.5
 */
export function quantileSorted(sorted: ArrayLike<number>, q: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  const h = (n - 1) * q;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

export interface BandOptions {
  resamples?: number;
  seed?: number;
  /** Coverage of the band, default 0.95. */
  level?: number;
}

/**
 * Per group: the mean curve over subjects and a pointwise percentile bootstrap band (B. Efron,
 * R. Tibshirani (1993), An Introduction to the Bootstrap, ch. 13): resample the group's subjects with
 * replacement `resamples` times (seeded, random.ts), take each resample's mean curve, and report the
 * (1 − level)/2 and (1 + level)/2 quantiles at every grid point. Groups appear in order of first
 * appearance. A group of one subject gets a band equal to its curve.
 *
 *   curveBands([{group: 'A', values: [0, 1]}, {group: 'A', values: [2, 3]}], 'betti1', [0, 1])
 *   → [{group: 'A', curve: 'betti1', grid: [0, 1], mean: [1, 2], lower: […], upper: […]}]
 */
export function curveBands(
  curves: Array<{ group: string; values: ArrayLike<number> }>,
  curve: string,
  gridValues: ArrayLike<number>,
  options: BandOptions = {},
): CurveBand[] {
  const resamples = options.resamples ?? 1000;
  const level = options.level ?? 0.95;
  if (!(level > 0 && level < 1)) throw new RangeError(`band level must lie in (0, 1), got ${level}`);
  const G = gridValues.length;
  const groups = new Map<string, Array<ArrayLike<number>>>();
  for (const c of curves) {
    if (c.values.length !== G) {
      throw new RangeError(`curve of group ${c.group} has ${c.values.length} points, the grid ${G}`);
    }
    if (!groups.has(c.group)) groups.set(c.group, []);
    groups.get(c.group)!.push(c.values);
  }
  const rng = createRng(options.seed ?? 1);
  const bands: CurveBand[] = [];
  for (const [group, members] of groups) {
    const m = members.length;
    const mean = new Array<number>(G).fill(0);
    for (const v of members) for (let g = 0; g < G; g++) mean[g] += v[g] / m;
    const boot = new Float64Array(resamples * G); // boot[b * G + g]
    for (let b = 0; b < resamples; b++) {
      for (let s = 0; s < m; s++) {
        const v = members[rng.int(m)];
        for (let g = 0; g < G; g++) boot[b * G + g] += v[g] / m;
      }
    }
    const lower = new Array<number>(G);
    const upper = new Array<number>(G);
    const column = new Float64Array(resamples);
    for (let g = 0; g < G; g++) {
      for (let b = 0; b < resamples; b++) column[b] = boot[b * G + g];
      column.sort();
      lower[g] = quantileSorted(column, (1 - level) / 2);
      upper[g] = quantileSorted(column, (1 + level) / 2);
    }
    bands.push({ group, curve, grid: Array.from(gridValues), mean, lower, upper });
  }
  return bands;
}
