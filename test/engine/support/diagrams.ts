/**
 * Shared helpers for checking persistence diagrams against reference tools.
 *
 * Comparison rule (the same as in test/reference/make_persistence_goldens.py): both sides are
 * rounded to float32 (ripser computes in float32), intervals of zero length are dropped, and the
 * multisets of (birth, death) per dimension must be equal; an infinite death is null in JSON.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { DistanceMatrix, Interval } from '../../../electron/engine/types.ts';

/** A diagram as reference tools give it: [birth, death], death null when infinite. */
export type RawInterval = [number, number | null];

export interface PersistenceGolden {
  name: string;
  description: string;
  n: number;
  maxDim: 1 | 2;
  threshold: number | null;
  lower: number[];
  diagrams: RawInterval[][];
  source: { ripser: string; gudhi: string; command: string; gudhiCall: string; agreement: string };
}

export const GOLDEN_DIR = join(import.meta.dirname, '..', '..', 'reference', 'goldens', 'persistence');

export function loadGoldens(): PersistenceGolden[] {
  return readdirSync(GOLDEN_DIR)
    .filter((f) => f.endsWith('.json'))
    .sort()
    .map((f) => JSON.parse(readFileSync(join(GOLDEN_DIR, f), 'utf8')) as PersistenceGolden);
}

export function distancesOf(g: { n: number; lower: number[] }): DistanceMatrix {
  return { n: g.n, values: Float64Array.from(g.lower) };
}

/** float32-rounded, zero-length intervals dropped, sorted; death Infinity when essential. */
export function canonical(diagram: Array<Interval | RawInterval>): Array<[number, number]> {
  const rows: Array<[number, number]> = [];
  for (const iv of diagram) {
    const [b, d] = Array.isArray(iv) ? iv : [iv.birth, iv.death];
    const b32 = Math.fround(b);
    const d32 = d === null || d === Infinity ? Infinity : Math.fround(d);
    if (d32 === b32) continue;
    rows.push([b32, d32]);
  }
  return rows.sort((x, y) => x[0] - y[0] || (x[1] === y[1] ? 0 : x[1] < y[1] ? -1 : 1));
}

/** A short human-readable account of how two canonical diagrams differ (empty when equal). */
export function diagramDifference(ours: Array<[number, number]>, ref: Array<[number, number]>): string {
  const key = (r: [number, number]): string => `[${r[0]}, ${r[1] === Infinity ? '∞' : r[1]})`;
  const count = new Map<string, number>();
  for (const r of ref) count.set(key(r), (count.get(key(r)) ?? 0) + 1);
  const extra: string[] = [];
  for (const r of ours) {
    const k = key(r);
    const c = count.get(k) ?? 0;
    if (c > 0) count.set(k, c - 1);
    else extra.push(k);
  }
  const missing = [...count].flatMap(([k, c]) => Array<string>(c).fill(k));
  if (extra.length === 0 && missing.length === 0) return '';
  return `only in engine: ${extra.slice(0, 8).join(' ') || '—'}; only in reference: ${missing.slice(0, 8).join(' ') || '—'}`;
}
