/**
 * The Loopwise service: one implementation of LoopwiseApi for every door (Electron IPC, loopback
 * HTTP, the CLI). Transport-agnostic: plain async methods and a progress listener.
 *
 * A run goes: open the cohort → (1) per-subject filtrations on a worker pool, each committed to the
 * on-disk cache → tables (intervals, subjects, provenance) → hooks (2) group filtrations,
 * (3) features, (4) statistics (see hooks.ts). A shard run (--shard K/M) does only its share of
 * (1) and records it in OUT/.loopwise-shards/; mergeShards then does the rest, exactly as a single
 * run would.
 *
 * This file runs the runs (start, progress, cancel, summary) and assembles results; the output
 * folder's rules live in outdir.ts, shards in shards.ts, the stages' view of a run in
 * stage-context.ts, the tables in tables.ts.
 *
 * A run's status is 'done' only when everything asked for was made: a stage that could not run,
 * or a file that could not be written, makes it 'failed' (with the reason among the failures),
 * and the output folder stays unfinished so the same request resumes.
 */
import { readFile, rm } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { setInterval, clearInterval } from 'node:timers';
import type {
  RunInfo,
  AnalysisSettings,
  CohortReport,
  CohortResults,
  Comparison,
  ComparisonSide,
  LoopwiseApi,
  OpenCohortRequest,
  ProgressEvent,
  Provenance,
  RegionEffects,
  RegionValues,
  RunSummary,
  StartRunRequest,
  StatsSettings,
  SubjectResult,
  TablePage,
  TablePageRequest,
} from '../api.ts';
import { WorkerPool, defaultPoolSize } from '../workers/pool.ts';
import { FiltrationCache } from './cache.ts';
import { loadSubjectMatrix } from '../io/cohort.ts';
import {
  assertNoProblems,
  validateCohortRequest,
  validateStatsColumns,
  validateStatsSettings,
} from '../contract.ts';
import { openCohortSource } from './cohort-source.ts';
import type { CohortSource, SourceOptions } from './cohort-source.ts';
import type { RunHooks, StageOutput } from './hooks.ts';
import { OutDirError } from './outdir.ts';
import type { OutDirErrorCode, OutputFolder } from './outdir.ts';
import { openRunFolder } from './run-folder.ts';
import { SHARD_DIR, checkShard, readShards, shardLockName, shareOf, writeShardManifest } from './shards.ts';
import type { ShardManifest } from './shards.ts';
import {
  assembleCohortResults,
  assembleRegionEffects,
  assembleRegionValues,
  assembleSubjectResult,
  assembleTablePage,
} from './results.ts';
import { ComparisonError, compareSides } from './compare.ts';
import { REPORT_FILE, buildReport } from './report.ts';
import { makeStageContext } from './stage-context.ts';
import { GroupMeansGatherer, cohortStages } from './stages.ts';
import { runFiltrationStage } from './pipeline.ts';
import type { ServiceCounters } from './pipeline.ts';
import { featureTaskSettings } from '../workers/filtration.ts';
import type { SubjectFeatures } from '../workers/filtration.ts';
import {
  checkSettings,
  defaultAnalysisSettings,
  defaultStatsSettings,
  filtrationSettingsHash,
} from './settings.ts';
import { buildProvenance, tableNames, unmatchedParticipants, writeRunTables } from './tables.ts';
import type { RunRecords, SubjectRecord, TableFormat } from './tables.ts';

export { OutDirError, SHARD_DIR, shareOf };
export type { ShardManifest };

export const CACHE_DIR_NAME = '.loopwise-cache';

function reasonOf(e: unknown): string {
  return e instanceof Error ? e.message : String(e);
}

export interface ServiceOptions {
  /** Cache folder for runs without an outDir (the app's own). */
  cacheDir?: string;
  /** Default pool size; default the number of available cores. */
  workers?: number;
  /** The worker entry (a compiled build points this at its bundled worker). */
  workerEntry?: URL;
  /** How cohorts are opened; default the cohort readers. Tests inject in-memory cohorts. */
  openSource?: (req: OpenCohortRequest, opts: SourceOptions) => Promise<CohortSource>;
  /**
   * Stages (2)–(4) of a run: a factory called afresh for each run (a stage may carry state to the
   * next), or one fixed object. Default: the group filtrations, features and statistics of stages.ts.
   */
  hooks?: RunHooks | (() => RunHooks);
  /** Clock for provenance.createdAt (tests). */
  now?: () => Date;
  /** Folders besides a cohort's own that its files may resolve into (a door's roots; read at each opening). */
  allowedRoots?: () => string[];
}

