/**
 * A binary min-heap of (value, index) entries on typed arrays, used as the
 * working column of a mod-2 matrix reduction: an entry present twice cancels.
 *
 * Order: smaller value first; equal values, larger index first. That is the
 * filtration order of simplices used by the persistence engine reversed in its
 * tie-break (see persistence.ts), so the top is a column's pivot.
 */
export class EntryHeap {
  private v: Float64Array;
  private x: Float64Array;
  size = 0;

  constructor(capacity = 1024) {
    this.v = new Float64Array(capacity);
    this.x = new Float64Array(capacity);
  }

  clear(): void {
    this.size = 0;
  }

  /** Value of the top entry (valid after settle() returned true). */
  topValue(): number {
    return this.v[0];
  }

  /** Index of the top entry (valid after settle() returned true). */
  topIndex(): number {
    return this.x[0];
  }

  push(value: number, index: number): void {
    if (this.size === this.v.length) this.grow();
    const v = this.v;
    const x = this.x;
    let i = this.size++;
    while (i > 0) {
      const p = (i - 1) >> 1;
      const pv = v[p];
      if (pv < value || (pv === value && x[p] > index)) break;
      v[i] = pv;
      x[i] = x[p];
      i = p;
    }
    v[i] = value;
    x[i] = index;
  }

  /** Removes the top entry. */
  pop(): void {
    const n = --this.size;
    if (n === 0) return;
    const v = this.v;
    const x = this.x;
    const value = v[n];
    const index = x[n];
    let i = 0;
    for (;;) {
      let c = 2 * i + 1;
      if (c >= n) break;
      const r = c + 1;
      if (r < n && (v[r] < v[c] || (v[r] === v[c] && x[r] > x[c]))) c = r;
      if (value < v[c] || (value === v[c] && index > x[c])) break;
      v[i] = v[c];
      x[i] = x[c];
      i = c;
    }
    v[i] = value;
    x[i] = index;
  }

  /**
   * Cancels pairs of equal entries at the top until the top entry occurs an odd
   * number of times; returns false when the column is zero.
   * Why checking the root's children suffices: indices identify simplices, so an
   * entry equal to the root lies below a chain of entries that are ≥ the root and
   * ≤ itself, i.e. equal to it; one of them is a child of the root.
   */
  settle(): boolean {
    const x = this.x;
    while (this.size > 0) {
      const top = x[0];
      if ((this.size > 1 && x[1] === top) || (this.size > 2 && x[2] === top)) {
        this.pop();
        this.pop();
        continue;
      }
      return true;
    }
    return false;
  }

  /** Empties the heap into a new array of the indices that survive mod-2 cancellation, in heap order. */
  drainIndices(): Float64Array {
    // Popped entries go to the tail of the index array, which the pops have just freed.
    const x = this.x;
    let end = this.v.length;
    while (this.settle()) {
      const top = x[0];
      this.pop();
      x[--end] = top;
    }
    return x.slice(end).reverse();
  }

  private grow(): void {
    const v = new Float64Array(this.v.length * 2);
    const x = new Float64Array(this.x.length * 2);
    v.set(this.v);
    x.set(this.x);
    this.v = v;
    this.x = x;
  }
}
