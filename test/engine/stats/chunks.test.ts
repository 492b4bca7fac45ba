// Permutations in fixed chunks (relabel.ts, PERMUTATION_CHUNK): every chunk draws from a stream
// seeded by (seed, chunk) alone, and exact enumeration is cut by index ranges, so any split of the
// chunks, in any order, visits the same arrangements as the whole run; the chunked, vectorised
// test merges to the same p-values as one pass. The p-values of a random run over several chunks
// are checked against scipy.stats.ttest_ind applied to each visited arrangement (live; skipped
// without /usr/bin/python3 and scipy).
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { createRng, shuffle } from '../../../electron/engine/random.ts';
import { buildDesign } from '../../../electron/engine/stats/design.ts';
import {
  finishPermutationTest,
  permutationChunk,
  permutationTest,
  preparePermutationTest,
} from '../../../electron/engine/stats/permutation.ts';
import {
  chunkCount,
  chunkRange,
  chunkSeed,
  forEachBlockPermutation,
  forEachRelabelling,
  PERMUTATION_CHUNK,
} from '../../../electron/engine/stats/relabel.ts';
import { runStatisticsTask } from '../../../electron/workers/statistics.ts';
import { distanceRowRanges, pairsBefore } from '../../../electron/workers/statistics.ts';

const labels = Array.from({ length: 12 }, (_, i) => (i % 3 === 0 ? 1 : 0));
/** C(20, 7) = 77520 arrangements: random draws for any B used here. */
const many = Array.from({ length: 20 }, (_, i) => (i % 3 === 0 ? 1 : 0));

function visits(run: (visit: (a: Int32Array) => void) => unknown): string[] {
  const out: string[] = [];
  run((a) => out.push(a.join(',')));
  return out;
}

function features(m: number, n: number, seed: number): Float64Array[] {
  const rng = createRng(seed);
  return Array.from({ length: m }, (_, j) =>
    Float64Array.from({ length: n }, (_, i) => rng.next() + (j % 2 === 0 && i % 3 === 0 ? 0.3 : 0)),
  );
}

describe('chunked permutation streams', () => {
  it('any split of the chunks, in any order, visits the same arrangements as the whole run', () => {
    const B = 3 * PERMUTATION_CHUNK + 17;
    const whole = visits((v) => forEachRelabelling(many, B, 9, v));
    expect(whole).toHaveLength(B);
    expect(chunkCount(B)).toBe(4);
    const parts = [3, 1, 0, 2].map((c) => visits((v) => forEachRelabelling(many, B, 9, v, chunkRange(c, B))));
    expect([...parts[2], ...parts[1], ...parts[3], ...parts[0]]).toEqual(whole);
    // A range that starts inside a chunk continues that chunk's stream.
    expect(visits((v) => forEachRelabelling(many, B, 9, v, { from: 300, to: 700 }))).toEqual(
      whole.slice(300, 700),
    );
  });

  it('chunk 0 is the seed’s own stream; other chunks use distinct seeds', () => {
    const rng = createRng(4);
    const arr = Int32Array.from(many);
    const expected: string[] = [];
    for (let b = 0; b < 50; b++) {
      shuffle(arr, rng);
      expected.push(arr.join(','));
    }
    expect(visits((v) => forEachRelabelling(many, 50, 4, v))).toEqual(expected);
    const seeds = new Set(Array.from({ length: 1000 }, (_, c) => chunkSeed(4, c)));
    expect(seeds.size).toBe(1000);
  });

  it('exact enumeration split by index ranges covers every arrangement once: C(12, 4) = 495', () => {
    // C(12, 4) = 495 (binomial coefficient, common practice).
    const whole = visits((v) => forEachRelabelling(labels, 1000, 1, v));
    expect(whole).toHaveLength(495);
    expect(new Set(whole).size).toBe(495);
    const split = [1, 0].flatMap((c) =>
      visits((v) => forEachRelabelling(labels, 1000, 1, v, chunkRange(c, 495))),
    );
    expect([...split.slice(495 - 256), ...split.slice(0, 495 - 256)]).toEqual(whole);
  });

  it('block permutations (random and exact) split the same way', () => {
    const ex = {
      scheme: 'within-and-whole-blocks' as const,
      members: [
        [0, 1],
        [2, 3],
        [4, 5],
        [6, 7],
        [8, 9],
      ],
      classes: Int32Array.from([0, 0, 0, 0, 0]),
    };
    // 5!·2⁵ = 3840 elements: random below that, exact above.
    for (const B of [700, 4000]) {
      const whole = visits((v) => forEachBlockPermutation(ex, 10, B, 3, v));
      const total = whole.length;
      // Chunks visited last to first, then put back in order.
      const k = chunkCount(total);
      const parts = Array.from({ length: k }, (_, c) =>
        visits((v) => forEachBlockPermutation(ex, 10, B, 3, v, chunkRange(k - 1 - c, total))),
      );
      expect(parts.reverse().flat()).toEqual(whole);
      if (B === 4000) expect(new Set(whole).size).toBe(3840);
    }
  });
});

