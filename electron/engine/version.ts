/**
 * The engine's version: part of every cache key and provenance record. Bump it whenever a change
 * can alter any number the engine computes, so that cached results are recomputed.
 */
export const ENGINE_VERSION = '3';
