// Permutation inference: exact enumeration by hand, equivalence with a literal (unvectorised)
// implementation of label permutation and of Freedman–Lane, and calibration under the null:
// over 500 simulated null datasets the rejection rate at α = 0.05 lies in the binomial 99.9% interval.
import { describe, expect, it } from 'vitest';
import { createRng, type Rng } from '../../../electron/engine/random.ts';
import { buildDesign, type Contrast } from '../../../electron/engine/stats/design.ts';
import { fitGlm } from '../../../electron/engine/stats/glm.ts';
import { orthonormalize, dot } from '../../../electron/engine/stats/linalg.ts';
import { DEFAULT_PERMUTATIONS, permutationTest } from '../../../electron/engine/stats/permutation.ts';
import { logGamma } from '../../../electron/engine/stats/special.ts';

function normal(rng: Rng): number {
  return Math.sqrt(-2 * Math.log(1 - rng.next())) * Math.cos(2 * Math.PI * rng.next());
}

/** Central 99.9% interval of Binomial(n, p): [lo, hi] with P(X < lo) ≤ 0.0005 and P(X > hi) ≤ 0.0005. */
function binomialInterval(n: number, p: number): [number, number] {
  const pmf = (k: number) =>
    Math.exp(
      logGamma(n + 1) - logGamma(k + 1) - logGamma(n - k + 1) + k * Math.log(p) + (n - k) * Math.log1p(-p),
    );
  let lo = 0;
  let acc = 0;
  while (acc + pmf(lo) <= 0.0005) acc += pmf(lo++);
  let hi = n;
  acc = 0;
  while (acc + pmf(hi) <= 0.0005) acc += pmf(hi--);
  return [lo, hi];
}

const twoGroups = (labels: string[], extra: (i: number) => Record<string, number> = () => ({})) =>
  labels.map((g, i) => ({ id: `s${i}`, covariates: { dx: g, ...extra(i) } }));

/** All distinct arrangements of a label vector (brute force, for the checks). */
function arrangements(labels: string[]): string[][] {
  if (labels.length === 0) return [[]];
  const out: string[][] = [];
  for (const l of [...new Set(labels)]) {
    const rest = [...labels];
    rest.splice(rest.indexOf(l), 1);
    for (const r of arrangements(rest)) out.push([l, ...r]);
  }
  return out;
}

