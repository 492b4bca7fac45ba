/**
 * Adjusted Rand index against sklearn.metrics.adjusted_rand_score 1.2.1 and average-linkage
 * clustering on cosine distance against scipy.cluster.hierarchy 1.10.1 (linkage(method='average',
 * metric='cosine') + fcluster(criterion='maxclust')); goldens from test/reference/make_feature_refs.py.
 */
import { describe, expect, it } from 'vitest';
import {
  averageLinkage,
  clusterRows,
  cosineDistances,
  cutTree,
} from '../../../electron/engine/features/clustering.ts';
import { adjustedRandIndex } from '../../../electron/engine/features/rand-index.ts';
import { closeArrays, partitions } from './goldens.ts';

/** Labels renumbered by first appearance, so two labelings of the same partition compare equal. */
function canonicalLabels(labels: ArrayLike<number>): number[] {
  const names = new Map<number, number>();
  return Array.from(labels, (x) => {
    if (!names.has(x)) names.set(x, names.size);
    return names.get(x)!;
  });
}

describe('adjusted Rand index vs sklearn 1.2.1', () => {
  it('uses the recorded reference version', () => expect(partitions.source.sklearn).toBe('1.2.1'));
  partitions.ari.forEach((c, i) => {
    it(`case ${i + 1} (n = ${c.a.length})`, () => {
      expect(adjustedRandIndex(c.a, c.b)).toBeCloseTo(c.ari, 12);
      expect(adjustedRandIndex(c.b, c.a)).toBeCloseTo(c.ari, 12); // symmetric
    });
  });
});

describe('ARI by hand (Hubert & Arabie 1985)', () => {
  it('is 1 for the same partition under other names, and for two one-cluster partitions', () => {
    expect(adjustedRandIndex([0, 0, 1, 1, 2], ['b', 'b', 'a', 'a', 'c'])).toBe(1);
    expect(adjustedRandIndex([1, 1, 1], [7, 7, 7])).toBe(1);
  });
  it('is −1/2 for a = {12}{34}, b = {13}{24}', () => {
    // contingency all ones: Σ C(nij,2) = 0; Σ C(ai,2) = Σ C(bj,2) = 2; C(4,2) = 6; E = 4/6;
    // ARI = (0 − 2/3) / (2 − 2/3) = −1/2.
    expect(adjustedRandIndex([0, 0, 1, 1], [0, 1, 0, 1])).toBeCloseTo(-0.5, 15);
  });
  it('rejects partitions of different length', () => {
    expect(() => adjustedRandIndex([0, 1], [0])).toThrow(/differ in length/);
  });
});

describe('average-linkage clustering on cosine distance vs SciPy 1.10.1', () => {
  partitions.clusterings.forEach((c, i) => {
    it(`case ${i + 1} (${c.rows} rows × ${c.cols}, k = ${c.k}): merge heights and the k-cut`, () => {
      const values = Float64Array.from(c.values);
      const steps = averageLinkage(cosineDistances(values, c.rows, c.cols), c.rows);
      // SciPy's linkage heights are non-decreasing in merge order for average linkage; ours too.
      expect(
        closeArrays(
          steps.map((s) => s.height),
          c.heights,
          1e-10,
        ),
      ).toBe('');
      const labels = clusterRows({ rows: c.rows, cols: c.cols, values }, c.k);
      expect(canonicalLabels(labels)).toEqual(canonicalLabels(c.labels));
      expect(new Set(labels).size).toBe(c.k);
    });
  });

  it('by hand: three points on a line', () => {
    // d(0,1) = 1, d(0,2) = 4, d(1,2) = 3: {0,1} merge at 1; then d({0,1}, 2) = (4 + 3) / 2 = 3.5.
    const steps = averageLinkage(Float64Array.of(0, 1, 4, 1, 0, 3, 4, 3, 0), 3);
    expect(steps).toEqual([
      { a: 0, b: 1, height: 1, size: 2 },
      { a: 0, b: 2, height: 3.5, size: 3 },
    ]);
    expect(Array.from(cutTree(steps, 3, 2))).toEqual([0, 0, 1]);
    expect(Array.from(cutTree(steps, 3, 3))).toEqual([0, 1, 2]);
    expect(Array.from(cutTree(steps, 3, 1))).toEqual([0, 0, 0]);
  });

  it('cosine distance: zero rows sit together, at 1 from the rest', () => {
    const d = cosineDistances(Float64Array.of(1, 0, 0, 0, 0, 0, 1, 1), 4, 2);
    expect(d[0 * 4 + 3]).toBeCloseTo(1 - 1 / Math.SQRT2, 15);
    expect(d[1 * 4 + 2]).toBe(0);
    expect(d[0 * 4 + 1]).toBe(1);
  });
});
