// Study designs against statsmodels OLS / scipy (test/reference/make_design_refs.py → goldens/stats/designs.json):
// a slope with a covariate, three kinds of interaction, a paired contrast with subject blocks, and
// the effect sizes reported beside each test.
import { describe, expect, it } from 'vitest';
import type { CovariateValue } from '../../../electron/api.ts';
import { buildDesign } from '../../../electron/engine/stats/design.ts';
import { testFamily } from '../../../electron/engine/stats/family.ts';
import { fitGlm } from '../../../electron/engine/stats/glm.ts';
import { golden } from './golden.ts';

type Row = Record<string, CovariateValue>;
interface Ref {
  slope: {
    rows: Row[];
    t: number;
    p: number;
    df: number;
    estimate: number;
    partial_r: number;
    partial_eta_squared: number;
  };
  interactions: { rows: Row[] } & Record<
    string,
    { F: number; p: number; df_num: number; df: number; partial_eta_squared: number }
  >;
  paired: { rows: Row[]; t: number; p: number; df: number; d_z: number };
  adjusted: { rows: Row[]; estimate: number; mse: number; d: number; t: number };
}
const ref = golden<Ref & { rows: never }>('designs.json') as unknown as Ref;

const asSubjects = (rows: Row[], id = (r: Row, i: number) => `r${i}`) =>
  rows.map((r, i) => ({ id: id(r, i), covariates: r }));
const family = (rows: Row[], ids: string[]) => ({
  name: 'features',
  subjects: ids,
  features: [{ feature: 'y', nodeOrPoint: null, values: rows.map((r) => r.y as number) }],
});

describe('designs against statsmodels / scipy', () => {
  it('slope t of a numeric effect with a categorical covariate = statsmodels OLS y ~ age + C(sex)', () => {
    const subjects = asSubjects(ref.slope.rows);
    const d = buildDesign(subjects, { effect: 'age', covariates: ['sex'] });
    expect(d.effect.kind).toBe('numeric');
    expect(d.columnNames).toEqual(['(intercept)', 'age', 'sex[M]']);
    expect(d.levels).toEqual([]);
    const y = ref.slope.rows.map((r) => r.y as number);
    const fit = fitGlm(d.columns, d.contrasts[0], [y]);
    expect(fit.statistic[0]).toBeCloseTo(ref.slope.t, 10);
    expect(fit.p[0]).toBeCloseTo(ref.slope.p, 10);
    expect(fit.df2).toBe(ref.slope.df);
    expect(fit.estimate[0]).toBeCloseTo(ref.slope.estimate, 10);
    const r = testFamily(d, d.contrasts[0], family(ref.slope.rows, d.ids), { seed: 1, permutations: 199 });
    expect(r.effect.kind).toBe('partial-r');
    expect(r.partialR[0]).toBeCloseTo(ref.slope.partial_r, 10);
    expect(r.partialEtaSquared[0]).toBeCloseTo(ref.slope.partial_eta_squared, 10);
    expect(r.groupSizes).toEqual([{ level: 'all', n: ref.slope.rows.length }]);
  });

  const cases: Array<[string, string, string[]]> = [
    ['arm:sex', 'arm*sex', []],
    ['arm:dose', 'arm*dose + age', []],
    ['dose:age', 'dose*age', ['sex']],
  ];
  for (const [term, model, covariates] of cases) {
    it(`interaction ${term} in ${model}: F = statsmodels compare_f_test`, () => {
      const g = ref.interactions[term];
      const rows = ref.interactions.rows;
      const d = buildDesign(asSubjects(rows), { model, test: term, covariates });
      const y = rows.map((r) => r.y as number);
      const fit = fitGlm(d.columns, d.contrasts[0], [y]);
      expect(d.contrasts[0].rows).toHaveLength(g.df_num);
      const f = fit.kind === 't' ? fit.statistic[0] ** 2 : fit.statistic[0];
      expect(f).toBeCloseTo(g.F, 9);
      expect(fit.p[0]).toBeCloseTo(g.p, 9);
      expect(fit.df2).toBe(g.df);
      const r = testFamily(d, d.contrasts[0], family(rows, d.ids), { seed: 1, permutations: 99 });
      expect(r.partialEtaSquared[0]).toBeCloseTo(g.partial_eta_squared, 10);
    });
  }

  it('paired contrast with subject blocks: t = scipy.stats.ttest_rel, d_z = mean(diff)/sd(diff)', () => {
    const rows = ref.paired.rows;
    const subjects = asSubjects(rows, (r) => `${r.participant_id}_ses-${r.session}`);
    const d = buildDesign(subjects, {
      effect: 'session',
      reference: 'pre',
      blocks: 'participant_id',
      covariates: [],
    });
    expect(d.exchangeability?.scheme).toBe('within-blocks');
    expect(d.paired).toBe(true);
    expect(d.contrasts[0].name).toBe('post - pre');
    const fit = fitGlm(d.columns, d.contrasts[0], [rows.map((r) => r.y as number)]);
    expect(fit.statistic[0]).toBeCloseTo(ref.paired.t, 10);
    expect(fit.p[0]).toBeCloseTo(ref.paired.p, 10);
    expect(fit.df2).toBe(ref.paired.df);
    const r = testFamily(d, d.contrasts[0], family(rows, d.ids), {
      seed: 3,
      permutations: 999,
      bootstrap: 500,
    });
    expect(r.effect.kind).toBe('d-z');
    if (r.effect.kind !== 'd-z') return;
    expect(r.effect.sizes.value[0]).toBeCloseTo(ref.paired.d_z, 10);
    // d_z = t / √m for the paired t (common practice).
    expect(r.effect.sizes.value[0]).toBeCloseTo(ref.paired.t / Math.sqrt(rows.length / 2), 10);
    expect(r.effect.sizes.low[0]).toBeLessThan(ref.paired.d_z);
    expect(r.effect.sizes.high[0]).toBeGreaterThan(ref.paired.d_z);
    expect(r.permutation.scheme).toBe('freedman-lane-within-blocks');
    expect(r.parametricValid).toBe(true);
  });

  it('adjusted d of a 2-level effect = coefficient / √(residual mean square) of statsmodels y ~ C(group) + age', () => {
    const rows = ref.adjusted.rows;
    const d = buildDesign(asSubjects(rows), { groupColumn: 'group', covariates: ['age'] });
    const r = testFamily(d, d.contrasts[0], family(rows, d.ids), {
      seed: 5,
      permutations: 199,
      bootstrap: 400,
    });
    expect(d.contrasts[0].name).toBe('patient - control');
    expect(r.glm.estimate[0]).toBeCloseTo(ref.adjusted.estimate, 10);
    expect(r.glm.statistic[0]).toBeCloseTo(ref.adjusted.t, 10);
    expect(r.effect.kind).toBe('adjusted-d');
    if (r.effect.kind !== 'adjusted-d') return;
    expect(r.effect.sizes.value[0]).toBeCloseTo(ref.adjusted.d, 10);
    expect(r.effect.sizes.low[0]).toBeLessThan(ref.adjusted.d);
    expect(r.effect.sizes.high[0]).toBeGreaterThan(ref.adjusted.d);
    // Reproducible from the seed.
    const again = testFamily(d, d.contrasts[0], family(rows, d.ids), {
      seed: 5,
      permutations: 199,
      bootstrap: 400,
    });
    if (again.effect.kind !== 'adjusted-d') return;
    expect(again.effect.sizes.low[0]).toBe(r.effect.sizes.low[0]);
  });
});

