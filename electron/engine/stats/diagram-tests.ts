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
 * Distance-based regression (McArdle & Anderson 2001, Ecology 82, "Fitting multivariate models to
 * community data: a comment on distance-based redundancy analysis"; Legendre & Anderson 1999, Ecol.
 * Monogr. 69): with G the Gower-centred matrix −½ (I − 11ᵀ/n) D² (I − 11ᵀ/n), H the hat matrix of
 * the full design and H_Z that of the nuisance part, pseudo-F = [tr((H − H_Z) G)/s] / [tr((I − H) G)/(n − r)]
 * for the tested term (s columns) conditional on the nuisance. Permutations act on the residuals of
 * the reduced model, as Freedman–Lane does for one variable: G* = T G Tᵀ with T = H_Z + P (I − H_Z),
 * P from the same restricted set as the per-feature tests (design.ts, relabel.ts). With the
 * intercept as the only nuisance and no blocks it is PERMANOVA above, permutation for permutation.
 *
 *   permanova(distances, group, { permutations: 999, seed: 1 }).statistic
 *   distanceRegression(distances, design.columns, design.contrasts[0], { seed: 1, exchangeability }).p
 */
import type { SquareMatrix } from '../types.ts';
import type { Contrast } from './design.ts';
import {
  FEW_RELABELLINGS,
  formatP,
  permutationPlan,
  type ExchangeabilityOptions,
  type PermutationScheme,
} from './permutation.ts';
import { atLeast, forEachRelabelling, permutationP, type RelabellingRun } from './relabel.ts';

export interface DistanceTest {
  test: 'joint-loss' | 'permanova' | 'distance-regression';
  /** The permutation scheme (as in stats.tsv). */
  scheme: PermutationScheme;
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

/** Throws unless the distances are finite, non-negative and symmetric. */
function checkDistances(distances: SquareMatrix): void {
  const { n, values } = distances;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < i; j++) {
      const d = values[i * n + j];
      if (!Number.isFinite(d) || d < 0) throw new Error(`distance between subjects ${i} and ${j} is ${d}`);
      if (Math.abs(d - values[j * n + i]) > 1e-9 * Math.max(1, d)) {
        throw new Error(`distance matrix is not symmetric at subjects ${i}, ${j}`);
      }
    }
  }
}

function checkInputs(distances: SquareMatrix, group: Int32Array): number {
  const { n } = distances;
  if (group.length !== n)
    throw new Error(`distance matrix has ${n} subjects but ${group.length} group labels were given`);
  checkDistances(distances);
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
    scheme: 'label-permutation',
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

/** Distance-based regression pseudo-F of `contrast`, conditional on the rest of the design. */
export function distanceRegression(
  distances: SquareMatrix,
  columns: Float64Array[],
  contrast: Contrast,
  options: DistanceTestOptions & ExchangeabilityOptions,
): DistanceTest {
  const { n, values } = distances;
  if (columns[0].length !== n)
    throw new Error(`distance matrix has ${n} subjects but the design has ${columns[0].length} rows`);
  checkDistances(distances);
  const requested = options.permutations ?? 5000;
  const plan = permutationPlan(columns, contrast, options);
  const { s, df2, basis, qz } = plan;
  // Gower centring, then the residual matrix of the reduced model E = (I − H_Z) G (I − H_Z).
  const e = new Float64Array(n * n);
  for (let k = 0; k < n * n; k++) e[k] = -0.5 * values[k] * values[k];
  const project = (transposed: boolean) => {
    for (const q of qz) {
      // Rows (or columns) minus their projection on q.
      const c = new Float64Array(n);
      for (let i = 0; i < n; i++)
        for (let j = 0; j < n; j++) c[j] += q[i] * e[transposed ? j * n + i : i * n + j];
      for (let i = 0; i < n; i++)
        for (let j = 0; j < n; j++) e[transposed ? j * n + i : i * n + j] -= q[i] * c[j];
    }
  };
  // The intercept is always in the nuisance span, so this includes the Gower centring.
  project(false);
  project(true);
  let trace = 0;
  for (let i = 0; i < n; i++) trace += e[i * n + i];
  const ev = new Float64Array(n);
  const quad = (b: Float64Array): number => {
    ev.fill(0);
    for (let i = 0; i < n; i++) {
      const bi = b[i];
      if (bi === 0) continue;
      const row = i * n;
      for (let j = 0; j < n; j++) ev[j] += bi * e[row + j];
    }
    let v = 0;
    for (let j = 0; j < n; j++) v += ev[j] * b[j];
    return v;
  };
  const pseudoF = (bp: Float64Array[]): number => {
    let num = 0;
    for (let k = 0; k < s; k++) num += quad(bp[k]);
    let rest = 0;
    for (let k = s; k < bp.length; k++) rest += quad(bp[k]);
    const den = Math.max(trace - num - rest, 1e-14 * Math.abs(trace));
    return num / s / (den / df2);
  };
  const observed = pseudoF(basis);
  let count = 0;
  const run = plan.forEach(requested, options.seed, (permuted) => {
    if (atLeast(pseudoF(permuted), observed)) count++;
  });
  const warnings: string[] = [];
  if (run.distinct < FEW_RELABELLINGS) {
    warnings.push(
      `only ${run.distinct} distinct relabellings are possible; the smallest attainable p is ${formatP(1 / run.distinct)}`,
    );
  }
  return {
    test: plan.plain ? 'permanova' : 'distance-regression',
    scheme: plan.scheme,
    statistic: observed,
    p: permutationP(count, run),
    run,
    requested,
    df1: s,
    df2,
    warnings,
  };
}
