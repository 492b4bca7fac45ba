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
  chunkCount,
  chunkRange,
  forEachBlockPermutation,
  forEachRelabelling,
  permutationP,
  relabellingRun,
  type RelabellingRun,
  type VisitRange,
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
  /** The run `forEach` makes, without visiting anything. */
  run(requested: number, seed: number): RelabellingRun;
  /**
   * Visits every permutation to test, or those in `range` of the sequence (relabel.ts, chunks);
   * `permuted` holds the basis vectors moved by it (reused arrays).
   */
  forEach(
    requested: number,
    seed: number,
    visit: (permuted: Float64Array[]) => void,
    range?: VisitRange,
  ): RelabellingRun;
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
    run(requested, seed) {
      if (ex) return forEachBlockPermutation(ex, n, requested, seed, () => {}, { from: 0, to: 0 });
      return relabellingRun(keys, requested, seed);
    },
    forEach(requested, seed, visit, range) {
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
      if (ex) return forEachBlockPermutation(ex, n, requested, seed, (src) => move(src, false), range);
      return forEachRelabelling(keys, requested, seed, (arr) => move(arr, true), range);
    },
  };
}

/** What every chunk of one family's test shares: the plan, the residuals and the observed statistics. */
export interface PreparedPermutationTest {
  plan: PermutationPlan;
  requested: number;
  seed: number;
  run: RelabellingRun;
  /** Chunks the run is cut into (relabel.ts, PERMUTATION_CHUNK). */
  chunks: number;
  m: number;
  /** Unit-normalised nuisance residuals, feature-major (m × n). */
  rz: Float64Array;
  valid: Uint8Array;
  /** Observed signed t or F (NaN when left out). */
  statistic: Float64Array;
  /** Observed |t| or F, the value permuted ones are compared with. */
  observed: Float64Array;
  leftOut: Array<'non-finite' | 'no-variation' | null>;
  warnings: string[];
}

/** One chunk's share of the test: exceedance counts per feature and the family maximum per visit. */
export interface PermutationChunk {
  chunk: number;
  count: Float64Array;
  maxima: Float64Array;
}

/** Everything before the permutations: the plan, the residuals, the observed statistics. */
export function preparePermutationTest(
  columns: Float64Array[],
  contrast: Contrast,
  features: ArrayLike<number>[],
  options: PermutationOptions & ExchangeabilityOptions,
): PreparedPermutationTest {
  const requested = options.permutations ?? DEFAULT_PERMUTATIONS;
  const warnings: string[] = [];
  const plan = permutationPlan(columns, contrast, options);
  const { n, qz } = plan;
  const run = plan.run(requested, options.seed);

  // Unit-normalised nuisance residuals, feature-major.
  const m = features.length;
  const rz = new Float64Array(m * n);
  const valid = new Uint8Array(m);
  const leftOut: Array<'non-finite' | 'no-variation' | null> = new Array(m).fill(null);
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

  const statistic = new Float64Array(m).fill(NaN);
  const observed = new Float64Array(m).fill(NaN);
  const kernel = statisticKernel(plan, rz, valid, 1);
  kernel.load(plan.basis, 0);
  kernel.evaluate(1, (_b, j, v) => {
    statistic[j] = v;
    observed[j] = plan.s === 1 ? Math.abs(v) : v;
  });
  return {
    plan,
    requested,
    seed: options.seed,
    run,
    chunks: chunkCount(run.visited),
    m,
    rz,
    valid,
    statistic,
    observed,
    leftOut,
    warnings,
  };
}

/**
 * Permutations evaluated per pass over the residuals: their permuted basis vectors (batch · nb · n
 * numbers) stay within about 16 KiB, so they sit in the L1 cache while every feature's residuals
 * stream past once per batch rather than once per permutation.
 */
function batchSize(nb: number, n: number): number {
  return Math.max(1, Math.min(64, Math.floor(2048 / Math.max(1, nb * n))));
}

/**
 * The statistic of every feature for a batch of permuted bases: the product of the residual matrix
 * (m × n) with the batch's basis vectors (n × batch·nb), row by row, each dot product summed in
 * index order (so each value is the same whatever the batch size), then t or F from the dots.
 * All buffers are allocated once.
 */