describe('exact enumeration', () => {
  it('two groups of two, by hand: p = 2/6', () => {
    // y = 1, 2 | 3, 10. With fixed group sizes |t| rises with |mean difference|; the six splits give
    // |Δ| = 5 ({1,2}), 4 ({1,3}), 3 ({1,10}), 3 ({2,3}), 4 ({2,10}), 5 ({3,10}): two reach 5.
    const d = buildDesign(twoGroups(['a', 'a', 'b', 'b']), { groupColumn: 'dx', covariates: [] });
    const res = permutationTest(d.columns, d.contrasts[0], [[1, 2, 3, 10]], { seed: 1 });
    expect(res.scheme).toBe('label-permutation');
    expect(res.run.mode).toBe('exact');
    expect(res.run.visited).toBe(6);
    expect(res.pUncorrected[0]).toBeCloseTo(2 / 6, 15);
    expect(res.pFwer[0]).toBeCloseTo(2 / 6, 15);
    expect(res.smallestP).toBeCloseTo(1 / 6, 15);
    expect(res.warnings).toEqual([
      'only 6 distinct relabellings are possible; the smallest attainable p is 0.167',
    ]);
  });

  for (const labels of [
    ['a', 'a', 'a', 'b', 'b', 'b', 'b'],
    ['a', 'a', 'b', 'b', 'c', 'c'],
  ]) {
    it(`matches a literal relabelling of the design (${labels.join('')}), p and max-statistic FWER`, () => {
      const rng = createRng(labels.length);
      const features = Array.from({ length: 4 }, (_, j) =>
        labels.map((g) => normal(rng) + (g === 'a' ? j * 0.7 : 0)),
      );
      const d = buildDesign(twoGroups(labels), { groupColumn: 'dx', covariates: [] });
      const res = permutationTest(d.columns, d.contrasts[0], features, { seed: 1, permutations: 5000 });
      expect(res.run.mode).toBe('exact');
      const all = arrangements(labels);
      expect(res.run.visited).toBe(all.length);
      const stat = (ls: string[]) => {
        const dd = buildDesign(twoGroups(ls), { groupColumn: 'dx', covariates: [] });
        return Array.from(fitGlm(dd.columns, dd.contrasts[0], features).statistic, Math.abs);
      };
      const observed = stat(labels);
      const perms = all.map(stat);
      observed.forEach((t, j) => {
        const ge = perms.filter((s) => s[j] >= t - 1e-9).length;
        const geMax = perms.filter((s) => Math.max(...s) >= t - 1e-9).length;
        expect(res.pUncorrected[j]).toBeCloseTo(ge / all.length, 14);
        expect(res.pFwer[j]).toBeCloseTo(geMax / all.length, 14);
      });
    });
  }

  const flCases: Array<{
    title: string;
    labels: string[];
    covariates: string[];
    contrast: { kind: 'pair'; a: string; b: string } | { kind: 'all-levels' };
    // The nuisance space written out by hand from the design columns.
    nuisance: (c: Float64Array[]) => Float64Array[];
  }> = [
    {
      title: 'two groups, age; t of a − b; Z = [1, age]',
      labels: ['a', 'a', 'a', 'b', 'b', 'b'],
      covariates: ['age'],
      contrast: { kind: 'pair', a: 'a', b: 'b' },
      nuisance: (c) => [c[0], c[2]],
    },
    {
      title: 'three groups, age; F over all levels; Z = [1, age]',
      labels: ['a', 'b', 'c', 'a', 'b', 'c'],
      covariates: ['age'],
      contrast: { kind: 'all-levels' },
      nuisance: (c) => [c[0], c[3]],
    },
    {
      title: 'three groups, no covariate; t of c − b; Z = [1, b + c]',
      labels: ['a', 'b', 'c', 'a', 'b', 'c'],
      covariates: [],
      contrast: { kind: 'pair', a: 'c', b: 'b' },
      nuisance: (c) => [c[0], c[1].map((v, i) => v + c[2][i])],
    },
  ];
  for (const fl of flCases) {
    it(`Freedman–Lane matches the literal algorithm over all 6! permutations: ${fl.title}`, () => {
      const rng = createRng(77);
      const age = [31, 45, 28, 52, 60, 39];
      const d = buildDesign(
        twoGroups(fl.labels, (i) => ({ age: age[i] })),
        { groupColumn: 'dx', covariates: fl.covariates, contrasts: [fl.contrast] },
      );
      const contrast = d.contrasts[0];
      const features = Array.from({ length: 3 }, (_, j) =>
        age.map((x, i) => 0.05 * x + normal(rng) + (fl.labels[i] === 'c' ? j : 0)),
      );
      const res = permutationTest(d.columns, contrast, features, { seed: 1, permutations: 5000 });
      expect(res.scheme).toBe('freedman-lane');
      expect(res.run.mode).toBe('exact');
      expect(res.run.visited).toBe(720);
      // Literal: y* = Hz y + P (I − Hz) y, then refit the full model.
      const qz = orthonormalize(fl.nuisance(d.columns)).q;
      const literal = (y: number[], p: number[]) => {
        const fitted = new Float64Array(6);
        for (const q of qz) {
          const c = dot(q, y);
          for (let i = 0; i < 6; i++) fitted[i] += c * q[i];
        }
        const resid = y.map((v, i) => v - fitted[i]);
        return Array.from(fitted, (f, i) => f + resid[p[i]]);
      };
      const stat = (y: ArrayLike<number>) => Math.abs(fitGlm(d.columns, contrast, [y]).statistic[0]);
      const observed = features.map(stat);
      const permStats = allPermutations(6).map((p) => features.map((y) => stat(literal(y, p))));
      observed.forEach((t, j) => {
        expect(res.statistic[j]).toBeCloseTo(fitGlm(d.columns, contrast, [features[j]]).statistic[0], 10);
        const ge = permStats.filter((s) => s[j] >= t - 1e-9).length;
        const geMax = permStats.filter((s) => Math.max(...s) >= t - 1e-9).length;
        expect(res.pUncorrected[j]).toBeCloseTo(ge / 720, 14);
        expect(res.pFwer[j]).toBeCloseTo(geMax / 720, 14);
      });
    });
  }
});

