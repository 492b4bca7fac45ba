/**
 * The cohort run service in-process: identical outputs for any number of workers, shards + merge
 * equal to one run, the cache (reuse when only statistics settings change, recompute when the
 * transform changes), bad and excluded subjects, the output-folder rules, and cancellation.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ProgressEvent, StartRunRequest } from '../../electron/api.ts';
import { OutDirError, createLoopwiseService } from '../../electron/service/service.ts';
import type { CohortSource } from '../../electron/service/cohort-source.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../../electron/service/settings.ts';
import { correlationMatrix, listFiles, outputs, writeCohort } from './support.ts';

let root: string;
let cohort: string;
let ids: string[];

beforeAll(() => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-service-'));
  cohort = join(root, 'cohort');
  // Subject 3 (sub-004) has a corrupt cell: the cohort check excludes it with the reason, and the run goes on.
  ids = writeCohort(cohort, { subjects: 10, n: 36, seed: 11, broken: [3] });
});
afterAll(async () => {
  await shared.close();
  rmSync(root, { recursive: true, force: true });
});

function request(outDir: string | null, extra: Partial<StartRunRequest> = {}): StartRunRequest {
  return {
    cohort: { dir: cohort },
    settings: defaultAnalysisSettings(),
    stats: defaultStatsSettings(),
    outDir,
    ...extra,
  };
}

// One service for most runs: its worker pool is kept between runs of the same size.
const shared = createLoopwiseService();

async function run(outDir: string | null, extra: Partial<StartRunRequest> = {}) {
  const service = shared;
  const events: ProgressEvent[] = [];
  const unlisten = service.onProgress((e) => events.push(e));
  const before = { ...service.counters };
  const { runId } = await service.startRun(request(outDir, extra));
  const summary = await service.waitForRun(runId);
  unlisten();
  const counters = {
    filtrations: service.counters.filtrations - before.filtrations,
    reused: service.counters.reused - before.reused,
  };
  return { service, runId, summary, events, counters };
}

describe('cohort runs', () => {
  it('writes the same tables with 1, 2 and 4 workers, and records the excluded subject', async () => {
    const outs: Array<Record<string, string>> = [];
    for (const workers of [1, 2, 4]) {
      const dir = join(root, `w${workers}`);
      const { summary, events } = await run(dir, { workers });
      expect(summary.status).toBe('done');
      expect(summary.computed).toBe(9);
      expect(summary.failures).toEqual([]);
      expect(summary.excluded?.map((f) => f.subject)).toEqual(['sub-004']);
      expect(summary.excluded?.[0].reason).toMatch(/oops/);
      expect(events.at(-1)?.phase).toBe('done');
      expect(events.filter((e) => e.phase === 'filtrations').at(-1)?.done).toBe(10);
      outs.push(outputs(dir));
    }
    // Stage (1)'s tables; the later stages (features, statistics) add their own beside them.
    expect(Object.keys(outs[0])).toEqual(
      expect.arrayContaining(['intervals.tsv', 'provenance.json', 'subjects.tsv']),
    );
    expect(outs[1]).toEqual(outs[0]);
    expect(outs[2]).toEqual(outs[0]);

    // The tables say what happened to every subject, in cohort order.
    const subjects = outs[0]['subjects.tsv'].trim().split('\n').slice(1);
    expect(subjects.map((l) => l.split('\t')[0])).toEqual(ids);
    expect(subjects[3].split('\t').slice(1, 2)).toEqual(['excluded']);
    expect(subjects[3].split('\t')[2]).toMatch(/oops/);
    const intervals = outs[0]['intervals.tsv'].trim().split('\n');
    expect(intervals[0]).toBe('participant_id\tdimension\tbirth\tdeath\tnodes');
    // One essential H0 class per analysed subject, with death inf; every H1 row names its cycle's nodes.
    const rows = intervals.slice(1).map((l) => l.split('\t'));
    expect(rows.filter((r) => r[1] === '0' && r[3] === 'inf').length).toBe(9);
    for (const r of rows.filter((r) => r[1] === '1')) expect(r[4]).toMatch(/^\d+( \d+){2,}$/);
    const prov = JSON.parse(outs[0]['provenance.json']);
    expect(prov.inputFiles).toHaveLength(10);
    expect(prov.inputFiles[0]).toMatchObject({ subject: 'sub-001', file: 'sub-001_conn.csv' });
    expect(prov.inputFiles[0].sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(Object.keys(prov.inputHashes)).toHaveLength(9);
  });

  it('shards 1/3, 2/3, 3/3 then merge write what one run writes', async () => {
    const single = join(root, 'single');
    await run(single, { workers: 2 });
    const sharded = join(root, 'sharded');
    const computed: number[] = [];
    for (const index of [2, 1, 3]) {
      const { summary } = await run(sharded, { workers: 1, shard: { index, count: 3 } });
      expect(summary.status).toBe('done');
      computed.push(summary.computed + (summary.excluded?.length ?? 0));
      // A shard writes no tables, only its part of the cache and its record.
      expect(Object.keys(outputs(sharded))).toEqual([]);
    }
    expect(computed.sort()).toEqual([3, 3, 4]);
    const merged = await shared.mergeShards(sharded);
    expect(merged.analysed).toBe(9);
    expect(outputs(sharded)).toEqual(outputs(single));
  });

  it('refuses to merge when a shard is missing or was run with other settings', async () => {
    const dir = join(root, 'partial');
    await run(dir, { workers: 1, shard: { index: 1, count: 2 } });
    await expect(shared.mergeShards(dir)).rejects.toThrow(/shard 2\/2 not finished/);
    // The missing shard run with another transform: its filtrations cannot join the others.
    await run(dir, {
      workers: 1,
      shard: { index: 2, count: 2 },
      settings: { ...defaultAnalysisSettings(), transform: 'sqrt' },
    });
    await expect(shared.mergeShards(dir)).rejects.toThrow(/shard 2\/2 was run with other settings/);
  });

  it('reuses every filtration when only statistics settings change, recomputes when the transform does', async () => {
    const cacheDir = join(root, 'shared-cache');
    const first = await run(join(root, 'c1'), { cacheDir, workers: 2 });
    expect(first.counters.filtrations).toBe(9);

    const stats = {
      ...defaultStatsSettings(),
      groupColumn: 'group',
      covariates: ['age'],
      permutations: 99,
      seed: 7,
    };
    const settings = { ...defaultAnalysisSettings(), persistenceFloor: 0.05, gridPoints: 50 };
    const second = await run(join(root, 'c2'), { cacheDir, workers: 2, stats, settings });
    expect(second.counters.filtrations).toBe(0);
    expect(second.counters.reused).toBe(9);
    expect(second.summary.reused).toBe(9);
    // Same filtrations, so the same intervals; the provenance records the new statistics settings.
    expect(outputs(join(root, 'c2'))['intervals.tsv']).toBe(outputs(join(root, 'c1'))['intervals.tsv']);
    expect(JSON.parse(outputs(join(root, 'c2'))['provenance.json']).stats).toEqual(stats);

    const third = await run(join(root, 'c3'), {
      cacheDir,
      workers: 2,
      settings: { ...defaultAnalysisSettings(), transform: 'sqrt' },
    });
    expect(third.counters.filtrations).toBe(9);
    expect(third.counters.reused).toBe(0);
  });

  it('refuses an output folder with files unless forced, and never touches the user’s own files', async () => {
    const dir = join(root, 'user');
    await run(dir, { workers: 1 });
    await expect(shared.startRun(request(dir, { workers: 1 }))).rejects.toThrow(OutDirError);
    writeFileSync(join(dir, 'notes.txt'), 'mine');
    const before = readFileSync(join(dir, 'intervals.tsv'), 'utf8');
    const { summary } = await run(dir, { workers: 1, force: true });
    expect(summary.status).toBe('done');
    expect(summary.computed).toBe(0);
    expect(readFileSync(join(dir, 'notes.txt'), 'utf8')).toBe('mine');
    expect(readFileSync(join(dir, 'intervals.tsv'), 'utf8')).toBe(before);
    const other = join(root, 'other');
    await run(other, { workers: 1 });
    writeFileSync(join(other, 'notes.txt'), 'mine');
    await expect(shared.startRun(request(other))).rejects.toThrow(/already holds files/);
  });
});

/**
 * An in-memory cohort: no files at all. m2 is excluded by the cohort check; m3 cannot be read;
 * m4 holds a correlation of 1.5, which the transform refuses (an engine error in the worker).
 */
