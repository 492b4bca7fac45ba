/**
 * The relabellings a permutation test visits. Labels (group memberships, or design-row types)
 * are a multiset; when it has no more distinct arrangements than the permutations asked for,
 * every arrangement is visited once (exact test, identity included); otherwise `requested`
 * uniformly random arrangements are drawn with the seeded generator, and the identity is
 * counted separately, as in p = (1 + #{T* ≥ T}) / (1 + B) (Phipson & Smyth 2010, "Permutation
 * p-values should never be zero", Stat. Appl. Genet. Mol. Biol.; Winkler et al. 2014, NeuroImage).
 *
 * Chunks: the sequence of visited arrangements is cut into chunks of PERMUTATION_CHUNK. Random
 * draws of chunk c come from their own stream, seeded from (seed, c) alone (chunkSeed; chunk 0 is
 * the seed's own stream), each chunk starting again from the sorted-as-given labels; exact
 * enumeration is cut by index ranges of the lexicographic order. So any range of chunks can be
 * visited on its own (e.g. on another thread) and the union over all chunks is the same set of
 * arrangements, in the same order, whatever the split.
 *
 *   distinctArrangements([0, 0, 1, 1, 1])  // C(5, 2) = 10
 */
import { createRng, shuffle, type Rng } from '../random.ts';
import { logGamma } from './special.ts';

/** n! / ∏ count_k!, the number of distinct arrangements of a multiset (Infinity past 2^53). */
export function distinctArrangements(keys: ArrayLike<number>): number {
  const counts = new Map<number, number>();
  for (let i = 0; i < keys.length; i++) counts.set(keys[i], (counts.get(keys[i]) ?? 0) + 1);
  let log = logGamma(keys.length + 1);
  for (const c of counts.values()) log -= logGamma(c + 1);
  const v = Math.exp(log);
  return v > 2 ** 53 ? Infinity : Math.round(v);
}

/** Arrangements per chunk; chunk c covers the visits [c · PERMUTATION_CHUNK, (c + 1) · PERMUTATION_CHUNK). */
export const PERMUTATION_CHUNK = 256;

/** A range of visits [from, to) of the whole sequence (chunk boundaries, in practice). */
export interface VisitRange {
  from: number;
  to: number;
}

/**
 * The seed of chunk c's random stream: the run's seed for chunk 0, otherwise a bijective 32-bit
 * mix (the MurmurHash3 finaliser, common practice) of the seed and the chunk index, so that the
 * chunks of one run draw from distinct streams.
 */
export function chunkSeed(seed: number, chunk: number): number {
  if (chunk === 0) return seed;
  let h = ((seed >>> 0) ^ Math.imul(chunk, 0x9e3779b9)) >>> 0;
  h = Math.imul(h ^ (h >>> 16), 0x85ebca6b) >>> 0;
  h = Math.imul(h ^ (h >>> 13), 0xc2b2ae35) >>> 0;
  return (h ^ (h >>> 16)) >>> 0;
}

/** The number of chunks a run of `total` visits is cut into. */
export function chunkCount(total: number): number {
  return Math.ceil(total / PERMUTATION_CHUNK);
}

/** The visits of chunk `chunk` (of a run of `total` visits). */
export function chunkRange(chunk: number, total: number): VisitRange {
  return { from: chunk * PERMUTATION_CHUNK, to: Math.min(total, (chunk + 1) * PERMUTATION_CHUNK) };
}

function checkRequested(requested: number): void {
  if (!Number.isInteger(requested) || requested < 1) {
    throw new Error(`number of permutations must be a positive integer; got ${requested}`);
  }
}

function checkRange(range: VisitRange, total: number): VisitRange {
  if (!(Number.isInteger(range.from) && Number.isInteger(range.to) && 0 <= range.from && range.to <= total))
    throw new Error(`visit range [${range.from}, ${range.to}) is outside [0, ${total})`);
  return range;
}

