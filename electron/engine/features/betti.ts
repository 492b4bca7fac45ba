/**
 * Betti curves: β_d(t) = #{intervals [b, d) of the H_d diagram with b ≤ t < d}, the rank of
 * H_d of the complex at filtration value t (the persistence equivalence: H. Edelsbrunner,
 * J. Harer (2010), Computational Topology, VII.1). Half-open intervals, so at a death value the
 * class is already gone: the convention of gudhi.representations.BettiCurve with a predefined grid.
 */
import type { Interval } from '../types.ts';

/**
 * β(t) on the grid.
 *
 *   bettiCurve([{birth: 1, death: 3}, {birth: 2, death: Infinity}], [0, 1, 2, 3]) → [0, 1, 2, 1]
 */
export function bettiCurve(diagram: Interval[], grid: ArrayLike<number>): Float64Array {
  const out = new Float64Array(grid.length);
  for (let g = 0; g < grid.length; g++) {
    const t = grid[g];
    let c = 0;
    for (const { birth, death } of diagram) if (birth <= t && t < death) c++;
    out[g] = c;
  }
  return out;
}

/**
 * The exact integral of the step function β over [a, b]: Σ |[bᵢ, dᵢ) ∩ [a, b]| (essential intervals
 * run to b). Exact, so it does not depend on how finely the grid samples the curve.
 *
 *   bettiArea([{birth: 1, death: 3}], 0, 2) → 1
 */
export function bettiArea(diagram: Interval[], a: number, b: number): number {
  let area = 0;
  for (const { birth, death } of diagram) {
    const lo = Math.max(a, birth);
    const hi = Math.min(b, death);
    if (hi > lo) area += hi - lo;
  }
  return area;
}
