/**
 * Linear algebra over GF(2) on edge chains of a complete graph, for checking cycle
 * representatives by rank (textbook Gaussian elimination; Edelsbrunner & Harer,
 * Computational Topology, 2010, ch. IV–VII).
 */
import { pairIndex } from '../../../electron/engine/transform.ts';

/** A 1-chain: one bit per edge, indexed by the compressed lower-triangle index. */
export type Chain = Uint32Array;

export function emptyChain(n: number): Chain {
  return new Uint32Array(Math.ceil((n * (n - 1)) / 2 / 32) || 1);
}

export function toggleEdge(c: Chain, i: number, j: number): void {
  const e = pairIndex(i, j);
  c[e >>> 5] ^= 1 << (e & 31);
}

export function chainOfEdges(n: number, edges: Array<[number, number]>): Chain {
  const c = emptyChain(n);
  for (const [i, j] of edges) toggleEdge(c, i, j);
  return c;
}

/** ∂[a, b, c] = [a, b] + [a, c] + [b, c]. */
export function triangleBoundary(n: number, a: number, b: number, c: number): Chain {
  const ch = emptyChain(n);
  toggleEdge(ch, a, b);
  toggleEdge(ch, a, c);
  toggleEdge(ch, b, c);
  return ch;
}

function highestBit(c: Chain): number {
  for (let w = c.length - 1; w >= 0; w--) if (c[w] !== 0) return w * 32 + 31 - Math.clz32(c[w]);
  return -1;
}

/** A basis in echelon form: one vector per pivot (its highest bit). */
export class Gf2Span {
  private readonly rows = new Map<number, Chain>();

  get rank(): number {
    return this.rows.size;
  }

  /** The remainder of v after eliminating by the basis (zero iff v lies in the span). */
  private reduce(v: Chain): Chain {
    const r = Uint32Array.from(v);
    for (let p = highestBit(r); p >= 0; p = highestBit(r)) {
      const row = this.rows.get(p);
      if (!row) break;
      for (let w = 0; w < r.length; w++) r[w] ^= row[w];
    }
    return r;
  }

  contains(v: Chain): boolean {
    return highestBit(this.reduce(v)) < 0;
  }

  /** Adds v; true when the rank grew. */
  add(v: Chain): boolean {
    const r = this.reduce(v);
    const p = highestBit(r);
    if (p < 0) return false;
    this.rows.set(p, r);
    return true;
  }

  clone(): Gf2Span {
    const s = new Gf2Span();
    for (const [p, r] of this.rows) s.rows.set(p, r);
    return s;
  }
}
