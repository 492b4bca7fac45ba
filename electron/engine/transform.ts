/**
 * From a subject's matrix to filtration distances.
 *
 *   correlation r:  one-minus      d = 1 − r           (default; anticorrelated pairs are far)
 *                   one-minus-abs  d = 1 − |r|         (sign ignored)
 *                   sqrt           d = √(2(1 − r))     (a metric: the Euclidean distance between z-scored series)
 *   weight w ≥ 0:   inverse        d = 1 / w           (streamline counts and the like)
 *                   neg-log        d = −log(w / max w)
 *                   a zero weight is an absent edge (d = +∞).
 *   distance:       used as given; +∞ is an absent edge.
 *
 * The diagonal is ignored. A matrix that is not square, not symmetric or holds
 * a value the transform cannot take raises a MatrixError that says where.
 */
import type { DistanceMatrix, SquareMatrix } from './types.ts';

export type InputKind = 'correlation' | 'weight' | 'distance';
export type TransformName = 'one-minus' | 'one-minus-abs' | 'sqrt' | 'inverse' | 'neg-log' | 'identity';

export const TRANSFORMS_FOR: Record<InputKind, TransformName[]> = {
  correlation: ['one-minus', 'one-minus-abs', 'sqrt'],
  weight: ['inverse', 'neg-log'],
  distance: ['identity'],
};

export const DEFAULT_TRANSFORM: Record<InputKind, TransformName> = {
  correlation: 'one-minus',
  weight: 'inverse',
  distance: 'identity',
};

/** A problem with the values of a matrix; `where` names the first offending cell (0-based). */
export class MatrixError extends Error {
  readonly where?: [number, number];
  constructor(message: string, where?: [number, number]) {
    super(message);
    this.name = 'MatrixError';
    this.where = where;
  }
}

export interface TransformOptions {
  input: InputKind;
  transform?: TransformName;
  /** Largest |a_ij − a_ji| accepted as symmetric; the two are averaged. Default 1e-6 (relative to the largest |value| when that exceeds 1). */
  symmetryTolerance?: number;
}

/** Builds an n × n matrix from nested arrays, checking that it is square. */
export function squareMatrix(rows: number[][]): SquareMatrix {
  const n = rows.length;
  const values = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    if (rows[i].length !== n) {
      throw new MatrixError(`not square: ${n} rows but row ${i + 1} has ${rows[i].length} values`);
    }
    values.set(rows[i], i * n);
  }
  return { n, values };
}

/**
 * toDistances({n: 3, values}, {input: 'correlation'}) → the compressed lower
 * triangle of 1 − r.
 */
export function toDistances(matrix: SquareMatrix, options: TransformOptions): DistanceMatrix {
  const { n, values } = matrix;
  if (values.length !== n * n) {
    throw new MatrixError(`not square: ${values.length} values cannot form a ${n} × ${n} matrix`);
  }
  if (n < 1) throw new MatrixError('empty matrix');
  const transform = options.transform ?? DEFAULT_TRANSFORM[options.input];
  if (!TRANSFORMS_FOR[options.input].includes(transform)) {
    throw new MatrixError(
      `transform '${transform}' does not apply to ${options.input} input (use ${TRANSFORMS_FOR[options.input].join(', ')})`,
    );
  }

  // The diagonal is ignored, but an infinite one (atanh(1) = ∞) or one far beyond 1 says the
  // values are Fisher z, not correlations, even when every other value lies in [−1, 1].
  if (options.input === 'correlation' && n >= 2) {
    let z = true;
    for (let i = 0; i < n && z; i++) {
      const d = values[i * n + i];
      if (!(d === Infinity || d === -Infinity || (Number.isFinite(d) && Math.abs(d) > 3))) z = false;
    }
    if (z) {
      throw new MatrixError(
        `looks like Fisher z (diagonal ${values[0]}): give correlations (tanh of the values), or set the diagonal to 1 if they already are correlations`,
        [0, 0],
      );
    }
  }

  let scale = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      if (i === j) continue;
      const v = values[i * n + j];
      if (Number.isNaN(v))
        throw new MatrixError(`missing value (NaN) at row ${i + 1}, column ${j + 1}`, [i, j]);
      if (Number.isFinite(v)) scale = Math.max(scale, Math.abs(v));
    }
  }
  const tol = (options.symmetryTolerance ?? 1e-6) * Math.max(1, scale);

  let maxWeight = 0;
  if (transform === 'neg-log') {
    for (let i = 0; i < n; i++)
      for (let j = 0; j < i; j++) maxWeight = Math.max(maxWeight, values[i * n + j]);
  }

  const out = new Float64Array((n * (n - 1)) / 2);
  let k = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < i; j++, k++) {
      const a = values[i * n + j];
      const b = values[j * n + i];
      if (a !== b && !(Math.abs(a - b) <= tol)) {
        throw new MatrixError(
          `not symmetric: value ${a} at row ${i + 1}, column ${j + 1} but ${b} at row ${j + 1}, column ${i + 1}`,
          [i, j],
        );
      }
      const v = a === b ? a : (a + b) / 2;
      out[k] = transformValue(v, transform, maxWeight, i, j);
    }
  }
  return { n, values: out };
}

