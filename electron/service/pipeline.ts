/**
 * Stage (1) of a cohort run: one filtration per subject, on the worker pool, each committed to the
 * cache as soon as it is done. Matrices are loaded lazily, at most `window` subjects in flight at
 * once (loaded, hashed, computing or being committed), so memory does not grow with the cohort.
 * The outcome of each subject is placed by its index in the cohort order, so it does not depend
 * on the number of workers or on which finished first.
 */
import { TASKS_PER_WORKER } from '../workers/pool.ts';
import { relative, sep } from 'node:path';
import type { AnalysisSettings, CohortReport, SubjectEntry } from '../api.ts';
import { FiltrationError } from '../workers/pool.ts';
import type { WorkerPool } from '../workers/pool.ts';
import { unpack } from '../workers/filtration.ts';
import type {
  FeatureTaskSettings,
  PackedFiltration,
  SubjectFeatures,
  WorkerReply,
} from '../workers/filtration.ts';
import type { FiltrationCache } from './cache.ts';
import type { CohortSource } from './cohort-source.ts';
import { sha256File, sha256Matrix } from '../shared/hash.ts';
import { filtrationKey } from './settings.ts';
import { findingText } from './tables.ts';
import type { SubjectRecord } from './tables.ts';

/** Counts of work actually done, for tests and the summary (never timings). */
export interface ServiceCounters {
  /** Filtrations computed by the workers (successful ones). */
  filtrations: number;
  /** Subjects whose filtration came from the cache. */
  reused: number;
  /** Matrices loaded. */
  loads: number;
}

export interface SubjectOutcome {
  record: SubjectRecord;
  reused: boolean;
  computed: boolean;
  /** The subject's features, when its worker computed them from the read of its matrix. */
  features?: SubjectFeatures;
}

export interface FiltrationStageOptions {
  source: CohortSource;
  settings: AnalysisSettings;
  cache: FiltrationCache;
  pool: WorkerPool;
  /** Cohort indices of the subjects this run handles, ascending. */
  share: number[];
  /** Subjects in flight at once; default 2 × pool size. */
  window?: number;
  counters: ServiceCounters;
  cancelled(): boolean;
  /**
   * Have each worker also compute its subject's features from the same read (not for a shard: its
   * features are computed after the merge). Only where the workers read the files themselves.
   */
  features?: FeatureTaskSettings;
  onStart?(entry: SubjectEntry): void;
  onOutcome(o: SubjectOutcome): void;
}

/** The reason the cohort check excluded a subject, from its error findings. */
export function exclusionReason(report: CohortReport, id: string): string {
  const msgs = report.findings
    .filter((f) => f.subject === id && f.severity === 'error')
    .map((f) => findingText(f));
  return msgs.length > 0 ? [...new Set(msgs)].join('; ') : 'excluded by the cohort check';
}

function relativeFile(root: string, file: string): string {
  const r = relative(root, file);
  return (r.startsWith('..') ? file : r).split(sep).join('/');
}

