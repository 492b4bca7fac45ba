// Clopper–Pearson intervals vs statsmodels proportion_confint(method='beta') and scipy.stats.beta.ppf
// (goldens: test/validation/binomial-reference.json, made by make_binomial_reference.py).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { betaQuantile, clopperPearson } from './binomial.ts';

interface Reference {
  cases: Array<{ k: number; n: number; level: number; low: number; high: number }>;
}
const reference = JSON.parse(
  readFileSync(new URL('./binomial-reference.json', import.meta.url), 'utf8'),
) as Reference;

describe('Clopper–Pearson interval', () => {
  it('matches statsmodels/scipy on every reference case (k = 0 and k = n included)', () => {
    expect(reference.cases.length).toBeGreaterThan(10);
    for (const c of reference.cases) {
      const [low, high] = clopperPearson(c.k, c.n, c.level);
      expect(low).toBeCloseTo(c.low, 10);
      expect(high).toBeCloseTo(c.high, 10);
    }
  });
  it('inverts the Beta distribution: Beta(1, 1) is uniform', () => {
    expect(betaQuantile(0.3, 1, 1)).toBeCloseTo(0.3, 14);
  });
  it('rejects impossible counts', () => {
    expect(() => clopperPearson(5, 4, 0.95)).toThrow(/0 ≤ k ≤ n/);
    expect(() => clopperPearson(1, 4, 1)).toThrow(/level/);
  });
});
