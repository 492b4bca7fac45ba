/**
 * Curves and diagram summaries against GUDHI 3.7.1 (goldens from test/reference/make_feature_refs.py):
 * simplex counts of a gudhi SimplexTree (RipsComplex), gudhi.representations BettiCurve, Landscape,
 * Entropy, and NumPy interval statistics. Each case's diagrams come from gudhi
 * too; the feature functions are fed those, and the Betti curves are also checked on the diagrams
 * of our own engine.
 */
import { describe, expect, it } from 'vitest';
import { bettiArea, bettiCurve } from '../../../electron/engine/features/betti.ts';
import { eulerArea, eulerCurve, simplexCountCurves } from '../../../electron/engine/features/euler.ts';
import { intervalStats, persistentEntropy } from '../../../electron/engine/features/interval-stats.ts';
import { landscapeNorms, landscapes } from '../../../electron/engine/features/landscape.ts';
import { computePersistence } from '../../../electron/engine/persistence.ts';
import { closeArrays, curves, distancesOf, intervalsOf } from './goldens.ts';

describe('feature goldens', () => {
  it('come from the reference tools named in the script', () => {
    expect(curves.source.gudhi).toBe('3.7.1');
    expect(curves.cases.length).toBeGreaterThanOrEqual(4);
    expect(curves.cases.some((c) => c.maxDim === 2)).toBe(true);
  });
});

for (const c of curves.cases) {
  describe(`${c.name} (n = ${c.n}, H0–H${c.maxDim})`, () => {
    const d = distancesOf(c);
    const ours = computePersistence(d, { maxDim: c.maxDim });

    it('simplex counts by diameter equal those of a gudhi SimplexTree (RipsComplex)', () => {
      const counts = simplexCountCurves(d, c.grid, c.topDim);
      expect(counts.map((x) => Array.from(x))).toEqual(c.simplexCounts);
      expect(Array.from(eulerCurve(d, c.grid, c.topDim))).toEqual(c.euler);
    });

    it('the exact Euler-curve integral equals the sum over gudhi simplices', () => {
      const a = c.grid[0];
      const b = c.grid[c.grid.length - 1];
      expect(eulerArea(d, a, b, c.topDim)).toBeCloseTo(c.eulerArea, 9);
    });

    it('Euler–Poincaré: χ_K = Σ_{k<K} (−1)^k β_k (our engine) + (−1)^K β_K of the K-skeleton (gudhi)', () => {
      // K = maxDim + 1. For k < K the skeleton's H_k equals the full complex's (H_k needs simplices
      // of dimension ≤ k + 1 only), so our engine's Betti curves enter; the top term is the number
      // of K-cycles of the skeleton, which no engine output holds: gudhi's persistence_dim_max=True.
      const chi = eulerCurve(d, c.grid, c.topDim);
      const sign = c.topDim % 2 === 0 ? 1 : -1;
      const sum = new Float64Array(c.grid.length);
      for (let k = 0; k < c.topDim; k++) {
        const beta = bettiCurve(ours.diagrams[k], c.grid);
        for (let g = 0; g < sum.length; g++) sum[g] += (k % 2 === 0 ? 1 : -1) * beta[g];
      }
      for (let g = 0; g < sum.length; g++) sum[g] += sign * c.skeletonBetti[c.topDim][g];
      expect(Array.from(chi)).toEqual(Array.from(sum));
    });

    for (const dg of c.dims) {
      const diagram = intervalsOf(dg.diagram);

      it(`H${dg.dim} Betti curve equals gudhi BettiCurve (predefined grid), on gudhi's and on our diagram`, () => {
        expect(Array.from(bettiCurve(diagram, c.grid))).toEqual(dg.betti);
        expect(Array.from(bettiCurve(ours.diagrams[dg.dim], c.grid))).toEqual(dg.betti);
      });

      it(`H${dg.dim} Betti area: the exact integral is within h · (endpoints in range) of the left Riemann sum of gudhi's curve`, () => {
        const a = c.grid[0];
        const b = c.grid[c.grid.length - 1];
        const area = bettiArea(diagram, a, b);
        // β is a step function; on a grid cell [t_g, t_g+1) it differs from its left sample only
        // where an interval endpoint falls inside the cell, by 1 over at most h per endpoint.
        const h = c.grid[1] - c.grid[0];
        let left = 0;
        for (let g = 0; g + 1 < c.grid.length; g++) left += dg.betti[g] * h;
        let endpoints = 0;
        for (const iv of diagram) {
          if (iv.birth > a && iv.birth < b) endpoints++;
          if (iv.death > a && iv.death < b) endpoints++;
        }
        expect(Math.abs(area - left)).toBeLessThanOrEqual(endpoints * h + 1e-12);
        expect(area).toBeGreaterThanOrEqual(0);
      });

      it(`H${dg.dim} landscapes × √2 equal gudhi Landscape (its √2 scaling), norms equal NumPy trapz`, () => {
        const levels = dg.landscapes.length;
        const lam = landscapes(diagram, c.grid, levels);
        for (let k = 0; k < levels; k++) {
          const scaled = Array.from(lam[k], (x) => x * Math.SQRT2);
          expect(closeArrays(scaled, dg.landscapes[k]), `λ${k + 1}`).toBe('');
          const { l1, l2 } = landscapeNorms(lam[k], c.grid);
          expect(l1).toBeCloseTo(dg.landscape_l1[k], 9);
          expect(l2).toBeCloseTo(dg.landscape_l2[k], 9);
        }
      });

      it(`H${dg.dim} persistent entropy and interval statistics equal gudhi Entropy and NumPy`, () => {
        const s = intervalStats(diagram, 0);
        const ref = dg.stats;
        expect(s.count).toBe(ref.count);
        expect(s.countEssential).toBe(ref.count_essential);
        expect(s.totalPersistenceP1).toBeCloseTo(ref.total_p1!, 10);
        expect(s.totalPersistenceP2).toBeCloseTo(ref.total_p2!, 10);
        expect(s.maxPersistence).toBeCloseTo(ref.max!, 12);
        const pairs: Array<[number, number | null]> = [
          [s.meanBirth, ref.mean_birth],
          [s.medianBirth, ref.median_birth],
          [s.meanDeath, ref.mean_death],
          [s.medianDeath, ref.median_death],
          [s.meanLifetime, ref.mean_lifetime],
          [s.medianLifetime, ref.median_lifetime],
        ];
        for (const [mine, theirs] of pairs) {
          if (theirs === null) expect(mine).toBeNaN();
          else expect(mine).toBeCloseTo(theirs, 12);
        }
        if (dg.entropy === null) expect(persistentEntropy(diagram)).toBeNaN();
        else expect(persistentEntropy(diagram)).toBeCloseTo(dg.entropy, 12);
      });
    }
  });
}