/** Runs stage (1) over opts.share. Returns the records of the subjects finished (absent ones were cancelled). */
export async function runFiltrationStage(opts: FiltrationStageOptions): Promise<Map<number, SubjectRecord>> {
  const { source, settings, cache, pool, counters } = opts;
  const report = source.report;
  const out = new Map<number, SubjectRecord>();
  const fileHashes = new Map<string, Promise<string | null>>();
  const hashFile = (file: string): Promise<string | null> => {
    let h = fileHashes.get(file);
    if (!h) {
      h = sha256File(file).catch(() => null);
      fileHashes.set(file, h);
    }
    return h;
  };

  const one = async (index: number): Promise<void> => {
    const entry = report.subjects[index];
    const base: SubjectRecord = {
      id: entry.id,
      participant: entry.participant,
      session: entry.session,
      index,
      status: 'failed',
      reason: null,
      key: null,
      matrixSha256: null,
      file: relativeFile(report.root, entry.source.file),
      fileSha256: null,
      ...(entry.source.variable !== undefined ? { variable: entry.source.variable } : {}),
      ...(entry.source.stackIndex !== undefined ? { stackIndex: entry.source.stackIndex } : {}),
    };
    const finish = (
      record: SubjectRecord,
      reused: boolean,
      computed: boolean,
      features?: SubjectFeatures,
    ): void => {
      out.set(index, record);
      opts.onOutcome({ record, reused, computed, ...(features ? { features } : {}) });
    };
    if (!entry.usable) {
      finish({ ...base, status: 'excluded', reason: exclusionReason(report, entry.id) }, false, false);
      return;
    }
    opts.onStart?.(entry);
    // A file of the subject's own is hashed by the worker that reads it; a file shared by several
    // subjects (a stack) is hashed once, here.
    const sharedFile = entry.source.stackIndex !== undefined || entry.source.variable !== undefined;
    const workerHashes = source.loadsInWorker === true && !sharedFile;
    if (!workerHashes) base.fileSha256 = await hashFile(entry.source.file);
    const fail = (e: unknown, matrixSha256: string | null = null): void => {
      const reason = e instanceof FiltrationError ? e.message : e instanceof Error ? e.message : String(e);
      finish({ ...base, matrixSha256, reason }, false, false);
    };
    const commit = async (
      packed: PackedFiltration,
      key: string,
      matrixSha256: string,
      features?: SubjectFeatures,
    ): Promise<void> => {
      counters.filtrations++;
      await cache.put(unpack(packed, key, matrixSha256));
      finish({ ...base, status: 'analysed', key, matrixSha256 }, false, true, features);
    };
    const filtration = {
      input: settings.input,
      transform: settings.transform,
      maxDim: settings.maxDim,
      cap: settings.cap,
      representatives: settings.representatives,
      dropRegions: settings.dropRegions,
    };

    if (source.loadsInWorker) {
      // The worker reads, hashes and looks the subject up in the cache; this thread only commits.
      for (const recompute of [false, true]) {
        let reply: WorkerReply;
        try {
          reply = await pool.run({
            kind: 'subject',
            taskId: index,
            entry,
            expectedN: report.n,
            settings: filtration,
            cacheDir: cache.dir,
            recompute,
            hashFile: workerHashes,
            ...(opts.features ? { features: opts.features } : {}),
          });
          counters.loads++;
          if (workerHashes) base.fileSha256 = reply.fileSha256 ?? null;
        } catch (e) {
          if (!opts.cancelled()) fail(e);
          return;
        }
        if (reply.kind === 'computed') {
          await commit(reply.result, reply.key as string, reply.matrixSha256 as string, reply.features);
          return;
        }
        // An entry the worker saw but this thread cannot use (another cache format): recompute it.
        // (A worker that computed features from the entry has read it as this thread would.)
        if (reply.features || (await cache.get(reply.key))) {
          counters.reused++;
          finish(
            { ...base, status: 'analysed', key: reply.key, matrixSha256: reply.matrixSha256 },
            true,
            false,
            reply.features,
          );
          return;
        }
        if (opts.cancelled()) return;
      }
      return;
    }

    let matrix;
    try {
      matrix = await source.load(entry);
      counters.loads++;
    } catch (e) {
      fail(e);
      return;
    }
    if (report.n !== null && matrix.n !== report.n) {
      fail(`matrix is ${matrix.n} × ${matrix.n} but the cohort's matrices are ${report.n} × ${report.n}`);
      return;
    }
    const matrixSha256 = sha256Matrix(matrix);
    const key = filtrationKey(matrixSha256, settings);
    if (await cache.get(key)) {
      counters.reused++;
      finish({ ...base, status: 'analysed', key, matrixSha256 }, true, false);
      return;
    }
    if (opts.cancelled()) return;
    let reply: WorkerReply;
    try {
      reply = await pool.run({
        kind: 'matrix',
        taskId: index,
        n: matrix.n,
        values: matrix.values,
        settings: filtration,
      });
    } catch (e) {
      if (!opts.cancelled()) fail(e, matrixSha256);
      return;
    }
    if (reply.kind !== 'computed') throw new Error('a matrix task came back without a filtration');
    await commit(reply.result, key, matrixSha256);
  };

  // Subjects in flight: each worker's queue (TASKS_PER_WORKER) plus results being committed here.
  // When the workers read the files themselves this thread holds no matrix, so the window can be
  // wider; when this thread loads them, it bounds the matrices held in memory.
  const window = Math.max(1, opts.window ?? (source.loadsInWorker ? 2 : 1) * TASKS_PER_WORKER * pool.size);
  let next = 0;
  let failure: unknown = null;
  const lane = async (): Promise<void> => {
    while (next < opts.share.length && !opts.cancelled() && failure === null) {
      const index = opts.share[next++];
      try {
        await one(index);
      } catch (e) {
        // A failure of the run itself (e.g. the cache folder is not writable), not of a subject.
        failure = e;
      }
    }
  };
  await Promise.all(Array.from({ length: window }, lane));
  if (failure !== null) throw failure;
  return out;
}
