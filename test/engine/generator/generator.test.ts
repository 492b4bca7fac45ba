import { describe, expect, it } from 'vitest';
import {
  blockMeans,
  factorModel,
  gaussianSource,
  ln,
  pearsonCorrelation,
  populationCorrelation,
  sampleCorrelation,
  sampleTimeSeries,
  withPlantedEffect,
  type BlockModelSpec,
} from '../../../electron/engine/generator/index.ts';
import { createRng } from '../../../electron/engine/random.ts';
import type { SquareMatrix } from '../../../electron/engine/types.ts';
import { jacobiEigenvalues } from './jacobi.ts';
import { h1Participation, meanOver } from './participation.ts';

/** Four modules of 8 nodes; modules 0, 1 and 2, 3 form two super-modules. */
const modules = Array.from({ length: 32 }, (_, i) => Math.floor(i / 8));
const nested: BlockModelSpec = {
  modules,
  within: 0.6,
  between: 0.1,
  nesting: { superOf: [0, 0, 1, 1], correlation: 0.25 },
};

function meanWhere(m: SquareMatrix, keep: (i: number, j: number) => boolean): number {
  let s = 0;
  let k = 0;
  for (let i = 0; i < m.n; i++) {
    for (let j = 0; j < m.n; j++) {
      if (i !== j && keep(i, j)) {
        s += m.values[i * m.n + j];
        k++;
      }
    }
  }
  return s / k;
}

function expectValidCorrelation(m: SquareMatrix): void {
  for (let i = 0; i < m.n; i++) {
    expect(m.values[i * m.n + i]).toBe(1);
    for (let j = 0; j < i; j++) expect(m.values[i * m.n + j]).toBe(m.values[j * m.n + i]);
  }
  expect(jacobiEigenvalues(m.values, m.n)[0]).toBeGreaterThanOrEqual(-1e-10);
}

describe('arithmetic-only normal draws', () => {
  it('ln agrees with Math.log to within a few ulps', () => {
    for (const x of [1e-300, 1e-9, 0.001, 0.25, 0.5, 0.7071, 1, 1.4142, 2, Math.E, 10, 12345.678, 1e200]) {
      expect(Math.abs(ln(x) - Math.log(x))).toBeLessThanOrEqual(4e-16 * Math.max(1, Math.abs(Math.log(x))));
    }
    expect(ln(1)).toBe(0);
    expect(() => ln(0)).toThrow(/x > 0/);
  });

  it('has mean 0, variance 1 and the normal mass within ±1σ and ±2σ', () => {
    const g = gaussianSource(createRng(11));
    const N = 200_000;
    let s = 0;
    let ss = 0;
    let in1 = 0;
    let in2 = 0;
    for (let k = 0; k < N; k++) {
      const x = g();
      s += x;
      ss += x * x;
      if (Math.abs(x) < 1) in1++;
      if (Math.abs(x) < 2) in2++;
    }
    // Bounds: about 4 standard errors. Φ(1) − Φ(−1) = 0.682689, Φ(2) − Φ(−2) = 0.954500 (standard tables).
    expect(Math.abs(s / N)).toBeLessThan(4 / Math.sqrt(N));
    expect(Math.abs(ss / N - 1)).toBeLessThan(4 * Math.sqrt(2 / N));
    expect(Math.abs(in1 / N - 0.682689)).toBeLessThan(0.005);
    expect(Math.abs(in2 / N - 0.9545)).toBeLessThan(0.0025);
  });
});

describe('the Jacobi eigenvalue routine used by these tests', () => {
  it('finds known spectra', () => {
    const e = jacobiEigenvalues(Float64Array.of(2, 1, 1, 2), 2);
    expect(e[0]).toBeCloseTo(1, 15);
    expect(e[1]).toBeCloseTo(3, 15);
    // The all-ones 5 × 5 matrix: eigenvalues 0 (four times) and 5.
    const ones = jacobiEigenvalues(new Float64Array(25).fill(1), 5);
    ones.slice(0, 4).forEach((x) => expect(Math.abs(x)).toBeLessThan(1e-14));
    expect(ones[4]).toBeCloseTo(5, 14);
  });
});