/**
 * Random draws of the visits in `range`: for each chunk it touches, the chunk's stream, with
 * `reset` restoring the starting arrangement and `draw` making one arrangement from the stream.
 */
function randomVisits(
  seed: number,
  range: VisitRange,
  reset: () => void,
  draw: (rng: Rng) => void,
  visit: () => void,
): void {
  let b = range.from;
  while (b < range.to) {
    const chunk = Math.floor(b / PERMUTATION_CHUNK);
    const rng = createRng(chunkSeed(seed, chunk));
    reset();
    const start = chunk * PERMUTATION_CHUNK;
    const end = Math.min(range.to, start + PERMUTATION_CHUNK);
    // Draws before the range within the chunk are made and skipped, so the stream stays the chunk's.
    for (let k = start; k < b; k++) draw(rng);
    for (; b < end; b++) {
      draw(rng);
      visit();
    }
  }
}

export interface RelabellingRun {
  mode: 'exact' | 'random';
  /** Arrangements visited: all distinct ones (exact) or the random draws, not counting the identity (random). */
  visited: number;
  distinct: number;
  seed: number;
}

/** The run `forEachRelabelling` makes for these labels, without visiting anything. */
export function relabellingRun(keys: ArrayLike<number>, requested: number, seed: number): RelabellingRun {
  checkRequested(requested);
  const distinct = distinctArrangements(keys);
  return distinct <= requested
    ? { mode: 'exact', visited: distinct, distinct, seed }
    : { mode: 'random', visited: requested, distinct, seed };
}

/**
 * Calls `visit` with each arrangement of `keys` to be tested (the array is reused between
 * calls: copy it to keep it), or only with those in `range` of the run's sequence; the run
 * returned describes the whole sequence either way.
 */
export function forEachRelabelling(
  keys: ArrayLike<number>,
  requested: number,
  seed: number,
  visit: (arrangement: Int32Array) => void,
  range?: VisitRange,
): RelabellingRun {
  const run = relabellingRun(keys, requested, seed);
  const { from, to } = checkRange(range ?? { from: 0, to: run.visited }, run.visited);
  const arr = Int32Array.from(keys);
  if (run.mode === 'exact') {
    arr.sort();
    for (let k = 0; k < to; k++) {
      if (k >= from) visit(arr);
      nextArrangement(arr);
    }
    return run;
  }
  randomVisits(
    seed,
    { from, to },
    () => arr.set(keys as ArrayLike<number>),
    (rng) => shuffle(arr, rng),
    () => visit(arr),
  );
  return run;
}

/** Next lexicographic arrangement in place (Knuth, TAOCP 4A, Algorithm 7.2.1.2L); false after the last. */
function nextArrangement(a: Int32Array): boolean {
  let i = a.length - 2;
  while (i >= 0 && a[i] >= a[i + 1]) i--;
  if (i < 0) return false;
  let j = a.length - 1;
  while (a[j] <= a[i]) j--;
  let t = a[i];
  a[i] = a[j];
  a[j] = t;
  for (let l = i + 1, r = a.length - 1; l < r; l++, r--) {
    t = a[l];
    a[l] = a[r];
    a[r] = t;
  }
  return true;
}

/** The p-value from a count of permuted statistics at least as extreme as the observed one. */
export function permutationP(countAtLeast: number, run: RelabellingRun): number {
  return run.mode === 'exact' ? countAtLeast / run.visited : (1 + countAtLeast) / (1 + run.visited);
}

/** Values within this relative distance count as ties, so that the identity matches itself. */
export const TIE_TOLERANCE = 1e-10;

/** Whether a permuted statistic is at least the observed one, up to rounding. */
export function atLeast(permuted: number, observed: number): boolean {
  return permuted >= observed - TIE_TOLERANCE * Math.max(1, Math.abs(observed));
}