function memorySource(subjects: number, n: number): CohortSource {
  return {
    report: {
      root: '/in-memory',
      n,
      subjects: Array.from({ length: subjects }, (_, i) => ({
        id: `m${i}`,
        participant: `m${i}`,
        session: null,
        source: { file: `/in-memory/m${i}.csv` },
        covariates: {},
        usable: i !== 2,
      })),
      columns: [],
      nodes: null,
      findings: [
        {
          severity: 'error',
          code: 'nan-row',
          file: 'm2.csv',
          subject: 'm2',
          message: 'm2.csv: row 5 is all NaN',
        },
      ],
      deadRegions: [],
      sessions: null,
    },
    load: async (entry) => {
      if (entry.id === 'm3') throw new Error('m3.csv: permission denied');
      const values = correlationMatrix(n, 2 * n, Number(entry.id.slice(1)) + 1);
      if (entry.id === 'm4') values[1] = values[n] = 1.5;
      return { n, values };
    },
  };
}

describe('in-memory cohorts', () => {
  it('records excluded and failed subjects with the reason, goes on, and answers result queries', async () => {
    const cacheDir = join(root, 'mem-cache');
    // Stage (1) alone (no later stages), so the features table is the service's own interval counts.
    const service = createLoopwiseService({
      openSource: async () => memorySource(7, 30),
      cacheDir,
      hooks: {},
    });
    const { runId } = await service.startRun(request(null, { workers: 2 }));
    const summary = await service.waitForRun(runId);
    expect(summary.excluded).toEqual([{ subject: 'm2', reason: 'm2.csv: row 5 is all NaN' }]);
    expect(summary.failures).toEqual([
      { subject: 'm3', reason: 'm3.csv: permission denied' },
      { subject: 'm4', reason: expect.stringMatching(/correlation 1\.5 at row 2, column 1 lies outside/) },
    ]);
    expect(summary.analysed).toBe(4);
    const results = await service.cohortResults(runId);
    expect(results?.features.rows.map((r) => r[1])).toEqual([
      'analysed',
      'analysed',
      'excluded',
      'failed',
      'failed',
      'analysed',
      'analysed',
    ]);
    const subject = await service.subjectResult(runId, 'm1');
    expect(subject?.matrix).toHaveLength(900);
    expect(subject?.representatives.length).toBe(subject?.diagrams[1].length);
    for (const rep of subject?.representatives ?? []) {
      // A mod-2 cycle: every node of the representative has even degree in its edges.
      const degree = new Map<number, number>();
      for (const [i, j] of rep.edges) for (const v of [i, j]) degree.set(v, (degree.get(v) ?? 0) + 1);
      for (const d of degree.values()) expect(d % 2).toBe(0);
    }
    const files = await service.exportRun(runId, join(root, 'mem-export'), false);
    expect(files.files).toEqual(['intervals.tsv', 'subjects.tsv', 'provenance.json', 'report.html']);
    expect(readFileSync(join(root, 'mem-export', 'subjects.tsv'), 'utf8')).toMatch(
      /\nm4\tfailed\tcorrelation 1\.5/,
    );
    await service.close();
  });

  it('keeps at most 2 × workers matrices in flight, however large the cohort', async () => {
    const base = memorySource(48, 40);
    let loaded = 0;
    let finished = 0;
    let most = 0;
    const source: CohortSource = {
      report: base.report,
      load: async (entry) => {
        loaded++;
        most = Math.max(most, loaded - finished);
        return base.load(entry);
      },
    };
    const service = createLoopwiseService({
      openSource: async () => source,
      cacheDir: join(root, 'bounded'),
      hooks: {},
    });
    service.onProgress((e) => {
      if (e.phase === 'filtrations') finished = e.done - 1; // subjects done whose matrix was loaded: all but m2
    });
    const { runId } = await service.startRun(request(null, { workers: 2 }));
    const summary = await service.waitForRun(runId);
    await service.close();
    expect(summary.analysed).toBe(45);
    expect(loaded).toBe(47); // every usable subject once (m3's load is tried and fails)
    expect(most).toBeLessThanOrEqual(4);
    expect(most).toBeGreaterThanOrEqual(2);
  });

  it('cancels: stops early, keeps committed subjects, and a re-run reuses them', async () => {
    const cacheDir = join(root, 'cancel-cache');
    const service = createLoopwiseService({
      openSource: async () => memorySource(40, 48),
      cacheDir,
      hooks: {},
    });
    let runId = '';
    let cancelled = false;
    service.onProgress((e) => {
      if (!cancelled && e.phase === 'filtrations' && e.done - e.failures.length >= 4) {
        cancelled = true;
        void service.cancelRun(runId);
      }
    });
    ({ runId } = await service.startRun(request(join(root, 'cancelled'), { workers: 2 })));
    const summary = await service.waitForRun(runId);
    expect(summary.status).toBe('cancelled');
    // Cancelled once 4 subjects were done apart from failures, one of them the excluded m2.
    expect(summary.computed).toBeGreaterThanOrEqual(3);
    expect(summary.computed).toBeLessThan(37);
    // No tables were written for a cancelled run.
    expect(existsSync(join(root, 'cancelled', 'intervals.tsv'))).toBe(false);
    expect(listFiles(join(root, 'cancelled')).some((f) => f.includes('loopwise-tmp'))).toBe(false);

    const again = createLoopwiseService({
      openSource: async () => memorySource(40, 48),
      cacheDir,
      hooks: {},
    });
    const r = await again.startRun(request(join(root, 'cancelled'), { workers: 2 }));
    const s2 = await again.waitForRun(r.runId);
    expect(s2.status).toBe('done');
    expect(s2.reused).toBe(summary.computed);
    expect(s2.computed + s2.reused).toBe(37);
    expect(s2.failures.map((f) => f.subject)).toEqual(['m3', 'm4']);
    await service.close();
    await again.close();
  });
});

