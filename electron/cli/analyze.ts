/**
 * `loopwise analyze COHORT_DIR --out DIR [options]`: a thin door over the service. Persistence
 * diagrams of every subject on a worker pool, committed one by one to a cache so an interrupted
 * run resumes; then the cohort's tables. Progress goes to stderr (a bar on a terminal, plain
 * lines otherwise); Ctrl-C cancels cleanly. Exit 0 when at least one subject was analysed, 1 when
 * none, 2 on a usage error, an unknown column or a refused output folder, 3 when the tables are
 * written but the statistics asked for could not run, 130 when cancelled.
 */
import { availableParallelism } from 'node:os';
import type { AnalysisSettings, ProgressEvent, RunSummary, StartRunRequest } from '../api.ts';
import type { CliIO } from '../cli.ts';
import { createLoopwiseService } from '../service/service.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../service/settings.ts';
import { statisticsRequested, validateAnalysisSettings } from '../contract.ts';
import { UsageError, numberOption, parseArgs } from './args.ts';
import {
  FILTRATION_VALUE_OPTIONS,
  GRID_OPTIONS,
  READER_FLAGS,
  READER_OPTIONS,
  STATS_OPTIONS,
  checkedStats,
  cohortRequest,
  filtrationOptions,
  gridOptions,
  refuseProblems,
  statsOptions,
} from './filtration-options.ts';

export const ANALYZE_HELP = `usage: loopwise analyze COHORT_DIR --out DIR [options]

Computes the persistence diagrams of every subject of the cohort, then features, group-level
filtrations and (with --group, --effect or --model) statistics, and writes into DIR:
  features.tsv     participant_id, the participants table's columns, every scalar feature
  nodes.tsv        participant_id, node, label, network, measure, value (node participation)
  networks.tsv     participant_id, network, measure, mean, nodes (when nodes.tsv names networks)
  curves.tsv       participant_id, curve, dimension, grid_value, value (Betti, landscape, Euler)
  intervals.tsv    participant_id, dimension, birth, death, nodes (an H1 cycle's nodes, 0-based,
                   space-separated; NA otherwise); death inf for a class that never dies
  subjects.tsv     each subject's status (analysed, failed, excluded) and reason
  group-curves.tsv group, curve, dimension, grid_value, mean, lower, upper (bootstrap 95% band)
  group-intervals.tsv, group-nodes.tsv   the filtration of each group's mean matrix (with --group)
  stats.tsv, diagram-tests.tsv, embedding.tsv   group statistics (with --group)
  provenance.json  software and engine version, every setting, the grid, input files with SHA-256, time
Where file names carry BIDS sessions (ses-pre), each scan is a row: every table above with a
participant_id column then has a session column right after it.
Loopwise is a research tool, not a diagnostic device.
Finished subjects are cached (DIR/.loopwise-cache, or --cache): a run that is interrupted resumes
where it stopped, and a re-run that changes only statistics settings recomputes nothing.

options:
  --out DIR             output folder; its manifest lists the files Loopwise owns there; the
                        same command resumes an unfinished run (see README, The output folder)
cohort and readers (as for 'loopwise validate'):
  --participants FILE   participants table (default COHORT_DIR/participants.tsv)
  --nodes FILE          node table: label, network, x, y, z (default COHORT_DIR/nodes.tsv if present)
  --time-series         the files hold region time series (time points × regions), correlated per subject
  --correlation pearson|ledoit-wolf   estimator for --time-series (default pearson; ledoit-wolf
                        shrinks the covariance towards a scaled identity first)
  --variable NAME       the variable to read from .mat files
  --file-column NAME    the participants column naming each subject's file
  --match TEXT          only files whose name contains TEXT are matrices
  --numeric COLS, --categorical COLS   read these participants columns as numbers / categories
filtration:
  --input correlation|weight|distance   what the matrices hold (default correlation)
  --transform NAME      correlation: one-minus (default), one-minus-abs, sqrt
                        weight: inverse (default), neg-log; distance: identity
  --max-dim 1|2         highest homology dimension (default 1)
  --cap-distance X      stop the filtration at distance X (X > 0)
  --cap-density P       stop where a fraction P of all edges is present (0 < P ≤ 1)
  --no-representatives  skip H1 cycle representatives (faster)
  --drop-regions LIST   0-based region indices to leave out of every subject, e.g. 3,17
features:
  --grid-range LO,HI    fixed range of the curves' grid: a subject's features then do not depend
                        on the other subjects (default: the cohort's filtration range, so
                        features are comparable only within one run)
  --grid-points K       points of the grid (2 to 10000, default 100)
  --floor X             intervals shorter than X are noise in the above-floor features (default 0)
  --landscape-levels L  persistence landscape levels (0 to 100, default 3)
statistics (see README, "Study designs"):
  --group COLUMN        categorical column comparing its levels (same as --effect with COLUMN categorical)
  --effect COLUMN       effect of interest: categorical (2 levels: t; more: F) or numeric (slope)
  --model FORMULA       Wilkinson–Rogers formula, e.g. 'group*session + age' (with --test)
  --test TERM           the model term tested, e.g. 'group:session'
  --reference LEVEL     reference level of the categorical effect (contrast = other − reference)
  --blocks COLUMN       exchangeability blocks, e.g. participant_id (permutations stay within them)
  --covariates LIST     participants columns to adjust for, comma-separated
  --permutations N      permutations of the tests (0 to 1000000, default 5000)
  --seed S              seed of the permutations (0 to 4294967295, default 1)
run:
  --workers K           worker threads (default: the number of cores, here ${availableParallelism()})
  --shard K/M           compute only share K of M (subjects K, K+M, K+2M, …); then 'loopwise merge DIR'
  --cache DIR           cache folder (default OUT/.loopwise-cache)
  --force               replace a finished run, or write beside files Loopwise did not make
                        (a file of a table's name that Loopwise did not write is never replaced)
  --csv                 write .csv instead of .tsv

exit code: 0 tables written; 1 no subject analysed; 2 usage error, unknown column, refused
folder; 3 tables written, but the statistics asked for could not run; 130 cancelled
`;

