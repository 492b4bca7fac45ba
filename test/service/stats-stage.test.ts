/**
 * The statistics stage as a run sees it: the design from the statistics settings (a numeric
 * effect, a group with a covariate), the tables it writes (stats.tsv effect columns,
 * diagram-tests.tsv methods, excluded-features.tsv), and a design error failing the stage with
 * its message while the tables made before it stay.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { StatsSettings } from '../../electron/api.ts';
import { createLoopwiseService } from '../../electron/service/service.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../../electron/service/settings.ts';
import { writeCohort } from './support.ts';

let root: string;
let cohort: string;
const service = createLoopwiseService();

beforeAll(() => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-stats-stage-'));
  cohort = join(root, 'cohort');
  writeCohort(cohort, { subjects: 8, n: 16, seed: 5 });
});
afterAll(async () => {
  await service.close();
  rmSync(root, { recursive: true, force: true });
});

async function run(name: string, stats: Partial<StatsSettings>) {
  const outDir = join(root, name);
  const { runId } = await service.startRun({
    cohort: { dir: cohort },
    settings: defaultAnalysisSettings(),
    stats: { ...defaultStatsSettings(), permutations: 99, seed: 3, ...stats },
    outDir,
    workers: 1,
  });
  const summary = await service.waitForRun(runId);
  const read = (file: string) => {
    const [head, ...lines] = readFileSync(join(outDir, file), 'utf8').trimEnd().split('\n');
    const cols = head.split('\t');
    return lines.map((l) => Object.fromEntries(l.split('\t').map((v, i) => [cols[i], v])));
  };
  return { summary, outDir, read };
}

describe('statistics stage', () => {
  it('a numeric effect: slope t, partial r as the effect size, PERMANOVA-equivalent diagram test', async () => {
    const { summary, read, outDir } = await run('slope', { effect: 'age' });
    expect(summary.failures).toEqual([]);
    const rows = read('stats.tsv');
    expect(rows.length).toBeGreaterThan(0);
    for (const r of rows) {
      expect(r.contrast).toBe('age');
      expect(r.test).toBe('t');
      expect(r.n_per_group).toBe('all:8');
      expect(r.n_blocks).toBe('NA');
      if (r.statistic === 'NA') continue;
      expect(r.effect_kind).toBe('partial_r');
      const t = Number(r.statistic);
      expect(Number(r.effect_size)).toBeCloseTo(t / Math.sqrt(t * t + Number(r.df)), 5);
      expect(r.effect_size).toBe(r.partial_r);
    }
    const tests = read('diagram-tests.tsv');
    expect(new Set(tests.map((t) => t.test))).toEqual(new Set(['permanova']));
    expect(tests.every((t) => t.effect === 'age' && t.scheme === 'label-permutation')).toBe(true);
    const header = readFileSync(join(outDir, 'excluded-features.tsv'), 'utf8').split('\n')[0];
    expect(header).toBe('family\tfeature\tnode_or_point\treason');
    // Every listed feature is absent from stats.tsv.
    for (const x of read('excluded-features.tsv')) {
      expect(
        rows.some(
          (r) => r.family === x.family && r.feature === x.feature && r.node_or_point === x.node_or_point,
        ),
      ).toBe(false);
      expect(x.reason).toMatch(
        /constant across scans|missing or non-finite values|no variation beyond the nuisance model/,
      );
    }
  }, 120_000);

  it('a group with a covariate: adjusted d, distance regression and no joint loss', async () => {
    const { summary, read } = await run('group', { groupColumn: 'group', covariates: ['age'] });
    expect(summary.failures).toEqual([]);
    const rows = read('stats.tsv').filter((r) => r.statistic !== 'NA');
    expect(rows.every((r) => r.contrast === 'patient - control' && r.effect_kind === 'adjusted_d')).toBe(
      true,
    );
    expect(rows.every((r) => r.scheme === 'freedman-lane')).toBe(true);
    const tests = read('diagram-tests.tsv');
    expect(new Set(tests.map((t) => t.test))).toEqual(new Set(['distance-regression']));
  }, 120_000);

  it('a categorical --effect groups the curves like --group, and tests other − reference', async () => {
    const { summary, read } = await run('effect', { effect: 'group', reference: 'patient' });
    expect(summary.failures).toEqual([]);
    expect(new Set(read('group-curves.tsv').map((r) => r.group))).toEqual(new Set(['control', 'patient']));
    expect(new Set(read('stats.tsv').map((r) => r.contrast))).toEqual(new Set(['control - patient']));
    // No covariates, no blocks: the joint loss runs beside PERMANOVA.
    expect(new Set(read('diagram-tests.tsv').map((t) => t.test))).toEqual(
      new Set(['joint-loss', 'permanova']),
    );
  }, 120_000);

  it('a --model groups the curves by the categorical column of its --test term, none for a numeric one', async () => {
    const byGroup = await run('model-group', { model: 'group + age', test: 'group' });
    expect(byGroup.summary.failures).toEqual([]);
    expect(new Set(byGroup.read('group-curves.tsv').map((r) => r.group))).toEqual(
      new Set(['control', 'patient']),
    );
    const byAge = await run('model-age', { model: 'group + age', test: 'age' });
    expect(byAge.summary.failures).toEqual([]);
    expect(new Set(byAge.read('group-curves.tsv').map((r) => r.group))).toEqual(new Set(['all']));
  }, 120_000);

  it('a design error fails the statistics stage with its message; the features stay', async () => {
    // Unknown columns are refused before the run (the contract); a design that cannot be fitted
    // is found by the stage: every participant is its own level, so group is collinear with it.
    const { summary, outDir } = await run('bad', { model: 'participant_id + group', test: 'group' });
    expect(summary.status).toBe('failed');
    expect(summary.failures).toHaveLength(1);
    expect(summary.failures[0].subject).toBe('(statistics)');
    expect(summary.failures[0].reason).toMatch(/collinear|rank/);
    expect(existsSync(join(outDir, 'features.tsv'))).toBe(true);
    expect(existsSync(join(outDir, 'stats.tsv'))).toBe(false);
  }, 120_000);
});
