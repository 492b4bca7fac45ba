/**
 * Default settings (the contract's), their check, and which of them shape a filtration (and so the cache key).
 */
import { createHash } from 'node:crypto';
import type { AnalysisSettings } from '../api.ts';
import { assertNoProblems, validateAnalysisSettings } from '../contract.ts';
import { ENGINE_VERSION } from '../engine/version.ts';

export { defaultAnalysisSettings, defaultStatsSettings } from '../contract.ts';

/** Throws a ContractError naming every setting that cannot be used (the contract's one check). */
export function checkSettings(s: AnalysisSettings): void {
  assertNoProblems(validateAnalysisSettings(s));
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
