/**
 * Default settings (the contract's), their check, and which of them shape a filtration (and so the cache key).
 */
import type { AnalysisSettings } from '../api.ts';
import { assertNoProblems, validateAnalysisSettings } from '../contract.ts';

export { defaultAnalysisSettings, defaultStatsSettings } from '../contract.ts';

/** Throws a ContractError naming every setting that cannot be used (the contract's one check). */
export function checkSettings(s: AnalysisSettings): void {
  assertNoProblems(validateAnalysisSettings(s));
}

// The filtration's cache key lives in ../shared/cache-key.ts, which the workers import too.
export { filtrationKey, filtrationSettings, filtrationSettingsHash } from '../shared/cache-key.ts';
export type { FiltrationFields } from '../shared/cache-key.ts';