function statisticKernel(plan: PermutationPlan, rz: Float64Array, valid: Uint8Array, batch: number) {
  const { n, s, df2, plain } = plan;
  const nb = plan.basis.length;
  const m = valid.length;
  const vectors = new Float64Array(batch * nb * n);
  const dots = new Float64Array(batch * nb);
  return {
    batch,
    /** Copies permuted basis vectors into slot `b` of the batch. */
    load(bp: Float64Array[], b: number): void {
      for (let k = 0; k < nb; k++) vectors.set(bp[k], (b * nb + k) * n);
    },
    /** Evaluates the first `used` slots for every valid feature. */
    evaluate(used: number, onStat: (b: number, j: number, v: number) => void): void {
      const cols = used * nb;
      for (let j = 0; j < m; j++) {
        if (!valid[j]) continue;
        const off = j * n;
        let c = 0;
        for (; c + 3 < cols; c += 4) {
          const o0 = c * n;
          const o1 = o0 + n;
          const o2 = o1 + n;
          const o3 = o2 + n;
          let acc0 = 0;
          let acc1 = 0;
          let acc2 = 0;
          let acc3 = 0;
          for (let i = 0; i < n; i++) {
            const v = rz[off + i];
            acc0 += v * vectors[o0 + i];
            acc1 += v * vectors[o1 + i];
            acc2 += v * vectors[o2 + i];
            acc3 += v * vectors[o3 + i];
          }
          dots[c] = acc0;
          dots[c + 1] = acc1;
          dots[c + 2] = acc2;
          dots[c + 3] = acc3;
        }
        for (; c < cols; c++) {
          const o = c * n;
          let acc = 0;
          for (let i = 0; i < n; i++) acc += rz[off + i] * vectors[o + i];
          dots[c] = acc;
        }
        for (let b = 0; b < used; b++) {
          const d0 = b * nb;
          let ssx = 0;
          for (let k = 0; k < s; k++) ssx += dots[d0 + k] * dots[d0 + k];
          let rss = 1 - ssx;
          if (!plain) for (let k = s; k < nb; k++) rss -= dots[d0 + k] * dots[d0 + k];
          if (rss < 1e-14) rss = 1e-14;
          onStat(b, j, s === 1 ? dots[d0] / Math.sqrt(rss / df2) : ssx / s / (rss / df2));
        }
      }
    },
  };
}

/** Runs one chunk of the prepared test (any chunk, on any thread: the result depends on the chunk alone). */
export function permutationChunk(prep: PreparedPermutationTest, chunk: number): PermutationChunk {
  const { plan, m, valid, observed } = prep;
  const range: VisitRange = chunkRange(chunk, prep.run.visited);
  const count = new Float64Array(m);
  const maxima = new Float64Array(range.to - range.from).fill(-Infinity);
  const kernel = statisticKernel(plan, prep.rz, valid, batchSize(plan.basis.length, plan.n));
  let filled = 0;
  let base = 0;
  const abs = plan.s === 1;
  const onStat = (b: number, j: number, v: number): void => {
    const x = abs ? Math.abs(v) : v;
    if (atLeast(x, observed[j])) count[j]++;
    if (x > maxima[base + b]) maxima[base + b] = x;
  };
  plan.forEach(
    prep.requested,
    prep.seed,
    (permuted) => {
      kernel.load(permuted, filled++);
      if (filled === kernel.batch) {
        kernel.evaluate(filled, onStat);
        base += filled;
        filled = 0;
      }
    },
    range,
  );
  if (filled > 0) kernel.evaluate(filled, onStat);
  return { chunk, count, maxima };
}

/** Merges the chunks (every chunk once, in any order) into the test's p-values. */
export function finishPermutationTest(
  prep: PreparedPermutationTest,
  chunks: PermutationChunk[],
): PermutationTest {
  const { plan, m, valid, observed, run } = prep;
  const byIndex = new Array<PermutationChunk | undefined>(prep.chunks);
  for (const c of chunks) {
    if (!(c.chunk >= 0 && c.chunk < prep.chunks) || byIndex[c.chunk])
      throw new Error(`permutation chunk ${c.chunk} is out of range or repeated`);
    byIndex[c.chunk] = c;
  }
  const count = new Float64Array(m);
  const maxNull = new Float64Array(run.visited);
  for (let c = 0; c < prep.chunks; c++) {
    const part = byIndex[c];
    if (!part) throw new Error(`permutation chunk ${c} is missing`);
    // Counts are whole numbers: their sum is exact in any order.
    for (let j = 0; j < m; j++) count[j] += part.count[j];
    maxNull.set(part.maxima, chunkRange(c, run.visited).from);
  }
  maxNull.sort();
  const pUncorrected = new Float64Array(m).fill(NaN);
  const pFwer = new Float64Array(m).fill(NaN);
  for (let j = 0; j < m; j++) {
    if (!valid[j]) continue;
    pUncorrected[j] = permutationP(count[j], run);
    pFwer[j] = permutationP(maxNull.length - lowerBound(maxNull, observed[j]), run);
  }
  const warnings = [...prep.warnings];
  const smallestP = run.mode === 'exact' ? 1 / run.visited : 1 / (1 + run.visited);
  if (run.distinct < FEW_RELABELLINGS) {
    warnings.push(
      `only ${run.distinct} distinct relabellings are possible; the smallest attainable p is ${formatP(1 / run.distinct)}`,
    );
  }
  return {
    kind: plan.s === 1 ? 't' : 'F',
    scheme: plan.scheme,
    statistic: prep.statistic,
    pUncorrected,
    pFwer,
    df1: plan.s,
    df2: plan.df2,
    run,
    requested: prep.requested,
    smallestP,
    maxNull,
    warnings,
    leftOut: prep.leftOut,
  };
}

/** The permutation test of `contrast` on each feature (each aligned with the design rows), all chunks in this thread. */
export function permutationTest(
  columns: Float64Array[],
  contrast: Contrast,
  features: ArrayLike<number>[],
  options: PermutationOptions & ExchangeabilityOptions,
): PermutationTest {
  const prep = preparePermutationTest(columns, contrast, features, options);
  const chunks = Array.from({ length: prep.chunks }, (_, c) => permutationChunk(prep, c));
  return finishPermutationTest(prep, chunks);
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
