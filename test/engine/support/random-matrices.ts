/**
 * Seeded random distance matrices for cross-checks, written as 6-significant-digit decimals:
 * ripser reads float32, and a 6-digit decimal survives float32 unchanged, so both tools see the
 * same values. Every draw comes from the project's seeded generator (electron/engine/random.ts).
 */
import { createRng } from '../../../electron/engine/random.ts';
import type { Rng } from '../../../electron/engine/random.ts';

export type MatrixKind = 'euclidean' | 'nonmetric' | 'ties' | 'correlation';

export interface RandomCase {
  n: number;
  /** The compressed lower triangle as written to the reference tool. */
  text: string[];
  /** The same values as numbers (what the engine gets). */
  values: Float64Array;
}

const six = (x: number): string => x.toPrecision(6);

function gaussian(rng: Rng): number {
  // Box–Muller; 1 − u keeps the logarithm finite.
  const u = 1 - rng.next();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rng.next());
}

/** Raw (unrounded) distances of the chosen kind, compressed lower triangle. */
function rawDistances(kind: MatrixKind, n: number, rng: Rng): number[] {
  const out: number[] = [];
  if (kind === 'euclidean') {
    const pts = Array.from({ length: n }, () => [rng.next(), rng.next(), rng.next()]);
    for (let i = 0; i < n; i++)
      for (let j = 0; j < i; j++) out.push(Math.hypot(...pts[i].map((x, q) => x - pts[j][q])));
  } else if (kind === 'nonmetric') {
    for (let k = 0; k < (n * (n - 1)) / 2; k++) out.push(0.001 + rng.next());
  } else if (kind === 'ties') {
    const levels = 3 + rng.int(8);
    for (let k = 0; k < (n * (n - 1)) / 2; k++) out.push((1 + rng.int(levels)) / levels);
  } else {
    // 1 − r of series in blocks that share a latent signal.
    const len = 60;
    const blocks = 2 + rng.int(4);
    const latent = Array.from({ length: blocks }, () => Array.from({ length: len }, () => gaussian(rng)));
    const series = Array.from({ length: n }, () => {
      const b = rng.int(blocks);
      const x = latent[b].map((v) => 0.7 * v + gaussian(rng));
      const mean = x.reduce((s, v) => s + v, 0) / len;
      const c = x.map((v) => v - mean);
      const norm = Math.sqrt(c.reduce((s, v) => s + v * v, 0));
      return c.map((v) => v / norm);
    });
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < i; j++) {
        const r = series[i].reduce((s, v, t) => s + v * series[j][t], 0);
        out.push(Math.max(1e-6, 1 - r));
      }
    }
  }
  return out;
}

export function randomCase(kind: MatrixKind, n: number, seed: number): RandomCase {
  const rng = createRng(seed);
  const text = rawDistances(kind, n, rng).map(six);
  return { n, text, values: Float64Array.from(text, Number) };
}

/** The value below which a fraction q of the distances lie, as a 6-digit decimal. */
export function quantileCap(c: RandomCase, q: number): string {
  const sorted = Float64Array.from(c.values).sort();
  return six(sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))]);
}
