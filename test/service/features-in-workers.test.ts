/**
 * One read per file: where the workers read the cohort's files, each subject's features come from
 * its worker's one read, and the main thread reads no matrix at all (no call to the source's
 * load); the tables are byte for byte those of the same run with every matrix read on the main
 * thread (the features stage's own path, used after a merge). With the cohort grid, a fixed
 * --grid-range, and dropped regions.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { AnalysisSettings, OpenCohortRequest } from '../../electron/api.ts';
import { openCohortSource } from '../../electron/service/cohort-source.ts';
import type { SourceOptions } from '../../electron/service/cohort-source.ts';
import { createLoopwiseService } from '../../electron/service/service.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../../electron/service/settings.ts';
import { outputs, writeCohort } from './support.ts';

const work = mkdtempSync(join(tmpdir(), 'loopwise-features-workers-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));
const cohort = join(work, 'cohort');
writeCohort(cohort, { subjects: 10, n: 18, seed: 9 });

async function run(name: string, inWorker: boolean, settings: AnalysisSettings) {
  let mainLoads = 0;
  const service = createLoopwiseService({
    cacheDir: join(work, `cache-${name}`),
    workers: 2,
    openSource: async (req: OpenCohortRequest, opts: SourceOptions) => {
      const s = await openCohortSource(req, opts);
      return {
        report: s.report,
        load: (entry) => {
          mainLoads++;
          return s.load(entry);
        },
        loadsInWorker: inWorker,
      };
    },
  });
  const out = join(work, name);
  const { runId } = await service.startRun({
    cohort: { dir: cohort },
    settings,
    stats: { ...defaultStatsSettings(), groupColumn: 'group', permutations: 49 },
    outDir: out,
  });
  const summary = await service.waitForRun(runId);
  await service.close();
  expect(summary.status).toBe('done');
  return { files: outputs(out), mainLoads };
}

describe('features in the workers', () => {
  const cases: Array<[string, Partial<AnalysisSettings>]> = [
    ['cohort grid', {}],
    ['fixed grid', { gridRange: [0.2, 1.1], gridPoints: 40 }],
    ['dropped regions', { dropRegions: [2, 5] }],
  ];
  for (const [label, change] of cases) {
    it(`reads each matrix once, on a worker, and writes the main-thread path's tables (${label})`, async () => {
      const settings = { ...defaultAnalysisSettings(), ...change };
      const tag = label.replace(/ /g, '-');
      const workers = await run(`w-${tag}`, true, settings);
      const main = await run(`m-${tag}`, false, settings);
      expect(workers.mainLoads).toBe(0);
      // The main-thread path reads every matrix for the filtrations and once more for the features
      // (and for the group means): 10 subjects, 2 groups.
      expect(main.mainLoads).toBeGreaterThanOrEqual(20);
      expect(Object.keys(workers.files)).toEqual(Object.keys(main.files));
      expect(Object.keys(workers.files)).toEqual(expect.arrayContaining(['features.tsv', 'curves.tsv']));
      for (const name of Object.keys(main.files)) {
        if (name === 'provenance.json') continue;
        expect(workers.files[name], name).toBe(main.files[name]);
      }
    });
  }
});
