/**
 * Permutation inference for the GLM contrast C β = 0 across a whole family of features at once,
 * with the max-statistic family-wise correction.
 *
 * The design M is split into a nuisance part Z = M N (N spanning the null space of C, so that
 * span Z = {Mβ : Cβ = 0}) and the tested part, the complement of Z within span M (Winkler,
 * Ridgway, Webster, Smith & Nichols 2014, "Permutation inference for the general linear model",
 * NeuroImage 92, appendix on partitioning the model; cited from memory). Freedman–Lane (Freedman & Lane 1983,
 * J. Bus. Econ. Stat.): the residuals of the nuisance-only fit Rz = (I − Hz) y are permuted,
 * y* = Hz y + P Rz, and the full model is refitted. When Z is the intercept alone the
 * statistic on y* equals the one on P y, i.e. plain label permutation (Pitman 1937), and the
 * distinct relabellings are those of the design rows, so small cases are enumerated exactly.
 *
 * Vectorised: the statistic on y* only needs the projections of P Rz on the orthonormal bases of Z
 * and of the tested part; we permute those few basis vectors (n numbers each) instead of the
 * data and take dot products with every feature's (unit-normalised) Rz, so one permutation
 * costs O(n · (rank M)) per feature, shared by the whole family.
 *
 * t-tests are two-sided: permuted and observed statistics are compared as |t|. When the distinct
 * relabellings are no more than the permutations asked for, all are enumerated (label permutation:
 * arrangements of the design rows, e.g. C(n, n₁) for two groups; Freedman–Lane: all n! orders of
 * the residuals) and p = #{T* ≥ T} / N, identity included; otherwise p = (1 + #{T* ≥ T}) / (1 + B)
 * over B seeded random permutations.
 *
 * Exchangeability blocks (design.ts; Winkler et al. 2014, 2015 NeuroImage 123): the permutations
 * are restricted to the design's set — within blocks, whole blocks, or both (relabel.ts
 * forEachBlockPermutation) — and the scheme is reported as freedman-lane-within-blocks,
 * -whole-blocks or -within-and-whole-blocks. Every such permutation maps the span of the intercept
 * and block intercepts onto itself, and Rz is orthogonal to it, so that part of the nuisance basis
 * need not be permuted (as for the intercept in the plain scheme). Within blocks of two rows with
 * the block intercepts in the nuisance, swapping a block's rows flips the sign of its residual
 * difference: the test is the sign-flip test of the within-block differences. Designs without
 * blocks take exactly the path they took before blocks existed.
 *
 * FWER: each permutation's maximum over the family of |t| (or F) forms the null distribution of
 * the maximum (Westfall & Young 1993; Nichols & Holmes 2002, Hum. Brain Mapp. 15).
 *
 *   const res = permutationTest(design.columns, design.contrasts[0], features, { permutations: 5000, seed: 1 });
 *   res.pUncorrected[j], res.pFwer[j]
 */
import type { Contrast, Exchangeability } from './design.ts';
import { dot, orthonormalize, solveUpperTransposed } from './linalg.ts';
import {
  atLeast,
  forEachBlockPermutation,
  forEachRelabelling,
  permutationP,
  type RelabellingRun,
} from './relabel.ts';

export interface PermutationOptions {
  /** Random permutations to draw when enumeration is not possible (default 5000). */
  permutations?: number;
  seed: number;
}

export const DEFAULT_PERMUTATIONS = 5000;

/** Below this many distinct relabellings a warning names the smallest attainable p (common practice). */
export const FEW_RELABELLINGS = 20;

export interface PermutationTest {
  kind: 't' | 'F';
  scheme: PermutationScheme;
  /** Observed t (signed) or F per feature; NaN for a feature left out (constant or non-finite). */
  statistic: Float64Array;
  pUncorrected: Float64Array;
  pFwer: Float64Array;
  df1: number;
  df2: number;
  run: RelabellingRun;
  /** Permutations requested. */
  requested: number;
  /** The smallest p the test can give. */
  smallestP: number;
  /** Null distribution of the family maximum, one entry per visited arrangement. */
  maxNull: Float64Array;
  warnings: string[];
  /** Why each feature was left out (null when tested). */
  leftOut: Array<'non-finite' | 'no-variation' | null>;
}

