/**
 * Null cohorts for the calibration of the group tests: two groups, no group effect, and a family
 * of correlated features drawn from a multivariate normal law, so that the max-statistic FWER and
 * the Benjamini–Hochberg rate face dependence rather than independent tests.
 *
 * Feature correlation: a factor model (as in electron/engine/generator/block-model.ts) with a
 * global factor g, one factor h_b per block of features and each feature's own noise e_j,
 *   x_j = √0.2 g + √0.4 h_b(j) + √0.4 e_j,
 * so that the features are N(0, Σ) with Σ_jj = 1, Σ_jk = 0.6 within a block and 0.2 across blocks.
 *
 * Settings:
 *   'plain'     no covariate; the test is label permutation (Pitman 1937), exact under the null.
 *   'covariate' age differs between the groups (mean 28 vs 36 years, sd 5) and moves every feature
 *               (slope 0.4–1.0 sd per 5 years); age enters the design, so the test is Freedman–Lane
 *               (Freedman & Lane 1983, J. Bus. Econ. Stat. 1; Winkler, Ridgway, Webster, Smith &
 *               Nichols 2014, NeuroImage 92), approximately exact.
 *   'ignored'   the same data as 'covariate' with age left out of the model: the groups then differ
 *               through age, and a sound check must see the excess of rejections.
 *
 *   runNullCohort('plain', 7, { alpha: 0.05, permutations: 499, features: 30 }) → { chosenRejected, anyFwer, anyFdr, … }
 */
import { gaussianSource } from '../../electron/engine/generator/index.ts';
import { createRng } from '../../electron/engine/random.ts';
import { buildDesign, type DesignSubject } from '../../electron/engine/stats/design.ts';
import { testFamily } from '../../electron/engine/stats/family.ts';

export type NullSetting = 'plain' | 'covariate' | 'ignored';

export interface NullOptions {
  alpha: number;
  permutations: number;
  /** Features in the family (a multiple of BLOCK). */
  features: number;
}

export const BLOCK = 10;
export const GROUP_SIZE_RANGE: [number, number] = [12, 20];
const LOADING = { global: Math.sqrt(0.2), block: Math.sqrt(0.4), own: Math.sqrt(0.4) };
const AGE = { meanA: 28, meanB: 36, sd: 5, centre: 32, slopeLow: 0.4, slopeHigh: 1.0 };

export interface NullCohortOutcome {
  /** Subjects per group. */
  sizes: [number, number];
  /** The pre-chosen feature (cohort index mod family size) rejected at uncorrected p ≤ α. */
  chosenRejected: boolean;
  /** Features rejected at uncorrected p ≤ α (all features, for the pooled rate). */
  rejectedCount: number;
  /** Some feature has p_FWER ≤ α. */
  anyFwer: boolean;
  /** Some feature has q ≤ α (under the global null this is BH's family-wise error). */
  anyFdr: boolean;
  scheme: string;
  permutationSeed: number;
}

/** One null cohort of the given setting, drawn from `seed`, tested with testFamily. */
export function runNullCohort(
  setting: NullSetting,
  cohort: number,
  seed: number,
  options: NullOptions,
): NullCohortOutcome {
  const { alpha, permutations, features: m } = options;
  if (m % BLOCK !== 0) throw new RangeError(`the family size must be a multiple of ${BLOCK}, got ${m}`);
  const rng = createRng(seed);
  const gauss = gaussianSource(rng);
  const [lo, hi] = GROUP_SIZE_RANGE;
  const sizes: [number, number] = [lo + rng.int(hi - lo + 1), lo + rng.int(hi - lo + 1)];
  const n = sizes[0] + sizes[1];
  const blocks = m / BLOCK;
  const slopes = Array.from({ length: m }, () => AGE.slopeLow + (AGE.slopeHigh - AGE.slopeLow) * rng.next());

  const subjects: DesignSubject[] = [];
  const values = Array.from({ length: m }, () => new Float64Array(n));
  for (let i = 0; i < n; i++) {
    const inA = i < sizes[0];
    const age = (inA ? AGE.meanA : AGE.meanB) + AGE.sd * gauss();
    const g = gauss();
    const h = Array.from({ length: blocks }, () => gauss());
    for (let j = 0; j < m; j++) {
      let x = LOADING.global * g + LOADING.block * h[Math.floor(j / BLOCK)] + LOADING.own * gauss();
      if (setting !== 'plain') x += (slopes[j] * (age - AGE.centre)) / AGE.sd;
      values[j][i] = x;
    }
    subjects.push({ id: `s${i + 1}`, covariates: { group: inA ? 'A' : 'B', age } });
  }
  const permutationSeed = rng.int(2 ** 31);
  const design = buildDesign(subjects, {
    groupColumn: 'group',
    covariates: setting === 'covariate' ? ['age'] : [],
  });
  const result = testFamily(
    design,
    design.contrasts[0],
    {
      name: `null-${setting}`,
      subjects: subjects.map((s) => s.id),
      features: values.map((v, j) => ({ feature: 'x', nodeOrPoint: j, values: v })),
    },
    // The effect-size bootstrap plays no part here: one resample keeps it out of the run time.
    { permutations, seed: permutationSeed, bootstrap: 1 },
  );
  const p = result.permutation.pUncorrected;
  let rejectedCount = 0;
  for (let j = 0; j < m; j++) if (p[j] <= alpha) rejectedCount++;
  return {
    sizes,
    chosenRejected: p[cohort % m] <= alpha,
    rejectedCount,
    anyFwer: result.permutation.pFwer.some((v) => v <= alpha),
    anyFdr: result.qFdr.some((v) => v <= alpha),
    scheme: result.permutation.scheme,
    permutationSeed,
  };
}
