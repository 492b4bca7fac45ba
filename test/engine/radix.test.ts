import { describe, expect, it } from 'vitest';
import { sortByValue, stableOrder } from '../../electron/engine/radix.ts';
import { createRng } from '../../electron/engine/random.ts';

describe('stableOrder', () => {
  it('orders like a stable comparison sort, ties kept in input order', () => {
    const rng = createRng(7);
    for (const n of [0, 1, 5, 1000, 70000]) {
      // Few distinct values (many ties), spread over many binary exponents, with zeros and −0.
      const v = Float64Array.from({ length: n }, (_, i) =>
        i % 13 === 0 ? (i % 2 ? -0 : 0) : Math.round(rng.next() * 50) * 10 ** (rng.int(9) - 4),
      );
      const expected = Array.from({ length: n }, (_, i) => i).sort((a, b) => v[a] - v[b] || a - b);
      expect(Array.from(stableOrder(v))).toEqual(expected);
    }
  });

  it('refuses negative and missing values', () => {
    expect(() => stableOrder(Float64Array.of(1, -2))).toThrow(/values ≥ 0, got -2 at 1/);
    expect(() => stableOrder(Float64Array.of(NaN))).toThrow(RangeError);
  });
});

describe('sortByValue', () => {
  it('orders ids by their values like a stable comparison sort (common practice: Array.prototype.sort is stable)', () => {
    const rng = createRng(11);
    for (const n of [0, 1, 7, 5000, 200000]) {
      // Ties, −0, subnormal, huge and infinite values; the ids are a shuffled subset, as edges below a threshold are.
      const v = Float64Array.from({ length: n + 10 }, (_, i) =>
        i % 17 === 0
          ? -0
          : i % 29 === 0
            ? Infinity
            : i % 31 === 0
              ? 5e-324
              : Math.round(rng.next() * 300) * 10 ** (rng.int(40) - 20),
      );
      const ids = Uint32Array.from({ length: n }, (_, i) => (i * 7919) % (n + 10));
      const expected = Array.from(ids).sort((a, b) => (v[a] === v[b] ? 0 : v[a] < v[b] ? -1 : 1));
      sortByValue(ids, v);
      expect(Array.from(ids)).toEqual(expected);
    }
  });
});