/** How the rows may be permuted: a blocked design's restricted set, and the columns it leaves invariant. */
export interface ExchangeabilityOptions {
  exchangeability?: Exchangeability | null;
  /**
   * Design columns whose span every permutation of the set maps onto itself besides the intercept
   * (the block intercepts under within-block schemes); their part of the nuisance is skipped.
   */
  invariantColumns?: number[];
}

export type PermutationScheme =
  | 'label-permutation'
  | 'freedman-lane'
  | 'freedman-lane-within-blocks'
  | 'freedman-lane-whole-blocks'
  | 'freedman-lane-within-and-whole-blocks';

/**
 * The split of a design into tested and nuisance parts and the permutations to visit, shared by
 * the per-feature test and the distance-based test. `basis` holds the orthonormal tested basis
 * (first `s` vectors, oriented for a t) followed by the nuisance basis vectors that permutations
 * move (none in the plain scheme, where the nuisance is the intercept alone).
 */
export interface PermutationPlan {
  n: number;
  s: number;
  df2: number;
  plain: boolean;
  scheme: PermutationScheme;
  basis: Float64Array[];
  /** Orthonormal basis of the nuisance space (all of it). */
  qz: Float64Array[];
  /** Visits every permutation to test; `permuted` holds the basis vectors moved by it (reused arrays). */
  forEach(requested: number, seed: number, visit: (permuted: Float64Array[]) => void): RelabellingRun;
}

export function permutationPlan(
  columns: Float64Array[],
  contrast: Contrast,
  options: ExchangeabilityOptions = {},
): PermutationPlan {
  const n = columns[0].length;
  const r = columns.length;
  const s = contrast.rows.length;
  const df2 = n - r;
  const full = orthonormalize(columns);
  if (full.dropped.length > 0) throw new Error('design is rank-deficient');
  const unit = (k: number) => Array.from({ length: r }, (_, i) => (i === k ? 1 : 0));
  const cspace = orthonormalize([...contrast.rows, ...Array.from({ length: r }, (_, k) => unit(k))]);
  if (cspace.kept.slice(0, s).some((k, i) => k !== i))
    throw new Error(`contrast '${contrast.name}' has dependent rows`);
  const nullBasis = cspace.q.slice(s);
  const z = nullBasis.map((v) => {
    const col = new Float64Array(n);
    for (let k = 0; k < r; k++) for (let i = 0; i < n; i++) col[i] += v[k] * columns[k][i];
    return col;
  });
  const qz = orthonormalize(z).q;
  const qx = orthonormalize([...qz, ...columns]).q.slice(qz.length);
  if (qz.length !== r - s || qx.length !== s)
    throw new Error('could not split the design into tested and nuisance parts');
  if (s === 1) {
    // Orient the tested direction along M(MᵀM)⁻¹c so that the sign of t is that of cᵀβ̂.
    const a = solveUpperTransposed(full.r, contrast.rows[0]);
    const w = new Float64Array(n);
    for (let k = 0; k < r; k++) for (let i = 0; i < n; i++) w[i] += a[k] * full.q[k][i];
    if (dot(w, qx[0]) < 0) for (let i = 0; i < n; i++) qx[0][i] = -qx[0][i];
  }
  const ex = options.exchangeability ?? null;
  const ones = new Float64Array(n).fill(1 / Math.sqrt(n));
  const plain = !ex && qz.length === 1 && Math.abs(dot(qz[0], ones)) > 1 - 1e-12;
  let basis: Float64Array[];
  if (plain) {
    // In the plain scheme P Rz stays orthogonal to the intercept, so only the tested basis is needed.
    basis = qx;
  } else if (ex) {
    // Rz is orthogonal to the invariant columns, and so is P Rz: only the rest of the nuisance moves.
    const invariant = orthonormalize([
      columns[0],
      ...(options.invariantColumns ?? []).map((k) => columns[k]),
    ]).q;
    const rest = orthonormalize([...invariant, ...qz]).q.slice(invariant.length);
    basis = [...qx, ...rest];
  } else basis = [...qx, ...qz];

  // Row types: in the plain scheme, rows of M that are equal are exchangeable labels.
  const keys = new Int32Array(n);
  const representative: number[] = [];
  if (plain) {
    const seen = new Map<string, number>();
    for (let i = 0; i < n; i++) {
      const key = columns.map((c) => c[i]).join(',');
      let t = seen.get(key);
      if (t === undefined) {
        t = representative.length;
        seen.set(key, t);
        representative.push(i);
      }
      keys[i] = t;
    }
  } else {
    for (let i = 0; i < n; i++) {
      keys[i] = i;
      representative.push(i);
    }
  }
  const scheme: PermutationScheme = ex
    ? `freedman-lane-${ex.scheme}`
    : plain
      ? 'label-permutation'
      : 'freedman-lane';
  return {
    n,
    s,
    df2,
    plain,
    scheme,
    basis,
    qz,
    forEach(requested, seed, visit) {
      const permuted = basis.map(() => new Float64Array(n));
      const move = (source: Int32Array, rep: boolean) => {
        for (let k = 0; k < basis.length; k++) {
          const src = basis[k];
          const dst = permuted[k];
          if (rep) for (let i = 0; i < n; i++) dst[i] = src[representative[source[i]]];
          else for (let i = 0; i < n; i++) dst[i] = src[source[i]];
        }
        visit(permuted);
      };
      if (ex) return forEachBlockPermutation(ex, n, requested, seed, (src) => move(src, false));
      return forEachRelabelling(keys, requested, seed, (arr) => move(arr, true));
    },
  };
}

