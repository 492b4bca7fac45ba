// Hedges' g vs the formula evaluated with numpy/scipy (Hedges 1981, exact J via scipy.special.gammaln);
// the bootstrap interval is checked for coverage of g, reproducibility from the seed, and shrinkage with n.
import { describe, expect, it } from 'vitest';
import {
  hedgesG,
  hedgesGFamily,
  hedgesJ,
  partialEtaSquared,
} from '../../../electron/engine/stats/effect-size.ts';
import { createRng } from '../../../electron/engine/random.ts';
import { golden } from './golden.ts';

const ref = golden<{ cases: Array<{ a: number[]; b: number[]; J: number; g: number; J_approx: number }> }>(
  'hedges.json',
);

function normal(rng: ReturnType<typeof createRng>): number {
  // Box–Muller.
  return Math.sqrt(-2 * Math.log(1 - rng.next())) * Math.cos(2 * Math.PI * rng.next());
}

describe("Hedges' g", () => {
  it('matches the numpy/scipy evaluation, exact J', () => {
    for (const c of ref.cases) {
      expect(hedgesJ(c.a.length + c.b.length - 2)).toBeCloseTo(c.J, 12);
      expect(hedgesG(c.a, c.b)).toBeCloseTo(c.g, 12);
      // The common approximation 1 − 3/(4ν − 1) is close to the exact J (Hedges 1981).
      expect(Math.abs(c.J - c.J_approx)).toBeLessThan(0.01);
    }
  });

  it('family version: same g, a seeded percentile interval around it', () => {
    const rng = createRng(4);
    const n = 40;
    const group = Int32Array.from({ length: n }, (_, i) => (i < 18 ? 0 : 1));
    const features = [0, 0.8, -1.5].map((shift) =>
      Array.from(group, (g) => normal(rng) + (g === 0 ? shift : 0)),
    );
    const res = hedgesGFamily(features, group, 0, 1, { seed: 9, bootstrap: 1000 });
    const again = hedgesGFamily(features, group, 0, 1, { seed: 9, bootstrap: 1000 });
    features.forEach((y, j) => {
      const a = y.filter((_, i) => group[i] === 0);
      const b = y.filter((_, i) => group[i] === 1);
      expect(res.g[j]).toBeCloseTo(hedgesG(a, b), 14);
      expect(res.low[j]).toBeLessThan(res.g[j]);
      expect(res.high[j]).toBeGreaterThan(res.g[j]);
      expect(again.low[j]).toBe(res.low[j]);
      expect(again.high[j]).toBe(res.high[j]);
      // Large-sample SE of g ≈ √(1/n1 + 1/n2 + g²/(2(n1+n2))) (Hedges & Olkin 1985): width ≈ 2·1.96·SE.
      const se = Math.sqrt(1 / 18 + 1 / 22 + (res.g[j] * res.g[j]) / (2 * n));
      const width = res.high[j] - res.low[j];
      expect(width).toBeGreaterThan(2 * 1.96 * se * 0.7);
      expect(width).toBeLessThan(2 * 1.96 * se * 1.4);
    });
    expect(res.seed).toBe(9);
    expect(res.bootstrap).toBe(1000);
  });

  it('partial η² from F', () => {
    // F = 4, df (2, 20): SS_effect/SS_error = 4·2/20 = 0.4 → η²p = 0.4/1.4.
    expect(partialEtaSquared(4, 2, 20)).toBeCloseTo(0.4 / 1.4, 15);
  });
});
