/**
 * From region time series to a correlation matrix (the group mean of correlation matrices, through
 * Fisher's z, is features/group.ts GroupMeanAccumulator).
 *
 *   Pearson        r_ij = Σ_t (x_ti − x̄_i)(x_tj − x̄_j) / √(Σ_t (x_ti − x̄_i)² · Σ_t (x_tj − x̄_j)²)
 *   Ledoit–Wolf    the series are z-scored, their covariance S (÷T) is shrunk towards m·I, and the
 *                  result is scaled to a unit diagonal.
 *
 * A region whose series is constant has no correlation: its row and column are NaN (the QC report
 * names it as a dead region).
 */
import type { SquareMatrix } from './types.ts';

/** Region time series: t time points × n regions, row-major (one row per time point). */
export interface TimeSeries {
  t: number;
  n: number;
  values: Float64Array;
}

/** The series centred on their means, and which regions are constant. */
function centred(series: TimeSeries): { c: Float64Array; constant: boolean[] } {
  const { t, n, values } = series;
  const mean = new Float64Array(n);
  for (let s = 0; s < t; s++) for (let i = 0; i < n; i++) mean[i] += values[s * n + i];
  for (let i = 0; i < n; i++) mean[i] /= t;
  const c = new Float64Array(t * n);
  const constant = new Array<boolean>(n).fill(true);
  for (let s = 0; s < t; s++) {
    for (let i = 0; i < n; i++) {
      const v = values[s * n + i];
      c[s * n + i] = v - mean[i];
      if (v !== values[i]) constant[i] = false;
    }
  }
  return { c, constant };
}

/** The cross-product matrix Σ_t c_ti c_tj of centred series (upper triangle filled, then mirrored). */
function crossProducts(c: Float64Array, t: number, n: number): Float64Array {
  const out = new Float64Array(n * n);
  for (let s = 0; s < t; s++) {
    const row = s * n;
    for (let i = 0; i < n; i++) {
      const ci = c[row + i];
      if (ci === 0) continue;
      const o = i * n;
      for (let j = i; j < n; j++) out[o + j] += ci * c[row + j];
    }
  }
  for (let i = 0; i < n; i++) for (let j = 0; j < i; j++) out[i * n + j] = out[j * n + i];
  return out;
}

/** Scales a covariance to a unit diagonal, clipping rounding excursions beyond ±1; constant regions → NaN. */
function toCorrelation(cov: Float64Array, n: number, constant: boolean[]): SquareMatrix {
  const sd = new Float64Array(n);
  for (let i = 0; i < n; i++) sd[i] = Math.sqrt(cov[i * n + i]);
  const values = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      if (constant[i] || constant[j]) values[i * n + j] = NaN;
      else if (i === j) values[i * n + j] = 1;
      else values[i * n + j] = Math.max(-1, Math.min(1, cov[i * n + j] / (sd[i] * sd[j])));
    }
  }
  return { n, values };
}

/**
 * Pearson's product-moment correlation between every pair of regions (Pearson 1896; the
 * estimator of any statistics textbook). Equals numpy.corrcoef(x, rowvar=False).
 *
 *   pearson({t: 3, n: 2, values: Float64Array.of(1, 2, 2, 4, 3, 7)}).values → [1, 0.9934…, 0.9934…, 1]
 */
export function pearson(series: TimeSeries): SquareMatrix {
  const { t, n } = series;
  if (t < 2) throw new RangeError(`Pearson correlation needs at least 2 time points, got ${t}`);
  const { c, constant } = centred(series);
  return toCorrelation(crossProducts(c, t, n), n, constant);
}

/**
 * Ledoit–Wolf shrinkage (Ledoit & Wolf 2004, "A well-conditioned estimator for large-dimensional
 * covariance matrices", J. Multivariate Anal. 88:365–411, Lemma 3.2–3.4), applied to z-scored
 * series so that every region weighs the same and the target m·I is (nearly) the identity
 * (standardising the series first is common practice for functional connectivity):
 *
 *   S = YᵀY / T                      Y the z-scored series (population sd), T × p
 *   m = tr(S) / p                    ‖A‖² = tr(AAᵀ) / p (the paper's normalised Frobenius norm)
 *   d² = ‖S − m·I‖²
 *   b̄² = (1/T²) Σ_t ‖y_t y_tᵀ − S‖² = (Σ_t |y_t|⁴ − T·tr(S²)) / (T² p)
 *   δ = min(b̄², d²) / d²             Σ* = δ·m·I + (1 − δ)·S, scaled to a unit diagonal.
 *
 * Matches sklearn.covariance.LedoitWolf fitted to the z-scored series, scaled the same way.
 * Constant regions are left out of the estimate and come back as NaN rows.
 *
 *   ledoitWolf(series).shrinkage → δ in [0, 1]; 0 when T ≫ p and S is already well conditioned.
 */
export function ledoitWolf(series: TimeSeries): { matrix: SquareMatrix; shrinkage: number } {
  const { t, n } = series;
  if (t < 2) throw new RangeError(`Ledoit–Wolf needs at least 2 time points, got ${t}`);
  const { c, constant } = centred(series);
  const keep: number[] = [];
  for (let i = 0; i < n; i++) if (!constant[i]) keep.push(i);
  const p = keep.length;
  const out = new Float64Array(n * n).fill(NaN);
  if (p === 0) return { matrix: { n, values: out }, shrinkage: 0 };

  // z-score the kept regions (population sd, as the estimator's S divides by T).
  const y = new Float64Array(t * p);
  for (let k = 0; k < p; k++) {
    const i = keep[k];
    let ss = 0;
    for (let s = 0; s < t; s++) ss += c[s * n + i] * c[s * n + i];
    const sd = Math.sqrt(ss / t);
    for (let s = 0; s < t; s++) y[s * p + k] = c[s * n + i] / sd;
  }
  // The estimator centres again; z-scored series have mean zero up to rounding, so do it too.
  const again = centred({ t, n: p, values: y }).c;
  const S = crossProducts(again, t, p);
  for (let k = 0; k < p * p; k++) S[k] /= t;

  let trace = 0;
  for (let k = 0; k < p; k++) trace += S[k * p + k];
  const m = trace / p;
  let sumSq = 0;
  for (let k = 0; k < p * p; k++) sumSq += S[k] * S[k];
  const d2 = (sumSq - 2 * m * trace + p * m * m) / p;
  let fourth = 0;
  for (let s = 0; s < t; s++) {
    let norm2 = 0;
    for (let k = 0; k < p; k++) norm2 += again[s * p + k] * again[s * p + k];
    fourth += norm2 * norm2;
  }
  const bBar2 = (fourth / t - sumSq) / (t * p);
  const b2 = Math.min(bBar2, d2);
  const shrinkage = d2 === 0 ? 0 : b2 / d2;

  const shrunk = new Float64Array(p * p);
  for (let a = 0; a < p; a++) {
    for (let b = 0; b < p; b++)
      shrunk[a * p + b] = (1 - shrinkage) * S[a * p + b] + (a === b ? shrinkage * m : 0);
  }
  const r = toCorrelation(shrunk, p, new Array<boolean>(p).fill(false));
  for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) out[keep[a] * n + keep[b]] = r.values[a * p + b];
  return { matrix: { n, values: out }, shrinkage };
}
