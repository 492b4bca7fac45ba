/**
 * The relabellings a permutation test visits. Labels (group memberships, or design-row types)
 * are a multiset; when it has no more distinct arrangements than the permutations asked for,
 * every arrangement is visited once (exact test, identity included); otherwise `requested`
 * uniformly random arrangements are drawn with the seeded generator, and the identity is
 * counted separately, as in p = (1 + #{T* ≥ T}) / (1 + B) (Phipson & Smyth 2010, "Permutation
 * p-values should never be zero", Stat. Appl. Genet. Mol. Biol.; Winkler et al. 2014, NeuroImage).
 *
 *   distinctArrangements([0, 0, 1, 1, 1])  // C(5, 2) = 10
 */
import { createRng, shuffle } from '../random.ts';
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

export interface RelabellingRun {
  mode: 'exact' | 'random';
  /** Arrangements visited: all distinct ones (exact) or the random draws, not counting the identity (random). */
  visited: number;
  distinct: number;
  seed: number;
}

/**
 * Calls `visit` with each arrangement of `keys` to be tested (the array is reused between
 * calls: copy it to keep it).
 */
export function forEachRelabelling(
  keys: ArrayLike<number>,
  requested: number,
  seed: number,
  visit: (arrangement: Int32Array) => void,
): RelabellingRun {
  if (!Number.isInteger(requested) || requested < 1) {
    throw new Error(`number of permutations must be a positive integer; got ${requested}`);
  }
  const distinct = distinctArrangements(keys);
  const arr = Int32Array.from(keys);
  if (distinct <= requested) {
    arr.sort();
    let visited = 0;
    do {
      visit(arr);
      visited++;
    } while (nextArrangement(arr));
    return { mode: 'exact', visited, distinct, seed };
  }
  const rng = createRng(seed);
  for (let b = 0; b < requested; b++) {
    shuffle(arr, rng);
    visit(arr);
  }
  return { mode: 'random', visited: requested, distinct, seed };
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