/** The permutation test of `contrast` on each feature (each aligned with the design rows). */
export function permutationTest(
  columns: Float64Array[],
  contrast: Contrast,
  features: ArrayLike<number>[],
  options: PermutationOptions & ExchangeabilityOptions,
): PermutationTest {
  const requested = options.permutations ?? DEFAULT_PERMUTATIONS;
  const warnings: string[] = [];
  const plan = permutationPlan(columns, contrast, options);
  const { n, s, df2, plain, basis, qz } = plan;
  const nb = basis.length;

  // Unit-normalised nuisance residuals, feature-major.
  const m = features.length;
  const rz = new Float64Array(m * n);
  const valid = new Uint8Array(m);
  const leftOut: Array<'non-finite' | 'no-variation'> = new Array(m);
  let nonFinite = 0;
  let constant = 0;
  for (let j = 0; j < m; j++) {
    const y = features[j];
    let finite = y.length === n;
    for (let i = 0; finite && i < n; i++) finite = Number.isFinite(y[i]);
    if (!finite) {
      nonFinite++;
      leftOut[j] = 'non-finite';
      continue;
    }
    const e = Float64Array.from(y);
    for (const qk of qz) {
      const c = dot(qk, e);
      for (let i = 0; i < n; i++) e[i] -= c * qk[i];
    }
    const norm = Math.sqrt(dot(e, e));
    const scale = Math.sqrt(dot(y, y));
    if (!(norm > 1e-12 * scale)) {
      constant++;
      leftOut[j] = 'no-variation';
      continue;
    }
    valid[j] = 1;
    for (let i = 0; i < n; i++) rz[j * n + i] = e[i] / norm;
  }
  if (nonFinite > 0) warnings.push(`${nonFinite} feature(s) with missing or non-finite values were left out`);
  if (constant > 0)
    warnings.push(`${constant} feature(s) without variation beyond the nuisance model were left out`);

  const statOf = (dots: Float64Array): number => {
    let ssx = 0;
    for (let k = 0; k < s; k++) ssx += dots[k] * dots[k];
    let rss = 1 - ssx;
    if (!plain) for (let k = s; k < nb; k++) rss -= dots[k] * dots[k];
    if (rss < 1e-14) rss = 1e-14;
    return s === 1 ? dots[0] / Math.sqrt(rss / df2) : ssx / s / (rss / df2);
  };
  const dots = new Float64Array(nb);
  const evaluate = (bp: Float64Array[], out: Float64Array | null, onStat: (j: number, v: number) => void) => {
    for (let j = 0; j < m; j++) {
      if (!valid[j]) continue;
      const off = j * n;
      let k = 0;
      // Several basis vectors per pass over the feature's residuals cut the memory traffic.
      for (; k + 3 < nb; k += 4) {
        const b0 = bp[k];
        const b1 = bp[k + 1];
        const b2 = bp[k + 2];
        const b3 = bp[k + 3];
        let acc0 = 0;
        let acc1 = 0;
        let acc2 = 0;
        let acc3 = 0;
        for (let i = 0; i < n; i++) {
          const v = rz[off + i];
          acc0 += v * b0[i];
          acc1 += v * b1[i];
          acc2 += v * b2[i];
          acc3 += v * b3[i];
        }
        dots[k] = acc0;
        dots[k + 1] = acc1;
        dots[k + 2] = acc2;
        dots[k + 3] = acc3;
      }
      for (; k + 1 < nb; k += 2) {
        const b0 = bp[k];
        const b1 = bp[k + 1];
        let acc0 = 0;
        let acc1 = 0;
        for (let i = 0; i < n; i++) {
          const v = rz[off + i];
          acc0 += v * b0[i];
          acc1 += v * b1[i];
        }
        dots[k] = acc0;
        dots[k + 1] = acc1;
      }
      if (k < nb) {
        const b = bp[k];
        let acc = 0;
        for (let i = 0; i < n; i++) acc += rz[off + i] * b[i];
        dots[k] = acc;
      }
      const v = statOf(dots);
      if (out) out[j] = v;
      onStat(j, s === 1 ? Math.abs(v) : v);
    }
  };

  const statistic = new Float64Array(m).fill(NaN);
  const observed = new Float64Array(m).fill(NaN);
  evaluate(basis, statistic, (j, v) => (observed[j] = v));

  const count = new Float64Array(m);
  const maxima: number[] = [];
  const run = plan.forEach(requested, options.seed, (permuted) => {
    let max = -Infinity;
    evaluate(permuted, null, (j, v) => {
      if (atLeast(v, observed[j])) count[j]++;
      if (v > max) max = v;
    });
    maxima.push(max);
  });

  const maxNull = Float64Array.from(maxima).sort();
  const pUncorrected = new Float64Array(m).fill(NaN);
  const pFwer = new Float64Array(m).fill(NaN);
  for (let j = 0; j < m; j++) {
    if (!valid[j]) continue;
    pUncorrected[j] = permutationP(count[j], run);
    pFwer[j] = permutationP(maxNull.length - lowerBound(maxNull, observed[j]), run);
  }
  const smallestP = run.mode === 'exact' ? 1 / run.visited : 1 / (1 + run.visited);
  if (run.distinct < FEW_RELABELLINGS) {
    warnings.push(
      `only ${run.distinct} distinct relabellings are possible; the smallest attainable p is ${formatP(1 / run.distinct)}`,
    );
  }
  return {
    kind: s === 1 ? 't' : 'F',
    scheme: plan.scheme,
    statistic,
    pUncorrected,
    pFwer,
    df1: s,
    df2,
    run,
    requested,
    smallestP,
    maxNull,
    warnings,
    leftOut: leftOut.map((x, j) => (valid[j] ? null : x)),
  };
}

/** First index whose value counts as at least `v` (sorted ascending). */
function lowerBound(sorted: Float64Array, v: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (atLeast(sorted[mid], v)) hi = mid;
    else lo = mid + 1;
  }
  return lo;
}

export function formatP(p: number): string {
  return Number(p.toPrecision(3)).toString();
}