interface RunState {
  runId: string;
  request: StartRunRequest;
  status: 'running' | 'done' | 'cancelled' | 'failed';
  cancelRequested: boolean;
  pool: WorkerPool | null;
  source: CohortSource | null;
  report: CohortReport;
  cache: FiltrationCache;
  /** The output folder while the run writes into it (its lock held); null without one. */
  folder: OutputFolder | null;
  run: RunRecords | null;
  provenance: Provenance | null;
  results: StageOutput;
  /**
   * Where the run's finished tables are, and their names: its output folder, or for a run without
   * one (the app's) a folder of its own under the cache (CACHE/runs/). exportRun copies them.
   */
  tables: { dir: string; files: string[] } | null;
  /** Subjects' features computed by their workers in stage (1), taken by the features stage. */
  subjectFeatures: Map<string, SubjectFeatures>;
  /** The group means gathered from the workers' reads in stage (1) (null when nothing is grouped). */
  groupMeans: GroupMeansGatherer | null;
  /** Stages (2)–(4) that failed: the run keeps what came before (e.g. features without statistics). */
  stageFailures: Array<{ subject: string; reason: string }>;
  summary: RunSummary | null;
  done: Promise<RunSummary>;
  startedAt: string;
  /** The run's latest progress event, for listRuns. */
  lastProgress: ProgressEvent | null;
  /** An export in flight: its latest progress event (null when none runs). */
  exporting: ProgressEvent | null;
}

/** A run's state as it starts: running, nothing computed yet. */
function newRunState(
  fields: Pick<
    RunState,
    'runId' | 'request' | 'source' | 'report' | 'cache' | 'run' | 'folder' | 'startedAt'
  >,
): RunState {
  return {
    ...fields,
    lastProgress: null,
    exporting: null,
    status: 'running',
    cancelRequested: false,
    pool: null,
    provenance: null,
    results: {},
    tables: null,
    subjectFeatures: new Map(),
    groupMeans: null,
    stageFailures: [],
    summary: null,
    done: Promise.resolve(null as unknown as RunSummary),
  };
}

export class LoopwiseService implements LoopwiseApi {
  readonly counters: ServiceCounters = { filtrations: 0, reused: 0, loads: 0 };
  private readonly options: ServiceOptions;
  private readonly listeners = new Set<(e: ProgressEvent) => void>();
  private readonly runs = new Map<string, RunState>();
  private nextRun = 1;
  /** Kept between runs so a second run does not pay for starting the threads again. */
  private pool: WorkerPool | null = null;

  constructor(options: ServiceOptions = {}) {
    this.options = options;
  }

  private poolOfSize(size: number): WorkerPool {
    if (this.pool && !this.pool.isClosed && this.pool.size === size) return this.pool;
    void this.pool?.terminate();
    this.pool = new WorkerPool(size, this.options.workerEntry);
    return this.pool;
  }

  /** Stops the worker threads; a door that exits (the CLI) must call it, since live workers keep the process alive. */
  async close(): Promise<void> {
    await this.pool?.terminate();
    this.pool = null;
    // The tables runs without an output folder kept for export (CACHE/runs/…): runs live only as
    // long as the session, so their copies go with it.
    for (const s of this.runs.values()) {
      if (s.request.outDir || !s.tables || s.status === 'running') continue;
      await rm(s.tables.dir, { recursive: true, force: true }).catch(() => undefined);
      s.tables = null;
    }
  }

  private openSource(req: OpenCohortRequest, opts: SourceOptions = {}): Promise<CohortSource> {
    const roots = this.options.allowedRoots?.();
    return (this.options.openSource ?? openCohortSource)(
      req,
      roots ? { ...opts, allowedRoots: roots } : opts,
    );
  }

  private emit(e: ProgressEvent): void {
    const run = this.runs.get(e.runId);
    if (run) {
      if (e.phase === 'export') run.exporting = e;
      else run.lastProgress = e;
    }
    for (const l of this.listeners) {
      try {
        l(e);
      } catch {
        /* a listener's failure is not the run's */
      }
    }
  }

