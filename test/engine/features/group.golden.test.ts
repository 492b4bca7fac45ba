/**
 * Group-mean matrix against NumPy 1.24.2 (tanh of the mean arctanh; plain mean), quantiles against
 * numpy.percentile (linear interpolation, the default); goldens from
 * test/reference/make_feature_refs.py. Bootstrap bands are checked for their defining properties.
 */
import { describe, expect, it } from 'vitest';
import { curveBands, groupMeanMatrix, quantileSorted } from '../../../electron/engine/features/group.ts';
import { closeArrays, group } from './goldens.ts';

const mats = group.matrices.map((m) => ({ n: group.n, values: Float64Array.from(m) }));

describe('group-mean matrix', () => {
  it('Fisher-z mean equals NumPy tanh(mean(arctanh r)) with a unit diagonal', () => {
    const m = groupMeanMatrix(mats, 'correlation');
    expect(closeArrays(m.values, group.fisherMean, 1e-12)).toBe('');
  });
  it('plain mean equals NumPy mean (distances, weights)', () => {
    expect(closeArrays(groupMeanMatrix(mats, 'plain').values, group.plainMean, 1e-12)).toBe('');
  });
  it('by hand: r = 0.5 and 0.9 average to tanh((atanh .5 + atanh .9)/2) ≈ 0.7661, not 0.7', () => {
    const m = groupMeanMatrix(
      [
        { n: 2, values: Float64Array.of(1, 0.5, 0.5, 1) },
        { n: 2, values: Float64Array.of(1, 0.9, 0.9, 1) },
      ],
      'correlation',
    );
    expect(m.values[1]).toBeCloseTo(Math.tanh((Math.atanh(0.5) + Math.atanh(0.9)) / 2), 15);
    expect(m.values[1]).toBeCloseTo(0.7661, 4); // atanh: 0.5493, 1.4722; mean 1.0108
    expect(m.values[0]).toBe(1);
  });
  it('skips NaN cells (dead regions) per subject, keeps ±1 finite, and names a bad matrix', () => {
    const m = groupMeanMatrix(
      [
        { n: 2, values: Float64Array.of(1, NaN, NaN, 1) },
        { n: 2, values: Float64Array.of(1, 1, 1, 1) },
      ],
      'correlation',
    );
    expect(m.values[1]).toBeCloseTo(1, 10);
    expect(Number.isFinite(m.values[1])).toBe(true);
    expect(() =>
      groupMeanMatrix(
        [
          { n: 2, values: Float64Array.of(1, 0, 0, 1) },
          { n: 2, values: Float64Array.of(1, 1.5, 1.5, 1) },
        ],
        'correlation',
      ),
    ).toThrow(/matrix 2 of the group: correlation 1.5 at row 1, column 2/);
    expect(() => groupMeanMatrix([mats[0], { n: 2, values: new Float64Array(4) }], 'plain')).toThrow(/2 × 2/);
  });
});

describe('quantiles (Hyndman–Fan type 7) vs numpy.percentile', () => {
  for (const { sample, q, value } of group.quantiles) {
    it(`n = ${sample.length}, q = ${q}`, () => {
      const sorted = Float64Array.from(sample).sort();
      expect(quantileSorted(sorted, q)).toBeCloseTo(value, 12);
    });
  }
});

describe('bootstrap bands of group-mean curves', () => {
  const grid = [0, 1, 2];
  const curves = [
    { group: 'A', values: [1, 2, 3] },
    { group: 'A', values: [3, 2, 1] },
    { group: 'A', values: [2, 2, 5] },
    { group: 'B', values: [0, 0, 0] },
    { group: 'B', values: [0, 0, 0] },
  ];
  it('gives the mean, a band around it, the same band for the same seed', () => {
    const bands = curveBands(curves, 'betti1', grid, { resamples: 500, seed: 7 });
    expect(bands.map((b) => b.group)).toEqual(['A', 'B']);
    const a = bands[0];
    expect(a.curve).toBe('betti1');
    expect(a.mean).toEqual([2, 2, 3]);
    for (let g = 0; g < 3; g++) {
      expect(a.lower[g]).toBeLessThanOrEqual(a.mean[g] + 1e-12);
      expect(a.upper[g]).toBeGreaterThanOrEqual(a.mean[g] - 1e-12);
      // A resample mean of three values lies within their range.
      const col = curves.slice(0, 3).map((c) => c.values[g]);
      expect(a.lower[g]).toBeGreaterThanOrEqual(Math.min(...col) - 1e-12);
      expect(a.upper[g]).toBeLessThanOrEqual(Math.max(...col) + 1e-12);
    }
    // Column 1 is constant across subjects: no spread.
    expect(a.lower[1]).toBeCloseTo(2, 12);
    expect(a.upper[1]).toBeCloseTo(2, 12);
    expect(a.upper[0] - a.lower[0]).toBeGreaterThan(0.5);
    expect(bands[1].lower).toEqual([0, 0, 0]);
    expect(curveBands(curves, 'betti1', grid, { resamples: 500, seed: 7 })).toEqual(bands);
    const many = Array.from({ length: 12 }, (_, i) => ({ group: 'C', values: [Math.sin(i + 1), 0, 0] }));
    const s7 = curveBands(many, 'betti1', grid, { resamples: 200, seed: 7 })[0];
    const s8 = curveBands(many, 'betti1', grid, { resamples: 200, seed: 8 })[0];
    expect(s7.lower[0]).not.toBe(s8.lower[0]); // the seed drives the resamples
  });
  it('the band of a mean of many subjects narrows like 1/√m (a property of the bootstrap)', () => {
    // Subjects alternate 0 and 1: the mean's standard error is ½/√m; the 95% band is ≈ 4 s.e. wide.
    for (const m of [20, 80]) {
      const cs = Array.from({ length: m }, (_, i) => ({ group: 'G', values: [i % 2] }));
      const [b] = curveBands(cs, 'x', [0], { resamples: 4000, seed: 3 });
      const width = b.upper[0] - b.lower[0];
      expect(width).toBeGreaterThan((0.7 * (3.92 * 0.5)) / Math.sqrt(m));
      expect(width).toBeLessThan((1.3 * (3.92 * 0.5)) / Math.sqrt(m));
    }
  });
  it('rejects a curve that does not fit the grid', () => {
    expect(() => curveBands([{ group: 'A', values: [1] }], 'x', grid)).toThrow(/1 points, the grid 3/);
  });
});
