/**
 * Block-model cohorts for the power of the whole node pipeline: correlation matrix → distances
 * (1 − r) → clique-filtration persistence with H1 cycle representatives → per-node h1_weighted
 * (persistence-weighted cycle participation) → testFamily over the nodes.
 *
 * The scenario mirrors the sample cohort on a smaller scale: 30 regions in 5 modules of 6, nested
 * in two super-modules ({0, 1} and {2, 3, 4}); block correlations about 0.50 within a module,
 * 0.18 within a super-module and 0.10 otherwise, jittered per subject; 240 time points per subject.
 * In group A three nodes bridge to a second module (a share π ≈ 0.3 of their module variance on
 * the target module's factor; block-model.ts withPlantedEffect), forming a chain 0 → 2 → 4 → 1
 * of cross-module coupling. Module 3 is neither home nor target of a planted node.
 * With `planted: false` both groups come from the same law: a null cohort of the full pipeline.
 *
 *   runPlantedCohort(11, { alpha: 0.05, permutations: 499, perGroup: 12, planted: true })
 *   → { pFwer: Float64Array(30), q: Float64Array(30), … }
 */
import { subjectNodeScores } from '../../electron/engine/features/rows.ts';
import {
  factorModel,
  gaussianSource,
  sampleCorrelation,
  withPlantedEffect,
  type BlockModelSpec,
} from '../../electron/engine/generator/index.ts';
import { computePersistence } from '../../electron/engine/persistence.ts';
import { createRng, type Rng } from '../../electron/engine/random.ts';
import { buildDesign, type DesignSubject } from '../../electron/engine/stats/design.ts';
import { testFamily } from '../../electron/engine/stats/family.ts';
import { toDistances } from '../../electron/engine/transform.ts';

export const REGIONS = 30;
export const MODULE_SIZE = 6;
export const SUPER_OF = [0, 0, 1, 1, 1];
export const TIME_POINTS = 240;
/** Planted nodes (index) and the module each bridges to; node v sits in module ⌊v / 6⌋. */
export const PLANTED = [
  { node: 2, target: 2 },
  { node: 14, target: 4 },
  { node: 27, target: 1 },
];
export const PLANTED_SHARE = 0.3;
/** The module untouched by the planted effect. */
export const DISTANT_MODULE = 3;
export const MEASURE = 'h1_weighted';

export interface PlantedOptions {
  alpha: number;
  permutations: number;
  perGroup: number;
  planted: boolean;
}

export interface PlantedCohortOutcome {
  pUncorrected: Float64Array;
  pFwer: Float64Array;
  q: Float64Array;
  /** Nodes left out of the test (no variation across subjects). */
  leftOut: number;
  permutationSeed: number;
}

const clamp = (x: number, lo: number, hi: number): number => Math.min(hi, Math.max(lo, x));

/** One subject's block model: jittered block correlations and, in group A of a planted cohort, the bridges. */
function subjectSpec(groupA: boolean, planted: boolean, rng: Rng): BlockModelSpec {
  const gauss = gaussianSource(rng);
  const between = clamp(0.1 + 0.02 * gauss(), 0.02, 0.2);
  const nested = clamp(0.18 + 0.02 * gauss(), between, 0.3);
  const within = clamp(0.5 + 0.03 * gauss(), nested + 0.15, 0.7);
  const spec: BlockModelSpec = {
    modules: Array.from({ length: REGIONS }, (_, i) => Math.floor(i / MODULE_SIZE)),
    within,
    between,
    nesting: { superOf: SUPER_OF, correlation: nested },
  };
  if (!(groupA && planted)) return spec;
  return withPlantedEffect(spec, {
    kind: 'bridge',
    nodes: PLANTED.map((p) => p.node),
    targets: PLANTED.map((p) => p.target),
    share: clamp(PLANTED_SHARE + 0.05 * gauss(), 0.15, 0.45),
  });
}

/** One cohort of 2 × perGroup subjects drawn from `seed`, through the node pipeline and testFamily. */
export function runPlantedCohort(seed: number, options: PlantedOptions): PlantedCohortOutcome {
  const rng = createRng(seed);
  const subjects: DesignSubject[] = [];
  const scores: number[][] = [];
  for (let i = 0; i < 2 * options.perGroup; i++) {
    const groupA = i < options.perGroup;
    const matrix = sampleCorrelation(
      factorModel(subjectSpec(groupA, options.planted, rng)),
      TIME_POINTS,
      rng,
    );
    const result = computePersistence(toDistances(matrix, { input: 'correlation' }), {
      maxDim: 1,
      representatives: true,
    });
    scores.push(subjectNodeScores(result, { persistenceFloor: 0 })[MEASURE]);
    subjects.push({ id: `s${i + 1}`, covariates: { group: groupA ? 'A' : 'B' } });
  }
  const permutationSeed = rng.int(2 ** 31);
  const design = buildDesign(subjects, { groupColumn: 'group', covariates: [] });
  const result = testFamily(
    design,
    design.contrasts[0],
    {
      name: MEASURE,
      subjects: subjects.map((s) => s.id),
      features: Array.from({ length: REGIONS }, (_, v) => ({
        feature: MEASURE,
        nodeOrPoint: v,
        values: scores.map((row) => row[v]),
      })),
    },
    { permutations: options.permutations, seed: permutationSeed, bootstrap: 1 },
  );
  const p = result.permutation;
  let leftOut = 0;
  for (let v = 0; v < REGIONS; v++) if (Number.isNaN(p.pUncorrected[v])) leftOut++;
  return { pUncorrected: p.pUncorrected, pFwer: p.pFwer, q: result.qFdr, leftOut, permutationSeed };
}
