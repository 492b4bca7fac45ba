/**
 * The Loopwise service: one implementation of LoopwiseApi for every door (Electron IPC, loopback
 * HTTP, the CLI). Transport-agnostic: plain async methods and a progress listener.
 *
 * A run goes: open the cohort → (1) per-subject filtrations on a worker pool, each committed to the
 * on-disk cache → tables (intervals, subjects, provenance) → hooks (2) group filtrations,
 * (3) features, (4) statistics (see hooks.ts). A shard run (--shard K/M) does only its share of
 * (1) and records it in OUT/.loopwise-shards/; mergeShards then does the rest, exactly as a single
 * run would.
 */
import { mkdir, readFile, readdir } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { setInterval, clearInterval } from 'node:timers';
import type {
  AnalysisSettings,
  CohortReport,
  CohortResults,
  LoopwiseApi,
  OpenCohortRequest,
  ProgressEvent,
  Provenance,
  RunSummary,
  StartRunRequest,
  StatsSettings,
  SubjectResult,
  Table,
} from '../api.ts';
import { WorkerPool, defaultPoolSize } from '../workers/pool.ts';
import { openAtomicWriter, removeStaleTemps, writeFileAtomic } from './atomic.ts';
import { FiltrationCache } from './cache.ts';
import { loadSubjectMatrix } from '../io/cohort.ts';
import { openCohortSource } from './cohort-source.ts';
import type { CohortSource, SourceOptions } from './cohort-source.ts';
import type { RunHooks, StageContext, StageOutput } from './hooks.ts';
import { cohortStages } from './stages.ts';
import { runFiltrationStage } from './pipeline.ts';
import type { ServiceCounters } from './pipeline.ts';
import {
  checkSettings,
  defaultAnalysisSettings,
  defaultStatsSettings,
  filtrationSettingsHash,
} from './settings.ts';
import {
  OutDirError,
  buildProvenance,
  markOutDirComplete,
  prepareOutDir,
  tableLine,
  tableNames,
  unmatchedParticipants,
  writeRunTables,
} from './tables.ts';
import type { RunRecords, SubjectRecord, TableFormat } from './tables.ts';

export { OutDirError };

export const SHARD_DIR = '.loopwise-shards';
export const CACHE_DIR_NAME = '.loopwise-cache';

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

/** What a shard leaves for the merge. */
export interface ShardManifest {
  format: 1;
  shard: { index: number; count: number };
  filtrationHash: string;
  settings: AnalysisSettings;
  stats: StatsSettings;
  report: CohortReport;
  cacheDir: string;
  records: SubjectRecord[];
  computed: number;
  reused: number;
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
  run: RunRecords | null;
  provenance: Provenance | null;
  results: StageOutput;
  /** Stages (2)–(4) that failed: the run keeps what came before (e.g. features without statistics). */
  stageFailures: Array<{ subject: string; reason: string }>;
  summary: RunSummary | null;
  done: Promise<RunSummary>;
}

/** A run's state as it starts: running, nothing computed yet. */
function newRunState(
  fields: Pick<RunState, 'runId' | 'request' | 'source' | 'report' | 'cache' | 'run'>,
): RunState {
  return {
    ...fields,
    status: 'running',
    cancelRequested: false,
    pool: null,
    provenance: null,
    results: {},
    stageFailures: [],
    summary: null,
    done: Promise.resolve(null as unknown as RunSummary),
  };
}

/** The subjects of share `index` of `count` (1-based): positions ≡ index − 1 (mod count). */
export function shareOf(total: number, shard: { index: number; count: number } | null | undefined): number[] {
  const all = Array.from({ length: total }, (_, i) => i);
  if (!shard) return all;
  return all.filter((i) => i % shard.count === shard.index - 1);
}

