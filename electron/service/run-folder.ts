/**
 * A run's output folder as the service opens it: what the run reads (the folder may not overlap
 * it), what it may write (a file of these names that Loopwise did not write refuses the folder),
 * and what it was asked to do (recorded in the manifest; resuming needs the same).
 */
import { resolve } from 'node:path';
import type { AnalysisSettings, OpenCohortRequest, StatsSettings } from '../api.ts';
import { realPathOf } from './confine.ts';
import { OutputFolder } from './outdir.ts';
import type { RunDescription } from './outdir.ts';
import type { TableFormat } from './tables.ts';

/** Every table a run may write, by base name: a file Loopwise did not write under one of these names refuses the folder up front. */
const RUN_TABLES = [
  'features',
  'nodes',
  'networks',
  'curves',
  'intervals',
  'subjects',
  'group-curves',
  'group-intervals',
  'group-nodes',
  'stats',
  'diagram-tests',
  'embedding',
  'excluded-features',
];

export function runFileNames(format: TableFormat): string[] {
  return [...RUN_TABLES.map((t) => `${t}.${format}`), 'provenance.json', 'stats-warnings.json'];
}

/** The files a cohort request reads: an output folder may not overlap them. */
export function cohortInputs(cohort: OpenCohortRequest): string[] {
  const dir = resolve(cohort.dir);
  const inFolder = (p: string): string => resolve(dir, p);
  return [
    dir,
    ...(cohort.participants ? [inFolder(cohort.participants)] : []),
    ...(cohort.nodes ? [inFolder(cohort.nodes)] : []),
  ];
}

/** What a run is asked to do, as recorded in its output folder's manifest (resume needs the same). */
export function describeRun(
  cohort: OpenCohortRequest,
  settings: AnalysisSettings,
  stats: StatsSettings,
  format: TableFormat,
): RunDescription {
  const inputs = cohortInputs(cohort).map((p) => realPathOf(p));
  return {
    cohort: inputs[0],
    participants: cohort.participants ? inputs[1] : null,
    nodes: cohort.nodes ? inputs[inputs.length - 1] : null,
    reading: {
      variable: cohort.variable ?? null,
      fileColumn: cohort.fileColumn ?? null,
      match: cohort.match ?? null,
      timeSeries: cohort.timeSeries ?? null,
      columnKinds: cohort.columnKinds ?? null,
    },
    settings,
    stats,
    format,
  };
}

/**
 * Opens `dir` for a run (outdir.ts's rules). `shardLock` names a shard's own lock: shards of one
 * cohort share the folder and write only their hidden results there.
 */
export function openRunFolder(
  dir: string,
  req: { cohort: OpenCohortRequest; settings: AnalysisSettings; stats: StatsSettings },
  format: TableFormat,
  force: boolean,
  shardLock: string | null = null,
): Promise<OutputFolder> {
  return OutputFolder.open(dir, {
    force,
    run: describeRun(req.cohort, req.settings, req.stats, format),
    inputs: cohortInputs(req.cohort),
    names: runFileNames(format),
    ...(shardLock ? { lock: shardLock, shard: true } : {}),
  });
}