describe('chunked permutation test', () => {
  const n = labels.length;
  const d = buildDesign(
    labels.map((g, i) => ({ id: `s${i}`, covariates: { dx: g === 1 ? 'b' : 'a', age: (i * 7) % 11 } })),
    { groupColumn: 'dx', covariates: ['age'] },
  );
  const ys = features(9, n, 21);

  it('chunks merged in any order (and run as worker tasks) equal the one-pass test', () => {
    const options = { permutations: 700, seed: 5 };
    const one = permutationTest(d.columns, d.contrasts[0], ys, options);
    const prep = preparePermutationTest(d.columns, d.contrasts[0], ys, options);
    expect(prep.chunks).toBe(3);
    const chunks = [2, 0, 1].map((c) => permutationChunk(prep, c));
    const merged = finishPermutationTest(prep, chunks);
    const reply = runStatisticsTask({
      kind: 'permutation-chunks',
      taskId: 1,
      columns: d.columns,
      contrast: d.contrasts[0],
      features: ys,
      exchangeability: null,
      invariantColumns: [],
      permutations: 700,
      seed: 5,
      chunks: [1, 2, 0],
    });
    if (reply.kind !== 'permutation-chunks') throw new Error('wrong reply');
    const viaTask = finishPermutationTest(prep, reply.chunks);
    for (const r of [merged, viaTask]) {
      expect(Array.from(r.pUncorrected)).toEqual(Array.from(one.pUncorrected));
      expect(Array.from(r.pFwer)).toEqual(Array.from(one.pFwer));
      expect(Array.from(r.maxNull)).toEqual(Array.from(one.maxNull));
    }
    expect(() => finishPermutationTest(prep, chunks.slice(1))).toThrow(/chunk 2 is missing/);
  });

  it('label permutation over 3 chunks: p and max-statistic FWER as scipy ttest_ind on each visited arrangement', () => {
    const py = spawnSync('/usr/bin/python3', ['-c', 'import scipy'], { encoding: 'utf8' });
    if (py.status !== 0) return; // live check: scipy absent
    const m = many.length;
    const plain = buildDesign(
      many.map((g, i) => ({ id: `s${i}`, covariates: { dx: g === 1 ? 'b' : 'a' } })),
      { groupColumn: 'dx', covariates: [] },
    );
    const y20 = features(5, m, 33);
    const B = 600;
    const res = permutationTest(plain.columns, plain.contrasts[0], y20, { permutations: B, seed: 8 });
    expect(res.run.mode).toBe('random');
    expect(chunkCount(B)).toBe(3);
    // The test permutes design-row types numbered by first appearance; the same draws here give
    // each visited arrangement as a group vector.
    const typeOf = new Map<number, number>();
    const groupOfType: number[] = [];
    const keys = Array.from(plain.group, (g) => {
      if (!typeOf.has(g)) {
        typeOf.set(g, groupOfType.length);
        groupOfType.push(g);
      }
      return typeOf.get(g)!;
    });
    const arrangements: number[][] = [];
    forEachRelabelling(keys, B, 8, (a) => arrangements.push(Array.from(a, (t) => groupOfType[t])));
    const b = plain.levels.indexOf('b');
    const script = `
import json, sys
import numpy as np
from scipy.stats import ttest_ind
d = json.load(sys.stdin)
ys = np.array(d['ys']); g0 = np.array(d['group']); b = d['b']
def t(g):
    return np.array([ttest_ind(y[g == b], y[g != b]).statistic for y in ys])
obs = np.abs(t(g0))
perm = np.array([np.abs(t(np.array(a))) for a in d['arrangements']])
tol = 1e-10 * np.maximum(1, obs)
count = (perm >= obs - tol).sum(axis=0)
mx = perm.max(axis=1)
fwer = [(1 + (mx >= o - 1e-10 * max(1, o)).sum()) / (1 + len(mx)) for o in obs]
print(json.dumps({'p': ((1 + count) / (1 + len(perm))).tolist(), 'fwer': fwer}))
`;
    const out = spawnSync('/usr/bin/python3', ['-c', script], {
      input: JSON.stringify({
        ys: y20.map((y) => Array.from(y)),
        group: Array.from(plain.group),
        arrangements,
        b,
      }),
      encoding: 'utf8',
    });
    expect(out.status, out.stderr).toBe(0);
    const ref = JSON.parse(out.stdout) as { p: number[]; fwer: number[] };
    expect(Array.from(res.pUncorrected)).toEqual(ref.p);
    expect(Array.from(res.pFwer)).toEqual(ref.fwer);
  });
});

describe('distance rows', () => {
  it('row ranges cover the lower triangle once, in order, with similar pair counts', () => {
    for (const [n, parts] of [
      [30, 8],
      [5, 8],
      [2, 1],
      [61, 3],
    ]) {
      const r = distanceRowRanges(n, parts);
      expect(r[0][0]).toBe(1);
      expect(r.at(-1)![1]).toBe(n);
      for (let k = 1; k < r.length; k++) expect(r[k][0]).toBe(r[k - 1][1]);
      expect(r.reduce((a, [f, t]) => a + pairsBefore(t) - pairsBefore(f), 0)).toBe(pairsBefore(n));
    }
  });
});
