/**
 * Scalar statistics of one persistence diagram.
 *
 * Infinite (essential) intervals: every statistic built on deaths or lifetimes uses the finite
 * intervals only, and the column names say so (`_finite`); essential intervals are counted on
 * their own (`count_essential`). Births are finite for every interval, so birth statistics use all
 * intervals. Reason: an essential lifetime is only "until the end of the filtration we chose",
 * which would make the numbers depend on the cap rather than on the data.
 */
import type { Interval } from '../types.ts';

export interface IntervalStats {
  count: number;
  countEssential: number;
  countFinite: number;
  /** Finite intervals with lifetime ≥ floor. */
  countFiniteAboveFloor: number;
  /** Σ lᵢ over finite intervals (total persistence, p = 1; Cohen-Steiner et al. 2010). */
  totalPersistenceP1: number;
  /** Σ lᵢ² over finite intervals (p = 2; the sum of powers, not its square root). */
  totalPersistenceP2: number;
  /** 0 when there is no finite interval. */
  maxPersistence: number;
  /** NaN when empty. */
  meanBirth: number;
  medianBirth: number;
  meanDeath: number;
  medianDeath: number;
  meanLifetime: number;
  medianLifetime: number;
  /** Persistent entropy of the finite intervals (natural log); NaN when there is none with positive length. */
  entropy: number;
}

/** Median of a list (mean of the two middle values for an even count); NaN when empty. */
export function median(values: ArrayLike<number>): number {
  const n = values.length;
  if (n === 0) return NaN;
  const s = Float64Array.from(values).sort();
  return n % 2 === 1 ? s[(n - 1) / 2] : (s[n / 2 - 1] + s[n / 2]) / 2;
}

function mean(values: ArrayLike<number>): number {
  if (values.length === 0) return NaN;
  let s = 0;
  for (let i = 0; i < values.length; i++) s += values[i];
  return s / values.length;
}

/**
 * Persistent entropy E = −Σ (lᵢ/L) ln(lᵢ/L), L = Σ lᵢ, over the finite intervals of positive length
 * (H. Chintakunta, T. Gentimis, R. Gonzalez-Diaz, M.-J. Jimenez, H. Krim (2015), An entropy-based
 * persistence barcode, Pattern Recognition 48; M. Rucco et al. (2016), Characterisation of the
 * idiotypic immune network through persistent entropy, Proc. ECCS 2014 — reference from memory).
 *
 *   persistentEntropy([{birth: 0, death: 1}, {birth: 0, death: 1}]) → ln 2
 */
export function persistentEntropy(diagram: Interval[]): number {
  let total = 0;
  for (const { birth, death } of diagram) if (Number.isFinite(death) && death > birth) total += death - birth;
  if (total === 0) return NaN;
  let e = 0;
  for (const { birth, death } of diagram) {
    if (!Number.isFinite(death) || !(death > birth)) continue;
    const p = (death - birth) / total;
    e -= p * Math.log(p);
  }
  return e;
}

/**
 * The statistics above for one diagram.
 *
 *   intervalStats([{birth: 1, death: 3}, {birth: 2, death: Infinity}], 1)
 *   → count 2, countEssential 1, totalPersistenceP1 2, meanBirth 1.5, meanDeath 3
 */
export function intervalStats(diagram: Interval[], floor = 0): IntervalStats {
  const births: number[] = [];
  const deaths: number[] = [];
  const lifetimes: number[] = [];
  let countEssential = 0;
  let above = 0;
  let p1 = 0;
  let p2 = 0;
  let max = 0;
  for (const { birth, death } of diagram) {
    births.push(birth);
    if (!Number.isFinite(death)) {
      countEssential++;
      continue;
    }
    const l = death - birth;
    deaths.push(death);
    lifetimes.push(l);
    if (l >= floor) above++;
    p1 += l;
    p2 += l * l;
    if (l > max) max = l;
  }
  return {
    count: diagram.length,
    countEssential,
    countFinite: diagram.length - countEssential,
    countFiniteAboveFloor: above,
    totalPersistenceP1: p1,
    totalPersistenceP2: p2,
    maxPersistence: max,
    meanBirth: mean(births),
    medianBirth: median(births),
    meanDeath: mean(deaths),
    medianDeath: median(deaths),
    meanLifetime: mean(lifetimes),
    medianLifetime: median(lifetimes),
    entropy: persistentEntropy(diagram),
  };
}