function intList(s: string | undefined, name: string): number[] {
  if (s === undefined || s.trim() === '') return [];
  return s.split(',').map((t) => {
    const x = Number(t.trim());
    if (!Number.isInteger(x) || x < 0) throw new UsageError(`--${name} must list integers ≥ 0, got '${t}'`);
    return x;
  });
}

export function parseAnalyzeArgs(args: string[]): (StartRunRequest & { outDir: string }) | null {
  const p = parseArgs(args, {
    values: [
      'out',
      ...READER_OPTIONS,
      ...FILTRATION_VALUE_OPTIONS,
      ...GRID_OPTIONS,
      'drop-regions',
      ...STATS_OPTIONS,
      'workers',
      'shard',
      'cache',
    ],
    flags: ['no-representatives', 'force', 'csv', 'help', ...READER_FLAGS],
  });
  if (p.flags.has('help')) return null;
  if (p.positionals.length !== 1)
    throw new UsageError(p.positionals.length === 0 ? 'no COHORT_DIR given' : 'give exactly one COHORT_DIR');
  const out = p.values.get('out');
  if (!out) throw new UsageError('--out DIR is required');
  const { input, transform, maxDim, cap } = filtrationOptions(p);
  const workers = numberOption(p, 'workers', (x) => Number.isInteger(x) && x >= 1, 'an integer ≥ 1');
  let shard: { index: number; count: number } | null = null;
  const shardText = p.values.get('shard');
  if (shardText !== undefined) {
    const m = /^(\d+)\/(\d+)$/.exec(shardText);
    const index = m ? Number(m[1]) : NaN;
    const count = m ? Number(m[2]) : NaN;
    if (!m || count < 1 || index < 1 || index > count)
      throw new UsageError(`--shard must be K/M with 1 ≤ K ≤ M, got '${shardText}'`);
    shard = { index, count };
  }
  const settings: AnalysisSettings = {
    ...defaultAnalysisSettings(),
    input,
    transform,
    maxDim,
    cap,
    representatives: !p.flags.has('no-representatives'),
    dropRegions: intList(p.values.get('drop-regions'), 'drop-regions'),
    ...gridOptions(p),
  };
  refuseProblems(validateAnalysisSettings(settings));
  const stats = checkedStats(defaultStatsSettings(), statsOptions(p));
  return {
    // Relative to where the command is run, as a user expects (the readers resolve against the cohort folder).
    cohort: cohortRequest(p, p.positionals[0]),
    settings,
    stats,
    outDir: out,
    force: p.flags.has('force'),
    cacheDir: p.values.get('cache') ?? null,
    shard,
    ...(workers !== undefined ? { workers } : {}),
    tableFormat: p.flags.has('csv') ? 'csv' : 'tsv',
  };
}

