import { describe, expect, it } from 'vitest';
import { MatrixError, pairIndex, squareMatrix, toDistances } from '../../electron/engine/transform.ts';

const R = [
  [1, 0.5, -0.25],
  [0.5, 1, 0],
  [-0.25, 0, 1],
];

describe('toDistances', () => {
  it('stores the lower triangle: pair (i, j), i > j, at i(i−1)/2 + j', () => {
    expect([pairIndex(1, 0), pairIndex(2, 0), pairIndex(2, 1), pairIndex(0, 2)]).toEqual([0, 1, 2, 1]);
  });

  it('applies each correlation transform', () => {
    const m = squareMatrix(R);
    expect([...toDistances(m, { input: 'correlation' }).values]).toEqual([0.5, 1.25, 1]);
    expect([...toDistances(m, { input: 'correlation', transform: 'one-minus-abs' }).values]).toEqual([
      0.5, 0.75, 1,
    ]);
    const s = toDistances(m, { input: 'correlation', transform: 'sqrt' }).values;
    // √(2(1 − r)): the Euclidean distance between z-scored series of unit norm (common practice).
    expect(s[0]).toBeCloseTo(1, 15);
    expect(s[1]).toBeCloseTo(Math.sqrt(2.5), 15);
    expect(s[2]).toBeCloseTo(Math.sqrt(2), 15);
  });

  it('turns weights into distances, a zero weight into an absent edge', () => {
    const W = squareMatrix([
      [0, 4, 0],
      [4, 0, 2],
      [0, 2, 0],
    ]);
    expect([...toDistances(W, { input: 'weight' }).values]).toEqual([0.25, Infinity, 0.5]);
    const nl = toDistances(W, { input: 'weight', transform: 'neg-log' }).values;
    expect(nl[0]).toBe(-0);
    expect(nl[1]).toBe(Infinity);
    expect(nl[2]).toBeCloseTo(Math.log(2), 15);
  });

  it('ignores the diagonal and averages values within the symmetry tolerance', () => {
    const m = squareMatrix([
      [7, 0.2],
      [0.2 + 1e-9, Number.NaN],
    ]);
    expect(toDistances(m, { input: 'correlation' }).values[0]).toBeCloseTo(0.8, 8);
  });

  it('names the offending cell in every error', () => {
    const cases: Array<[number[][], Parameters<typeof toDistances>[1], RegExp]> = [
      [
        [
          [1, 0.3],
          [0.4, 1],
        ],
        { input: 'correlation' },
        /not symmetric: value 0.4 at row 2, column 1 but 0.3 at row 1, column 2/,
      ],
      [
        [
          [1, NaN],
          [NaN, 1],
        ],
        { input: 'correlation' },
        /missing value \(NaN\) at row 1, column 2/,
      ],
      [
        [
          [1, 1.7],
          [1.7, 1],
        ],
        { input: 'correlation' },
        /outside \[−1, 1\] \(Fisher-z/,
      ],
      [
        [
          [0, -1],
          [-1, 0],
        ],
        { input: 'weight' },
        /weight -1 at row 2, column 1/,
      ],
      [
        [
          [0, -1],
          [-1, 0],
        ],
        { input: 'distance' },
        /distance -1 at row 2, column 1 is negative/,
      ],
      [
        [
          [0, 1],
          [1, 0],
        ],
        { input: 'weight', transform: 'sqrt' },
        /transform 'sqrt' does not apply to weight input/,
      ],
    ];
    for (const [rows, opts, re] of cases) {
      expect(() => toDistances(squareMatrix(rows), opts)).toThrow(re);
      expect(() => toDistances(squareMatrix(rows), opts)).toThrow(MatrixError);
    }
    expect(() => squareMatrix([[1, 2], [3]])).toThrow(/not square: 2 rows but row 2 has 1 values/);
  });
});