function emptyTable(columns: string[]): Table {
  return { columns, rows: [] };
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
  }

  private openSource(req: OpenCohortRequest, opts: SourceOptions = {}): Promise<CohortSource> {
    const roots = this.options.allowedRoots?.();
    return (this.options.openSource ?? openCohortSource)(
      req,
      roots ? { ...opts, allowedRoots: roots } : opts,
    );
  }

  private emit(e: ProgressEvent): void {
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
    if (req.shard) {
      const { index, count } = req.shard;
      if (!(Number.isInteger(count) && count >= 1 && Number.isInteger(index) && index >= 1 && index <= count))
        throw new Error(`shard must be K/M with 1 ≤ K ≤ M, got ${index}/${count}`);
      if (!req.outDir) throw new Error('a shard run needs an output folder, shared by all shards');
    }
    const format: TableFormat = req.tableFormat ?? 'tsv';
    const outDir = req.outDir ? resolve(req.outDir) : null;
    if (outDir) {
      if (req.shard) await mkdir(outDir, { recursive: true });
      else await prepareOutDir(outDir, req.force ?? false, Object.values(tableNames(format)));
    }
    const source = await this.openSource(req.cohort, {
      input: req.settings.input,
      dropRegions: req.settings.dropRegions,
    });
    const cacheDir = resolve(
      req.cacheDir ?? (outDir ? join(outDir, CACHE_DIR_NAME) : (this.options.cacheDir ?? CACHE_DIR_NAME)),
    );
    const cache = new FiltrationCache(cacheDir);
    await cache.init();
    const runId = `run-${this.nextRun++}`;
    const state = newRunState({
      runId,
      request: { ...req, outDir },
      source,
      report: source.report,
      cache,
      run: null,
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
          onStart: (entry) => {
            current = entry.id;
            computeStart ??= performance.now();
          },
          onOutcome: ({ record, reused: r, computed: c }) => {
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
        const manifest: ShardManifest = {
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
        };
        const dir = join(req.outDir as string, SHARD_DIR);
        await mkdir(dir, { recursive: true });
        await removeStaleTemps(dir);
        await writeFileAtomic(
          join(dir, `shard-${req.shard.index}-of-${req.shard.count}.json`),
          JSON.stringify(manifest),
        );
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
      const files = await this.finish(state, req.outDir, format);
      failures.push(...state.stageFailures);
      return await finishSummary(state.cancelRequested ? 'cancelled' : 'done', files);
    } catch (e) {
      failures.push({ subject: '', reason: e instanceof Error ? e.message : String(e) });
      return await finishSummary('failed', []);
    }
  }

  /** Tables, then hooks (2)–(4), then the output folder is marked complete. Returns the files written. */
  private async finish(state: RunState, outDir: string | null, format: TableFormat): Promise<string[]> {
    const run = state.run as RunRecords;
    const createdAt = this.now().toISOString();
    const files: string[] = [];
    if (outDir) {
      const written = await writeRunTables(outDir, run, state.cache, format, createdAt);
      files.push(...written.files);
      state.provenance = written.provenance;
    } else {
      state.provenance = buildProvenance(run, createdAt);
    }
    const given = this.options.hooks ?? cohortStages;
    const hooks = typeof given === 'function' ? given() : given;
    const ctx = this.stageContext(state, outDir, format, files);
    for (const stage of ['groupFiltrations', 'features', 'statistics'] as const) {
      const hook = hooks[stage];
      if (!hook || state.cancelRequested) continue;
      try {
        Object.assign(state.results, await hook(ctx));
      } catch (e) {
        // A stage that cannot run (e.g. a group too small to test) leaves the tables made so far.
        state.stageFailures.push({
          subject: `(${stage})`,
          reason: e instanceof Error ? e.message : String(e),
        });
      }
    }
    const grid = (state.results as { grid?: number[] }).grid;
    if (grid && state.provenance) {
      // The grid is known only once the features stage has seen the cohort: record it too.
      state.provenance = { ...state.provenance, grid };
      if (outDir) await ctx.writeJson(tableNames(format).provenance, state.provenance);
    }
    if (outDir && !state.cancelRequested) await markOutDirComplete(outDir, files);
    return files;
  }

  private stageContext(
    state: RunState,
    outDir: string | null,
    format: TableFormat,
    files: string[],
  ): StageContext {
    const run = state.run as RunRecords;
    return {
      runId: state.runId,
      run,
      stats: run.stats,
      report: state.report,
      analysed: run.records.filter((r) => r.status === 'analysed'),
      filtration: async (record) => {
        const e = record.key ? await state.cache.get(record.key) : null;
        if (!e)
          throw new Error(`the cached filtration of subject ${record.id} is missing from ${state.cache.dir}`);
        return e;
      },
      matrix: async (entry) => (state.source ? state.source.load(entry) : null),
      writeTable: async (name, table) => {
        if (!outDir) return null;
        const file = `${name}.${format}`;
        let text = tableLine(table.columns, format);
        for (const row of table.rows) text += tableLine(row, format);
        await writeFileAtomic(join(outDir, file), text);
        if (!files.includes(file)) files.push(file);
        return file;
      },
      openTable: async (name, columns) => {
        if (!outDir) return { row: async () => {}, close: async () => null, abort: async () => {} };
        const file = `${name}.${format}`;
        const writer = openAtomicWriter(join(outDir, file));
        // Rows are gathered into chunks of about 1 MB before each write.
        let chunk = tableLine(columns, format);
        return {
          row: async (cells) => {
            chunk += tableLine(cells, format);
            if (chunk.length > 1 << 20) {
              await writer.write(chunk);
              chunk = '';
            }
          },
          close: async () => {
            if (chunk) await writer.write(chunk);
            await writer.close();
            if (!files.includes(file)) files.push(file);
            return file;
          },
          abort: () => writer.abort(),
        };
      },
      writeJson: async (name, value) => {
        if (!outDir) return null;
        await writeFileAtomic(join(outDir, name), JSON.stringify(value, null, 2) + '\n');
        if (!files.includes(name)) files.push(name);
        return name;
      },
      format,
      progress: (phase, done, total, message, etaMs) =>
        this.emit({
          runId: state.runId,
          phase,
          done,
          total,
          reused: 0,
          currentSubject: null,
          elapsedMs: 0,
          etaMs: etaMs ?? null,
          failures: [],
          ...(message !== undefined ? { message } : {}),
        }),
      cancelled: () => state.cancelRequested,
      workers: this.pool?.size ?? this.options.workers ?? defaultPoolSize(),
    };
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
    const shardDir = join(dir, SHARD_DIR);
    const names = (await readdir(shardDir).catch(() => [] as string[])).filter((n) =>
      /^shard-\d+-of-\d+\.json$/.test(n),
    );
    if (names.length === 0)
      throw new Error(`${dir}: no shard results found (expected ${SHARD_DIR}/shard-K-of-M.json)`);
    const manifests: ShardManifest[] = [];
    for (const n of names)
      manifests.push(JSON.parse(await readFile(join(shardDir, n), 'utf8')) as ShardManifest);
    const counts = [...new Set(manifests.map((m) => m.shard.count))];
    if (counts.length > 1)
      throw new Error(
        `${shardDir} holds shards of different splits (${counts.map((c) => `/${c}`).join(', ')}); remove the stale ones`,
      );
    const count = counts[0];
    const missing = Array.from({ length: count }, (_, i) => i + 1).filter(
      (k) => !manifests.some((m) => m.shard.index === k),
    );
    if (missing.length > 0)
      throw new Error(
        `shard ${missing.map((k) => `${k}/${count}`).join(', ')} not finished: run analyze --shard for it first`,
      );
    manifests.sort((a, b) => a.shard.index - b.shard.index);
    const first = manifests[0];
    for (const m of manifests) {
      if (
        m.filtrationHash !== first.filtrationHash ||
        JSON.stringify(m.settings) !== JSON.stringify(first.settings)
      )
        throw new Error(`shard ${m.shard.index}/${count} was run with other settings than shard 1/${count}`);
      if (m.report.subjects.length !== first.report.subjects.length)
        throw new Error(`shard ${m.shard.index}/${count} saw a different cohort than shard 1/${count}`);
    }
    const total = first.report.subjects.length;
    const byIndex = new Map<number, SubjectRecord>();
    for (const m of manifests) for (const r of m.records) byIndex.set(r.index, r);
    const records: SubjectRecord[] = [];
    for (let i = 0; i < total; i++) {
      const r = byIndex.get(i);
      if (!r) throw new Error(`subject ${first.report.subjects[i].id} is in no shard's results`);
      records.push(r);
    }
    const format = opts.tableFormat ?? 'tsv';
    // Statistics run after the merge, so they may be chosen now; the shards' own are the default.
    const stats: StatsSettings = { ...first.stats, ...opts.stats };
    await prepareOutDir(dir, opts.force ?? false, Object.values(tableNames(format)));
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
      run: {
        cohortRoot: first.report.root,
        settings: first.settings,
        stats,
        records,
        unmatched: unmatchedParticipants(first.report),
      },
    });
    this.runs.set(runId, state);
    // From the recorded report, without checking the cohort again; matrices are read only if a stage asks.
    state.source = this.options.openSource
      ? await this.openSource({ dir: first.report.root }).catch(() => null)
      : { report: first.report, load: (entry) => loadSubjectMatrix(entry), loadsInWorker: true };
    const files = await this.finish(state, dir, format);
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
      status: 'done',
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
    state.status = 'done';
    state.done = Promise.resolve(summary);
    return summary;
  }

  async runSummary(runId: string): Promise<RunSummary | null> {
    return this.runs.get(runId)?.summary ?? null;
  }

  async cohortResults(runId: string): Promise<CohortResults | null> {
    const s = this.runs.get(runId);
    if (!s || s.status !== 'done' || !s.run || !s.provenance) return null;
    const r = s.results;
    return {
      runId,
      provenance: s.provenance,
      // Until the features hook (stage 3) fills it: the per-subject interval counts.
      features: r.features ?? (await this.countsTable(s)),
      nodeScores:
        r.nodeScores ?? emptyTable(['participant_id', 'node', 'label', 'network', 'measure', 'value']),
      groupCurves: r.groupCurves ?? [],
      groupDiagrams: r.groupDiagrams ?? [],
      stats: r.stats ?? null,
      diagramTests: r.diagramTests ?? null,
      embedding: r.embedding ?? null,
    };
  }

  private async countsTable(s: RunState): Promise<Table> {
    const run = s.run as RunRecords;
    const dims = Array.from({ length: run.settings.maxDim + 1 }, (_, d) => d);
    const table: Table = {
      columns: ['participant_id', 'status', ...dims.map((d) => `h${d}_intervals`)],
      rows: [],
    };
    for (const rec of run.records) {
      const e = rec.status === 'analysed' && rec.key ? await s.cache.get(rec.key) : null;
      table.rows.push([rec.id, rec.status, ...dims.map((d) => (e ? e.diagrams[d].length : null))]);
    }
    return table;
  }

  async subjectResult(runId: string, subjectId: string): Promise<SubjectResult | null> {
    const s = this.runs.get(runId);
    const rec = s?.run?.records.find((r) => r.id === subjectId);
    if (!s || !rec || rec.status !== 'analysed' || !rec.key) return null;
    const e = await s.cache.get(rec.key);
    if (!e) return null;
    const entry = s.report.subjects[rec.index];
    const matrix = s.source ? await s.source.load(entry).catch(() => null) : null;
    const groupColumn = s.run?.stats.groupColumn;
    const g = groupColumn ? entry.covariates[groupColumn] : null;
    return {
      id: rec.id,
      group: g === null || g === undefined ? null : String(g),
      n: matrix?.n ?? e.n,
      matrix: matrix ? Array.from(matrix.values) : [],
      diagrams: e.diagrams,
      representatives: (e.representatives ?? []).map((rep, k) => ({
        birth: e.diagrams[1][k][0],
        death: e.diagrams[1][k][1],
        edges: rep.edges,
        nodes: rep.nodes,
      })),
      nodeScores: {},
    };
  }

  async exportRun(runId: string, outDir: string, overwrite: boolean): Promise<{ files: string[] }> {
    const s = this.runs.get(runId);
    if (!s || s.status !== 'done' || !s.run) throw new Error(`run ${runId} has not finished`);
    const dir = resolve(outDir);
    const format = s.request.tableFormat ?? 'tsv';
    await prepareOutDir(dir, overwrite, Object.values(tableNames(format)));
    return { files: await this.finish(s, dir, format) };
  }
}

export function createLoopwiseService(options: ServiceOptions = {}): LoopwiseService {
  return new LoopwiseService(options);
}