export function formatDuration(ms: number): string {
  const s = Math.round(ms / 1000);
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  const sec = String(s % 60).padStart(2, '0');
  return h > 0 ? `${h}:${String(m).padStart(2, '0')}:${sec}` : `${m}:${sec}`;
}

export function formatBytes(b: number): string {
  if (b < 1024) return `${b} B`;
  if (b < 1024 ** 2) return `${(b / 1024).toFixed(1)} KiB`;
  if (b < 1024 ** 3) return `${(b / 1024 ** 2).toFixed(1)} MiB`;
  return `${(b / 1024 ** 3).toFixed(2)} GiB`;
}

/** One progress line, without the bar. */
export function progressText(e: ProgressEvent): string {
  const parts = [`${e.done}/${e.total} subjects`];
  const extra: string[] = [];
  if (e.reused > 0) extra.push(`reused ${e.reused}`);
  if (e.failures.length > 0) extra.push(`failed ${e.failures.length}`);
  if (extra.length) parts.push(`(${extra.join(', ')})`);
  if (e.currentSubject) parts.push(e.currentSubject);
  parts.push(`${formatDuration(e.elapsedMs)} elapsed`);
  if (e.etaMs !== null && e.done < e.total) parts.push(`ETA ${formatDuration(e.etaMs)}`);
  return parts.join(' ');
}

/** Shows progress on stderr: a redrawn bar on a terminal, plain lines otherwise. */
export function progressPrinter(
  io: CliIO,
  tty: boolean,
  prefix: string,
): { show(e: ProgressEvent): void; end(): void } {
  let last = 0;
  let drawn = false;
  return {
    show(e) {
      if (e.phase !== 'filtrations') return;
      if (!tty) {
        io.err(`${prefix}: ${progressText(e)}\n`);
        return;
      }
      const now = Date.now();
      if (now - last < 100 && e.done < e.total) return;
      last = now;
      const width = 24;
      const filled = e.total > 0 ? Math.round((width * e.done) / e.total) : width;
      io.err(`\r\x1b[2K[${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${progressText(e)}`);
      drawn = true;
    },
    end() {
      if (drawn) io.err('\n');
      drawn = false;
    },
  };
}

export function printSummary(io: CliIO, prefix: string, s: RunSummary): void {
  const excluded = s.excluded ?? [];
  const lines = [
    `${prefix}: ${s.status === 'done' ? 'finished' : s.status}: ${s.analysed ?? s.computed + s.reused} analysed ` +
      `(${s.computed} computed, ${s.reused} reused from the cache), ${s.failures.length} failed, ${excluded.length} excluded`,
  ];
  for (const f of s.failures) lines.push(`  failed   ${f.subject || '(run)'}: ${f.reason}`);
  for (const f of excluded) lines.push(`  excluded ${f.subject}: ${f.reason}`);
  const findings = s.findings ?? [];
  const SHOWN = 8;
  for (const f of findings.slice(0, SHOWN))
    lines.push(
      `  ${f.severity === 'error' ? 'error  ' : 'warning'}  ${f.file ?? f.subject ?? ''} [${f.code}] ${f.message}`,
    );
  if (findings.length > SHOWN)
    lines.push(`  …        ${findings.length - SHOWN} more findings (loopwise validate lists them all)`);
  if (s.cacheDir) lines.push(`  cache    ${s.cacheDir} (${formatBytes(s.cacheBytes ?? 0)}; safe to delete)`);
  if (s.outDir && s.files && s.files.length > 0) lines.push(`  tables   ${s.outDir}: ${s.files.join(', ')}`);
  if (s.elapsedMs !== undefined) lines.push(`  time     ${formatDuration(s.elapsedMs)}`);
  if (s.peakRssBytes !== undefined) lines.push(`  memory   peak ${formatBytes(s.peakRssBytes)} resident`);
  io.err(lines.join('\n') + '\n');
}

/** The failure the service records for a stage that could not run, e.g. '(statistics)'. */
export const STATISTICS_STAGE = '(statistics)';