describe('factor model', () => {
  it('has the block means as its population correlations, with unit variance for every node', () => {
    const model = factorModel(nested);
    const pop = populationCorrelation(model);
    const B = blockMeans(nested);
    for (let i = 0; i < 32; i++) {
      let variance = model.noise[i] ** 2;
      for (let k = 0; k < model.factors; k++) variance += model.loadings[i * model.factors + k] ** 2;
      expect(variance).toBeCloseTo(1, 14);
      for (let j = 0; j < 32; j++) {
        const expected = i === j ? 1 : B.values[modules[i] * 4 + modules[j]];
        expect(pop.values[i * 32 + j]).toBeCloseTo(expected, 14);
      }
    }
    expect([B.values[0], B.values[1], B.values[2]]).toEqual([0.6, 0.25, 0.1]);
    expectValidCorrelation(pop);
  });

  it('moves an overlapping node towards the second module by (w − c)√share', () => {
    const spec = { ...nested, overlaps: [{ node: 0, module: 2, share: 0.36 }] };
    const pop = populationCorrelation(factorModel(spec));
    // node 0 (module 0) with node 16 (module 2, other super-module): b + (w − c)·√0.36.
    expect(pop.values[0 * 32 + 16]).toBeCloseTo(0.1 + 0.35 * 0.6, 14);
    // with its own module: c + (w − c)·√0.64.
    expect(pop.values[0 * 32 + 1]).toBeCloseTo(0.25 + 0.35 * 0.8, 14);
    expectValidCorrelation(pop);
  });

  it('isolates a node: between-module correlation scales by √(1 − share)', () => {
    const spec = withPlantedEffect(nested, { kind: 'isolate', nodes: [3], share: 0.5 });
    const pop = populationCorrelation(factorModel(spec));
    expect(pop.values[3 * 32 + 20]).toBeCloseTo(0.1 * Math.SQRT1_2, 14);
    expect(pop.values[3 * 32 + 12]).toBeCloseTo(0.25 * Math.SQRT1_2, 14);
    expect(pop.values[3 * 32 + 4]).toBeCloseTo(0.6 - 0.25 + 0.25 * Math.SQRT1_2, 14);
    expectValidCorrelation(pop);
  });

  it('rejects impossible specs with a message that says why', () => {
    expect(() => factorModel({ modules, within: 0.2, between: 0.3 })).toThrow(
      /between ≤ nested correlation ≤ within/,
    );
    expect(() => factorModel({ ...nested, overlaps: [{ node: 0, module: 0, share: 0.2 }] })).toThrow(
      /cannot overlap its own module/,
    );
    expect(() =>
      factorModel({
        ...nested,
        overlaps: [
          { node: 0, module: 1, share: 0.6 },
          { node: 0, module: 2, share: 0.6 },
        ],
      }),
    ).toThrow(/add up to more than 1/);
    expect(() =>
      withPlantedEffect(nested, { kind: 'bridge', nodes: [0, 1], targets: [2], share: 0.3 }),
    ).toThrow(/2 nodes but 1 target/);
    expect(() => factorModel({ modules: [0, 1.5], within: 0.5, between: 0.1 })).toThrow(/not an integer/);
  });
});

describe('sample correlations', () => {
  it('computes Pearson r as by hand', () => {
    // x = 1, 2, 3, 4 and y = 2, 4, 5, 9: Σdxdy = 11, Σdx² = 5, Σdy² = 26, r = 11/√130.
    const series = Float64Array.of(1, 2, 2, 4, 3, 5, 4, 9);
    const r = pearsonCorrelation(series, 4, 2);
    expect(r.values[1]).toBeCloseTo(11 / Math.sqrt(130), 15);
    expect(() => pearsonCorrelation(Float64Array.of(1, 2, 1, 3), 2, 2)).toThrow(/series 0 is constant/);
  });

  it('are symmetric, unit-diagonal and positive semi-definite, even with fewer time points than nodes', () => {
    const model = factorModel(nested);
    expectValidCorrelation(sampleCorrelation(model, 200, createRng(1)));
    expectValidCorrelation(sampleCorrelation(model, 20, createRng(2), { autocorrelation: 0.5 }));
  });

  it('recover the block structure: within − between ≈ the set separation', () => {
    const spec = { modules, within: 0.55, between: 0.15 };
    const m = sampleCorrelation(factorModel(spec), 4000, createRng(3));
    const within = meanWhere(m, (i, j) => modules[i] === modules[j]);
    const between = meanWhere(m, (i, j) => modules[i] !== modules[j]);
    // Sampling error of a mean over 224 or 768 pairs sharing 4000 time points: well below 0.03.
    expect(Math.abs(within - 0.55)).toBeLessThan(0.03);
    expect(Math.abs(between - 0.15)).toBeLessThan(0.03);
    expect(Math.abs(within - between - 0.4)).toBeLessThan(0.03);
    // Nesting shows as a middle level.
    const n = sampleCorrelation(factorModel(nested), 4000, createRng(4));
    const superOf = [0, 0, 1, 1];
    const sameSuper = meanWhere(
      n,
      (i, j) => modules[i] !== modules[j] && superOf[modules[i]] === superOf[modules[j]],
    );
    expect(Math.abs(sameSuper - 0.25)).toBeLessThan(0.03);
  });

  it('keep the AR(1) series at unit variance with lag-1 autocorrelation φ', () => {
    const model = factorModel({ modules: [0], within: 1, between: 0 });
    const T = 50_000;
    const x = sampleTimeSeries(model, T, createRng(5), { autocorrelation: 0.6 });
    let ss = 0;
    let lag = 0;
    for (let t = 0; t < T; t++) {
      ss += x[t] * x[t];
      if (t > 0) lag += x[t] * x[t - 1];
    }
    expect(Math.abs(ss / T - 1)).toBeLessThan(0.05);
    expect(Math.abs(lag / ss - 0.6)).toBeLessThan(0.02);
  });

  it('are determined by the seed', () => {
    const model = factorModel(nested);
    const a = sampleCorrelation(model, 100, createRng(42));
    const b = sampleCorrelation(model, 100, createRng(42));
    const c = sampleCorrelation(model, 100, createRng(43));
    expect(Array.from(b.values)).toEqual(Array.from(a.values));
    expect(Array.from(c.values)).not.toEqual(Array.from(a.values));
  });
});