  private now(): Date {
    return this.options.now?.() ?? new Date();
  }

  async openCohort(req: OpenCohortRequest): Promise<CohortReport> {
    return (await this.openSource(req)).report;
  }

  async defaultSettings(): Promise<{ settings: AnalysisSettings; stats: StatsSettings }> {
    return { settings: defaultAnalysisSettings(), stats: defaultStatsSettings() };
  }

  onProgress(listener: (e: ProgressEvent) => void): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  /**
   * Starts a run. Rejects at once (no run is started) when the settings are invalid, the cohort
   * cannot be opened, or the output folder holds files and force is not given.
   */
  async startRun(req: StartRunRequest): Promise<{ runId: string }> {
    checkSettings(req.settings);
    assertNoProblems([...validateCohortRequest(req.cohort), ...validateStatsSettings(req.stats)]);
    if (req.shard) {
      checkShard(req.shard);
      if (!req.outDir) throw new Error('a shard run needs an output folder, shared by all shards');
    }
    const format: TableFormat = req.tableFormat ?? 'tsv';
    const outDir = req.outDir ? resolve(req.outDir) : null;
    // The folder first: a refusal comes before any work, and the lock keeps a second run out.
    const folder = outDir
      ? await openRunFolder(
          outDir,
          req,
          format,
          req.force ?? false,
          req.shard ? shardLockName(req.shard) : null,
        )
      : null;
    let source: CohortSource;
    let cache: FiltrationCache;
    try {
      source = await this.openSource(req.cohort, {
        input: req.settings.input,
        dropRegions: req.settings.dropRegions,
      });
      // Columns the statistics name must exist: refused now, before any filtration runs.
      assertNoProblems(validateStatsColumns(req.stats, source.report.columns));
      const cacheDir = resolve(
        req.cacheDir ?? (outDir ? join(outDir, CACHE_DIR_NAME) : (this.options.cacheDir ?? CACHE_DIR_NAME)),
      );
      cache = new FiltrationCache(cacheDir);
      await cache.init();
    } catch (e) {
      await folder?.release();
      throw e;
    }
    const runId = `run-${this.nextRun++}`;
    // A run without an output folder keeps its tables in one of its own under the cache, so that
    // exporting it copies them instead of computing them again.
    const own =
      folder ??
      (req.shard
        ? null
        : await openRunFolder(
            join(cache.dir, 'runs', `${process.pid}-${runId}-${Date.now().toString(36)}`),
            req,
            format,
            true,
          ).catch(() => null));
    const state = newRunState({
      runId,
      request: { ...req, outDir },
      source,
      report: source.report,
      cache,
      run: null,
      folder: own,
      startedAt: this.now().toISOString(),
    });
    this.runs.set(runId, state);
    state.done = this.execute(state, format);
    return { runId };
  }

  /** Resolves with the summary when the run ends (done, cancelled or failed). */
  async waitForRun(runId: string): Promise<RunSummary> {
    const s = this.runs.get(runId);
    if (!s) throw new Error(`no run ${runId}`);
    return s.done;
  }

  async cancelRun(runId: string): Promise<void> {
    const s = this.runs.get(runId);
    if (!s || s.status !== 'running') return;
    s.cancelRequested = true;
    // Terminating the workers abandons the filtrations in flight; committed subjects stay in the cache.
    await s.pool?.terminate();
  }

