/**
 * Standard normal draws that are the same bit for bit on every JavaScript engine.
 *
 * ECMA-262 leaves Math.log, Math.sin and Math.cos "implementation-approximated", so a
 * Box–Muller draw may differ in the last bit between engines and the committed sample
 * cohort would no longer regenerate byte for byte. Here only +, −, ×, ÷ and √ are used
 * (IEEE 754 rounds each correctly), with our own logarithm.
 *
 * Method: Marsaglia & Bray (1964), "A convenient method for generating normal variables",
 * SIAM Review 6 — the polar method: draw (u, v) uniform in the unit disc, s = u² + v²,
 * then u·√(−2 ln s / s) and v·√(−2 ln s / s) are independent N(0, 1).
 *
 *   const g = gaussianSource(createRng(7)); g() → a N(0, 1) draw; g() → the next one
 */
import type { Rng } from '../random.ts';

const LN2 = 0.6931471805599453;
const SQRT2 = 1.4142135623730951;

/**
 * Natural logarithm of x > 0 from arithmetic alone: x = m·2^k with m in [1/√2, √2) (exact
 * scalings by 2), then ln m = 2 atanh(z) = 2 (z + z³/3 + z⁵/5 + …) with z = (m − 1)/(m + 1),
 * |z| ≤ 0.172, so 20 terms reach double precision (0.172^41 < 1e-31).
 *
 *   ln(1) → 0;  ln(Math.E) → 1 (to within 1e-15)
 */
export function ln(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) throw new RangeError(`ln needs a finite x > 0, got ${x}`);
  let k = 0;
  let m = x;
  while (m >= SQRT2) {
    m /= 2;
    k++;
  }
  while (m < SQRT2 / 2) {
    m *= 2;
    k--;
  }
  const z = (m - 1) / (m + 1);
  const z2 = z * z;
  let term = z;
  let sum = 0;
  for (let j = 0; j < 20; j++) {
    sum += term / (2 * j + 1);
    term *= z2;
  }
  return 2 * sum + k * LN2;
}

/** A function returning successive independent N(0, 1) draws driven by `rng` (the polar method keeps its spare). */
export function gaussianSource(rng: Rng): () => number {
  let spare = 0;
  let hasSpare = false;
  return () => {
    if (hasSpare) {
      hasSpare = false;
      return spare;
    }
    let u: number, v: number, s: number;
    do {
      u = 2 * rng.next() - 1;
      v = 2 * rng.next() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s === 0);
    const f = Math.sqrt((-2 * ln(s)) / s);
    spare = v * f;
    hasSpare = true;
    return u * f;
  };
}
