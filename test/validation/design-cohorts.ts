/**
 * Cohorts of study designs for the calibration study: repeated scans (sessions) within
 * participants, a slope with a covariate, and a group × session interaction, each tested through
 * buildDesign + testFamily exactly as the statistics stage does.
 *
 * Features: a family of m correlated Gaussian features per scan, with a participant-level part
 * (a random intercept shared by the participant's scans) and a scan-level part, each with the
 * factor structure of null-cohorts.ts (global factor, block factor, own noise):
 *   x_ij = SUBJECT_SD · s_p(i),j + e_ij,   s and e each √0.2 g + √0.4 h_b(j) + √0.4 own,
 * so that the scans of one participant are correlated (intraclass correlation
 * SUBJECT_SD² / (SUBJECT_SD² + 1) = 0.69) — which is what makes treating them as independent rows wrong.
 *
 * Settings (under the null unless said):
 *   'paired'          16–20 participants × 2 sessions (pre, post); effect session, blocks participant_id:
 *                     within-block permutation (sign flips of the differences), exact.
 *   'paired-power'    as 'paired' with a planted session effect (POWER_SHIFT) on the first PLANTED features.
 *   'slope'           24–36 single scans; a numeric score correlated with age (r ≈ 0.6); age moves every
 *                     feature; effect score with covariate age: Freedman–Lane, approximately exact.
 *   'interaction'     2 groups × 8–10 participants × 2 sessions; group and session main effects present,
 *                     no interaction; model group*session, test group:session, blocks participant_id:
 *                     within- and whole-block permutation with block intercepts.
 *   'between-blocks'  2 groups × 8–10 participants × 2 sessions; no group effect; effect group, blocks
 *                     participant_id: whole-block permutation, exact.
 *   'pseudo-replicated' the same data as 'between-blocks' analysed as if the 2 scans of a participant
 *                     were independent subjects (no blocks; forced with the internal
 *                     allowRepeatedParticipants option): free permutation of rows, which must be caught.
 */
import { gaussianSource } from '../../electron/engine/generator/index.ts';
import { createRng } from '../../electron/engine/random.ts';
import { buildDesign, type DesignSpec, type DesignSubject } from '../../electron/engine/stats/design.ts';
import { testFamily } from '../../electron/engine/stats/family.ts';

export type DesignSetting =
  'paired' | 'paired-power' | 'slope' | 'interaction' | 'between-blocks' | 'pseudo-replicated';

export const PLANTED = 3;
/** Planted within-participant shift, in units of the scan-level SD. */
export const POWER_SHIFT = 1.2;
const SUBJECT_SD = 1.5;
const BLOCK = 10;
const LOADING = { global: Math.sqrt(0.2), block: Math.sqrt(0.4), own: Math.sqrt(0.4) };

export interface DesignCohortOutcome {
  chosenRejected: boolean;
  anyFwer: boolean;
  anyFdr: boolean;
  pUncorrected: Float64Array;
  pFwer: Float64Array;
  q: Float64Array;
  scheme: string;
  rows: number;
}

export function runDesignCohort(
  setting: DesignSetting,
  cohort: number,
  seed: number,
  options: { alpha: number; permutations: number; features: number },
): DesignCohortOutcome {
  const { alpha, permutations, features: m } = options;
  const rng = createRng(seed);
  const gauss = gaussianSource(rng);
  const factor = () => {
    const g = gauss();
    const h = Array.from({ length: m / BLOCK }, () => gauss());
    return Array.from(
      { length: m },
      (_, j) => LOADING.global * g + LOADING.block * h[Math.floor(j / BLOCK)] + LOADING.own * gauss(),
    );
  };
  const rows: DesignSubject[] = [];
  const values: number[][] = Array.from({ length: m }, () => []);
  let spec: DesignSpec;
  const between = setting === 'between-blocks' || setting === 'pseudo-replicated';
  if (setting === 'slope') {
    const n = 24 + rng.int(13);
    const slopes = Array.from({ length: m }, () => 0.4 + 0.6 * rng.next());
    for (let i = 0; i < n; i++) {
      const age = gauss();
      const score = 0.6 * age + 0.8 * gauss();
      const e = factor();
      for (let j = 0; j < m; j++) values[j].push(e[j] + slopes[j] * age);
      rows.push({ id: `sub-${i}`, covariates: { participant_id: `sub-${i}`, age, score } });
    }
    spec = { effect: 'score', covariates: ['age'] };
  } else {
    const grouped = setting === 'interaction' || between;
    const participants = grouped ? 2 * (8 + rng.int(3)) : 16 + rng.int(5);
    for (let s = 0; s < participants; s++) {
      const group = grouped ? (s % 2 === 0 ? 'A' : 'B') : 'all';
      const subject = factor();
      for (const session of ['pre', 'post']) {
        const e = factor();
        const pid = `sub-${s}`;
        for (let j = 0; j < m; j++) {
          let x = SUBJECT_SD * subject[j] + e[j];
          if (setting === 'interaction') x += (group === 'B' ? 0.7 : 0) + (session === 'post' ? 0.5 : 0);
          if (setting === 'paired-power' && session === 'post' && j < PLANTED) x += POWER_SHIFT;
          values[j].push(x);
        }
        rows.push({ id: `${pid}_ses-${session}`, covariates: { participant_id: pid, session, group } });
      }
    }
    if (setting === 'paired' || setting === 'paired-power') {
      spec = { effect: 'session', reference: 'pre', blocks: 'participant_id', covariates: [] };
    } else if (setting === 'interaction') {
      spec = { model: 'group*session', test: 'group:session', blocks: 'participant_id', covariates: [] };
    } else if (setting === 'between-blocks') {
      spec = { groupColumn: 'group', blocks: 'participant_id', covariates: [] };
    } else {
      spec = { groupColumn: 'group', covariates: [], allowRepeatedParticipants: true };
    }
  }
  const permutationSeed = rng.int(2 ** 31);
  const design = buildDesign(rows, spec);
  const result = testFamily(
    design,
    design.contrasts[0],
    {
      name: setting,
      subjects: rows.map((r) => r.id),
      features: values.map((v, j) => ({ feature: 'x', nodeOrPoint: j, values: v })),
    },
    // The effect-size bootstrap plays no part here: one resample keeps it out of the run time.
    { permutations, seed: permutationSeed, bootstrap: 1 },
  );
  const p = result.permutation.pUncorrected;
  return {
    chosenRejected: p[cohort % m] <= alpha,
    anyFwer: result.permutation.pFwer.some((v) => v <= alpha),
    anyFdr: result.qFdr.some((v) => v <= alpha),
    pUncorrected: p,
    pFwer: result.permutation.pFwer,
    q: result.qFdr,
    scheme: result.permutation.scheme,
    rows: rows.length,
  };
}