  private async execute(state: RunState, format: TableFormat): Promise<RunSummary> {
    const { request: req, report, cache, runId } = state;
    const started = performance.now();
    let peakRss = process.memoryUsage.rss();
    const sampler = setInterval(() => (peakRss = Math.max(peakRss, process.memoryUsage.rss())), 100);
    sampler.unref();
    const share = shareOf(report.subjects.length, req.shard);
    const failures: Array<{ subject: string; reason: string }> = [];
    const excluded: Array<{ subject: string; reason: string }> = [];
    let done = 0;
    let computed = 0;
    let reused = 0;
    let current: string | null = null;
    let computeStart: number | null = null;
    const progress = (phase: ProgressEvent['phase'], d: number, total: number, message?: string): void => {
      const elapsedMs = performance.now() - started;
      let etaMs: number | null = null;
      if (phase === 'filtrations' && computed > 0 && computeStart !== null) {
        const rate = computed / (performance.now() - computeStart);
        etaMs = (total - d) / rate;
      }
      this.emit({
        runId,
        phase,
        done: d,
        total,
        reused,
        currentSubject: current,
        elapsedMs,
        etaMs,
        failures: [...failures],
        ...(message !== undefined ? { message } : {}),
      });
    };
    const finishSummary = async (status: RunSummary['status'], files: string[]): Promise<RunSummary> => {
      clearInterval(sampler);
      peakRss = Math.max(peakRss, process.memoryUsage.rss());
      const size = await cache.size();
      const summary: RunSummary = {
        runId,
        status,
        computed,
        reused,
        failures,
        excluded,
        findings: report.findings.filter((f) => f.severity === 'warning' || f.subject === null),
        analysed: computed + reused,
        outDir: req.outDir,
        peakRssBytes: peakRss,
        cacheDir: cache.dir,
        cacheBytes: size.bytes,
        files,
        elapsedMs: performance.now() - started,
      };
      state.summary = summary;
      state.status = status;
      progress(
        status === 'done' ? 'done' : status,
        done,
        share.length,
        status === 'failed' ? failures.at(-1)?.reason : undefined,
      );
      return summary;
    };

    try {
      const pool = this.poolOfSize(req.workers ?? this.options.workers ?? defaultPoolSize());
      state.pool = pool;
      if (!req.shard) state.groupMeans = GroupMeansGatherer.for(report, req.stats, req.settings, share);
      progress('filtrations', 0, share.length);
      let records: Map<number, SubjectRecord>;
      try {
        records = await runFiltrationStage({
          source: state.source as CohortSource,
          settings: req.settings,
          cache,
          pool,
          share,
          counters: this.counters,
          cancelled: () => state.cancelRequested,
          ...(req.shard
            ? {}
            : { features: { ...featureTaskSettings(req.settings), keepMatrix: state.groupMeans !== null } }),
          onStart: (entry) => {
            current = entry.id;
            computeStart ??= performance.now();
          },
          onOutcome: ({ record, reused: r, computed: c, features }) => {
            if (features?.matrix) {
              const values = features.matrix;
              delete features.matrix;
              state.groupMeans?.offer(record.index, {
                id: record.id,
                matrix: { n: Math.round(Math.sqrt(values.length)), values },
              });
            } else {
              state.groupMeans?.offer(
                record.index,
                record.status === 'analysed' ? { id: record.id, matrix: null } : null,
              );
            }
            if (features) state.subjectFeatures.set(record.id, features);
            done++;
            if (r) reused++;
            if (c) computed++;
            if (record.status === 'failed')
              failures.push({ subject: record.id, reason: record.reason ?? '' });
            if (record.status === 'excluded')
              excluded.push({ subject: record.id, reason: record.reason ?? '' });
            current = record.id;
            progress('filtrations', done, share.length);
          },
        });
      } finally {
        state.pool = null;
      }
      if (state.cancelRequested) return await finishSummary('cancelled', []);
      // Failures and exclusions in cohort order, whatever order they finished in.
      const order = (a: { subject: string }, b: { subject: string }): number =>
        report.subjects.findIndex((s) => s.id === a.subject) -
        report.subjects.findIndex((s) => s.id === b.subject);
      failures.sort(order);
      excluded.sort(order);
      const shareRecords = share.map((i) => records.get(i) as SubjectRecord);

      if (req.shard) {
        await writeShardManifest(req.outDir as string, {
          format: 1,
          shard: req.shard,
          filtrationHash: filtrationSettingsHash(req.settings),
          settings: req.settings,
          stats: req.stats,
          report,
          cacheDir: cache.dir,
          records: shareRecords,
          computed,
          reused,
        });
        return await finishSummary('done', []);
      }

      state.run = {
        cohortRoot: report.root,
        settings: req.settings,
        stats: req.stats,
        records: shareRecords,
        unmatched: unmatchedParticipants(report),
      };
      for (const u of state.run.unmatched ?? []) excluded.push({ subject: u.id, reason: u.reason });
      const written = await this.finish(state, state.folder, format);
      // A run without an output folder wrote only into its own (see `tables`).
      const files = req.outDir ? written : [];
      failures.push(...state.stageFailures);
      if (state.cancelRequested) return await finishSummary('cancelled', files);
      return await finishSummary(state.stageFailures.length > 0 ? 'failed' : 'done', files);
    } catch (e) {
      // A failure of the run itself (a full disk, a folder it may not write): the folder's manifest
      // still says 'running', so the same request resumes once the cause is fixed.
      failures.push({ subject: '', reason: reasonOf(e) });
      return await finishSummary('failed', state.folder?.files() ?? []);
    } finally {
      await state.folder?.release();
      state.folder = null;
    }
  }

