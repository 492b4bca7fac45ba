// Design building and its guard rails: coding by hand, exclusions, specific errors.
import { describe, expect, it } from 'vitest';
import type { CovariateValue } from '../../../electron/api.ts';
import { buildDesign, DesignError } from '../../../electron/engine/stats/design.ts';

const subject = (id: string, covariates: Record<string, CovariateValue>) => ({ id, covariates });

const six = [
  subject('s1', { dx: 'patient', age: 30, site: 'A' }),
  subject('s2', { dx: 'control', age: 40, site: 'B' }),
  subject('s3', { dx: 'patient', age: 50, site: 'B' }),
  subject('s4', { dx: 'control', age: null, site: 'A' }),
  subject('s5', { dx: 'control', age: 20, site: 'A' }),
  subject('s6', { dx: null, age: 33, site: 'A' }),
  subject('s7', { dx: 'patient', age: 60, site: 'A' }),
  subject('s8', { dx: 'control', age: 35, site: 'B' }),
];

describe('buildDesign', () => {
  it('codes the group by treatment contrasts, centres numeric and dummy-codes categorical covariates', () => {
    const d = buildDesign(six, { groupColumn: 'dx', covariates: ['age', 'site'] });
    expect(d.levels).toEqual(['control', 'patient']);
    expect(d.columnNames).toEqual(['(intercept)', 'dx[patient]', 'age', 'site[B]']);
    expect(d.ids).toEqual(['s1', 's2', 's3', 's5', 's7', 's8']);
    expect(Array.from(d.columns[1])).toEqual([1, 0, 1, 0, 1, 0]);
    // Ages 30, 40, 50, 20, 60, 35: mean 39.1666…
    expect(d.columns[2][0]).toBeCloseTo(30 - 235 / 6, 12);
    expect(Array.from(d.columns[3])).toEqual([0, 1, 1, 0, 0, 1]);
    expect(d.groupSizes).toEqual([3, 3]);
    // other − reference = patient − control: the patient dummy with sign +1.
    expect(d.contrasts).toHaveLength(1);
    expect(d.contrasts[0].name).toBe('patient - control');
    expect(d.contrasts[0].rows).toEqual([[0, 1, 0, 0]]);
    // --reference patient turns it around.
    const r = buildDesign(six, { groupColumn: 'dx', covariates: ['age', 'site'], reference: 'patient' });
    expect(r.levels).toEqual(['patient', 'control']);
    expect(r.contrasts[0].name).toBe('control - patient');
    expect(r.contrasts[0].rows).toEqual([[0, 1, 0, 0]]);
  });

  it('reports every excluded subject with its reason', () => {
    const d = buildDesign(six, { groupColumn: 'dx', covariates: ['age'] });
    expect(d.excluded).toEqual([
      { id: 's4', reason: "missing 'age'" },
      { id: 's6', reason: "missing 'dx'" },
    ]);
  });

  it('sets up the all-levels F contrast for three groups, and pairs on request', () => {
    const three = ['a', 'b', 'c', 'a', 'b', 'c', 'a', 'b'].map((g, i) => subject(`s${i}`, { g }));
    const d = buildDesign(three, { groupColumn: 'g', covariates: [] });
    expect(d.contrasts[0].rows).toEqual([
      [0, 1, 0],
      [0, 0, 1],
    ]);
    const p = buildDesign(three, {
      groupColumn: 'g',
      covariates: [],
      contrasts: [{ kind: 'pair', a: 'c', b: 'b' }],
    });
    expect(p.contrasts[0].rows).toEqual([[0, -1, 1]]);
    expect(() =>
      buildDesign(three, { groupColumn: 'g', covariates: [], contrasts: [{ kind: 'pair', a: 'c', b: 'z' }] }),
    ).toThrow(/level 'z' is not in 'g'/);
  });

  it('refuses a group with fewer than 2 subjects, naming it', () => {
    const s = [...six, subject('s9', { dx: 'other', age: 31, site: 'A' })];
    expect(() => buildDesign(s, { groupColumn: 'dx', covariates: [] })).toThrow(
      /group 'other' of 'dx' has 1 usable subject; at least 2 are needed/,
    );
  });

  it('refuses a single level', () => {
    const s = six.filter((x) => x.covariates.dx === 'patient');
    expect(() => buildDesign(s, { groupColumn: 'dx', covariates: [] })).toThrow(/only 'patient'/);
  });

  it('names a covariate collinear with the group', () => {
    const s = six.map((x) => ({
      ...x,
      covariates: { ...x.covariates, sick: x.covariates.dx === 'patient' ? 1 : 0 },
    }));
    expect(() => buildDesign(s, { groupColumn: 'dx', covariates: ['age', 'sick'] })).toThrow(DesignError);
    expect(() => buildDesign(s, { groupColumn: 'dx', covariates: ['age', 'sick'] })).toThrow(
      /covariate 'sick' is collinear with group 'dx'/,
    );
    // A site nested in the group (each site holds one group only) determines group membership.
    const nested = six.map((x) => ({
      ...x,
      covariates: { ...x.covariates, scanner: `${x.covariates.dx}-${x.id < 's5' ? 1 : 2}` },
    }));
    expect(() => buildDesign(nested, { groupColumn: 'dx', covariates: ['scanner'] })).toThrow(
      /covariate 'scanner' is collinear with group 'dx'/,
    );
  });

  it('names the column of a rank-deficient design', () => {
    const s = six.map((x) => ({
      ...x,
      covariates: {
        ...x.covariates,
        months: typeof x.covariates.age === 'number' ? x.covariates.age * 12 : null,
      },
    }));
    expect(() => buildDesign(s, { groupColumn: 'dx', covariates: ['age', 'months'] })).toThrow(
      /rank-deficient: column 'months' is a linear combination of earlier columns/,
    );
  });

  it('refuses a design with no error degrees of freedom', () => {
    const s = six
      .slice(0, 4)
      .map((x, i) => ({ ...x, covariates: { dx: i % 2 ? 'a' : 'b', u: i, v: i * i } }));
    expect(() => buildDesign(s, { groupColumn: 'dx', covariates: ['u', 'v'] })).toThrow(
      /no degrees of freedom/,
    );
  });

  it('treats a column with text values as categorical and refuses a constant one', () => {
    const s = six.map((x, i) => ({ ...x, covariates: { ...x.covariates, hand: i % 3 === 0 ? 'L' : 1 } }));
    const d = buildDesign(s, { groupColumn: 'dx', covariates: ['hand'] });
    expect(d.columnNames).toContain('hand[L]');
    const c = six.map((x) => ({ ...x, covariates: { ...x.covariates, hand: 'R' } }));
    expect(() => buildDesign(c, { groupColumn: 'dx', covariates: ['hand'] })).toThrow(
      /'hand' takes a single value/,
    );
    const k = six.map((x) => ({ ...x, covariates: { ...x.covariates, tesla: 3 } }));
    expect(() => buildDesign(k, { groupColumn: 'dx', covariates: ['tesla'] })).toThrow(
      /'tesla' takes a single value \(3\)/,
    );
  });
});
