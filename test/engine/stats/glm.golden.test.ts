// GLM t and F against statsmodels OLS (t_test / f_test) and R lm/anova on the same simulated
// participants tables (test/reference/make_stats_refs.py, make_stats_refs.R); t/F tails vs scipy.
import { describe, expect, it } from 'vitest';
import type { CovariateValue } from '../../../electron/api.ts';
import { buildDesign } from '../../../electron/engine/stats/design.ts';
import { fitGlm } from '../../../electron/engine/stats/glm.ts';
import { permutationTest } from '../../../electron/engine/stats/permutation.ts';
import { fUpperP, tTwoSidedP } from '../../../electron/engine/stats/special.ts';
import { golden } from './golden.ts';

interface GlmCase {
  name: string;
  covariates: string[];
  levels: string[];
  participants: Array<{ id: string; covariates: Record<string, CovariateValue>; features: number[] }>;
  excluded: number;
  results: Array<{
    contrast: { kind: 'pair'; a: string; b: string } | { kind: 'all-levels' };
    features: Array<{ statistic: number; p: number; df: number; df1?: number }>;
  }>;
}
const py = golden<{
  cases: GlmCase[];
  tGrid: Array<{ t: number; df: number; p: number }>;
  fGrid: Array<{ f: number; df1: number; df2: number; p: number }>;
}>('glm.json');
const r = golden<{
  two_groups: { t: number[]; p: number[]; df: number[] };
  three_groups: {
    F: number[];
    F_p: number[];
    df1: number[];
    df: number[];
    t_c_minus_b: number[];
    t_p: number[];
  };
}>('glm_r.json');

function fitCase(c: GlmCase) {
  const design = buildDesign(c.participants, {
    groupColumn: 'dx',
    covariates: c.covariates,
    contrasts: c.results.map((x) => x.contrast),
  });
  const rowOf = new Map(c.participants.map((p, i) => [p.id, i]));
  const features = c.participants[0].features.map((_, j) =>
    design.ids.map((id) => c.participants[rowOf.get(id)!].features[j]),
  );
  return { design, features, fits: design.contrasts.map((k) => fitGlm(design.columns, k, features)) };
}

describe('GLM vs statsmodels OLS (t_test / f_test)', () => {
  for (const c of py.cases) {
    it(`${c.name}: excluded rows, statistics, df and p`, () => {
      const { design, fits } = fitCase(c);
      expect(design.excluded.length).toBe(c.excluded);
      c.results.forEach((res, k) => {
        res.features.forEach((ref, j) => {
          expect(fits[k].statistic[j]).toBeCloseTo(ref.statistic, 10);
          expect(fits[k].p[j]).toBeCloseTo(ref.p, 12);
          expect(fits[k].df2).toBe(ref.df);
          if (ref.df1 !== undefined) expect(fits[k].df1).toBe(ref.df1);
        });
      });
    });
  }

  it('the permutation engine computes the same observed statistic as the GLM', () => {
    for (const c of py.cases) {
      const { design, features, fits } = fitCase(c);
      design.contrasts.forEach((k, i) => {
        const perm = permutationTest(design.columns, k, features, { permutations: 20, seed: 1 });
        perm.statistic.forEach((v, j) => expect(v).toBeCloseTo(fits[i].statistic[j], 10));
      });
    }
  });
});

describe('GLM vs R lm / anova', () => {
  it('two groups with age and site: t of control − patient', () => {
    const { fits } = fitCase(py.cases[0]);
    r.two_groups.t.forEach((t, j) => {
      expect(fits[0].statistic[j]).toBeCloseTo(t, 10);
      expect(fits[0].p[j]).toBeCloseTo(r.two_groups.p[j], 12);
      expect(fits[0].df2).toBe(r.two_groups.df[j]);
    });
  });
  it('three groups with age: F over all levels (anova of nested models) and t of c − b', () => {
    const { fits } = fitCase(py.cases[1]);
    r.three_groups.F.forEach((f, j) => {
      expect(fits[0].statistic[j]).toBeCloseTo(f, 10);
      expect(fits[0].p[j]).toBeCloseTo(r.three_groups.F_p[j], 12);
      expect(fits[0].df1).toBe(r.three_groups.df1[j]);
      expect(fits[0].df2).toBe(r.three_groups.df[j]);
      expect(fits[1].statistic[j]).toBeCloseTo(r.three_groups.t_c_minus_b[j], 10);
      expect(fits[1].p[j]).toBeCloseTo(r.three_groups.t_p[j], 12);
    });
  });
});

describe('t and F tail probabilities vs scipy.stats', () => {
  it('two-sided t', () => {
    for (const g of py.tGrid) expect(tTwoSidedP(g.t, g.df)).toBeCloseTo(g.p, 12);
  });
  it('upper F', () => {
    for (const g of py.fGrid) expect(fUpperP(g.f, g.df1, g.df2)).toBeCloseTo(g.p, 12);
  });
  it('relative accuracy in the far tail', () => {
    for (const g of py.tGrid.filter((x) => x.p > 0 && x.p < 1e-3)) {
      expect(Math.abs(tTwoSidedP(g.t, g.df) / g.p - 1)).toBeLessThan(1e-10);
    }
  });
});
