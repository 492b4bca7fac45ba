/**
 * One family of features tested together: parametric GLM, permutation p (Freedman–Lane or label
 * permutation), max-statistic FWER and Benjamini–Hochberg q within the family, and the effect
 * size (Hedges' g with bootstrap interval for a pair contrast, partial η² for an F contrast).
 * A family is what the correction runs over: e.g. all scalar features, or one node measure over
 * all nodes, or one curve over its grid points.
 *
 *   testFamily(design, design.contrasts[0], { name: 'betti1-curve', subjects, features }, { seed: 7 })
 */
import type { Contrast, Design } from './design.ts';
import { hedgesGFamily, partialEtaSquared, type GroupEffectSizes } from './effect-size.ts';
import { fitGlm, type GlmFit } from './glm.ts';
import { bhQValues } from './multiple.ts';
import { permutationTest, type PermutationTest } from './permutation.ts';

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
  effect:
    { kind: 'hedges-g'; sizes: GroupEffectSizes } | { kind: 'partial-eta-squared'; values: Float64Array };
  /** Subjects per group level in this test. */
  groupSizes: Array<{ level: string; n: number }>;
  warnings: string[];
}

/** Tests `contrast` on every feature of `family`. */
export function testFamily(
  design: Design,
  contrast: Contrast,
  family: FeatureFamily,
  options: FamilyOptions,
): FamilyResult {
  const position = new Map(family.subjects.map((id, i) => [id, i]));
  const rowOf = design.ids.map((id) => {
    const i = position.get(id);
    if (i === undefined)
      throw new Error(`family '${family.name}' has no values for subject '${id}' of the design`);
    return i;
  });
  const aligned = family.features.map((f) => {
    if (f.values.length !== family.subjects.length) {
      throw new Error(
        `family '${family.name}', feature '${f.feature}' ${f.nodeOrPoint ?? ''}: ${f.values.length} values for ${family.subjects.length} subjects`,
      );
    }
    return Float64Array.from(rowOf, (i) => f.values[i]);
  });
  const glm = fitGlm(design.columns, contrast, aligned);
  const permutation = permutationTest(design.columns, contrast, aligned, options);
  const qFdr = bhQValues(permutation.pUncorrected);
  let effect: FamilyResult['effect'];
  if (contrast.pair) {
    const a = design.levels.indexOf(contrast.pair[0]);
    const b = design.levels.indexOf(contrast.pair[1]);
    effect = {
      kind: 'hedges-g',
      sizes: hedgesGFamily(aligned, design.group, a, b, { seed: options.seed, bootstrap: options.bootstrap }),
    };
  } else {
    effect = {
      kind: 'partial-eta-squared',
      values: Float64Array.from(permutation.statistic, (f) =>
        partialEtaSquared(f, permutation.df1, permutation.df2),
      ),
    };
  }
  const levelsInTest = contrast.pair ?? design.levels;
  return {
    family: family.name,
    contrast,
    features: family.features.map((f) => ({ feature: f.feature, nodeOrPoint: f.nodeOrPoint })),
    glm,
    permutation,
    qFdr,
    effect,
    groupSizes: levelsInTest.map((l) => ({ level: l, n: design.groupSizes[design.levels.indexOf(l)] })),
    warnings: permutation.warnings.map((w) => `${family.name}, ${contrast.name}: ${w}`),
  };
}
