/**
 * The general linear model y = M β + ε fitted by least squares for every feature of a family,
 * with the classical tests of a contrast C β = 0: t = cᵀβ̂ / √(σ̂² cᵀ(MᵀM)⁻¹c) on n − r df for one
 * row, F = (Cβ̂)ᵀ[C(MᵀM)⁻¹Cᵀ]⁻¹(Cβ̂) / (s σ̂²) on (s, n − r) df for s rows (Searle 1971,
 * Linear Models; Christensen, Plane Answers to Complex Questions). The fit goes through an orthonormal
 * basis Q of the design (M = Q R) so that normal equations are never formed.
 *
 *   const fit = fitGlm(design.columns, design.contrasts[0], [y1, y2]);
 *   fit.statistic[0]  // t of feature 1; fit.p[0] its two-sided parametric p
 */
import type { Contrast } from './design.ts';
import { dot, inverseSpd, orthonormalize, solveUpper, solveUpperTransposed } from './linalg.ts';
import { fUpperP, tTwoSidedP } from './special.ts';

export interface GlmFit {
  kind: 't' | 'F';
  /** t or F per feature (NaN when the feature has no residual variation). */
  statistic: Float64Array;
  /** Cβ̂ for a one-row contrast (the estimated difference); NaN for F. */
  estimate: Float64Array;
  /** Parametric p: two-sided for t, upper tail for F. */
  p: Float64Array;
  df1: number;
  df2: number;
  /** The coefficients β̂ of each feature. */
  beta: Float64Array[];
}

/** Fits every feature (each aligned with the design rows) and tests `contrast`. */
export function fitGlm(columns: Float64Array[], contrast: Contrast, features: ArrayLike<number>[]): GlmFit {
  const n = columns[0].length;
  const { q, r, dropped } = orthonormalize(columns);
  if (dropped.length > 0) throw new Error('design is rank-deficient');
  const p = columns.length;
  const s = contrast.rows.length;
  const df2 = n - p;
  // (MᵀM)⁻¹ = R⁻¹R⁻ᵀ, so C(MᵀM)⁻¹Cᵀ = (C R⁻¹)(C R⁻¹)ᵀ: solve Rᵀ aₖ = cₖ for each row.
  const a = contrast.rows.map((c) => solveUpperTransposed(r, c));
  const middle = a.map((ai) => a.map((aj) => dot(ai, aj)));
  const middleInv = inverseSpd(middle);
  const m = features.length;
  const statistic = new Float64Array(m);
  const estimate = new Float64Array(m).fill(NaN);
  const pv = new Float64Array(m);
  const beta: Float64Array[] = [];
  const resid = new Float64Array(n);
  for (let j = 0; j < m; j++) {
    const y = features[j];
    const qy = q.map((qk) => dot(qk, y));
    const b = solveUpper(r, qy);
    beta.push(b);
    for (let i = 0; i < n; i++) resid[i] = y[i];
    for (let k = 0; k < p; k++) {
      const qk = q[k];
      for (let i = 0; i < n; i++) resid[i] -= qy[k] * qk[i];
    }
    const sigma2 = dot(resid, resid) / df2;
    const cb = contrast.rows.map((c) => dot(c, b));
    let scale = 0;
    for (let k = 0; k < n; k++) scale = Math.max(scale, Math.abs(y[k]));
    if (!(sigma2 > 1e-28 * scale * scale * n)) {
      statistic[j] = NaN;
      pv[j] = NaN;
      continue;
    }
    if (s === 1) {
      const t = cb[0] / Math.sqrt(sigma2 * middle[0][0]);
      statistic[j] = t;
      estimate[j] = cb[0];
      pv[j] = tTwoSidedP(t, df2);
    } else {
      let quad = 0;
      for (let u = 0; u < s; u++) for (let v = 0; v < s; v++) quad += cb[u] * middleInv[u][v] * cb[v];
      const f = quad / (s * sigma2);
      statistic[j] = f;
      pv[j] = fUpperP(f, s, df2);
    }
  }
  return { kind: s === 1 ? 't' : 'F', statistic, estimate, p: pv, df1: s, df2, beta };
}
