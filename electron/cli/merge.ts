/**
 * `loopwise merge DIR`: combines the shards written by `loopwise analyze … --shard K/M --out DIR`
 * into the same tables one unsharded run writes (byte for byte, apart from provenance.createdAt),
 * then runs the later stages (statistics) on the whole cohort.
 */
import type { StatsSettings } from '../api.ts';
import type { CliIO } from '../cli.ts';
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import {
  ContractError,
  defaultStatsSettings,
  statisticsRequested,
  validateStatsSettings,
} from '../contract.ts';
import { OutDirError, createLoopwiseService } from '../service/service.ts';
import { UsageError, parseArgs } from './args.ts';
import { exitCodeOf, printSummary } from './analyze.ts';
import { STATS_OPTIONS, refuseProblems, statsOptions } from './filtration-options.ts';

export const MERGE_HELP = `usage: loopwise merge DIR [options]

Combines the shard results in DIR (from 'loopwise analyze COHORT --out DIR --shard K/M', every K
from 1 to M) into DIR's tables, as a single run writes them.

options:
  --group COLUMN, --effect COLUMN, --model FORMULA, --test TERM, --reference LEVEL,
  --blocks COLUMN, --covariates LIST, --permutations N, --seed S
                the statistics to run on the merged cohort, as for 'loopwise analyze'
                (default: those the shards were given)
  --cache DIR   the cache the shards wrote to, when it is not where they recorded it
  --force       replace Loopwise's tables already in DIR (other files are left alone)
  --csv         write .csv instead of .tsv
`;

export async function mergeCommand(args: string[], io: CliIO): Promise<number> {
  const prefix = 'loopwise merge';
  let p;
  let stats: Partial<StatsSettings>;
  try {
    p = parseArgs(args, { values: ['cache', ...STATS_OPTIONS], flags: ['force', 'csv', 'help'] });
    if (p.flags.has('help')) {
      io.out(MERGE_HELP);
      return 0;
    }
    if (p.positionals.length !== 1) throw new UsageError('give exactly one DIR');
    stats = statsOptions(p);
    // Only what was given is checked here; the merged settings are checked again by the service.
    refuseProblems(
      validateStatsSettings({ ...defaultStatsSettings(), ...stats }).filter(
        (x) => x.field !== 'stats.test' && x.field !== 'stats.reference' && x.field !== 'stats.blocks',
      ),
    );
  } catch (e) {
    if (e instanceof UsageError) {
      io.err(`${prefix}: ${e.message} (see loopwise merge --help)\n`);
      return 2;
    }
    throw e;
  }
  const service = createLoopwiseService();
  try {
    const cache = p.values.get('cache');
    const summary = await service.mergeShards(p.positionals[0], {
      force: p.flags.has('force'),
      tableFormat: p.flags.has('csv') ? 'csv' : 'tsv',
      stats,
      ...(cache !== undefined ? { cacheDir: cache } : {}),
    });
    printSummary(io, prefix, summary);
    // The merged run's statistics settings (the shards' own, or those given here), as recorded.
    const recorded = await readFile(join(summary.outDir ?? '', 'provenance.json'), 'utf8')
      .then((t) => (JSON.parse(t) as { stats?: StatsSettings }).stats)
      .catch(() => undefined);
    const code = exitCodeOf(summary, recorded ? statisticsRequested(recorded) : false);
    if (code === 3)
      io.err(`${prefix}: the tables are written, but the statistics asked for could not run (exit 3)\n`);
    return code;
  } catch (e) {
    io.err(`${prefix}: ${e instanceof Error ? e.message : String(e)}\n`);
    return e instanceof OutDirError || e instanceof ContractError ? 2 : 1;
  } finally {
    await service.close();
  }
}
