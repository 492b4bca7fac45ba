/**
 * A hash map from simplex index (an integer below 2^53) to a non-negative int32, with open
 * addressing and linear probing on typed arrays. The reduction looks up and inserts one pivot per
 * column, tens of thousands to millions of times; a JS Map spends most of that time on hashing
 * boxed doubles and chasing pointers, this spends it on two array reads.
 */
export class IndexMap {
  private keys: Float64Array;
  private vals: Int32Array;
  private mask: number;
  private shift: number;
  size = 0;

  constructor(expected = 1024) {
    let cap = 1024;
    while (cap < expected * 2) cap *= 2;
    this.keys = new Float64Array(cap).fill(-1);
    this.vals = new Int32Array(cap);
    this.mask = cap - 1;
    this.shift = 32 - Math.log2(cap);
  }

  /** Fibonacci hashing of both 32-bit halves of the key. */
  private slot(key: number): number {
    const lo = key >>> 0;
    const hi = (key / 4294967296) >>> 0;
    return Math.imul(lo ^ Math.imul(hi, 0x85ebca6b), 0x9e3779b1) >>> this.shift;
  }

  /** The value stored for key, or −1. */
  get(key: number): number {
    const keys = this.keys;
    for (let i = this.slot(key); ; i = (i + 1) & this.mask) {
      const k = keys[i];
      if (k === key) return this.vals[i];
      if (k === -1) return -1;
    }
  }

  has(key: number): boolean {
    return this.get(key) !== -1;
  }

  set(key: number, value: number): void {
    if ((this.size + 1) * 2 > this.keys.length) this.grow();
    const keys = this.keys;
    for (let i = this.slot(key); ; i = (i + 1) & this.mask) {
      const k = keys[i];
      if (k === -1) {
        keys[i] = key;
        this.vals[i] = value;
        this.size++;
        return;
      }
      if (k === key) {
        this.vals[i] = value;
        return;
      }
    }
  }

  /** Calls fn(key, value) for every entry, in no particular order. */
  forEach(fn: (key: number, value: number) => void): void {
    for (let i = 0; i < this.keys.length; i++) if (this.keys[i] !== -1) fn(this.keys[i], this.vals[i]);
  }

  private grow(): void {
    const oldKeys = this.keys;
    const oldVals = this.vals;
    const cap = oldKeys.length * 2;
    this.keys = new Float64Array(cap).fill(-1);
    this.vals = new Int32Array(cap);
    this.mask = cap - 1;
    this.shift = 32 - Math.log2(cap);
    this.size = 0;
    for (let i = 0; i < oldKeys.length; i++) if (oldKeys[i] !== -1) this.set(oldKeys[i], oldVals[i]);
  }
}
