/**
 * The statistics stage on worker threads: a real run through the service with 1, 2 and 4 workers
 * writes byte-identical stats.tsv, excluded-features.tsv and diagram-tests.tsv (the permutations
 * are cut into chunks whose streams depend on (seed, chunk) alone); the p-values of the scalar
 * family equal the in-process test (testFamily) on the features.tsv the run wrote; progress events
 * of the statistics stage count chunks with an ETA; a cancel after the first statistics event
 * stops the stage before it writes its tables.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ProgressEvent } from '../../electron/api.ts';
import { buildDesign } from '../../electron/engine/stats/design.ts';
import { testFamily } from '../../electron/engine/stats/family.ts';
import { createLoopwiseService } from '../../electron/service/service.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../../electron/service/settings.ts';
import { writeCohort } from './support.ts';

let root: string;
let cohort: string;
const service = createLoopwiseService();
// 600 permutations: three chunks of the random stream per family.
const stats = {
  ...defaultStatsSettings(),
  groupColumn: 'group',
  covariates: ['age'],
  permutations: 600,
  seed: 4,
};

beforeAll(() => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-stats-workers-'));
  cohort = join(root, 'cohort');
  writeCohort(cohort, { subjects: 12, n: 14, seed: 8 });
});
afterAll(async () => {
  await service.close();
  rmSync(root, { recursive: true, force: true });
});

async function run(name: string, workers: number, onEvent?: (e: ProgressEvent, runId: string) => void) {
  const outDir = join(root, name);
  let id = '';
  const events: ProgressEvent[] = [];
  const off = service.onProgress((e) => {
    if (e.runId !== id || e.phase !== 'statistics') return;
    events.push(e);
    onEvent?.(e, id);
  });
  const { runId } = await service.startRun({
    cohort: { dir: cohort },
    settings: defaultAnalysisSettings(),
    stats,
    outDir,
    workers,
  });
  id = runId;
  const summary = await service.waitForRun(runId);
  off();
  return { summary, outDir, events };
}

const tables = ['stats.tsv', 'excluded-features.tsv', 'diagram-tests.tsv'];

describe('statistics on worker threads', () => {
  it('1, 2 and 4 workers write byte-identical statistics tables, equal to the in-process test', async () => {
    const runs: Array<Awaited<ReturnType<typeof run>>> = [];
    for (const w of [1, 2, 4]) runs.push(await run(`w${w}`, w));
    for (const r of runs) {
      expect(r.summary.status).toBe('done');
      expect(r.summary.failures).toEqual([]);
    }
    for (const t of tables) {
      const first = readFileSync(join(runs[0].outDir, t), 'utf8');
      expect(first.split('\n').length).toBeGreaterThan(2);
      for (const r of runs.slice(1)) expect(readFileSync(join(r.outDir, t), 'utf8')).toBe(first);
    }

    // Progress: one event per chunk / distance part / dimension, counting up to the total, with an ETA.
    const ev = runs[1].events;
    const total = ev[0].total;
    expect(ev.map((e) => e.done)).toEqual(Array.from({ length: total + 1 }, (_, k) => k));
    expect(ev.every((e) => e.total === total)).toBe(true);
    expect(ev.slice(1).every((e) => typeof e.etaMs === 'number' && e.etaMs >= 0)).toBe(true);
    expect(ev.at(-1)!.etaMs).toBe(0);

    // The scalar family in-process (testFamily), from the features.tsv the run wrote.
    const read = (file: string) => {
      const [head, ...lines] = readFileSync(join(runs[0].outDir, file), 'utf8').trimEnd().split('\n');
      const cols = head.split('\t');
      return { cols, rows: lines.map((l) => l.split('\t')) };
    };
    const feats = read('features.tsv');
    const at = (name: string) => feats.cols.indexOf(name);
    const design = buildDesign(
      feats.rows.map((r) => ({
        id: r[at('participant_id')],
        covariates: { group: r[at('group')], age: Number(r[at('age')]) },
      })),
      { groupColumn: 'group', covariates: ['age'] },
    );
    const st = read('stats.tsv');
    const col = (name: string) => st.cols.indexOf(name);
    const scalarRows = st.rows.filter((r) => r[col('family')] === 'features');
    expect(scalarRows.length).toBeGreaterThan(3);
    const names = scalarRows.map((r) => r[col('feature')]);
    const result = testFamily(
      design,
      design.contrasts[0],
      {
        name: 'features',
        subjects: feats.rows.map((r) => r[at('participant_id')]),
        features: names.map((f) => ({
          feature: f,
          nodeOrPoint: null,
          values: feats.rows.map((r) => Number(r[at(f)])),
        })),
      },
      { permutations: 600, seed: 4 },
    );
    names.forEach((_, j) => {
      const row = scalarRows[j];
      if (!Number.isFinite(Number(row[col('p_uncorrected')]))) return; // NA: left out
      expect(Number(row[col('p_uncorrected')])).toBe(result.permutation.pUncorrected[j]);
      expect(Number(row[col('p_fwer')])).toBe(result.permutation.pFwer[j]);
      expect(Number(row[col('q_fdr')])).toBe(result.qFdr[j]);
      // The bootstrap interval of the adjusted difference, computed on a worker, as in-process.
      if (result.effect.kind !== 'adjusted-d') throw new Error(`effect ${result.effect.kind}`);
      expect(Number(row[col('effect_size')])).toBe(result.effect.sizes.value[j]);
      expect(Number(row[col('effect_low')])).toBe(result.effect.sizes.low[j]);
      expect(Number(row[col('permutations')])).toBe(600);
    });
  });

  it('a cancel after the first statistics progress event stops the stage before its tables', async () => {
    let cancelled = false;
    const r = await run('cancel', 2, (e, runId) => {
      if (!cancelled && e.done === 0) {
        cancelled = true;
        void service.cancelRun(runId);
      }
    });
    expect(cancelled).toBe(true);
    expect(r.summary.status).toBe('cancelled');
    expect(r.events.at(-1)!.done).toBeLessThan(r.events[0].total);
    expect(existsSync(join(r.outDir, 'stats.tsv'))).toBe(false);
    expect(existsSync(join(r.outDir, 'diagram-tests.tsv'))).toBe(false);
  });
});