describe('the same slope and interactions against base R (make_design_refs.R: lm, anova)', () => {
  const r = golden<{
    slope: { t: number; p: number; df: number };
    interactions: Record<string, { F: number; p: number; df_num: number; df: number }>;
  }>('designs_r.json');

  it('slope t and p = R lm(y ~ age + sex)', () => {
    const d = buildDesign(asSubjects(ref.slope.rows), { effect: 'age', covariates: ['sex'] });
    const fit = fitGlm(d.columns, d.contrasts[0], [ref.slope.rows.map((x) => x.y as number)]);
    expect(fit.statistic[0]).toBeCloseTo(r.slope.t, 10);
    expect(fit.p[0]).toBeCloseTo(r.slope.p, 10);
    expect(fit.df2).toBe(r.slope.df);
  });

  for (const [term, model, covariates] of [
    ['arm:sex', 'arm*sex', []],
    ['arm:dose', 'arm*dose + age', []],
    ['dose:age', 'dose*age', ['sex']],
  ] as Array<[string, string, string[]]>) {
    it(`interaction ${term}: F, p, df = R anova(reduced, full)`, () => {
      const rows = ref.interactions.rows;
      const d = buildDesign(asSubjects(rows), { model, test: term, covariates });
      const fit = fitGlm(d.columns, d.contrasts[0], [rows.map((x) => x.y as number)]);
      const f = fit.kind === 't' ? fit.statistic[0] ** 2 : fit.statistic[0];
      expect(f).toBeCloseTo(r.interactions[term].F, 9);
      expect(fit.p[0]).toBeCloseTo(r.interactions[term].p, 9);
      expect([fit.df1, fit.df2]).toEqual([r.interactions[term].df_num, r.interactions[term].df]);
    });
  }
});
