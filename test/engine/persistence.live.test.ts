/**
 * Live cross-check against the `ripser` binary (Debian 1.2.1) on fresh seeded matrices:
 * the same 6-digit decimals go to ripser (through a temp file) and to the engine, and the
 * diagrams must agree exactly after float32 rounding, zero-length intervals ignored.
 * Skipped when ripser is not on PATH (CI installs it).
 */
import { describe, expect, it } from 'vitest';
import { computePersistence } from '../../electron/engine/persistence.ts';
import { createRng } from '../../electron/engine/random.ts';
import { canonical, diagramDifference } from './support/diagrams.ts';
import { quantileCap, randomCase } from './support/random-matrices.ts';
import type { MatrixKind, RandomCase } from './support/random-matrices.ts';
import { ripserAvailable, runRipser } from './support/ripser.ts';

const haveRipser = ripserAvailable();

function crossCheck(c: RandomCase, maxDim: 1 | 2, cap: string | null): void {
  const ref = runRipser(c.text, c.n, maxDim, cap);
  const ours = computePersistence(
    { n: c.n, values: c.values },
    { maxDim, cap: cap === null ? { kind: 'none' } : { kind: 'distance', value: Number(cap) } },
  );
  for (let dim = 0; dim <= maxDim; dim++) {
    const a = canonical(ours.diagrams[dim]);
    const b = canonical(ref.diagrams[dim]);
    const diff = diagramDifference(a, b);
    expect(diff, `H${dim} vs \`${ref.command}\`: ${diff}`).toBe('');
    expect(a).toEqual(b);
  }
}

const fixed: Array<{ kind: MatrixKind; n: number; maxDim: 1 | 2; capQuantile: number | null; seed: number }> =
  [
    { kind: 'euclidean', n: 150, maxDim: 1, capQuantile: null, seed: 101 },
    { kind: 'nonmetric', n: 150, maxDim: 1, capQuantile: 0.08, seed: 102 },
    { kind: 'ties', n: 40, maxDim: 2, capQuantile: null, seed: 103 },
    { kind: 'nonmetric', n: 40, maxDim: 2, capQuantile: 0.3, seed: 104 },
    { kind: 'euclidean', n: 40, maxDim: 2, capQuantile: 0.25, seed: 105 },
    { kind: 'ties', n: 60, maxDim: 1, capQuantile: 0.4, seed: 106 },
    { kind: 'correlation', n: 80, maxDim: 1, capQuantile: null, seed: 107 },
    { kind: 'correlation', n: 30, maxDim: 2, capQuantile: 0.35, seed: 108 },
  ];

describe.skipIf(!haveRipser)('persistence diagrams vs live ripser 1.2.1', () => {
  for (const f of fixed) {
    const capText = f.capQuantile === null ? 'no cap' : `cap at ${f.capQuantile} quantile`;
    it(`${f.kind} n = ${f.n}, H0–H${f.maxDim}, ${capText} (seed ${f.seed})`, () => {
      const c = randomCase(f.kind, f.n, f.seed);
      crossCheck(c, f.maxDim, f.capQuantile === null ? null : quantileCap(c, f.capQuantile));
    });
  }

  it('40 small random matrices of every kind, H0–H2, with and without caps', () => {
    const kinds: MatrixKind[] = ['euclidean', 'nonmetric', 'ties', 'correlation'];
    const rng = createRng(2026);
    for (let t = 0; t < 40; t++) {
      const kind = kinds[t % kinds.length];
      const n = 4 + rng.int(22);
      const c = randomCase(kind, n, 5000 + t);
      const cap = rng.next() < 0.5 ? null : quantileCap(c, 0.2 + 0.6 * rng.next());
      crossCheck(c, 2, cap);
    }
  });
});