describe('planted bridge effect', () => {
  // A ring: node 0 (module 0) bridges to module 1, node 8 to 2, node 16 to 3, node 24 to 0.
  const ring: BlockModelSpec = { modules, within: 0.6, between: 0.1 };
  const bridge = { kind: 'bridge' as const, nodes: [0, 8, 16, 24], targets: [1, 2, 3, 0], share: 0.4 };
  const planted = withPlantedEffect(ring, bridge);
  const subjects = (spec: BlockModelSpec, seed: number): SquareMatrix[] =>
    [0, 1, 2].map((k) => sampleCorrelation(factorModel(spec), 300, createRng(seed + k)));
  const control = subjects(ring, 100);
  const treated = subjects(planted, 200);

  it('raises the planted nodes’ correlation with their target modules by about (w − c)√share', () => {
    const toTarget = (m: SquareMatrix): number => {
      let s = 0;
      bridge.nodes.forEach((v, k) => {
        for (let j = 0; j < 32; j++) if (modules[j] === bridge.targets[k]) s += m.values[v * 32 + j];
      });
      return s / 32;
    };
    const mean = (ms: SquareMatrix[]): number => ms.reduce((a, m) => a + toTarget(m), 0) / ms.length;
    const diff = mean(treated) - mean(control);
    expect(diff).toBeGreaterThan(0);
    expect(Math.abs(diff - 0.5 * Math.sqrt(0.4))).toBeLessThan(0.06);
  });

  it('an isolate effect lowers the planted nodes’ correlation with other modules', () => {
    const isolated = withPlantedEffect(ring, { kind: 'isolate', nodes: bridge.nodes, share: 0.75 });
    const outside = (m: SquareMatrix): number => {
      let s = 0;
      let k = 0;
      for (const v of bridge.nodes) {
        for (let j = 0; j < 32; j++) {
          if (modules[j] !== modules[v]) {
            s += m.values[v * 32 + j];
            k++;
          }
        }
      }
      return s / k;
    };
    const mean = (ms: SquareMatrix[]): number => ms.reduce((a, m) => a + outside(m), 0) / ms.length;
    const diff = mean(subjects(isolated, 300)) - mean(control);
    // Population value: b(√(1 − 0.75) − 1) = −0.05; the standard error of the difference is about 0.01.
    expect(diff).toBeLessThan(0);
    expect(Math.abs(diff + 0.05)).toBeLessThan(0.03);
  });

  it('makes the planted nodes take part in more, and longer, H1 cycles (computePersistence representatives)', () => {
    const score = (ms: SquareMatrix[]): { count: number; persistence: number } => {
      let count = 0;
      let persistence = 0;
      for (const m of ms) {
        const p = h1Participation(m);
        count += meanOver(p.count, bridge.nodes) / ms.length;
        persistence += meanOver(p.persistence, bridge.nodes) / ms.length;
      }
      return { count, persistence };
    };
    const t = score(treated);
    const c = score(control);
    expect(t.count).toBeGreaterThan(c.count);
    // The ring closes one loop across the four modules, born when the last bridge edge enters
    // (r ≈ b + (w − c)√share ≈ 0.42) and filled near r ≈ b: persistence of the order of 0.3 in
    // 1 − r units, which every planted node lies on. Noise loops are far shorter.
    expect(t.persistence - c.persistence).toBeGreaterThan(0.1);
  });
});
