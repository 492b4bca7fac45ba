// PERMANOVA pseudo-F on Euclidean distances of 1-D data equals the one-way ANOVA F (Anderson 2001),
// checked against scipy.stats.f_oneway; joint loss (Robinson & Turner 2017) and exact p by hand.
import { describe, expect, it } from 'vitest';
import { jointLossTest, permanova } from '../../../electron/engine/stats/diagram-tests.ts';
import type { SquareMatrix } from '../../../electron/engine/types.ts';
import { golden } from './golden.ts';

const ref = golden<{ cases: Array<{ x: number[]; group: number[]; F: number }> }>('permanova.json');

function lineDistances(x: number[]): SquareMatrix {
  const n = x.length;
  const values = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) values[i * n + j] = Math.abs(x[i] - x[j]);
  return { n, values };
}

describe('PERMANOVA', () => {
  ref.cases.forEach((c) => {
    it(`pseudo-F = one-way ANOVA F (scipy f_oneway), ${new Set(c.group).size} groups`, () => {
      const res = permanova(lineDistances(c.x), Int32Array.from(c.group), { permutations: 199, seed: 3 });
      expect(res.statistic).toBeCloseTo(c.F, 10);
      expect(res.df1).toBe(new Set(c.group).size - 1);
      expect(res.df2).toBe(c.x.length - new Set(c.group).size);
      expect(res.run.seed).toBe(3);
      expect(res.p).toBeGreaterThan(0);
      expect(res.p).toBeLessThanOrEqual(1);
    });
  });

  it('exact p on a tiny case, by hand', () => {
    // x = 0, 1, 5, 6 in groups {0,1} vs {5,6}: of the C(4,2) = 6 labellings, the observed split
    // and its mirror have the largest F; p = 2/6.
    const res = permanova(lineDistances([0, 1, 5, 6]), Int32Array.of(0, 0, 1, 1), {
      permutations: 100,
      seed: 1,
    });
    expect(res.run.mode).toBe('exact');
    expect(res.run.visited).toBe(6);
    expect(res.p).toBeCloseTo(2 / 6, 15);
    expect(res.warnings[0]).toMatch(/only 6 distinct relabellings .* smallest attainable p is 0\.167/);
  });
});

describe('Robinson–Turner joint loss', () => {
  it('statistic and exact p by hand', () => {
    // Distances on a line x = 0, 1, 5, 7; groups {0,1} and {5,7}, q = 2:
    // F = Σ_g 1/(2 n_g(n_g − 1)) Σ_{i,j ∈ g} d² with n_g = 2: each group gives (2 d²)/4 = d²/2,
    // so F = 1/2 + 4/2 = 2.5.
    const res = jointLossTest(lineDistances([0, 1, 5, 7]), Int32Array.of(0, 0, 1, 1), {
      permutations: 100,
      seed: 1,
    });
    expect(res.statistic).toBeCloseTo(2.5, 14);
    // Other splits: {0,5},{1,7}: (25 + 36)/2; {0,7},{1,5}: (49 + 16)/2 — and their mirrors. Only the
    // observed split and its mirror reach F ≤ 2.5: p = 2/6.
    expect(res.p).toBeCloseTo(2 / 6, 15);
  });
  it('q = 1 uses distances unsquared', () => {
    const res = jointLossTest(lineDistances([0, 1, 5, 7]), Int32Array.of(0, 0, 1, 1), {
      permutations: 100,
      seed: 1,
      q: 1,
    });
    expect(res.statistic).toBeCloseTo((1 + 2) / 2, 14);
  });
  it('refuses a group of one and an asymmetric matrix', () => {
    const d = lineDistances([0, 1, 2]);
    expect(() => jointLossTest(d, Int32Array.of(0, 0, 1), { seed: 1 })).toThrow(/group 1 has 1 subject/);
    d.values[1] = 9;
    expect(() => permanova(d, Int32Array.of(0, 0, 1), { seed: 1 })).toThrow(/not symmetric/);
  });
});
