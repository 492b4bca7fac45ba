/**
 * Exact binomial confidence interval for a rejection rate measured over independent trials.
 *
 * Clopper & Pearson (1934), "The use of confidence or fiducial limits illustrated in the case of
 * the binomial", Biometrika 26: for k successes in n trials the two-sided level-(1 − γ) interval
 * is [B(γ/2; k, n − k + 1), B(1 − γ/2; k + 1, n − k)], B(q; a, b) the q-quantile of the Beta(a, b)
 * law, with the lower end 0 when k = 0 and the upper end 1 when k = n. It is conservative (its
 * coverage is at least the nominal level for every true rate), which is why a calibration check
 * uses it: a failure is then never an artefact of the interval.
 *
 *   clopperPearson(50, 1000, 0.95)  // ≈ [0.0373, 0.0654]
 */
import { incompleteBeta } from '../../electron/engine/stats/special.ts';

/** The q-quantile of Beta(a, b): bisection on the regularised incomplete beta (monotone in x). */
export function betaQuantile(q: number, a: number, b: number): number {
  if (!(q >= 0 && q <= 1) || !(a > 0) || !(b > 0)) {
    throw new RangeError(`betaQuantile needs 0 ≤ q ≤ 1 and a, b > 0; got q ${q}, a ${a}, b ${b}`);
  }
  let lo = 0;
  let hi = 1;
  // 60 halvings take the bracket below 1e-18, past double precision on [0, 1].
  for (let i = 0; i < 60; i++) {
    const mid = (lo + hi) / 2;
    if (incompleteBeta(mid, a, b) < q) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

/** The Clopper–Pearson interval for k successes in n trials at confidence `level` (e.g. 0.95). */
export function clopperPearson(k: number, n: number, level: number): [number, number] {
  if (!(Number.isInteger(k) && Number.isInteger(n) && n > 0 && k >= 0 && k <= n)) {
    throw new RangeError(`clopperPearson needs integers 0 ≤ k ≤ n, n > 0; got k ${k}, n ${n}`);
  }
  if (!(level > 0 && level < 1)) throw new RangeError(`confidence level must lie in (0, 1), got ${level}`);
  const tail = (1 - level) / 2;
  const low = k === 0 ? 0 : betaQuantile(tail, k, n - k + 1);
  const high = k === n ? 1 : betaQuantile(1 - tail, k + 1, n - k);
  return [low, high];
}
