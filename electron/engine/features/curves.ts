/**
 * A subject's curves on the cohort grid, by the names api.ts CurveBand uses — the inputs of the
 * group means and bootstrap bands (group.ts curveBands).
 */
import type { PersistenceResult } from '../types.ts';
import { bettiCurve } from './betti.ts';
import { eulerCurve } from './euler.ts';
import type { SimplexSource } from './euler.ts';
import { userCap } from './grid.ts';
import { landscapes } from './landscape.ts';

/**
 * 'betti{d}' for d = 0 … maxDim, 'landscape{d}-{k}' for k = 1 … levels, and 'euler' (the Euler
 * characteristic of the (maxDim+1)-skeleton; only when the distances are given). A user cap
 * freezes the complex at the cap, as in the feature row.
 *
 *   subjectCurves(computePersistence(d), grid(0, 1, 100), {maxDim: 1, landscapeLevels: 2}, d)
 *   → {betti0: […], betti1: […], 'landscape0-1': […], …, euler: […]}
 */
export function subjectCurves(
  result: PersistenceResult,
  gridValues: ArrayLike<number>,
  settings: { maxDim: 1 | 2; landscapeLevels: number },
  distances?: SimplexSource,
): Record<string, Float64Array> {
  const out: Record<string, Float64Array> = {};
  for (let d = 0; d <= settings.maxDim; d++) {
    const dg = result.diagrams[d];
    if (!dg) continue;
    out[`betti${d}`] = bettiCurve(dg, gridValues);
    landscapes(dg, gridValues, settings.landscapeLevels).forEach((lambda, k) => {
      out[`landscape${d}-${k + 1}`] = lambda;
    });
  }
  if (distances) {
    out['euler'] = eulerCurve(distances, gridValues, (settings.maxDim + 1) as 2 | 3, userCap(result));
  }
  return out;
}
