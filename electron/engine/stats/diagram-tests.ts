/**
 * Group tests on a subject × subject distance matrix (for instance diagram distances), with
 * the group labels permuted (exactly when there are few distinct relabellings).
 *
 * Joint loss (Robinson & Turner 2017, "Hypothesis testing for topological data analysis",
 * J. Appl. Comput. Topol. 1): F = Σ_groups 1/(2 n_g (n_g − 1)) Σ_{i,j ∈ g} d_ij^q (ordered pairs),
 * i.e. half the mean within-group d^q, summed over groups; small F means tight groups, so p = P(F* ≤ F). The paper
 * states it for two groups; summing over every group is the direct extension. q = 2 by default.
 *
 * PERMANOVA (Anderson 2001, Austral Ecology 26): with SS_T = (1/N) Σ_{i<j} d_ij² and
 * SS_W = Σ_g (1/n_g) Σ_{i<j ∈ g} d_ij², pseudo-F = ((SS_T − SS_W)/(a − 1)) / (SS_W/(N − a));
 * p = P(F* ≥ F). On Euclidean distances of 1-D data pseudo-F is the one-way ANOVA F.
 *
 *   permanova(distances, group, { permutations: 999, seed: 1 }).statistic
 */
import type { SquareMatrix } from '../types.ts';
import { FEW_RELABELLINGS, formatP } from './permutation.ts';
import { atLeast, forEachRelabelling, permutationP, type RelabellingRun } from './relabel.ts';

export interface DistanceTest {
  test: 'joint-loss' | 'permanova';
  statistic: number;
  p: number;
  run: RelabellingRun;
  requested: number;
  df1: number | null;
  df2: number | null;
  warnings: string[];
}

export interface DistanceTestOptions {
  permutations?: number;
  seed: number;
}

function checkInputs(distances: SquareMatrix, group: Int32Array): number {
  const { n, values } = distances;
  if (group.length !== n)
    throw new Error(`distance matrix has ${n} subjects but ${group.length} group labels were given`);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < i; j++) {
      const d = values[i * n + j];
      if (!Number.isFinite(d) || d < 0) throw new Error(`distance between subjects ${i} and ${j} is ${d}`);
      if (Math.abs(d - values[j * n + i]) > 1e-9 * Math.max(1, d)) {
        throw new Error(`distance matrix is not symmetric at subjects ${i}, ${j}`);
      }
    }
  }
  const levels = Math.max(...group) + 1;
  for (let g = 0; g < levels; g++) {
    const size = group.filter((x) => x === g).length;
    if (size < 2) throw new Error(`group ${g} has ${size} subject(s); each group needs at least 2`);
  }
  return levels;
}

function runTest(
  test: DistanceTest['test'],
  group: Int32Array,
  options: DistanceTestOptions,
  statistic: (labels: Int32Array) => number,
  largerIsExtreme: boolean,
  df: [number | null, number | null],
): DistanceTest {
  const requested = options.permutations ?? 5000;
  const observed = statistic(group);
  let count = 0;
  const run = forEachRelabelling(group, requested, options.seed, (labels) => {
    const v = statistic(labels);
    if (largerIsExtreme ? atLeast(v, observed) : atLeast(-v, -observed)) count++;
  });
  const warnings: string[] = [];
  if (run.distinct < FEW_RELABELLINGS) {
    warnings.push(
      `only ${run.distinct} distinct relabellings are possible; the smallest attainable p is ${formatP(1 / run.distinct)}`,
    );
  }
  return {
    test,
    statistic: observed,
    p: permutationP(count, run),
    run,
    requested,
    df1: df[0],
    df2: df[1],
    warnings,
  };
}

/** Robinson–Turner joint-loss permutation test. */
export function jointLossTest(
  distances: SquareMatrix,
  group: Int32Array,
  options: DistanceTestOptions & { q?: number },
): DistanceTest {
  const levels = checkInputs(distances, group);
  const { n, values } = distances;
  const q = options.q ?? 2;
  const dq = Float64Array.from(values, (d) => d ** q);
  const sizes = new Float64Array(levels);
  group.forEach((g) => sizes[g]++);
  const sums = new Float64Array(levels);
  const loss = (labels: Int32Array) => {
    sums.fill(0);
    for (let i = 1; i < n; i++) {
      const gi = labels[i];
      const row = i * n;
      for (let j = 0; j < i; j++) if (labels[j] === gi) sums[gi] += dq[row + j];
    }
    let f = 0;
    for (let g = 0; g < levels; g++) f += sums[g] / (sizes[g] * (sizes[g] - 1));
    return f;
  };
  return runTest('joint-loss', group, options, loss, false, [null, null]);
}

/** PERMANOVA pseudo-F with its permutation p. */
export function permanova(
  distances: SquareMatrix,
  group: Int32Array,
  options: DistanceTestOptions,
): DistanceTest {
  const levels = checkInputs(distances, group);
  const { n, values } = distances;
  const d2 = Float64Array.from(values, (d) => d * d);
  let total = 0;
  for (let i = 1; i < n; i++) for (let j = 0; j < i; j++) total += d2[i * n + j];
  const ssT = total / n;
  const sizes = new Float64Array(levels);
  group.forEach((g) => sizes[g]++);
  const sums = new Float64Array(levels);
  const pseudoF = (labels: Int32Array) => {
    sums.fill(0);
    for (let i = 1; i < n; i++) {
      const gi = labels[i];
      const row = i * n;
      for (let j = 0; j < i; j++) if (labels[j] === gi) sums[gi] += d2[row + j];
    }
    let ssW = 0;
    for (let g = 0; g < levels; g++) ssW += sums[g] / sizes[g];
    return (ssT - ssW) / (levels - 1) / (ssW / (n - levels));
  };
  return runTest('permanova', group, options, pseudoF, true, [levels - 1, n - levels]);
}
