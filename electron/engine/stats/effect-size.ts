/**
 * Effect sizes beside the tests. The ones stats.tsv reports come from the same model as the test:
 * partial r of a t, partial η² of any test, the covariate-adjusted standardized difference of a
 * 2-level effect, d_z of a paired contrast (each below). Hedges' g on raw values stays for the
 * renderer's region comparisons.
 *
 * Hedges' g (Hedges 1981, J. Educ. Stat. 6): the standardised mean difference with the pooled
 * standard deviation, times the exact small-sample correction J(ν) = Γ(ν/2) / (√(ν/2) Γ((ν−1)/2)),
 * ν = n_a + n_b − 2 (≈ 1 − 3/(4ν − 1)). It is computed on the raw values of the two groups:
 * covariates do not enter it.
 * Its 95% interval is the percentile bootstrap (Efron & Tibshirani 1993, ch. 13): subjects are
 * resampled with replacement within each group (stratified, so group sizes are kept), the same
 * resamples for every feature of a family, drawn from the seeded generator; quantiles by linear
 * interpolation (Hyndman & Fan 1996, type 7). Percentile rather than BCa: BCa's jackknife
 * acceleration per feature would multiply the cost, and with groups of tens the two differ little.
 *
 * Partial η² of an F-test: SS_effect / (SS_effect + SS_error) = F·df1 / (F·df1 + df2)
 * (Cohen 1973, Educ. Psychol. Meas.).
 *
 *   hedgesG([1, 2, 3], [2, 3, 4, 5])  // −1.0658… (d = −1.2677, J(5) = 0.8408)
 */
import { createRng } from '../random.ts';
import { orthonormalize, solveUpperTransposed } from './linalg.ts';
import { logGamma } from './special.ts';

export const DEFAULT_BOOTSTRAP = 2000;

/** The exact Hedges correction factor J(ν). */
export function hedgesJ(df: number): number {
  return Math.exp(logGamma(df / 2) - logGamma((df - 1) / 2)) / Math.sqrt(df / 2);
}

/** Hedges' g of a − b. */
export function hedgesG(a: ArrayLike<number>, b: ArrayLike<number>): number {
  return gFromMoments(moments(a), moments(b), hedgesJ(a.length + b.length - 2));
}

function moments(x: ArrayLike<number>): { n: number; mean: number; ss: number } {
  let mean = 0;
  for (let i = 0; i < x.length; i++) mean += x[i];
  mean /= x.length;
  let ss = 0;
  for (let i = 0; i < x.length; i++) ss += (x[i] - mean) * (x[i] - mean);
  return { n: x.length, mean, ss };
}

function gFromMoments(
  a: { n: number; mean: number; ss: number },
  b: { n: number; mean: number; ss: number },
  j: number,
): number {
  const sp = Math.sqrt((a.ss + b.ss) / (a.n + b.n - 2));
  return sp > 0 ? (j * (a.mean - b.mean)) / sp : NaN;
}

export interface GroupEffectSizes {
  g: Float64Array;
  low: Float64Array;
  high: Float64Array;
  bootstrap: number;
  seed: number;
  interval: 'percentile-95';
}

/**
 * Hedges' g of level `a` minus level `b` for every feature (aligned with `group`), with the
 * stratified percentile-bootstrap 95% interval.
 */
export function hedgesGFamily(
  features: ArrayLike<number>[],
  group: Int32Array,
  a: number,
  b: number,
  options: { bootstrap?: number; seed: number },
): GroupEffectSizes {
  const reps = options.bootstrap ?? DEFAULT_BOOTSTRAP;
  const ia: number[] = [];
  const ib: number[] = [];
  group.forEach((g, i) => {
    if (g === a) ia.push(i);
    else if (g === b) ib.push(i);
  });
  const m = features.length;
  const j = hedgesJ(ia.length + ib.length - 2);
  const pick = (y: ArrayLike<number>, idx: ArrayLike<number>) =>
    Float64Array.from(idx as ArrayLike<number>, (i) => y[i]);
  const g = new Float64Array(m);
  const groupsA = features.map((y) => pick(y, ia));
  const groupsB = features.map((y) => pick(y, ib));
  for (let f = 0; f < m; f++) g[f] = gFromMoments(moments(groupsA[f]), moments(groupsB[f]), j);

  const rng = createRng(options.seed);
  const draws = new Float64Array(reps * m);
  const ra = new Int32Array(ia.length);
  const rb = new Int32Array(ib.length);
  for (let r = 0; r < reps; r++) {
    for (let i = 0; i < ra.length; i++) ra[i] = rng.int(ra.length);
    for (let i = 0; i < rb.length; i++) rb[i] = rng.int(rb.length);
    for (let f = 0; f < m; f++) {
      draws[f * reps + r] = gFromMoments(
        resampledMoments(groupsA[f], ra),
        resampledMoments(groupsB[f], rb),
        j,
      );
    }
  }
  const low = new Float64Array(m).fill(NaN);
  const high = new Float64Array(m).fill(NaN);
  for (let f = 0; f < m; f++) {
    if (Number.isNaN(g[f])) continue;
    const d = draws.subarray(f * reps, (f + 1) * reps).filter((v) => !Number.isNaN(v));
    // A resample can have no spread (e.g. one subject drawn twice in a group of two); when most do, no interval.
    if (d.length < 0.9 * reps) continue;
    d.sort();
    low[f] = quantile(d, 0.025);
    high[f] = quantile(d, 0.975);
  }
  return { g, low, high, bootstrap: reps, seed: options.seed, interval: 'percentile-95' };
}

