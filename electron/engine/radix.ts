/**
 * Stable sorts of non-negative doubles by LSD radix sort on their IEEE-754 bit patterns, which for
 * non-negative values order exactly as the numbers do (−0 is read as +0). Four passes of 16-bit
 * digits, histograms of all four gathered in one sequential pass, passes whose digit is constant
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

/**
 * Reorders `ids` in place, stably, by values[ids[i]] (each ≥ 0, unchecked). The keys are read
 * through the ids on every pass instead of travelling with them: slower by a cache miss per read
 * but the only extra memory is one scratch array the size of `ids`.
 */
export function sortByValue(ids: Uint32Array, values: Float64Array): void {
  const n = ids.length;
  const words = new Uint32Array(values.buffer, values.byteOffset, values.length * 2);
  // hist[d * 65537 + digit + 1]: digit d = 0, 1 (low word), 2, 3 (high word, sign bit masked).
  const hist = new Uint32Array(4 * 65537);
  for (let i = 0; i < n; i++) {
    const at = 2 * ids[i];
    const lo = words[at + LO];
    const hi = words[at + HI] & 0x7fffffff;
    hist[(lo & 0xffff) + 1]++;
    hist[65537 + (lo >>> 16) + 1]++;
    hist[2 * 65537 + (hi & 0xffff) + 1]++;
    hist[3 * 65537 + (hi >>> 16) + 1]++;
  }
  let from: Uint32Array = ids;
  let to: Uint32Array = new Uint32Array(n);
  for (let d = 0; d < 4; d++) {
    const base = d * 65537;
    // A digit that is the same for every key changes nothing: skip the pass.
    let constant = false;
    for (let v = 1; v <= 65536; v++) {
      const c = hist[base + v];
      if (c !== 0) {
        constant = c === n;
        break;
      }
    }
    if (constant || n === 0) continue;
    for (let v = 1; v <= 65536; v++) hist[base + v] += hist[base + v - 1];
    const word = d < 2 ? LO : HI;
    const shift = d % 2 === 0 ? 0 : 16;
    for (let i = 0; i < n; i++) {
      const id = from[i];
      const w = d < 2 ? words[2 * id + word] : words[2 * id + word] & 0x7fffffff;
      to[hist[base + ((w >>> shift) & 0xffff)]++] = id;
    }
    const t = from;
    from = to;
    to = t;
  }
  if (from !== ids) ids.set(from);
}
