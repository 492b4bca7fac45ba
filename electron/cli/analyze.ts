/**
 * `loopwise analyze COHORT_DIR --out DIR [options]`: a thin door over the service. Persistence
 * diagrams of every subject on a worker pool, committed one by one to a cache so an interrupted
 * run resumes; then the cohort's tables. Progress goes to stderr (a bar on a terminal, plain
 * lines otherwise); Ctrl-C cancels cleanly. Exit 0 when at least one subject was analysed, 1 when
 * none, 2 on a usage error or a refused output folder, 130 when cancelled.
 */
import { availableParallelism } from 'node:os';
import { resolve } from 'node:path';
import type { AnalysisSettings, ProgressEvent, RunSummary, StartRunRequest, StatsSettings } from '../api.ts';
import type { CliIO } from '../cli.ts';
import { createLoopwiseService } from '../service/service.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../service/settings.ts';
import { UsageError, numberOption, parseArgs } from './args.ts';
import { FILTRATION_VALUE_OPTIONS, filtrationOptions } from './filtration-options.ts';
import type { ParsedArgs } from './args.ts';

export const ANALYZE_HELP = `usage: loopwise analyze COHORT_DIR --out DIR [options]

Computes the persistence diagrams of every subject of the cohort, then features, group-level
filtrations and (with --group) statistics, and writes into DIR:
  features.tsv     participant_id, the participants table's columns, every scalar feature
  nodes.tsv        participant_id, node, label, network, measure, value (node participation)
  networks.tsv     participant_id, network, measure, mean, nodes (when nodes.tsv names networks)
  curves.tsv       participant_id, curve, dimension, grid_value, value (Betti, landscape, Euler)
  intervals.tsv    participant_id, dimension, birth, death, nodes (an H1 cycle's nodes, 0-based,
                   space-separated; n/a otherwise); death 'inf' for a class that never dies
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
  --out DIR             output folder (refused if it holds files, unless --force)
  --participants FILE   participants table (default COHORT_DIR/participants.tsv)
  --input correlation|weight|distance   what the matrices hold (default correlation)
  --transform NAME      correlation: one-minus (default), one-minus-abs, sqrt
                        weight: inverse (default), neg-log; distance: identity
  --max-dim 1|2         highest homology dimension (default 1)
  --cap-distance X      stop the filtration at distance X
  --cap-density P       stop where a fraction P of all edges is present (0 < P ≤ 1)
  --no-representatives  skip H1 cycle representatives (faster)
  --drop-regions LIST   0-based region indices to leave out of every subject, e.g. 3,17
  --group COLUMN        participants column that defines the groups (statistics)
  --covariates LIST     participants columns to adjust for, comma-separated (statistics)
  --permutations N      permutations of the group tests (default 5000)
  --seed S              seed of the permutations (default 1)
  --workers K           worker threads (default: the number of cores, here ${availableParallelism()})
  --shard K/M           compute only share K of M (subjects K, K+M, K+2M, …); then 'loopwise merge DIR'
  --cache DIR           cache folder (default OUT/.loopwise-cache)
  --force               replace Loopwise's tables in a non-empty DIR (other files are left alone)
  --csv                 write .csv instead of .tsv
`;

function intList(s: string | undefined, name: string): number[] {
  if (s === undefined || s.trim() === '') return [];
  return s.split(',').map((t) => {
    const x = Number(t.trim());
    if (!Number.isInteger(x) || x < 0) throw new UsageError(`--${name} must list integers ≥ 0, got '${t}'`);
    return x;
  });
}

export const STATS_OPTIONS = ['group', 'covariates', 'permutations', 'seed'];

/** The statistics options given (--group, --covariates, --permutations, --seed); absent ones are left out. */
export function statsOptions(p: ParsedArgs): Partial<StatsSettings> {
  const out: Partial<StatsSettings> = {};
  const group = p.values.get('group');
  if (group !== undefined) out.groupColumn = group;
  const covariates = p.values.get('covariates');
  if (covariates !== undefined)
    out.covariates = covariates
      .split(',')
      .map((s) => s.trim())
      .filter((s) => s !== '');
  const permutations = numberOption(
    p,
    'permutations',
    (x) => Number.isInteger(x) && x >= 0,
    'an integer ≥ 0',
  );
  if (permutations !== undefined) out.permutations = permutations;
  const seed = numberOption(p, 'seed', (x) => Number.isInteger(x), 'an integer');
  if (seed !== undefined) out.seed = seed;
  return out;
}

export function parseAnalyzeArgs(args: string[]): (StartRunRequest & { outDir: string }) | null {
  const p = parseArgs(args, {
    values: [
      'out',
      'participants',
      ...FILTRATION_VALUE_OPTIONS,
      'drop-regions',
      'group',
      'covariates',
      'permutations',
      'seed',
      'workers',
      'shard',
      'cache',
    ],
    flags: ['no-representatives', 'force', 'csv', 'help'],
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
  };
  const stats: StatsSettings = { ...defaultStatsSettings(), ...statsOptions(p) };
  const participants = p.values.get('participants');
  return {
    // Relative to where the command is run, as a user expects (the readers resolve against the cohort folder).
    cohort: {
      dir: p.positionals[0],
      ...(participants !== undefined ? { participants: resolve(participants) } : {}),
    },
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
  if (s.cacheDir) lines.push(`  cache    ${s.cacheDir} (${formatBytes(s.cacheBytes ?? 0)}; safe to delete)`);
  if (s.outDir && s.files && s.files.length > 0) lines.push(`  tables   ${s.outDir}: ${s.files.join(', ')}`);
  if (s.elapsedMs !== undefined) lines.push(`  time     ${formatDuration(s.elapsedMs)}`);
  if (s.peakRssBytes !== undefined) lines.push(`  memory   peak ${formatBytes(s.peakRssBytes)} resident`);
  io.err(lines.join('\n') + '\n');
}

export function exitCodeOf(s: RunSummary): number {
  if (s.status === 'cancelled') return 130;
  return s.status === 'done' && (s.analysed ?? s.computed + s.reused) > 0 ? 0 : 1;
}

export async function analyzeCommand(args: string[], io: CliIO): Promise<number> {
  const prefix = 'loopwise analyze';
  let req;
  try {
    req = parseAnalyzeArgs(args);
  } catch (e) {
    if (e instanceof UsageError) {
      io.err(`${prefix}: ${e.message}\n${ANALYZE_HELP}`);
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
    // A refused output folder, a cohort that cannot be opened, invalid settings: all input errors.
    return 2;
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
    return exitCodeOf(summary);
  } finally {
    process.off('SIGINT', onSigint);
    unlisten();
    await service.close();
  }
}
