/**
 * One subject's filtration as the cache stores it, how to read an entry, and the engine's result
 * type from it. Here (not in the service) so that a worker can compute a subject's
 * features from the same record the service would read back.
 */
import { readFile } from 'node:fs/promises';
import type { PersistenceResult } from '../engine/types.ts';

/** Bumped when the entries' layout changes, so older entries are recomputed rather than misread. */
export const CACHE_FORMAT = 2;

/** One subject's filtration as cached. Node indices refer to the subject's matrix as read (before dropRegions). */
export interface CachedFiltration {
  format: typeof CACHE_FORMAT;
  key: string;
  engineVersion: string;
  matrixSha256: string;
  /** Regions analysed (after dropRegions). */
  n: number;
  threshold: number | null;
  thresholdSource: string;
  /** diagrams[d] = [[birth, death | null], …], sorted by birth then death. */
  diagrams: Array<Array<[number, number | null]>>;
  /** Aligned with diagrams[1] when representatives were asked for, else null. */
  representatives: Array<{ nodes: number[]; edges: Array<[number, number]> }> | null;
  /** The H0 merge tree in filtration order: [value, edge i, edge j, survivor, absorbed] (see MergeEvent). */
  mergeTree: Array<[number, number, number, number, number]>;
}

/** The record at `file` when it is a readable entry of this format for `key`, else null. */
export async function readCachedFiltration(file: string, key: string): Promise<CachedFiltration | null> {
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch {
    return null;
  }
  try {
    const e = JSON.parse(text) as CachedFiltration;
    return e.format === CACHE_FORMAT && e.key === key && Array.isArray(e.diagrams) ? e : null;
  } catch {
    return null;
  }
}

/** The engine's result type from a cached filtration, node indices in the matrix as read. */
export function resultFromCache(c: CachedFiltration, nRead: number): PersistenceResult {
  const diagrams = c.diagrams.map((dg) => dg.map(([b, d]) => ({ birth: b, death: d ?? Infinity })));
  return {
    n: nRead,
    threshold: c.threshold ?? Infinity,
    thresholdSource: c.thresholdSource as PersistenceResult['thresholdSource'],
    diagrams,
    representatives: c.representatives
      ? c.representatives.map((r, k) => ({
          birth: diagrams[1][k].birth,
          death: diagrams[1][k].death,
          edges: r.edges,
          nodes: r.nodes,
        }))
      : undefined,
    mergeTree: (c.mergeTree ?? []).map(([value, i, j, survivor, absorbed]) => ({
      value,
      edge: [i, j] as [number, number],
      survivor,
      absorbed,
    })),
    counts: { edges: 0, columnsReduced: [], apparentPairs: [] },
  };
}