function transformValue(
  v: number,
  transform: TransformName,
  maxWeight: number,
  i: number,
  j: number,
): number {
  const at = `at row ${i + 1}, column ${j + 1}`;
  switch (transform) {
    case 'one-minus':
    case 'one-minus-abs':
    case 'sqrt': {
      if (!Number.isFinite(v)) throw new MatrixError(`correlation ${v} ${at} is not finite`, [i, j]);
      if (v > 1 + 1e-9 || v < -1 - 1e-9) {
        throw new MatrixError(
          `correlation ${v} ${at} lies outside [−1, 1] (${
            Number.isInteger(v)
              ? 'a whole number: counts or a label image? counts are weights (--input weight)'
              : 'Fisher-z values? back-transform with tanh first'
          })`,
          [i, j],
        );
      }
      const r = Math.min(1, Math.max(-1, v));
      if (transform === 'one-minus') return 1 - r;
      if (transform === 'one-minus-abs') return 1 - Math.abs(r);
      return Math.sqrt(2 * (1 - r));
    }
    case 'inverse':
    case 'neg-log': {
      if (!Number.isFinite(v) || v < 0)
        throw new MatrixError(`weight ${v} ${at} is not a finite value ≥ 0`, [i, j]);
      if (v === 0) return Infinity;
      if (transform === 'inverse') return 1 / v;
      return -Math.log(v / maxWeight);
    }
    case 'identity': {
      if (v < 0 || Number.isNaN(v) || v === -Infinity) {
        throw new MatrixError(`distance ${v} ${at} is negative`, [i, j]);
      }
      return v;
    }
  }
}

/** Index of the pair i ≠ j in the compressed lower triangle. */
export function pairIndex(i: number, j: number): number {
  return i > j ? (i * (i - 1)) / 2 + j : (j * (j - 1)) / 2 + i;
}

/** A compressed lower triangle from a full symmetric distance matrix given as rows (tests, small examples). */
export function distancesFromRows(rows: number[][]): DistanceMatrix {
  return toDistances(squareMatrix(rows), { input: 'distance' });
}

/** The matrix without the rows and columns in `drop`, and the original index of each kept region. */
export function dropRegions(m: SquareMatrix, drop: number[]): { matrix: SquareMatrix; kept: Int32Array } {
  const dropSet = new Set(drop.filter((r) => r < m.n));
  const keptList: number[] = [];
  for (let i = 0; i < m.n; i++) if (!dropSet.has(i)) keptList.push(i);
  const kept = Int32Array.from(keptList);
  if (kept.length === m.n) return { matrix: m, kept };
  const k = kept.length;
  const values = new Float64Array(k * k);
  for (let a = 0; a < k; a++)
    for (let b = 0; b < k; b++) values[a * k + b] = m.values[kept[a] * m.n + kept[b]];
  return { matrix: { n: k, values }, kept };
}