  /**
   * Tables, then hooks (2)–(4), then the output folder is marked complete (or failed, when a stage
   * could not run). Returns the files written. Throws when a file cannot be written.
   */
  private async finish(
    state: RunState,
    folder: OutputFolder | null,
    format: TableFormat,
    emit: (e: ProgressEvent) => void = (e) => this.emit(e),
  ): Promise<string[]> {
    const run = state.run as RunRecords;
    const createdAt = this.now().toISOString();
    state.stageFailures = [];
    if (folder) {
      const names = tableNames(format);
      for (const name of Object.values(names)) await folder.claim(name);
      const written = await writeRunTables(folder.dir, run, state.cache, format, createdAt);
      state.provenance = written.provenance;
    } else {
      state.provenance = buildProvenance(run, createdAt);
    }
    const given = this.options.hooks ?? cohortStages;
    const hooks = typeof given === 'function' ? given() : given;
    const ctx = makeStageContext({
      runId: state.runId,
      run,
      report: state.report,
      cache: state.cache,
      source: state.source,
      folder,
      format,
      emit,
      cancelled: () => state.cancelRequested,
      subjectFeatures: state.subjectFeatures,
      groupMeans: state.groupMeans,
      workers: this.pool?.size ?? this.options.workers ?? defaultPoolSize(),
    });
    for (const stage of ['groupFiltrations', 'features', 'statistics'] as const) {
      const hook = hooks[stage];
      if (!hook || state.cancelRequested) continue;
      try {
        Object.assign(state.results, await hook(ctx));
      } catch (e) {
        // A full disk or a refused file ends the run; a stage that cannot run (e.g. a group too
        // small to test) is reported, the later stages still run, and the run is not complete.
        if (e instanceof OutDirError || (e as { name?: string }).name === 'WriteError') throw e;
        state.stageFailures.push({ subject: `(${stage})`, reason: reasonOf(e) });
      }
    }
    state.groupMeans = null; // used by the group stage; its sums are done with
    const grid = (state.results as { grid?: number[] }).grid;
    if (grid && state.provenance) {
      // The grid is known only once the features stage has seen the cohort: record it too.
      const series = state.report.subjects.find((x) => x.source.timeSeries);
      state.provenance = {
        ...state.provenance,
        grid,
        gridSource: state.run?.settings.gridRange ? 'fixed' : 'cohort',
        // From the subjects' sources, so a merge of shards records it too.
        ...(series ? { correlation: series.source.correlation ?? 'pearson' } : {}),
      };
      if (folder) await ctx.writeJson(tableNames(format).provenance, state.provenance);
    }
    if (folder && !state.cancelRequested) {
      // A run whose stage failed writes no report: its results are incomplete, and say so in its summary.
      if (state.stageFailures.length === 0) await this.writeReport(state, folder);
      await folder.finish(state.stageFailures.length > 0 ? 'failed' : 'complete');
      state.tables = { dir: folder.dir, files: folder.files() };
    }
    return folder ? folder.files() : [];
  }

  /** report.html from the results the run holds (written last, so it can name every table beside it). */
  private async writeReport(state: RunState, folder: OutputFolder): Promise<void> {
    if (!state.provenance) return;
    const results = {
      provenance: state.provenance,
      diagramMetric: state.results.diagramMetric,
      stats: state.results.stats ?? null,
      diagramTests: state.results.diagramTests ?? null,
    };
    const leftOut = (state.run?.records ?? [])
      .filter((r) => r.status !== 'analysed')
      .map((r) => ({ subject: r.id, reason: r.reason ?? r.status }));
    const html = buildReport({
      results,
      cohort: state.report,
      leftOut,
      files: [...folder.files(), REPORT_FILE],
    });
    await folder.writeFile(REPORT_FILE, html);
  }

