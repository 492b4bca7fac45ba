/**
 * The study designs on data a researcher would have, through the real CLI (`loopwise analyze`):
 * cohorts with a planted node effect drawn from the seeded block model (planted-designs.ts).
 *
 * 1. A nested BIDS tree with sessions and a within-subject effect (the same regions bridge to
 *    another module at ses-post in every participant; participants differ by a random effect):
 *    `--effect session --reference pre --blocks participant_id` finds the planted regions in the
 *    `nodes:h1_weighted` family at FWER 0.05, tested within blocks with d_z as the effect size.
 * 2. A flat cohort with a node effect proportional to age and an unrelated sex effect on other
 *    regions: `--effect age --covariates sex` finds the age regions in the
 *    `nodes:h0_birth_component_lifetime` family (slope t, partial r), not the sex regions, which
 *    `--effect sex --covariates age` does find.
 * 3. The pseudo-replication guard: `--effect session` on the session cohort without `--blocks`
 *    exits 3 (the other tables written, no stats.tsv) with the message naming `--blocks`.
 * 4. One number against outside references (Debian /usr/bin/python3, skipped when absent): the
 *    paired t of a planted region equals `scipy.stats.ttest_rel(post, pre)` on the per-participant
 *    values read from nodes.tsv, and the age slope t equals statsmodels OLS `value ~ age + C(sex)`.
 *
 * Each design also runs once on the same cohort drawn without the planted effect, which must give
 * no FWER-significant node in the family. One null instance per design is a smoke check of the
 * whole path, not a calibration: the error rates are measured by `npm run validate:stats`.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../electron/cli.ts';
import {
  AGE_REGIONS,
  SESSION_REGIONS,
  SEX_REGIONS,
  writeFlatCohort,
  writeSessionCohort,
} from './planted-designs.ts';

const PYTHON = '/usr/bin/python3';
const hasPython = existsSync(PYTHON);
/** The node family each design is judged on (see planted-designs.ts for why). */
const SESSION_MEASURE = 'h1_weighted';
const AGE_MEASURE = 'h0_birth_component_lifetime';
const SESSION_PARTICIPANTS = 18;
const FLAT_PARTICIPANTS = 32;

let root: string;
/** What the planted runs leave for the outside-reference checks. */
let sessionPaired: { pre: number[]; post: number[]; statistic: number; df: number; p: number } | null = null;
let flatSlope: {
  values: Array<{ value: number; age: number; sex: string }>;
  statistic: number;
  df: number;
} | null = null;
const cohorts: Record<string, string> = {};

beforeAll(() => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-designs-'));
  for (const planted of [true, false]) {
    const tag = planted ? 'planted' : 'null';
    cohorts[`session-${tag}`] = join(root, `session-${tag}`);
    writeSessionCohort(cohorts[`session-${tag}`], { participants: SESSION_PARTICIPANTS, seed: 41, planted });
    cohorts[`flat-${tag}`] = join(root, `flat-${tag}`);
    writeFlatCohort(cohorts[`flat-${tag}`], { participants: FLAT_PARTICIPANTS, seed: 43, planted });
  }
});
afterAll(() => rmSync(root, { recursive: true, force: true }));

type Row = Record<string, string>;

function readTsv(path: string): Row[] {
  const [head, ...lines] = readFileSync(path, 'utf8').trimEnd().split('\n');
  const cols = head.split('\t');
  return lines.map((l) => Object.fromEntries(l.split('\t').map((v, i) => [cols[i], v])));
}

async function analyze(cohort: string, name: string, design: string[]) {
  const out = join(root, `out-${name}`);
  let err = '';
  const code = await main(
    // One filtration cache for every run: a second design on a cohort reuses its filtrations. A
    // coarse grid and one landscape level keep the curve families small; the node families judged
    // here do not depend on either.
    [
      ...['analyze', cohort, '--out', out, '--cache', join(root, 'cache'), '--workers', '1'],
      ...['--permutations', '999', '--seed', '11', '--grid-points', '20', '--landscape-levels', '1'],
      ...design,
    ],
    { out: () => {}, err: (t) => (err += t) },
  );
  return { code, err, out, read: (file: string) => readTsv(join(out, file)) };
}

/** The family's rows, and the 0-based regions significant at FWER 0.05. */
function family(rows: Row[], measure: string): { rows: Row[]; significant: number[]; table: string } {
  const mine = rows.filter((r) => r.family === `nodes:${measure}`);
  const significant = mine
    .filter((r) => r.p_fwer !== 'NA' && Number(r.p_fwer) < 0.05)
    .map((r) => region(r.node_or_point));
  const table = mine.map((r) => `${r.node_or_point} t=${r.statistic} p_fwer=${r.p_fwer}`).join('; ');
  return { rows: mine, significant: significant.sort((a, b) => a - b), table };
}