function allPermutations(n: number): number[][] {
  if (n === 1) return [[0]];
  const out: number[][] = [];
  for (const p of allPermutations(n - 1))
    for (let k = 0; k < n; k++) out.push([...p.slice(0, k), n - 1, ...p.slice(k)]);
  return out;
}

describe('random permutations', () => {
  const rng = createRng(3);
  const labels = Array.from({ length: 30 }, (_, i) => (i < 14 ? 'a' : 'b'));
  const d = buildDesign(twoGroups(labels), { groupColumn: 'dx', covariates: [] });
  const features = Array.from({ length: 5 }, () => labels.map(() => normal(rng)));

  it('default 5000, seed recorded, reproducible; p = (1 + #)/(1 + B) so never 0', () => {
    const a = permutationTest(d.columns, d.contrasts[0], features, { seed: 42 });
    const b = permutationTest(d.columns, d.contrasts[0], features, { seed: 42 });
    expect(a.run).toEqual({ mode: 'random', visited: DEFAULT_PERMUTATIONS, distinct: 145422675, seed: 42 });
    expect(Array.from(a.pUncorrected)).toEqual(Array.from(b.pUncorrected));
    for (let j = 0; j < 5; j++) {
      expect(a.pUncorrected[j] * (1 + DEFAULT_PERMUTATIONS)).toBeCloseTo(
        Math.round(a.pUncorrected[j] * 5001),
        6,
      );
      expect(a.pUncorrected[j]).toBeGreaterThanOrEqual(1 / 5001);
      expect(a.pFwer[j]).toBeGreaterThanOrEqual(a.pUncorrected[j]);
    }
    const c = permutationTest(d.columns, d.contrasts[0], features, { seed: 43 });
    expect(Array.from(c.pUncorrected)).not.toEqual(Array.from(a.pUncorrected));
    expect(a.warnings).toEqual([]);
  });

  it('leaves out non-finite and constant features, saying so', () => {
    const bad = [features[0], labels.map((_, i) => (i === 3 ? NaN : 1 + i)), labels.map(() => 7)];
    const res = permutationTest(d.columns, d.contrasts[0], bad, { seed: 1, permutations: 99 });
    expect(Number.isFinite(res.pUncorrected[0])).toBe(true);
    expect(Number.isNaN(res.pUncorrected[1])).toBe(true);
    expect(Number.isNaN(res.pUncorrected[2])).toBe(true);
    expect(res.warnings).toEqual([
      '1 feature(s) with missing or non-finite values were left out',
      '1 feature(s) without variation beyond the nuisance model were left out',
    ]);
  });

  it('a real group difference gives a small p', () => {
    const y = labels.map((g) => normal(rng) + (g === 'a' ? 1.5 : 0));
    const res = permutationTest(d.columns, d.contrasts[0], [y], { seed: 2, permutations: 999 });
    expect(res.pUncorrected[0]).toBeLessThan(0.01);
  });
});