  /**
   * Combines the shards recorded in outDir/.loopwise-shards into the tables a single run writes,
   * then runs stages (2)–(4). Refuses when a shard is missing or the shards disagree on settings.
   */
  async mergeShards(
    outDir: string,
    opts: {
      force?: boolean;
      tableFormat?: TableFormat;
      cacheDir?: string;
      stats?: Partial<StatsSettings>;
    } = {},
  ): Promise<RunSummary> {
    const dir = resolve(outDir);
    const { manifests, records } = await readShards(dir);
    const first = manifests[0];
    const format = opts.tableFormat ?? 'tsv';
    // Statistics run after the merge, so they may be chosen now; the shards' own are the default.
    const stats: StatsSettings = { ...first.stats, ...opts.stats };
    assertNoProblems(validateStatsSettings(stats));
    assertNoProblems(validateStatsColumns(stats, first.report.columns));
    const cohort = { dir: first.report.root };
    const folder = await openRunFolder(
      dir,
      { cohort, settings: first.settings, stats },
      format,
      opts.force ?? false,
    );
    const cache = new FiltrationCache(resolve(opts.cacheDir ?? first.cacheDir));
    const runId = `run-${this.nextRun++}`;
    const state = newRunState({
      runId,
      request: {
        cohort: { dir: first.report.root },
        settings: first.settings,
        stats,
        outDir: dir,
      },
      source: null,
      report: first.report,
      cache,
      folder,
      startedAt: this.now().toISOString(),
      run: {
        cohortRoot: first.report.root,
        settings: first.settings,
        stats,
        records,
        unmatched: unmatchedParticipants(first.report),
      },
    });
    this.runs.set(runId, state);
    let files: string[];
    try {
      // From the recorded report, without checking the cohort again; matrices are read only if a stage asks.
      state.source = this.options.openSource
        ? await this.openSource({ dir: first.report.root }).catch(() => null)
        : { report: first.report, load: (entry) => loadSubjectMatrix(entry), loadsInWorker: true };
      files = await this.finish(state, folder, format);
    } catch (e) {
      state.status = 'failed';
      throw e;
    } finally {
      await folder.release();
      state.folder = null;
    }
    const status = state.stageFailures.length > 0 ? 'failed' : 'done';
    const failures = [
      ...state.stageFailures,
      ...records.filter((r) => r.status === 'failed').map((r) => ({ subject: r.id, reason: r.reason ?? '' })),
    ];
    const excluded = [
      ...records
        .filter((r) => r.status === 'excluded')
        .map((r) => ({ subject: r.id, reason: r.reason ?? '' })),
      ...unmatchedParticipants(first.report).map((u) => ({ subject: u.id, reason: u.reason })),
    ];
    const summary: RunSummary = {
      runId,
      status,
      computed: manifests.reduce((a, m) => a + m.computed, 0),
      reused: manifests.reduce((a, m) => a + m.reused, 0),
      analysed: records.filter((r) => r.status === 'analysed').length,
      failures,
      excluded,
      outDir: dir,
      cacheDir: cache.dir,
      cacheBytes: (await cache.size()).bytes,
      files,
    };
    state.summary = summary;
    state.status = status;
    state.done = Promise.resolve(summary);
    return summary;
  }

  async listRuns(): Promise<RunInfo[]> {
    return [...this.runs.values()].map((s) => ({
      runId: s.runId,
      status: s.status,
      startedAt: s.startedAt,
      request: {
        cohort: s.request.cohort,
        settings: s.request.settings,
        stats: s.request.stats,
        outDir: s.request.outDir,
      },
      progress: s.lastProgress,
      exporting: s.exporting,
    }));
  }

  async runSummary(runId: string): Promise<RunSummary | null> {
    return this.runs.get(runId)?.summary ?? null;
  }

  async cohortResults(runId: string): Promise<CohortResults | null> {
    const s = this.runs.get(runId);
    return s ? assembleCohortResults(s) : null;
  }

  async subjectResult(runId: string, subjectId: string): Promise<SubjectResult | null> {
    const s = this.runs.get(runId);
    return s ? assembleSubjectResult(s, subjectId) : null;
  }

