/**
 * Sample correlation matrices from a factor model (block-model.ts): draw T time points of the
 * latent factors and the node noise, form x = L f + diag(ψ) ε, and take the Pearson
 * correlation of every pair of node series. A sample correlation matrix is
 * D^(−1/2) (Xcᵀ Xc) D^(−1/2) with Xc the centred data and D its diagonal — a scaled Gram
 * matrix — so it is symmetric, positive semi-definite and has unit diagonal by construction
 * (common practice; e.g. Anderson, An Introduction to Multivariate Statistical Analysis, ch. 3).
 *
 * Optional first-order autoregression (AR(1), coefficient φ) of every factor and noise series
 * mimics the slow drift of haemodynamic signals: z_t = φ z_(t−1) + √(1 − φ²) e_t keeps unit variance.
 *
 *   sampleCorrelation(factorModel(spec), 240, createRng(1)) → a 240-point sample correlation matrix
 */
import type { Rng } from '../random.ts';
import type { SquareMatrix } from '../types.ts';
import type { FactorModel } from './block-model.ts';
import { gaussianSource } from './gaussian.ts';

export interface SeriesOptions {
  /** AR(1) coefficient φ in [0, 1) of every latent and noise series; 0 (default) gives white series. */
  autocorrelation?: number;
}

/** T × n node series, row-major (time point t, node i at t·n + i). */
export function sampleTimeSeries(
  model: FactorModel,
  T: number,
  rng: Rng,
  options: SeriesOptions = {},
): Float64Array {
  const phi = options.autocorrelation ?? 0;
  if (!(phi >= 0 && phi < 1)) throw new RangeError(`autocorrelation must lie in [0, 1), got ${phi}`);
  if (!(Number.isInteger(T) && T >= 2))
    throw new RangeError(`need an integer number of time points ≥ 2, got ${T}`);
  const { n, factors: F, loadings: L, noise } = model;
  const gauss = gaussianSource(rng);
  const innov = Math.sqrt(1 - phi * phi);
  const f = new Float64Array(F);
  const e = new Float64Array(n);
  const x = new Float64Array(T * n);
  for (let t = 0; t < T; t++) {
    for (let k = 0; k < F; k++) f[k] = t === 0 ? gauss() : phi * f[k] + innov * gauss();
    for (let i = 0; i < n; i++) e[i] = t === 0 ? gauss() : phi * e[i] + innov * gauss();
    for (let i = 0; i < n; i++) {
      let s = noise[i] * e[i];
      for (let k = 0; k < F; k++) s += L[i * F + k] * f[k];
      x[t * n + i] = s;
    }
  }
  return x;
}

/**
 * Pearson correlation of the n columns of a T × n row-major series. Exactly symmetric, with an
 * exact unit diagonal. A constant column has no correlation: it raises a RangeError naming it.
 */
export function pearsonCorrelation(series: Float64Array, T: number, n: number): SquareMatrix {
  if (series.length !== T * n)
    throw new RangeError(`series has ${series.length} values, expected ${T} × ${n}`);
  const c = new Float64Array(T * n);
  const norm = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let mean = 0;
    for (let t = 0; t < T; t++) mean += series[t * n + i];
    mean /= T;
    let ss = 0;
    for (let t = 0; t < T; t++) {
      const v = series[t * n + i] - mean;
      c[t * n + i] = v;
      ss += v * v;
    }
    if (!(ss > 0)) throw new RangeError(`series ${i} is constant: its correlation is undefined`);
    norm[i] = Math.sqrt(ss);
  }
  const values = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    values[i * n + i] = 1;
    for (let j = 0; j < i; j++) {
      let s = 0;
      for (let t = 0; t < T; t++) s += c[t * n + i] * c[t * n + j];
      const r = Math.min(1, Math.max(-1, s / (norm[i] * norm[j])));
      values[i * n + j] = r;
      values[j * n + i] = r;
    }
  }
  return { n, values };
}

/** The sample correlation of T time points drawn from the model. */
export function sampleCorrelation(
  model: FactorModel,
  T: number,
  rng: Rng,
  options: SeriesOptions = {},
): SquareMatrix {
  return pearsonCorrelation(sampleTimeSeries(model, T, rng, options), T, model.n);
}