/** Without a node table a region is named by its 0-based index (or a label ending in it). */
function region(label: string): number {
  const m = /(\d+)$/.exec(label);
  if (!m) throw new Error(`node label ${label} names no region index`);
  return Number(m[1]);
}

function python(script: string, input: unknown): unknown {
  const r = spawnSync(PYTHON, ['-c', script], { input: JSON.stringify(input), encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`python3 failed: ${r.stderr}`);
  return JSON.parse(r.stdout);
}

/** Per-scan values of one node measure of one region, from nodes.tsv. */
function nodeValues(rows: Row[], node: number, measure: string): Row[] {
  return rows.filter((r) => r.measure === measure && Number(r.node) === node);
}

describe('within-subject design on a BIDS tree with sessions', () => {
  it('--effect session --blocks participant_id finds the planted regions (within blocks, d_z)', async () => {
    const run = await analyze(cohorts['session-planted'], 'session-planted', [
      '--effect',
      'session',
      '--reference',
      'pre',
      '--blocks',
      'participant_id',
    ]);
    expect(run.code, run.err).toBe(0);
    // The per-scan covariate of the sessions tables reached the design table.
    const features = run.read('features.tsv');
    expect(features).toHaveLength(2 * SESSION_PARTICIPANTS);
    expect(Object.keys(features[0]).slice(0, 2)).toEqual(['participant_id', 'session']);
    expect(features.every((r) => Number(r.fd_mean) > 0)).toBe(true);

    const { rows, significant, table } = family(run.read('stats.tsv'), SESSION_MEASURE);
    expect(rows.length).toBeGreaterThan(0);
    for (const r of SESSION_REGIONS) expect(significant, table).toContain(r);
    for (const r of rows) {
      expect(r.contrast).toBe('post - pre');
      expect(r.scheme).toBe('freedman-lane-within-blocks');
      expect(r.n_blocks).toBe(String(SESSION_PARTICIPANTS));
      expect(r.effect_kind).toBe('d_z');
    }
    // The planted bridges raise h1_weighted: positive t and d_z.
    const planted = rows.filter((r) =>
      (SESSION_REGIONS as readonly number[]).includes(region(r.node_or_point)),
    );
    for (const r of planted) {
      expect(Number(r.statistic)).toBeGreaterThan(0);
      expect(Number(r.effect_size)).toBeGreaterThan(0);
    }

    // d_z is mean / SD of the per-participant differences, recomputed here from nodes.tsv.
    const node = SESSION_REGIONS[0];
    const values = nodeValues(run.read('nodes.tsv'), node, SESSION_MEASURE);
    const byParticipant = new Map<string, { pre?: number; post?: number }>();
    for (const v of values) {
      const e = byParticipant.get(v.participant_id) ?? {};
      e[v.session as 'pre' | 'post'] = Number(v.value);
      byParticipant.set(v.participant_id, e);
    }
    expect(byParticipant.size).toBe(SESSION_PARTICIPANTS);
    const ids = [...byParticipant.keys()].sort();
    const pre = ids.map((p) => byParticipant.get(p)!.pre!);
    const post = ids.map((p) => byParticipant.get(p)!.post!);
    const diff = post.map((x, i) => x - pre[i]);
    const mean = diff.reduce((a, b) => a + b, 0) / diff.length;
    const sd = Math.sqrt(diff.reduce((a, b) => a + (b - mean) ** 2, 0) / (diff.length - 1));
    const row = rows.find((r) => region(r.node_or_point) === node)!;
    expect(Number(row.effect_size)).toBeCloseTo(mean / sd, 4);

    sessionPaired = {
      pre,
      post,
      statistic: Number(row.statistic),
      df: Number(row.df),
      p: Number(row.p_parametric),
    };
  }, 120_000);

  it('the same cohort without the planted effect: no FWER-significant node', async () => {
    const run = await analyze(cohorts['session-null'], 'session-null', [
      '--effect',
      'session',
      '--reference',
      'pre',
      '--blocks',
      'participant_id',
    ]);
    expect(run.code, run.err).toBe(0);
    const { rows, significant, table } = family(run.read('stats.tsv'), SESSION_MEASURE);
    expect(rows.length).toBeGreaterThan(0);
    expect(rows.every((r) => r.scheme === 'freedman-lane-within-blocks')).toBe(true);
    expect(significant, table).toEqual([]);
  }, 120_000);

  it.skipIf(!hasPython)(
    'outside reference: the paired t and its p equal scipy.stats.ttest_rel(post, pre) on the values of nodes.tsv',
    () => {
      // Debian /usr/bin/python3 with python3-scipy; the values and the row come from the planted run above.
      if (!sessionPaired) throw new Error('the planted session run did not get as far as the paired check');
      const { pre, post } = sessionPaired;
      const ref = python(
        'import json,sys; from scipy import stats; d=json.load(sys.stdin); ' +
          'r=stats.ttest_rel(d["post"], d["pre"]); print(json.dumps([float(r.statistic), float(r.pvalue)]))',
        { pre, post },
      ) as [number, number];
      expect(sessionPaired.statistic).toBeCloseTo(ref[0], 4);
      expect(sessionPaired.df).toBe(SESSION_PARTICIPANTS - 1);
      expect(sessionPaired.p).toBeCloseTo(ref[1], 6);
    },
  );

  it('without --blocks the repeated participant is refused: exit 3, tables written, the message says how to declare blocks', async () => {
    const run = await analyze(cohorts['session-planted'], 'session-noblocks', ['--effect', 'session']);
    expect(run.code).toBe(3);
    expect(run.err).toMatch(/declare the exchangeability blocks with --blocks participant_id/);
    expect(existsSync(join(run.out, 'features.tsv'))).toBe(true);
    expect(existsSync(join(run.out, 'nodes.tsv'))).toBe(true);
    expect(existsSync(join(run.out, 'stats.tsv'))).toBe(false);
  }, 120_000);
});

describe('continuous effect with a categorical covariate on a flat cohort', () => {
  it('--effect age --covariates sex finds the age regions, not the sex regions (slope t, partial r)', async () => {
    const run = await analyze(cohorts['flat-planted'], 'flat-planted', [
      '--effect',
      'age',
      '--covariates',
      'sex',
    ]);
    expect(run.code, run.err).toBe(0);
    const { rows, significant, table } = family(run.read('stats.tsv'), AGE_MEASURE);
    expect(rows.length).toBeGreaterThan(0);
    for (const r of AGE_REGIONS) expect(significant, table).toContain(r);
    for (const r of SEX_REGIONS) expect(significant, table).not.toContain(r);
    for (const r of rows) {
      expect(r.contrast).toBe('age');
      expect(r.test).toBe('t');
      expect(r.scheme).toBe('freedman-lane');
      expect(r.effect_kind).toBe('partial_r');
      const t = Number(r.statistic);
      expect(Number(r.effect_size)).toBeCloseTo(t / Math.sqrt(t * t + Number(r.df)), 5);
    }
    // The sex effect is there to be found by its own test: the sex regions lead that family.
    const sexRun = await analyze(cohorts['flat-planted'], 'flat-sex', [
      '--effect',
      'sex',
      '--covariates',
      'age',
    ]);
    expect(sexRun.code, sexRun.err).toBe(0);
    const sex = family(sexRun.read('stats.tsv'), AGE_MEASURE);
    for (const r of SEX_REGIONS) expect(sex.significant, sex.table).toContain(r);

    const node = AGE_REGIONS[0];
    const people = new Map(
      readTsv(join(cohorts['flat-planted'], 'participants.tsv')).map((p) => [p.participant_id, p]),
    );
    const values = nodeValues(run.read('nodes.tsv'), node, AGE_MEASURE).map((v) => ({
      value: Number(v.value),
      age: Number(people.get(v.participant_id)!.age),
      sex: people.get(v.participant_id)!.sex,
    }));
    expect(values).toHaveLength(FLAT_PARTICIPANTS);
    const row = rows.find((r) => region(r.node_or_point) === node)!;
    flatSlope = { values, statistic: Number(row.statistic), df: Number(row.df) };
  }, 180_000);

  it.skipIf(!hasPython)(
    'outside reference: the age slope t equals statsmodels OLS value ~ age + C(sex) on the values of nodes.tsv',
    () => {
      // Debian /usr/bin/python3 with python3-statsmodels and pandas; values from the planted run above.
      if (!flatSlope) throw new Error('the planted age run did not get as far as the slope check');
      const ref = python(
        'import json,sys; import pandas as pd; import statsmodels.formula.api as smf; ' +
          'd=pd.DataFrame(json.load(sys.stdin)); f=smf.ols("value ~ age + C(sex)", data=d).fit(); ' +
          'print(json.dumps([float(f.tvalues["age"]), float(f.df_resid)]))',
        flatSlope.values,
      ) as [number, number];
      expect(flatSlope.statistic).toBeCloseTo(ref[0], 4);
      expect(flatSlope.df).toBe(ref[1]);
    },
  );

  it('the same cohort without the planted effects: no FWER-significant node', async () => {
    const run = await analyze(cohorts['flat-null'], 'flat-null', ['--effect', 'age', '--covariates', 'sex']);
    expect(run.code, run.err).toBe(0);
    const { rows, significant, table } = family(run.read('stats.tsv'), AGE_MEASURE);
    expect(rows.length).toBeGreaterThan(0);
    expect(significant, table).toEqual([]);
  }, 120_000);
});
