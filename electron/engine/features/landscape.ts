/**
 * Persistence landscapes (P. Bubenik (2015), Statistical topological data analysis using
 * persistence landscapes, JMLR 16): with the tent of a finite interval [b, d)
 *   f(t) = max(0, min(t − b, d − t)),
 * λ_k(t) is the k-th largest tent value at t (0 when fewer than k tents are positive).
 *
 * Essential intervals are left out (their tent would never come down).
 * Scale: Bubenik's. gudhi.representations.Landscape returns √2 · λ_k (its tents are measured along
 * the diagonal's normal); the reference test multiplies ours by √2 to compare.
 */
import type { Interval } from '../types.ts';
import { trapezoid } from './euler.ts';

/**
 * λ_1 … λ_levels sampled on the grid; result[k − 1][g] = λ_k(grid[g]).
 *
 *   landscapes([{birth: 0, death: 2}, {birth: 1, death: 3}], [1, 1.5, 2], 2)
 *   → λ1 = [1, 0.5, 1], λ2 = [0, 0.5, 0]
 */
export function landscapes(
  diagram: Interval[],
  gridValues: ArrayLike<number>,
  levels: number,
): Float64Array[] {
  if (!Number.isInteger(levels) || levels < 1)
    throw new RangeError(`landscape levels must be ≥ 1, got ${levels}`);
  const finite = diagram.filter((iv) => Number.isFinite(iv.death) && iv.death > iv.birth);
  const out: Float64Array[] = [];
  for (let k = 0; k < levels; k++) out.push(new Float64Array(gridValues.length));
  const tents: number[] = [];
  for (let g = 0; g < gridValues.length; g++) {
    const t = gridValues[g];
    tents.length = 0;
    for (const { birth, death } of finite) {
      const h = Math.min(t - birth, death - t);
      if (h > 0) tents.push(h);
    }
    tents.sort((a, b) => b - a);
    for (let k = 0; k < levels && k < tents.length; k++) out[k][g] = tents[k];
  }
  return out;
}

/**
 * ‖λ‖₁ = ∫ λ dt and ‖λ‖₂ = (∫ λ² dt)^½ over the grid's range by the trapezoid rule on the grid
 * samples (exact when the grid holds every breakpoint of λ; otherwise an approximation whose error
 * shrinks with the grid step).
 *
 *   landscapeNorms(Float64Array.of(0, 1, 0), Float64Array.of(0, 1, 2)) → {l1: 1, l2: √(1)}
 */
export function landscapeNorms(
  lambda: ArrayLike<number>,
  gridValues: ArrayLike<number>,
): { l1: number; l2: number } {
  const sq = new Float64Array(lambda.length);
  for (let i = 0; i < sq.length; i++) sq[i] = lambda[i] * lambda[i];
  return { l1: trapezoid(lambda, gridValues), l2: Math.sqrt(trapezoid(sq, gridValues)) };
}
