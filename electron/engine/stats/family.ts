/**
 * One family of features tested together: parametric GLM, permutation p (Freedman–Lane or label
 * permutation, restricted to the design's exchangeability blocks), max-statistic FWER and
 * Benjamini–Hochberg q within the family, and effect sizes from the same model as the test:
 * partial r (t) and partial η² (every test); for a 2-level effect the covariate-adjusted
 * standardized difference (cᵀβ̂ / √(residual mean square) of the full model), or d_z for a paired
 * within-block contrast, each with a seeded bootstrap interval (effect-size.ts).
 * A family is what the correction runs over: e.g. all scalar features, or one node measure over
 * all nodes, or one curve over its grid points.
 *
 *   testFamily(design, design.contrasts[0], { name: 'betti1-curve', subjects, features }, { seed: 7 })
 */
import type { Contrast, Design } from './design.ts';
import {
  adjustedDifferenceFamily,
  dzFamily,
  partialEtaSquared,
  partialR as partialRFromT,
  type FamilyEffectSizes,
} from './effect-size.ts';
import { fitGlm, type GlmFit } from './glm.ts';
import { bhQValues } from './multiple.ts';
import {
  permutationTest,
  type ExchangeabilityOptions,
  type PermutationOptions,
  type PermutationTest,
} from './permutation.ts';

export interface FamilyFeature {
  /** e.g. 'h1_total_persistence', 'participation', 'betti1'. */
  feature: string;
  /** The node label or grid point the value belongs to; null for a subject-level scalar. */
  nodeOrPoint: string | number | null;
  /** One value per subject, aligned with the family's `subjects`. */
  values: ArrayLike<number>;
}

export interface FeatureFamily {
  name: string;
  subjects: string[];
  features: FamilyFeature[];
}

export interface FamilyOptions {
  permutations?: number;
  seed: number;
  bootstrap?: number;
}

export interface FamilyResult {
  family: string;
  contrast: Contrast;
  features: Array<{ feature: string; nodeOrPoint: string | number | null }>;
  glm: GlmFit;
  permutation: PermutationTest;
  qFdr: Float64Array;
  /** The effect size of the row: see effect-size.ts. */
  effect:
    | { kind: 'adjusted-d' | 'd-z'; sizes: FamilyEffectSizes }
    | { kind: 'partial-r' | 'partial-eta-squared'; values: Float64Array };
  /** r_p = t/√(t² + df) of a t test (NaN for F). */
  partialR: Float64Array;
  /** F·df1/(F·df1 + df2), with F = t² for a t test. */
  partialEtaSquared: Float64Array;
  /**
   * Whether the classical p applies: not under whole-block permutation, where the rows of a block
   * are not independent and the row-level OLS p would overstate the evidence.
   */
  parametricValid: boolean;
  /** Rows per level of a categorical effect in this test, else one entry 'all'. */
  groupSizes: Array<{ level: string; n: number }>;
  /** Number of exchangeability blocks, or null without blocks. */
  blocks: number | null;
  /** Features the test left out, with the reason. */
  excluded: Array<{ feature: string; nodeOrPoint: string | number | null; reason: string }>;
  warnings: string[];
}

/** Tests `contrast` on every feature of `family` (the permutations in this thread). */
export function testFamily(
  design: Design,
  contrast: Contrast,
  family: FeatureFamily,
  options: FamilyOptions,
): FamilyResult {
  const aligned = alignFamily(design, family);
  const inputs = familyPermutationInputs(design, contrast, aligned, options);
  const permutation = permutationTest(inputs.columns, contrast, aligned, inputs.options);
  return familyResult(design, contrast, family, aligned, permutation, options);
}

/** The family's values in design-row order, one array per feature. */
export function alignFamily(design: Design, family: FeatureFamily): Float64Array[] {
  const position = new Map(family.subjects.map((id, i) => [id, i]));
  const rowOf = design.ids.map((id) => {
    const i = position.get(id);
    if (i === undefined)
      throw new Error(`family '${family.name}' has no values for subject '${id}' of the design`);
    return i;
  });
  return family.features.map((f) => {
    if (f.values.length !== family.subjects.length) {
      throw new Error(
        `family '${family.name}', feature '${f.feature}' ${f.nodeOrPoint ?? ''}: ${f.values.length} values for ${family.subjects.length} subjects`,
      );
    }
    return Float64Array.from(rowOf, (i) => f.values[i]);
  });
}

