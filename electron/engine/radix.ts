/**
 * Stable sorts of non-negative doubles by LSD radix sort on their IEEE-754 bit patterns, which for
 * non-negative values order exactly as the numbers do (−0 is read as +0). Six passes of 9–11-bit
 * digits, histograms of all six gathered in one sequential pass, passes whose digit is constant
 * skipped; O(n), no comparator calls, two Uint32Arrays of work space whatever the key type.
 * Stability is what the engine relies on: fed in index-descending order, simplices come out in
 * filtration order (value ascending, index descending).
 *
 *   stableOrder(Float64Array.of(0.5, 0.25, 0.5)) → Uint32Array [1, 0, 2]
 */
const LITTLE_ENDIAN = new Uint8Array(Uint32Array.of(1).buffer)[0] === 1;
const LO = LITTLE_ENDIAN ? 0 : 1;
const HI = 1 - LO;

/** The permutation that sorts `values` stably (values ≥ 0). */
export function stableOrder(values: Float64Array): Uint32Array {
  const n = values.length;
  for (let i = 0; i < n; i++) {
    const x = values[i];
    if (!(x >= 0)) throw new RangeError(`stableOrder takes values ≥ 0, got ${x} at ${i}`);
  }
  const order = new Uint32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  sortByValue(order, values);
  return order;
}

/** Digits of a key: [word (0 low, 1 high), shift, bits]. 11 bits at most, so that the 2048 write
 * positions of a pass stay in cache (16-bit digits scatter each write to a cold line). */
const DIGITS: ReadonlyArray<readonly [number, number, number]> = [
  [0, 0, 11],
  [0, 11, 11],
  [0, 22, 10],
  [1, 0, 11],
  [1, 11, 11],
  [1, 22, 9], // the sign bit (31) is masked: −0 reads as +0
];
const BUCKETS = 2049;

/**
 * Reorders `ids` in place, stably, by values[ids[i]] (each ≥ 0, unchecked). The keys are read
 * through the ids on every pass instead of travelling with them: a cache miss per read, but the
 * only extra memory is one scratch array the size of `ids`.
 */
export function sortByValue(ids: Uint32Array, values: Float64Array): void {
  const n = ids.length;
  const words = new Uint32Array(values.buffer, values.byteOffset, values.length * 2);
  const word = [LO, HI];
  // hist[d * BUCKETS + digit + 1] for every digit d, gathered in one pass.
  const hist = new Uint32Array(DIGITS.length * BUCKETS);
  for (let i = 0; i < n; i++) {
    const at = 2 * ids[i];
    const lo = words[at + LO];
    const hi = words[at + HI] & 0x7fffffff;
    hist[(lo & 0x7ff) + 1]++;
    hist[BUCKETS + ((lo >>> 11) & 0x7ff) + 1]++;
    hist[2 * BUCKETS + (lo >>> 22) + 1]++;
    hist[3 * BUCKETS + (hi & 0x7ff) + 1]++;
    hist[4 * BUCKETS + ((hi >>> 11) & 0x7ff) + 1]++;
    hist[5 * BUCKETS + (hi >>> 22) + 1]++;
  }
  let from: Uint32Array = ids;
  let to: Uint32Array = new Uint32Array(n);
  for (let d = 0; d < DIGITS.length; d++) {
    const [w, shift, bits] = DIGITS[d];
    const base = d * BUCKETS;
    // A digit that is the same for every key changes nothing: skip the pass.
    let constant = n === 0;
    for (let v = 1; v < BUCKETS; v++) {
      const c = hist[base + v];
      if (c !== 0) {
        constant = c === n;
        break;
      }
    }
    if (constant) continue;
    for (let v = 1; v < BUCKETS; v++) hist[base + v] += hist[base + v - 1];
    const off = word[w];
    const mask = (1 << bits) - 1;
    const sign = w === 1 ? 0x7fffffff : -1; // −1: all 32 bits
    for (let i = 0; i < n; i++) {
      const id = from[i];
      const digit = ((words[2 * id + off] & sign) >>> shift) & mask;
      to[hist[base + digit]++] = id;
    }
    const t = from;
    from = to;
    to = t;
  }
  if (from !== ids) ids.set(from);
}