  async regionEffects(runId: string, measure: string): Promise<RegionEffects | null> {
    const s = this.runs.get(runId);
    return s ? assembleRegionEffects(s, measure) : null;
  }

  async regionValues(runId: string, measure: string, node: number): Promise<RegionValues | null> {
    const s = this.runs.get(runId);
    return s ? assembleRegionValues(s, measure, node) : null;
  }

  async tablePage(runId: string, req: TablePageRequest): Promise<TablePage | null> {
    const s = this.runs.get(runId);
    return s ? assembleTablePage(s, req) : null;
  }

  async compare(runId: string, a: ComparisonSide, b: ComparisonSide): Promise<Comparison> {
    const s = this.runs.get(runId);
    if (!s) throw new ComparisonError(`no run ${runId} in this session`);
    return compareSides(s, a, b);
  }

  async exportRun(runId: string, outDir: string, overwrite: boolean): Promise<{ files: string[] }> {
    const s = this.runs.get(runId);
    if (!s) throw new RunStateError(`no run ${runId} in this session: run the analysis, then export`);
    if (s.status !== 'done' || !s.run)
      throw new RunStateError(
        s.status === 'running'
          ? `run ${runId} is still running: export once it is done`
          : `run ${runId} ${s.status === 'cancelled' ? 'was cancelled' : `failed (${s.stageFailures.map((f) => `${f.subject} ${f.reason}`).join('; ') || 'see its summary'})`}: nothing to export; fix the settings and run again`,
      );
    if (s.exporting)
      throw new RunStateError(`run ${runId} is being exported already: wait until that export ends`);
    const dir = resolve(outDir);
    const tables = s.tables;
    if (!tables)
      throw new RunStateError(
        `run ${runId} kept no tables to export (no folder of its own could be made under ${s.cache.dir}); run it again with an output folder`,
      );
    const format = s.request.tableFormat ?? 'tsv';
    // The export's progress is its own phase: a client never takes it for the run's stages.
    const started = performance.now();
    const exportEvent = (
      stage: string,
      done: number,
      total: number,
      etaMs: number | null,
    ): ProgressEvent => ({
      runId,
      phase: 'export',
      done,
      total,
      reused: 0,
      currentSubject: null,
      elapsedMs: performance.now() - started,
      etaMs,
      failures: [],
      message: stage,
    });
    const begin = exportEvent('tables', 0, 0, null);
    s.exporting = begin;
    try {
      const folder = await openRunFolder(dir, s.request, format, overwrite).catch((e: unknown) => {
        throw exportRefusal(e, dir);
      });
      this.emit(begin);
      try {
        // The run's own files, byte for byte: nothing is computed again. One event per file.
        let done = 0;
        for (const name of tables.files) {
          this.emit(exportEvent(name, done, tables.files.length, null));
          await folder.writeFile(name, await readFile(join(tables.dir, name)));
          done++;
        }
        await folder.finish('complete');
        this.emit(exportEvent('written', done, tables.files.length, 0));
        return { files: folder.files() };
      } finally {
        await folder.release();
      }
    } finally {
      s.exporting = null;
    }
  }
}

/**
 * The output folder's refusal in the app's words: exportRun is called from the app only, where
 * the choice is a checkbox or a button, not --force. The reason's code stays on the error.
 */
function exportRefusal(e: unknown, dir: string): unknown {
  if (!(e instanceof OutDirError)) return e;
  const words: Partial<Record<OutDirErrorCode, string>> = {
    'finished-run': `${dir} already holds the tables of an earlier Loopwise run. Replace them (files Loopwise did not write stay), or choose another folder.`,
    'foreign-files': `${dir} already holds files Loopwise did not write. Write beside them (they are left alone), or choose an empty folder.`,
    'unfinished-run': `${dir} holds an unfinished Loopwise run with other settings. Replace it, or choose another folder.`,
  };
  const text = words[e.code as OutDirErrorCode];
  return text ? new OutDirError(text, e.code) : e;
}

/** A call the run's state does not allow (e.g. exporting a run that failed): a conflict, not a fault. */
export class RunStateError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'RunStateError';
  }
}

export function createLoopwiseService(options: ServiceOptions = {}): LoopwiseService {
  return new LoopwiseService(options);
}
