/**
 * Loads the feature goldens written by test/reference/make_feature_refs.py (GUDHI 3.7.1,
 * scikit-learn 1.2.1, SciPy 1.10.1, NumPy 1.24.2 under Debian's /usr/bin/python3).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { DistanceMatrix, Interval } from '../../../electron/engine/types.ts';

const DIR = join(import.meta.dirname, '..', '..', 'reference', 'goldens', 'features');

export interface Source {
  gudhi: string;
  sklearn: string;
  scipy: string;
  numpy: string;
}

export interface DimGolden {
  dim: number;
  diagram: Array<[number, number | null]>;
  betti: number[];
  landscapes: number[][];
  landscape_l1: number[];
  landscape_l2: number[];
  entropy: number | null;
  stats: Record<string, number | null>;
}

export interface CurveCase {
  name: string;
  n: number;
  maxDim: 1 | 2;
  topDim: 2 | 3;
  lower: number[];
  grid: number[];
  simplexCounts: number[][];
  euler: number[];
  eulerArea: number;
  skeletonBetti: number[][];
  dims: DimGolden[];
}

function load<T>(file: string): T {
  return JSON.parse(readFileSync(join(DIR, file), 'utf8')) as T;
}

export const curves = load<{ source: Source; cases: CurveCase[] }>('curves.json');
export const group = load<{
  source: Source;
  n: number;
  matrices: number[][];
  fisherMean: number[];
  plainMean: number[];
  quantiles: Array<{ sample: number[]; q: number; value: number }>;
}>('group.json');

export function distancesOf(c: { n: number; lower: number[] }): DistanceMatrix {
  return { n: c.n, values: Float64Array.from(c.lower) };
}

export function intervalsOf(raw: Array<[number, number | null]>): Interval[] {
  return raw.map(([birth, death]) => ({ birth, death: death === null ? Infinity : death }));
}

/** |a − b| ≤ tol · max(1, |b|) elementwise, with a message naming the first failure. */
export function closeArrays(a: ArrayLike<number>, b: ArrayLike<number>, tol = 1e-9): string {
  if (a.length !== b.length) return `length ${a.length} ≠ ${b.length}`;
  for (let i = 0; i < a.length; i++) {
    if (!(Math.abs(a[i] - b[i]) <= tol * Math.max(1, Math.abs(b[i])))) return `at ${i}: ${a[i]} vs ${b[i]}`;
  }
  return '';
}
