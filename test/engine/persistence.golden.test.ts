/**
 * The engine's diagrams against reference diagrams computed by two external tools:
 * the `ripser` binary (Debian 1.2.1) and GUDHI 3.7.1 (RipsComplex + SimplexTree over GF(2)).
 * test/reference/make_persistence_goldens.py generated the seeded matrices, ran both tools,
 * checked that they agree, and wrote one golden per case. Values are compared exactly after
 * float32 rounding (ripser's precision), with zero-length intervals ignored.
 */
import { describe, expect, it } from 'vitest';
import { computePersistence } from '../../electron/engine/persistence.ts';
import { canonical, diagramDifference, distancesOf, loadGoldens } from './support/diagrams.ts';

const goldens = loadGoldens();

describe('persistence diagrams vs ripser 1.2.1 and GUDHI 3.7.1 (test/reference/goldens/persistence)', () => {
  it('has the full reference set', () => {
    expect(goldens.length).toBeGreaterThanOrEqual(40);
    for (const g of goldens) {
      expect(g.lower.length, g.name).toBe((g.n * (g.n - 1)) / 2);
      expect(g.diagrams.length, g.name).toBe(g.maxDim + 1);
      expect(g.source.ripser, g.name).toMatch(/^1\.2\.1/);
      expect(g.source.gudhi, g.name).toBe('3.7.1');
    }
  });

  for (const g of goldens) {
    const label = `${g.name} (n = ${g.n}, H0–H${g.maxDim}, ${g.threshold === null ? 'no cap' : `cap ${g.threshold}`})`;
    it(`${label} matches ripser 1.2.1 / GUDHI 3.7.1`, () => {
      const result = computePersistence(distancesOf(g), {
        maxDim: g.maxDim,
        cap: g.threshold === null ? { kind: 'none' } : { kind: 'distance', value: g.threshold },
      });
      expect(result.diagrams.length).toBe(g.maxDim + 1);
      for (let dim = 0; dim <= g.maxDim; dim++) {
        const ours = canonical(result.diagrams[dim]);
        const ref = canonical(g.diagrams[dim]);
        const diff = diagramDifference(ours, ref);
        expect(diff, `${g.name} H${dim}: ${diff}`).toBe('');
        expect(ours).toEqual(ref);
      }
    });
  }
});
