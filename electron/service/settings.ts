/**
 * Default settings, their checks, and which of them shape a filtration (and so the cache key).
 */
import type { AnalysisSettings, StatsSettings } from '../api.ts';
import { DEFAULT_TRANSFORM, TRANSFORMS_FOR } from '../engine/transform.ts';

export function defaultAnalysisSettings(): AnalysisSettings {
  return {
    input: 'correlation',
    transform: DEFAULT_TRANSFORM.correlation,
    maxDim: 1,
    cap: { kind: 'none' },
    representatives: true,
    persistenceFloor: 0,
    gridPoints: 100,
    gridRange: null,
    landscapeLevels: 3,
    dropRegions: [],
  };
}

export function defaultStatsSettings(): StatsSettings {
  return {
    groupColumn: null,
    effect: null,
    model: null,
    test: null,
    reference: null,
    blocks: null,
    covariates: [],
    permutations: 5000,
    seed: 1,
  };
}

/** Throws an Error naming the first setting that cannot be used. */
export function checkSettings(s: AnalysisSettings): void {
  if (!TRANSFORMS_FOR[s.input]?.includes(s.transform))
    throw new Error(`transform '${s.transform}' does not apply to ${s.input} input`);
  if (s.maxDim !== 1 && s.maxDim !== 2) throw new Error(`maxDim must be 1 or 2, got ${String(s.maxDim)}`);
  if (s.cap.kind === 'distance' && !(s.cap.value >= 0)) throw new Error('a distance cap must be ≥ 0');
  if (s.cap.kind === 'density' && !(s.cap.value > 0 && s.cap.value <= 1))
    throw new Error('a density cap must lie in (0, 1]');
  for (const r of s.dropRegions)
    if (!Number.isInteger(r) || r < 0) throw new Error(`dropRegions holds ${r}, not a region index ≥ 0`);
}

// The filtration's cache key lives in ../shared/cache-key.ts, which the workers import too.
export { filtrationKey, filtrationSettings, filtrationSettingsHash } from '../shared/cache-key.ts';
export type { FiltrationFields } from '../shared/cache-key.ts';
