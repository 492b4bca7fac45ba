/**
 * The filtration cache's key and where its entry lives: the settings a filtration depends on,
 * hashed with the matrix and ENGINE_VERSION. Shared by the service (which owns the cache) and the
 * workers (which look a subject up before computing it), so neither imports the other.
 */
import { createHash } from 'node:crypto';
import { join } from 'node:path';
import type { AnalysisSettings } from '../api.ts';
import { ENGINE_VERSION } from '../engine/version.ts';

/** Where the entry of `key` lives under the cache folder `dir`. */
export function cachePath(dir: string, key: string): string {
  return join(dir, 'filtrations', key.slice(0, 2), `${key}.json`);
}

/** The settings a filtration depends on, in a fixed key order. Everything else (features, statistics) can change freely and reuse the cache. */
export type FiltrationFields = Pick<
  AnalysisSettings,
  'input' | 'transform' | 'maxDim' | 'cap' | 'representatives' | 'dropRegions'
>;

export function filtrationSettings(s: FiltrationFields): Record<string, unknown> {
  return {
    engineVersion: ENGINE_VERSION,
    input: s.input,
    transform: s.transform,
    maxDim: s.maxDim,
    cap: s.cap.kind === 'none' ? { kind: 'none' } : { kind: s.cap.kind, value: s.cap.value },
    representatives: s.representatives,
    dropRegions: [...new Set(s.dropRegions)].sort((a, b) => a - b),
  };
}

/** SHA-256 (hex) of the filtration settings alone: shards and merges check they agree on it. */
export function filtrationSettingsHash(s: FiltrationFields): string {
  return createHash('sha256')
    .update(JSON.stringify(filtrationSettings(s)))
    .digest('hex');
}

/** The cache key of one subject: its matrix bytes' hash with the filtration settings and ENGINE_VERSION. */
export function filtrationKey(matrixSha256: string, s: FiltrationFields): string {
  return createHash('sha256')
    .update(JSON.stringify({ matrix: matrixSha256, ...filtrationSettings(s) }))
    .digest('hex');
}
