// Comparisons of two filtrations. Percentile ranks are checked live against
// scipy.stats.percentileofscore(kind='mean') and per-dimension W2 distances against scipy's
// linear_sum_assignment through test/reference/make_stats_refs.py --live (Debian's /usr/bin/python3);
// the cycle matches and the node ranking against hand-worked cases.
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { createRng } from '../../../electron/engine/random.ts';
import {
  diagramDistances,
  matchCycles,
  percentileRank,
  rankedNodeDifferences,
  wholeDiagramMetric,
} from '../../../electron/engine/stats/compare.ts';
import type { DiagramInput } from '../../../electron/engine/stats/diagram-distance.ts';

const python = '/usr/bin/python3';
const script = fileURLToPath(new URL('../../reference/make_stats_refs.py', import.meta.url));
const available =
  spawnSync(python, ['-c', 'import scipy.stats, scipy.optimize'], { encoding: 'utf8' }).status === 0;

describe('percentileRank', () => {
  it('counts ties half (worked by hand: 3 in [1, 2, 3, 4] → (2 + 0.5) / 4)', () => {
    expect(percentileRank([1, 2, 3, 4], 3)).toBe(62.5);
    expect(percentileRank([1, 2, 3, 4], 0)).toBe(0);
    expect(percentileRank([1, 2, 3, 4], 9)).toBe(100);
    expect(percentileRank([NaN, 2, 2], 2)).toBe(50);
    expect(percentileRank([NaN], 2)).toBeNull();
    expect(percentileRank([1], NaN)).toBeNull();
  });

  it.skipIf(!available)('equals scipy.stats.percentileofscore(kind="mean") on 60 tie-heavy samples', () => {
    const rng = createRng(7);
    const cases = Array.from({ length: 60 }, (_, i) => ({
      values: Array.from({ length: 1 + rng.int(40) }, () => Math.round(rng.next() * (i % 2 ? 5 : 1000))),
      x: Math.round(rng.next() * (i % 2 ? 5 : 1000)),
    }));
    const code =
      'import json,sys\nfrom scipy.stats import percentileofscore\n' +
      'print(json.dumps([float(percentileofscore(c["values"], c["x"], kind="mean")) for c in json.load(sys.stdin)]))';
    const run = spawnSync(python, ['-c', code], { input: JSON.stringify(cases), encoding: 'utf8' });
    expect(run.status, run.stderr).toBe(0);
    const ref = JSON.parse(run.stdout) as number[];
    cases.forEach((c, i) => expect(percentileRank(c.values, c.x)).toBeCloseTo(ref[i], 10));
  });
});

describe('diagramDistances', () => {
  it('uses the whole-diagram tests’ rule: exact W2 up to 60 scans, sliced beyond', () => {
    expect(wholeDiagramMetric(60)).toEqual({ kind: 'wasserstein', p: 2 });
    expect(wholeDiagramMetric(61)).toEqual({ kind: 'sliced-wasserstein' });
  });

  it('drops essential classes and compares dimension by dimension (hand-worked)', () => {
    // H0: [0,1] vs [0,2]: matched at L∞ distance 1. H1: [0.2,0.5] vs nothing: to the diagonal at 0.15.
    const a: DiagramInput[] = [
      [
        [0, 1],
        [0, null],
      ],
      [[0.2, 0.5]],
    ];
    const b: DiagramInput[] = [
      [
        [0, 2],
        [0, null],
      ],
      [],
    ];
    const [h0, h1] = diagramDistances(a, b, { kind: 'wasserstein', p: 2 });
    expect(h0).toBeCloseTo(1, 12);
    expect(h1).toBeCloseTo(0.15, 12);
    expect(diagramDistances(a, [b[0]], { kind: 'wasserstein', p: 2 })).toHaveLength(1);
  });

  it.skipIf(!available)('per dimension equals W2 from scipy’s linear_sum_assignment', () => {
    const rng = createRng(11);
    const diagram = (k: number) =>
      Array.from({ length: k }, () => {
        const b = rng.next();
        return [b, b + rng.next() * 0.5] as [number, number];
      });
    const pairs = Array.from({ length: 12 }, () => ({ a: diagram(rng.int(25)), b: diagram(rng.int(25)) }));
    const run = spawnSync(python, [script, '--live'], { input: JSON.stringify(pairs), encoding: 'utf8' });
    expect(run.status, run.stderr).toBe(0);
    const ref = JSON.parse(run.stdout) as Array<{ w2: number }>;
    const got = diagramDistances(
      pairs.map((p) => p.a),
      pairs.map((p) => p.b),
      { kind: 'wasserstein', p: 2 },
    );
    got.forEach((d, i) => expect(d).toBeCloseTo(ref[i].w2, 10));
  });
});

describe('matchCycles', () => {
  it('finds the cycle through the same regions, else the largest Jaccard overlap, else none', () => {
    const a = [{ nodes: [1, 2, 3, 4] }, { nodes: [7, 8, 9] }, { nodes: [20, 21, 22] }];
    const b = [
      { nodes: [3, 4, 5, 6], birth: 0.1, death: 0.2 },
      { nodes: [4, 3, 2, 1], birth: 0.3, death: 0.4 },
      { nodes: [8, 9, 10], birth: 0.1, death: 0.15 },
      { nodes: [9, 7, 11], birth: 0.1, death: 0.5 },
    ];
    expect(matchCycles(a, b)).toEqual([
      { a: 0, b: 1, overlap: 1 },
      // {8,9,10} and {7,9,11} both overlap {7,8,9} in 2 of 4 regions: the more persistent wins.
      { a: 1, b: 3, overlap: 0.5 },
      { a: 2, b: null, overlap: 0 },
    ]);
  });
});

describe('rankedNodeDifferences', () => {
  it('ranks regions by |b − a|, missing values last', () => {
    const rows = rankedNodeDifferences([1, 5, NaN, 2], [1.5, 1, 3, 2]);
    expect(rows.map((r) => r.node)).toEqual([1, 0, 3, 2]);
    expect(rows[0]).toEqual({ node: 1, a: 5, b: 1, difference: -4 });
    expect(rows[3]).toEqual({ node: 2, a: null, b: 3, difference: null });
    expect(() => rankedNodeDifferences([1], [1, 2])).toThrow(/1 and 2 regions/);
  });
});
