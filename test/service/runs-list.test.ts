/**
 * What a client that reattaches needs from the service: listRuns reports every run of the session
 * with its state and latest progress; an export reports its own progress (phase 'export') and
 * never the run's stage phases, so a run that is done stays done; an export refused because the
 * folder holds earlier tables says so in the app's words, with the rule's code.
 */
import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ProgressEvent, StartRunRequest } from '../../electron/api.ts';
import { OutDirError, RunStateError, createLoopwiseService } from '../../electron/service/service.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../../electron/service/settings.ts';
import { writeCohort } from './support.ts';

let root: string;
let cohort: string;
const service = createLoopwiseService({ workers: 2 });

beforeAll(() => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-runs-'));
  cohort = join(root, 'cohort');
  writeCohort(cohort, { subjects: 8, n: 20, seed: 5 });
});
afterAll(async () => {
  await service.close();
  rmSync(root, { recursive: true, force: true });
});

function request(): StartRunRequest {
  return {
    cohort: { dir: cohort },
    settings: defaultAnalysisSettings(),
    // A group comparison, so the export re-runs a statistics stage with progress of its own.
    stats: { ...defaultStatsSettings(), groupColumn: 'group', permutations: 99 },
    outDir: null,
    cacheDir: join(root, 'cache'),
  };
}

describe('listRuns and the export’s progress', () => {
  it('lists a run as running with its request, then done with its last event', async () => {
    const { runId } = await service.startRun(request());
    const during = (await service.listRuns()).find((r) => r.runId === runId);
    expect(during?.status).toBe('running');
    expect(during?.request.cohort.dir).toBe(cohort);
    expect(during?.request.stats.groupColumn).toBe('group');
    expect(Number.isNaN(Date.parse(during!.startedAt))).toBe(false);
    const summary = await service.waitForRun(runId);
    expect(summary.status).toBe('done');
    const after = (await service.listRuns()).find((r) => r.runId === runId);
    expect(after?.status).toBe('done');
    expect(after?.progress?.phase).toBe('done');
    expect(after?.exporting).toBeNull();
  });

  it('exports with phase "export" events only, refuses a second export at once, and leaves the run done', async () => {
    const { runId } = await service.startRun(request());
    await service.waitForRun(runId);
    const events: ProgressEvent[] = [];
    const unlisten = service.onProgress((e) => events.push(e));
    const out = join(root, 'export-1');
    const first = service.exportRun(runId, out, false);
    // While the first export runs, a second one of the same run is refused, not interleaved.
    await expect(service.exportRun(runId, join(root, 'export-1b'), false)).rejects.toBeInstanceOf(
      RunStateError,
    );
    expect((await service.listRuns()).find((r) => r.runId === runId)?.exporting?.phase).toBe('export');
    const { files } = await first;
    unlisten();
    expect(files).toContain('stats.tsv');
    expect(readdirSync(out)).toContain('stats.tsv');
    const mine = events.filter((e) => e.runId === runId);
    expect(mine.length).toBeGreaterThan(1);
    expect(new Set(mine.map((e) => e.phase))).toEqual(new Set(['export']));
    // The export copies the run's own tables: each file travels in a message, stats.tsv among them.
    expect(mine.some((e) => e.message === 'stats.tsv')).toBe(true);
    const last = mine.at(-1)!;
    expect(last.message).toBe('written');
    expect(last.done).toBe(last.total);
    expect(last.total).toBeGreaterThan(1);
    const listed = (await service.listRuns()).find((r) => r.runId === runId);
    expect(listed?.status).toBe('done');
    expect(listed?.progress?.phase).toBe('done');
    expect(listed?.exporting).toBeNull();

    // The same folder again: refused with the rule's code and in the app's words (no CLI flag)…
    const again = await service.exportRun(runId, out, false).catch((e: unknown) => e);
    expect(again).toBeInstanceOf(OutDirError);
    expect((again as OutDirError).code).toBe('finished-run');
    expect((again as Error).message).not.toMatch(/--force/);
    expect((again as Error).message).toMatch(/earlier Loopwise run\. Replace them/);
    // …and the explicit choice to replace works; the run can be exported again afterwards.
    await expect(service.exportRun(runId, out, true)).resolves.toMatchObject({
      files: expect.arrayContaining(['stats.tsv']),
    });
    expect((await service.listRuns()).map((r) => r.runId)).toEqual(expect.arrayContaining([runId, 'run-1']));
  });
});