describe('calibration under the null (500 simulated datasets, 199 permutations each)', () => {
  const datasets = 500;
  const [lo, hi] = binomialInterval(datasets, 0.05);

  it(`label permutation: rejections at α = 0.05 within [${lo}, ${hi}]`, () => {
    const rng = createRng(2024);
    const labels = Array.from({ length: 20 }, (_, i) => (i < 9 ? 'a' : 'b'));
    const d = buildDesign(twoGroups(labels), { groupColumn: 'dx', covariates: [] });
    let reject = 0;
    let sum = 0;
    for (let k = 0; k < datasets; k++) {
      const y = labels.map(() => normal(rng));
      const p = permutationTest(d.columns, d.contrasts[0], [y], { seed: k, permutations: 199 })
        .pUncorrected[0];
      if (p <= 0.05) reject++;
      sum += p;
    }
    expect(reject).toBeGreaterThanOrEqual(lo);
    expect(reject).toBeLessThanOrEqual(hi);
    // Mean of a discrete uniform on {1, …, 200}/200 is 0.5025; its SD over 500 draws is ≈ 0.013.
    expect(Math.abs(sum / datasets - 0.5025)).toBeLessThan(0.05);
  });

  it(`Freedman–Lane with a covariate correlated with group and a strong nuisance effect: within [${lo}, ${hi}]`, () => {
    const rng = createRng(99);
    const labels = Array.from({ length: 24 }, (_, i) => (i < 12 ? 'a' : 'b'));
    const plain = buildDesign(twoGroups(labels), { groupColumn: 'dx', covariates: [] });
    let reject = 0;
    let rejectUnadjusted = 0;
    for (let k = 0; k < datasets; k++) {
      const x = labels.map((g) => (g === 'a' ? 1 : 0) + normal(rng));
      const d = buildDesign(
        twoGroups(labels, (i) => ({ x: x[i] })),
        { groupColumn: 'dx', covariates: ['x'] },
      );
      const y = x.map((v) => 2 * v + normal(rng));
      const res = permutationTest(d.columns, d.contrasts[0], [y], { seed: k, permutations: 199 });
      if (k === 0) expect(res.scheme).toBe('freedman-lane');
      if (res.pUncorrected[0] <= 0.05) reject++;
      const unadjusted = permutationTest(plain.columns, plain.contrasts[0], [y], {
        seed: k,
        permutations: 199,
      });
      if (unadjusted.pUncorrected[0] <= 0.05) rejectUnadjusted++;
    }
    expect(reject).toBeGreaterThanOrEqual(lo);
    expect(reject).toBeLessThanOrEqual(hi);
    // The check has teeth: leaving the confounding covariate out rejects far too often.
    expect(rejectUnadjusted).toBeGreaterThan(hi);
  });

  it(`max-statistic FWER over a family of 12 null features: family-wise rejections within the interval`, () => {
    const rng = createRng(5);
    const labels = Array.from({ length: 16 }, (_, i) => (i < 8 ? 'a' : 'b'));
    const d = buildDesign(twoGroups(labels), { groupColumn: 'dx', covariates: [] });
    let reject = 0;
    for (let k = 0; k < datasets; k++) {
      // Correlated features (a shared component), as neighbouring grid points of a curve would be.
      const shared = labels.map(() => normal(rng));
      const features = Array.from({ length: 12 }, () => shared.map((s) => 0.7 * s + normal(rng)));
      const res = permutationTest(d.columns, d.contrasts[0], features, { seed: k, permutations: 199 });
      if (Math.min(...res.pFwer) <= 0.05) reject++;
    }
    expect(reject).toBeGreaterThanOrEqual(lo);
    expect(reject).toBeLessThanOrEqual(hi);
  });
});

describe('F contrast', () => {
  it('three groups, random permutations: F equals the GLM F and p is between 0 and 1', () => {
    const rng = createRng(8);
    const labels = Array.from({ length: 21 }, (_, i) => ['a', 'b', 'c'][i % 3]);
    const d = buildDesign(twoGroups(labels), { groupColumn: 'dx', covariates: [] });
    const c: Contrast = d.contrasts[0];
    const y = labels.map((g) => normal(rng) + (g === 'c' ? 1.2 : 0));
    const res = permutationTest(d.columns, c, [y], { seed: 1, permutations: 999 });
    expect(res.kind).toBe('F');
    expect(res.df1).toBe(2);
    expect(res.df2).toBe(18);
    expect(res.statistic[0]).toBeCloseTo(fitGlm(d.columns, c, [y]).statistic[0], 10);
    // With this effect the permutation and parametric p agree roughly (both small).
    const parametric = fitGlm(d.columns, c, [y]).p[0];
    expect(Math.abs(res.pUncorrected[0] - parametric)).toBeLessThan(0.03);
  });
});