/** The permutation test's inputs for a family (design columns, blocks), wherever it runs. */
export function familyPermutationInputs(
  design: Design,
  contrast: Contrast,
  aligned: Float64Array[],
  options: FamilyOptions,
): {
  columns: Float64Array[];
  contrast: Contrast;
  features: Float64Array[];
  options: PermutationOptions & Required<ExchangeabilityOptions>;
} {
  return {
    columns: design.columns,
    contrast,
    features: aligned,
    options: {
      permutations: options.permutations,
      seed: options.seed,
      exchangeability: design.exchangeability ?? null,
      invariantColumns: design.blockColumns ?? [],
    },
  };
}

/** The family's result from its permutation test (run here or merged from chunks run elsewhere). */
export function familyResult(
  design: Design,
  contrast: Contrast,
  family: FeatureFamily,
  aligned: Float64Array[],
  permutation: PermutationTest,
  options: FamilyOptions,
): FamilyResult {
  const ex = design.exchangeability ?? null;
  const blockColumns = design.blockColumns ?? [];
  const glm = fitGlm(design.columns, contrast, aligned);
  const qFdr = bhQValues(permutation.pUncorrected);
  const { df1, df2 } = permutation;
  const partialR = Float64Array.from(permutation.statistic, (t) => (df1 === 1 ? partialRFromT(t, df2) : NaN));
  const partialEta = Float64Array.from(permutation.statistic, (v) =>
    df1 === 1 ? partialEtaSquared(v * v, 1, df2) : partialEtaSquared(v, df1, df2),
  );
  let effect: FamilyResult['effect'];
  const bootOptions = { seed: options.seed, bootstrap: options.bootstrap };
  if (contrast.pair && design.paired && ex) {
    const a = design.levels.indexOf(contrast.pair[0]);
    const pairs: Array<[number, number]> = [];
    for (const m of ex.members) {
      if (m.length !== 2) continue;
      const [i, j] = design.group[m[0]] === a ? [m[1], m[0]] : [m[0], m[1]];
      pairs.push([i, j]);
    }
    effect = { kind: 'd-z', sizes: dzFamily(aligned, pairs, bootOptions) };
  } else if (contrast.pair) {
    const n = design.ids.length;
    const unit = ex ? ex.block : Int32Array.from({ length: n }, (_, i) => i);
    const units = ex ? ex.names.length : n;
    // Strata: the effect level of a unit when the level is constant within units.
    const stratum = new Int32Array(units).fill(-1);
    let constant = true;
    for (let i = 0; i < n; i++) {
      const u = unit[i];
      if (stratum[u] === -1) stratum[u] = design.group[i];
      else if (stratum[u] !== design.group[i]) constant = false;
    }
    if (!constant) stratum.fill(0);
    effect = {
      kind: 'adjusted-d',
      sizes: adjustedDifferenceFamily(design.columns, contrast.rows[0], aligned, {
        ...bootOptions,
        unit,
        stratum,
        blockColumns,
      }),
    };
  } else if (df1 === 1) {
    effect = { kind: 'partial-r', values: partialR };
  } else {
    effect = { kind: 'partial-eta-squared', values: partialEta };
  }
  const levelsInTest = contrast.pair ?? design.levels;
  const groupSizes =
    levelsInTest.length > 0
      ? levelsInTest.map((l) => ({ level: l, n: design.groupSizes[design.levels.indexOf(l)] }))
      : [{ level: 'all', n: design.ids.length }];
  const excluded = family.features.flatMap((f, j) => {
    const why = permutation.leftOut[j];
    if (!why) return [];
    return [
      {
        feature: f.feature,
        nodeOrPoint: f.nodeOrPoint,
        reason:
          why === 'non-finite' ? 'missing or non-finite values' : 'no variation beyond the nuisance model',
      },
    ];
  });
  return {
    family: family.name,
    contrast,
    features: family.features.map((f) => ({ feature: f.feature, nodeOrPoint: f.nodeOrPoint })),
    glm,
    permutation,
    qFdr,
    effect,
    partialR,
    partialEtaSquared: partialEta,
    parametricValid: ex?.scheme !== 'whole-blocks',
    groupSizes,
    blocks: ex ? ex.names.length : null,
    excluded,
    warnings: permutation.warnings.map((w) => `${family.name}, ${contrast.name}: ${w}`),
  };
}