describe('the output folder’s manifest', () => {
  it('a stage that cannot run fails the run, leaves it unfinished and resumable, and a different request is refused with the reason', async () => {
    const dir = join(root, 'stage-fails');
    const failing = createLoopwiseService({
      openSource: async () => memorySource(6, 12),
      cacheDir: join(root, 'stage-cache'),
      hooks: () => ({
        features: async (ctx) => {
          await ctx.writeTable('features', { columns: ['participant_id'], rows: [['m0']] });
          throw new Error('nodes.tsv: row 2 has 1 field, the header 3');
        },
      }),
    });
    const { runId } = await failing.startRun(request(dir, { workers: 1 }));
    const summary = await failing.waitForRun(runId);
    expect(summary.status).toBe('failed');
    expect(summary.failures).toContainEqual({
      subject: '(features)',
      reason: 'nodes.tsv: row 2 has 1 field, the header 3',
    });
    // What was made before the failure is kept.
    expect(summary.files).toEqual(['intervals.tsv', 'subjects.tsv', 'provenance.json', 'features.tsv']);
    // The results made before the failure are still answered (here the per-subject interval counts).
    expect((await failing.cohortResults(runId))?.features.rows).toHaveLength(6);
    const manifest = JSON.parse(readFileSync(join(dir, '.loopwise-manifest.json'), 'utf8'));
    expect(manifest.status).toBe('failed');
    expect(manifest.files).toEqual(['features.tsv', 'intervals.tsv', 'provenance.json', 'subjects.tsv']);
    expect(existsSync(join(dir, '.loopwise-lock'))).toBe(false);

    // The same request resumes without --force; another one is refused, naming what differs.
    const again = await failing.startRun(request(dir, { workers: 1 }));
    expect((await failing.waitForRun(again.runId)).reused).toBe(3);
    const other = { ...defaultStatsSettings(), permutations: 99 };
    await expect(failing.startRun(request(dir, { workers: 1, stats: other }))).rejects.toThrow(
      /unfinished run with other settings \(stats: .*"permutations":5000.* → .*"permutations":99/,
    );
    await failing.close();
  });

  it('a stage whose table name is taken by a file Loopwise did not write fails the run naming it, and leaves the file', async () => {
    const dir = join(root, 'taken');
    const service = createLoopwiseService({
      openSource: async () => memorySource(4, 12),
      cacheDir: join(root, 'taken-cache'),
      hooks: () => ({
        features: async (ctx) => {
          await ctx.writeTable('my-notes', { columns: ['a'], rows: [] });
          return {};
        },
      }),
    });
    const { runId } = await service.startRun(request(dir, { workers: 1 }));
    expect((await service.waitForRun(runId)).status).toBe('done');
    // The user puts a file of that name beside the tables after a forced run removed ours.
    writeFileSync(join(dir, 'extra.tsv'), 'mine\n');
    const second = createLoopwiseService({
      openSource: async () => memorySource(4, 12),
      cacheDir: join(root, 'taken-cache'),
      hooks: () => ({
        features: async (ctx) => {
          await ctx.writeTable('extra', { columns: ['a'], rows: [] });
          return {};
        },
      }),
    });
    const r = await second.startRun(request(dir, { workers: 1, force: true }));
    const s = await second.waitForRun(r.runId);
    expect(s.status).toBe('failed');
    expect(s.failures.at(-1)?.reason).toMatch(
      /extra\.tsv was not written by Loopwise and will not be overwritten/,
    );
    expect(readFileSync(join(dir, 'extra.tsv'), 'utf8')).toBe('mine\n');
    await service.close();
    await second.close();
  });
});
