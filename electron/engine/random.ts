/**
 * Seeded pseudo-random numbers, so that every permutation test and bootstrap can be
 * reproduced from the seed recorded beside its result.
 *
 * Generator: xoshiro128** (Blackman & Vigna, "Scrambled linear pseudorandom number generators",
 * ACM TOMS 2021), state seeded by splitmix32 from a 32-bit seed.
 */
export interface Rng {
  /** Uniform on [0, 1), 32 bits of resolution. */
  next(): number;
  /** Uniform integer in [0, k). */
  int(k: number): number;
}

export function createRng(seed: number): Rng {
  let s = seed >>> 0;
  const splitmix = (): number => {
    s = (s + 0x9e3779b9) >>> 0;
    let z = s;
    z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
    z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
    return (z ^ (z >>> 16)) >>> 0;
  };
  let a = splitmix();
  let b = splitmix();
  let c = splitmix();
  let d = splitmix();
  if ((a | b | c | d) === 0) a = 1;
  const nextU32 = (): number => {
    const result = Math.imul(rotl(Math.imul(b, 5) >>> 0, 7), 9) >>> 0;
    const t = (b << 9) >>> 0;
    c ^= a;
    d ^= b;
    b ^= c;
    a ^= d;
    c ^= t;
    d = rotl(d, 11);
    return result;
  };
  return {
    next: () => nextU32() / 4294967296,
    int: (k: number) => {
      // Rejection sampling: unbiased for any k ≤ 2^32.
      const limit = 4294967296 - (4294967296 % k);
      let x: number;
      do x = nextU32();
      while (x >= limit);
      return x % k;
    },
  };
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}

/** Fisher–Yates shuffle in place, driven by `rng`. */
export function shuffle<T>(a: T[] | Int32Array | Float64Array, rng: Rng): void {
  for (let i = a.length - 1; i > 0; i--) {
    const j = rng.int(i + 1);
    const t = a[i];
    a[i] = a[j];
    a[j] = t;
  }
}