/**
 * 0 tables written; 1 nothing analysed or the run failed; 3 the tables were written but the
 * statistics asked for could not run (a script must not take a run without its statistics for a
 * finished one); 130 cancelled.
 */
export function exitCodeOf(s: RunSummary, statisticsAsked = false): number {
  if (s.status === 'cancelled') return 130;
  const analysed = (s.analysed ?? s.computed + s.reused) > 0;
  // A run fails as a whole when a stage fails; when the statistics stage alone failed, every other
  // table is written, and exit 3 says exactly that.
  const stageFailures = s.failures.filter((f) => f.subject === '' || /^\(.*\)$/.test(f.subject));
  const onlyStatistics =
    stageFailures.length > 0 && stageFailures.every((f) => f.subject === STATISTICS_STAGE);
  if (s.status === 'failed' && analysed && onlyStatistics) return 3;
  if (!(s.status === 'done' && analysed)) return 1;
  return statisticsAsked && statisticsMissing(s) ? 3 : 0;
}

/** Statistics were asked for but did not come: the stage failed, or tables were written without stats.tsv. */
export function statisticsMissing(s: RunSummary): boolean {
  if (s.failures.some((f) => f.subject === STATISTICS_STAGE)) return true;
  const files = s.files ?? [];
  return files.length > 0 && !files.some((f) => /^stats\.(tsv|csv)$/.test(f));
}

/** The summary's line about the grid: fixed by --grid-range, or the cohort's (comparable within the run only). */
export function gridNote(settings: AnalysisSettings): string {
  return settings.gridRange
    ? `  grid     fixed ${settings.gridRange[0]} to ${settings.gridRange[1]} (${settings.gridPoints} points): features comparable across runs\n`
    : `  grid     the cohort's filtration range: features are comparable only within this run (--grid-range LO,HI fixes it)\n`;
}

export async function analyzeCommand(args: string[], io: CliIO): Promise<number> {
  const prefix = 'loopwise analyze';
  let req;
  try {
    req = parseAnalyzeArgs(args);
  } catch (e) {
    if (e instanceof UsageError) {
      io.err(`${prefix}: ${e.message} (see loopwise analyze --help)\n`);
      return 2;
    }
    throw e;
  }
  if (!req) {
    io.out(ANALYZE_HELP);
    return 0;
  }
  const service = createLoopwiseService();
  const printer = progressPrinter(io, process.stderr.isTTY === true, prefix);
  const unlisten = service.onProgress((e) => printer.show(e));
  let runId: string;
  try {
    ({ runId } = await service.startRun(req));
  } catch (e) {
    unlisten();
    await service.close();
    io.err(`${prefix}: ${e instanceof Error ? e.message : String(e)}\n`);
    // A refused output folder, a cohort that cannot be opened, invalid settings: all input errors;
    // a folder that cannot take the writes (full disk, read-only) is a failed job.
    return e instanceof Error && e.name === 'WriteError' ? 1 : 2;
  }
  let interrupts = 0;
  const onSigint = (): void => {
    interrupts++;
    if (interrupts > 1) process.exit(130);
    printer.end();
    io.err(`${prefix}: cancelling (Ctrl-C again to quit at once); finished subjects stay in the cache\n`);
    void service.cancelRun(runId);
  };
  process.on('SIGINT', onSigint);
  try {
    const summary = await service.waitForRun(runId);
    printer.end();
    if (summary.status === 'cancelled')
      io.err(`${prefix}: cancelled; run the same command again to resume from the cache\n`);
    if (req.shard && summary.status === 'done')
      io.err(
        `${prefix}: shard ${req.shard.index}/${req.shard.count} done; when all shards are, run: loopwise merge ${req.outDir}\n`,
      );
    printSummary(io, prefix, summary);
    if (summary.status === 'done' && !req.shard) io.err(gridNote(req.settings));
    // A shard writes no tables: its statistics run at the merge.
    const code = exitCodeOf(summary, statisticsRequested(req.stats) && !req.shard);
    if (code === 3)
      io.err(`${prefix}: the tables are written, but the statistics asked for could not run (exit 3)\n`);
    return code;
  } finally {
    process.off('SIGINT', onSigint);
    unlisten();
    await service.close();
  }
}
