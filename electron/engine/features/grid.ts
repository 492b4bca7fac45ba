/**
 * The evaluation grid shared by every subject of a cohort, so that curves (Betti, Euler,
 * landscapes) of different subjects are vectors over the same filtration values and can be
 * averaged and compared point by point.
 */
import type { PersistenceResult } from '../types.ts';

/**
 * `points` evenly spaced values from `min` to `max`, both included (a linspace).
 *
 *   grid(0, 1, 5) → [0, 0.25, 0.5, 0.75, 1]
 */
export function grid(min: number, max: number, points: number): Float64Array {
  if (!Number.isFinite(min) || !Number.isFinite(max) || !(max >= min)) {
    throw new RangeError(`grid range must be finite with min ≤ max, got [${min}, ${max}]`);
  }
  if (!Number.isInteger(points) || points < 1) {
    throw new RangeError(`grid needs a whole number of points ≥ 1, got ${points}`);
  }
  const out = new Float64Array(points);
  if (points === 1) {
    out[0] = min;
    return out;
  }
  const step = (max - min) / (points - 1);
  for (let i = 0; i < points; i++) out[i] = min + i * step;
  out[points - 1] = max; // exact right end despite rounding
  return out;
}

/** Largest finite filtration value a result reaches: its threshold, or its largest finite death/birth when uncapped over a disconnected graph. */
export function filtrationEnd(r: PersistenceResult): number {
  if (Number.isFinite(r.threshold)) return r.threshold;
  let end = 0;
  for (const dg of r.diagrams) {
    for (const iv of dg) {
      if (iv.birth > end) end = iv.birth;
      if (Number.isFinite(iv.death) && iv.death > end) end = iv.death;
    }
  }
  for (const ev of r.mergeTree) if (ev.value > end) end = ev.value;
  return end;
}

/**
 * The cohort's filtration range, sampled at `points` values: from the smallest edge value of any
 * subject (the first merge of its H0 merge tree; below it every curve is constant) to the largest
 * filtration end of any subject (its threshold). Subjects whose threshold lies below the grid's
 * end keep their last state beyond it, which is exact for the uncapped (enclosing-radius)
 * filtration and is "the complex frozen at the cap" for capped ones.
 *
 *   cohortGrid([resultA, resultB], 100) → grid(min first-edge, max threshold, 100)
 */
export function cohortGrid(results: PersistenceResult[], points = 100): Float64Array {
  if (results.length === 0) throw new RangeError('cohort grid: no subject results to span');
  const range = new GridRange();
  for (const r of results) range.addResult(r);
  return range.grid({ gridPoints: points, gridRange: null });
}

/**
 * The cohort's filtration range gathered one subject at a time (cohortGrid without holding every
 * result): add each subject's first merge value and filtration end, then take the grid.
 */
export class GridRange {
  private lo = Infinity;
  private hi = -Infinity;

  /** A subject's first merge value (null without merges) and its filtration end (filtrationEnd). */
  add(first: number | null, end: number): void {
    if (first !== null) this.lo = Math.min(this.lo, first);
    this.hi = Math.max(this.hi, end);
  }

  addResult(r: PersistenceResult): void {
    this.add(r.mergeTree.length > 0 ? r.mergeTree[0].value : null, filtrationEnd(r));
  }

  /** The user's range when the settings give one, else the range gathered (grid(0, 0) when empty). */
  grid(settings: { gridPoints: number; gridRange: [number, number] | null }): Float64Array {
    if (settings.gridRange) return grid(settings.gridRange[0], settings.gridRange[1], settings.gridPoints);
    let lo = this.lo;
    let hi = this.hi;
    if (!Number.isFinite(hi)) hi = Number.isFinite(lo) ? lo : 0;
    if (!Number.isFinite(lo) || lo > hi) lo = 0;
    return grid(lo, hi, settings.gridPoints);
  }
}

/**
 * The grid an analysis uses: the user's range when the settings give one, else the cohort's
 * filtration range (cohortGrid), with the settings' number of points.
 *
 *   analysisGrid(results, {gridPoints: 50, gridRange: [0, 1]}) → grid(0, 1, 50)
 */
export function analysisGrid(
  results: PersistenceResult[],
  settings: { gridPoints: number; gridRange: [number, number] | null },
): Float64Array {
  if (settings.gridRange) return grid(settings.gridRange[0], settings.gridRange[1], settings.gridPoints);
  return cohortGrid(results, settings.gridPoints);
}

/** The cap the complex was truncated at, or ∞ when it was not (stopping at the enclosing radius loses nothing). */
export function userCap(r: PersistenceResult): number {
  return r.thresholdSource === 'distance-cap' || r.thresholdSource === 'density-cap' ? r.threshold : Infinity;
}
