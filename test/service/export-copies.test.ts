/**
 * Exporting a finished run writes the tables the run holds: no filtration, feature or statistics
 * work happens again (no progress event of any stage, no matrix read, no filtration), and the
 * exported files are byte for byte the run's own — those in its output folder, or for a run
 * without one (the app's) those it kept under its cache.
 */
import { mkdtempSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { ProgressEvent } from '../../electron/api.ts';
import { createLoopwiseService } from '../../electron/service/service.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../../electron/service/settings.ts';
import { outputs, writeCohort } from './support.ts';

const work = mkdtempSync(join(tmpdir(), 'loopwise-export-copies-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));
const cohort = join(work, 'cohort');
writeCohort(cohort, { subjects: 12, n: 16, seed: 5 });

const request = (outDir?: string) => ({
  cohort: { dir: cohort },
  settings: defaultAnalysisSettings(),
  stats: { ...defaultStatsSettings(), groupColumn: 'group', permutations: 99 },
  outDir: outDir ?? null,
  workers: 2,
});

const visible = (dir: string): string[] =>
  readdirSync(dir)
    .filter((n) => !n.startsWith('.'))
    .sort();

describe('exportRun copies the run’s tables', () => {
  it('does no stage work again, and writes the run’s own bytes (run with an output folder)', async () => {
    const service = createLoopwiseService({ cacheDir: join(work, 'cache-a') });
    const own = join(work, 'run-a');
    const { runId } = await service.startRun(request(own));
    const summary = await service.waitForRun(runId);
    expect(summary.status).toBe('done');
    expect(visible(own)).toEqual(
      expect.arrayContaining(['features.tsv', 'curves.tsv', 'stats.tsv', 'diagram-tests.tsv']),
    );
    const counters = { ...service.counters };
    const events: ProgressEvent[] = [];
    const stop = service.onProgress((e) => events.push(e));
    const out = join(work, 'export-a');
    const { files } = await service.exportRun(runId, out, false);
    stop();
    // Only the export's own progress (one event per file copied): no stage runs again.
    expect(events.filter((e) => e.phase !== 'export')).toEqual([]);
    expect(events.length).toBeGreaterThan(0);
    expect(service.counters).toEqual(counters);
    expect([...files].sort()).toEqual(visible(own));
    expect(visible(out)).toEqual(visible(own));
    for (const name of visible(own))
      expect(readFileSync(join(out, name)).equals(readFileSync(join(own, name))), name).toBe(true);
    await service.close();
  });

  it('keeps the tables of a run without an output folder and exports them unchanged, twice alike', async () => {
    const service = createLoopwiseService({ cacheDir: join(work, 'cache-b') });
    const { runId } = await service.startRun(request());
    const summary = await service.waitForRun(runId);
    expect(summary.status).toBe('done');
    expect(summary.files).toEqual([]);
    const counters = { ...service.counters };
    const events: ProgressEvent[] = [];
    const stop = service.onProgress((e) => events.push(e));
    const first = join(work, 'export-b1');
    const second = join(work, 'export-b2');
    await service.exportRun(runId, first, false);
    await service.exportRun(runId, second, false);
    stop();
    // Only the export's own progress (one event per file copied): no stage runs again.
    expect(events.filter((e) => e.phase !== 'export')).toEqual([]);
    expect(events.length).toBeGreaterThan(0);
    expect(service.counters).toEqual(counters);
    expect(visible(first)).toEqual(visible(second));
    for (const name of visible(first))
      expect(readFileSync(join(first, name)).equals(readFileSync(join(second, name))), name).toBe(true);
    // The same tables as a run that wrote into an output folder (provenance's time blanked).
    const withFolder = join(work, 'run-b');
    const again = await service.startRun(request(withFolder));
    await service.waitForRun(again.runId);
    const exported = outputs(first);
    const direct = outputs(withFolder);
    expect(Object.keys(exported)).toEqual(Object.keys(direct));
    for (const name of Object.keys(direct)) {
      if (name === 'provenance.json' || name === 'report.html') continue;
      expect(exported[name], name).toBe(direct[name]);
    }
    // The kept copies go when the session ends (the run with an output folder keeps its own).
    const kept = join(work, 'cache-b', 'runs');
    expect(readdirSync(kept)).toHaveLength(1);
    await service.close();
    expect(readdirSync(kept)).toEqual([]);
    expect(visible(withFolder).length).toBeGreaterThan(0);
  });
});