/**
 * The restricted permutations of a blocked design (Winkler et al. 2015, NeuroImage 123, "Multi-level
 * block permutation"): rows permuted within their block ('within-blocks'), whole blocks exchanged
 * with blocks of the same class, row k of one block going to row k of the other ('whole-blocks'),
 * or both composed ('within-and-whole-blocks'). The set is a group: a product of symmetric groups,
 * one per block (within) and one per class of blocks (whole), so it has ∏ n_b! · ∏ c_k! elements.
 * When that is no more than `requested`, every element is visited once (identity included);
 * otherwise `requested` uniform draws (independent shuffles of each factor) from the seeded generator.
 * `visit` gets, for each row position, the row whose value moves there (reused array).
 */
export function forEachBlockPermutation(
  ex: {
    scheme: 'within-blocks' | 'whole-blocks' | 'within-and-whole-blocks';
    members: number[][];
    classes: ArrayLike<number>;
  },
  n: number,
  requested: number,
  seed: number,
  visit: (source: Int32Array) => void,
  range?: VisitRange,
): RelabellingRun {
  checkRequested(requested);
  const within = ex.scheme !== 'whole-blocks';
  const whole = ex.scheme !== 'within-blocks';
  const nb = ex.members.length;
  // Factors: the blocks of each class (whole), then the rows of each block (within).
  const classMembers: number[][] = [];
  if (whole) {
    const byClass = new Map<number, number[]>();
    for (let b = 0; b < nb; b++) {
      const c = ex.classes[b];
      if (!byClass.has(c)) byClass.set(c, []);
      byClass.get(c)!.push(b);
    }
    for (const bs of byClass.values()) if (bs.length > 1) classMembers.push(bs);
  }
  const factorSizes = [
    ...classMembers.map((bs) => bs.length),
    ...(within ? ex.members.filter((m) => m.length > 1).map((m) => m.length) : []),
  ];
  let log = 0;
  for (const k of factorSizes) log += logGamma(k + 1);
  const v = Math.exp(log);
  const distinct = v > 2 ** 53 ? Infinity : Math.round(v);
  const state = factorSizes.map((k) => Int32Array.from({ length: k }, (_, i) => i));
  const withinBlocks = within ? ex.members.map((m, b) => (m.length > 1 ? b : -1)).filter((b) => b >= 0) : [];
  const source = new Int32Array(n);
  const blockTarget = Int32Array.from({ length: nb }, (_, b) => b);
  // Within-block moves inside the block that arrives (the state arrays are only ever changed in place).
  const withinOf = new Map<number, Int32Array>();
  withinBlocks.forEach((b, f) => withinOf.set(b, state[classMembers.length + f]));
  const compose = () => {
    // Whole-block moves: block b's place is taken by block blockTarget[b].
    for (let b = 0; b < nb; b++) blockTarget[b] = b;
    classMembers.forEach((bs, f) => bs.forEach((b, k) => (blockTarget[b] = bs[state[f][k]])));
    for (let b = 0; b < nb; b++) {
      const dst = ex.members[b];
      const srcBlock = blockTarget[b];
      const src = ex.members[srcBlock];
      const perm = withinOf.get(srcBlock);
      for (let k = 0; k < dst.length; k++) source[dst[k]] = src[perm ? perm[k] : k];
    }
    visit(source);
  };
  const run: RelabellingRun =
    distinct <= requested
      ? { mode: 'exact', visited: distinct, distinct, seed }
      : { mode: 'random', visited: requested, distinct, seed };
  const { from, to } = checkRange(range ?? { from: 0, to: run.visited }, run.visited);
  if (run.mode === 'exact') {
    for (let k = 0; k < to; k++) {
      if (k >= from) compose();
      let f = 0;
      for (; f < state.length; f++) {
        if (nextArrangement(state[f])) break;
        state[f].sort();
      }
    }
    return run;
  }
  randomVisits(
    seed,
    { from, to },
    () => state.forEach((s) => s.forEach((_, i) => (s[i] = i))),
    (rng) => {
      for (const s of state) shuffle(s, rng);
    },
    compose,
  );
  return run;
}