function resampledMoments(x: Float64Array, idx: Int32Array): { n: number; mean: number; ss: number } {
  let mean = 0;
  for (let i = 0; i < idx.length; i++) mean += x[idx[i]];
  mean /= idx.length;
  let ss = 0;
  for (let i = 0; i < idx.length; i++) ss += (x[idx[i]] - mean) * (x[idx[i]] - mean);
  return { n: idx.length, mean, ss };
}

/** Quantile of sorted data, linear interpolation between order statistics (type 7). */
export function quantile(sorted: ArrayLike<number>, p: number): number {
  const h = (sorted.length - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(lo + 1, sorted.length - 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

/** Partial η² from an F statistic and its degrees of freedom. */
export function partialEtaSquared(f: number, df1: number, df2: number): number {
  return (f * df1) / (f * df1 + df2);
}

/** Partial correlation of a t test: r_p = t / √(t² + df), signed like t (Cohen 1988; common practice). */
export function partialR(t: number, df: number): number {
  return t / Math.sqrt(t * t + df);
}

/** Effect sizes of a family with their seeded percentile-bootstrap 95% intervals. */
export interface FamilyEffectSizes {
  value: Float64Array;
  low: Float64Array;
  high: Float64Array;
  bootstrap: number;
  seed: number;
  interval: 'percentile-95';
}

/** Bootstrap percentile interval from the draws (reps per feature, feature-major); NaN when most draws failed. */
function percentileIntervals(value: Float64Array, draws: Float64Array, reps: number) {
  const m = value.length;
  const low = new Float64Array(m).fill(NaN);
  const high = new Float64Array(m).fill(NaN);
  for (let f = 0; f < m; f++) {
    if (Number.isNaN(value[f])) continue;
    const d = draws.subarray(f * reps, (f + 1) * reps).filter((v) => !Number.isNaN(v));
    // A resample can be degenerate (no spread, a singular design); when most are, no interval.
    if (d.length < 0.9 * reps) continue;
    d.sort();
    low[f] = quantile(d, 0.025);
    high[f] = quantile(d, 0.975);
  }
  return { low, high };
}

/**
 * The covariate-adjusted standardized difference of a 2-level effect: the contrast estimate cᵀβ̂
 * divided by √(residual mean square) of the full model (the same model as the test), per feature.
 * With the effect alone in the model it is Cohen's d with the pooled standard deviation (no
 * small-sample correction). Its 95% interval is the percentile bootstrap (Efron & Tibshirani 1993,
 * ch. 13) over resampling units — the exchangeability blocks when there are any, else the rows —
 * drawn with replacement within strata (the effect level of the unit, when it is constant within
 * units, so that group sizes are kept), the same resamples for every feature; the design columns
 * are kept as coded on the full sample, except the block intercepts: each drawn copy of a block
 * has its own. Resamples whose design is singular are skipped.
 */
export function adjustedDifferenceFamily(
  columns: Float64Array[],
  contrastRow: number[],
  features: ArrayLike<number>[],
  options: {
    seed: number;
    bootstrap?: number;
    /** Resampling unit of each row. */
    unit: Int32Array;
    /** Stratum of each unit (units resampled within their stratum). */
    stratum: Int32Array;
    /** Indices of block-intercept columns, rebuilt for each resample. */
    blockColumns?: number[];
  },
): FamilyEffectSizes {
  const reps = options.bootstrap ?? DEFAULT_BOOTSTRAP;
  const m = features.length;
  const n = columns[0].length;
  const blockCols = new Set(options.blockColumns ?? []);
  const fixed = columns.map((_, k) => k).filter((k) => !blockCols.has(k));
  const units = Math.max(...options.unit) + 1;
  const rowsOf: number[][] = Array.from({ length: units }, () => []);
  for (let i = 0; i < n; i++) rowsOf[options.unit[i]].push(i);
  const strata = new Map<number, number[]>();
  for (let u = 0; u < units; u++) {
    if (rowsOf[u].length === 0) continue;
    const s = options.stratum[u];
    if (!strata.has(s)) strata.set(s, []);
    strata.get(s)!.push(u);
  }

  /**
   * d for every feature on the rows drawn. With block intercepts, each drawn copy of a block gets
   * its own: by Frisch–Waugh–Lovell the other columns and y are centred within each copy instead
   * (the intercept then drops out), which gives the same β̂ and residuals at a fraction of the cost.
   */
  const absorb = blockCols.size > 0;
  const kept = absorb ? fixed.filter((k) => k !== 0) : fixed;
  const ck = kept.map((k) => contrastRow[k]);
  const estimate = (drawn: number[], out: Float64Array, offset: number, stride: number) => {
    const rows = drawn.flatMap((u) => rowsOf[u]);
    const segments: Array<[number, number]> = [];
    let at = 0;
    for (const u of drawn) {
      segments.push([at, at + rowsOf[u].length]);
      at += rowsOf[u].length;
    }
    const centre = (v: Float64Array) => {
      if (!absorb) return v;
      for (const [a, b] of segments) {
        let mean = 0;
        for (let i = a; i < b; i++) mean += v[i];
        mean /= b - a;
        for (let i = a; i < b; i++) v[i] -= mean;
      }
      return v;
    };
    const cols = kept.map((k) => centre(Float64Array.from(rows, (i) => columns[k][i])));
    const { q, r, dropped } = orthonormalize(cols);
    const df = rows.length - cols.length - (absorb ? drawn.length : 0);
    for (let f = 0; f < m; f++) out[f * stride + offset] = NaN;
    if (dropped.length > 0 || df < 1) return;
    const a = solveUpperTransposed(r, ck);
    const y = new Float64Array(rows.length);
    for (let f = 0; f < m; f++) {
      const feature = features[f];
      for (let t = 0; t < rows.length; t++) y[t] = feature[rows[t]];
      centre(y);
      let yy = 0;
      for (let t = 0; t < rows.length; t++) yy += y[t] * y[t];
      let est = 0;
      let fitted = 0;
      for (let k = 0; k < q.length; k++) {
        let d = 0;
        const qk = q[k];
        for (let t = 0; t < rows.length; t++) d += qk[t] * y[t];
        est += a[k] * d;
        fitted += d * d;
      }
      const mse = (yy - fitted) / df;
      out[f * stride + offset] = mse > 1e-28 * Math.max(1, yy) ? est / Math.sqrt(mse) : NaN;
    }
  };
  const value = new Float64Array(m);
  const identity = Array.from({ length: units }, (_, u) => u).filter((u) => rowsOf[u].length > 0);
  estimate(identity, value, 0, 1);
  const rng = createRng(options.seed);
  const draws = new Float64Array(reps * m);
  const groups = [...strata.values()];
  for (let b = 0; b < reps; b++) {
    const drawn: number[] = [];
    for (const g of groups) for (let i = 0; i < g.length; i++) drawn.push(g[rng.int(g.length)]);
    estimate(drawn, draws, b, reps);
  }
  const { low, high } = percentileIntervals(value, draws, reps);
  return { value, low, high, bootstrap: reps, seed: options.seed, interval: 'percentile-95' };
}

/**
 * Cohen's d_z of a paired contrast: mean(diff) / sd(diff) over the pairs, diff = other − reference
 * of the feature within a block, sd with n − 1 (Cohen 1988; Lakens 2013, Front. Psychol. 4:863).
 * Percentile-bootstrap 95% interval over the pairs (blocks), seeded.
 */
export function dzFamily(
  features: ArrayLike<number>[],
  pairs: Array<[number, number]>,
  options: { seed: number; bootstrap?: number },
): FamilyEffectSizes {
  const reps = options.bootstrap ?? DEFAULT_BOOTSTRAP;
  const m = features.length;
  const k = pairs.length;
  const diffs = features.map((y) => Float64Array.from(pairs, ([ref, other]) => y[other] - y[ref]));
  const dz = (d: Float64Array, idx: Int32Array | null): number => {
    let mean = 0;
    for (let i = 0; i < k; i++) mean += d[idx ? idx[i] : i];
    mean /= k;
    let ss = 0;
    for (let i = 0; i < k; i++) ss += (d[idx ? idx[i] : i] - mean) ** 2;
    const sd = Math.sqrt(ss / (k - 1));
    return sd > 1e-14 * Math.max(1, Math.abs(mean)) ? mean / sd : NaN;
  };
  const value = Float64Array.from(diffs, (d) => dz(d, null));
  const rng = createRng(options.seed);
  const draws = new Float64Array(reps * m);
  const idx = new Int32Array(k);
  for (let b = 0; b < reps; b++) {
    for (let i = 0; i < k; i++) idx[i] = rng.int(k);
    for (let f = 0; f < m; f++) draws[f * reps + b] = dz(diffs[f], idx);
  }
  const { low, high } = percentileIntervals(value, draws, reps);
  return { value, low, high, bootstrap: reps, seed: options.seed, interval: 'percentile-95' };
}
