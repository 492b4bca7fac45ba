/**
 * The main job end to end: `loopwise analyze` on the bundled sample cohort, then the tables read
 * back the way a researcher would (pandas, R) and the planted regions checked.
 * The sample cohort's planted regions (sample-data/README.md): L_AUD_2, R_SMN_3, L_SAL_1, R_FPN_4
 * couple to a second network in the training group after training only. This test analyses the
 * after-training session (ses-post, one scan per participant) with a two-group design; the
 * longitudinal group × session design over both sessions needs repeated-measures statistics.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdtempSync, readFileSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../electron/cli.ts';
import { createLoopwiseService } from '../../electron/service/service.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../../electron/service/settings.ts';

const PLANTED = ['L_AUD_2', 'R_SMN_3', 'L_SAL_1', 'R_FPN_4'];
const work = mkdtempSync(join(tmpdir(), 'loopwise-sample-'));
const out = join(work, 'out');
const postSession = join(work, 'rhythm-study-post');
// Networks the planted regions bridge to: the H1 cycles they close also pass through these.
const TARGET_NETWORKS = ['SMN', 'SAL', 'FPN', 'AUD'];
let stderr = '';
let code = -1;

function readTsv(file: string): Array<Record<string, string>> {
  const [head, ...lines] = readFileSync(join(out, file), 'utf8').trimEnd().split('\n');
  const cols = head.split('\t');
  return lines.map((l) => Object.fromEntries(l.split('\t').map((v, i) => [cols[i], v])));
}

const hasPandas = spawnSync('/usr/bin/python3', ['-c', 'import pandas'], { encoding: 'utf8' }).status === 0;
const hasR = spawnSync('Rscript', ['--version'], { encoding: 'utf8' }).status === 0;

beforeAll(async () => {
  // The after-training scans with the participants, sessions and node tables.
  cpSync('sample-data/rhythm-study', postSession, {
    recursive: true,
    filter: (src) => !/ses-pre/.test(src),
  });
  code = await main(
    [
      'analyze',
      postSession,
      '--out',
      out,
      '--group',
      'group',
      '--covariates',
      'age,sex,fd_mean',
      '--permutations',
      '2000',
      '--seed',
      '11',
      '--workers',
      '2',
    ],
    { out: () => {}, err: (t) => (stderr += t) },
  );
}, 240_000);

describe('loopwise analyze on the sample cohort', () => {
  it('analyses all 24 scans of the session and writes every table', () => {
    expect(code).toBe(0);
    expect(stderr).toMatch(/24 analysed/);
    for (const f of [
      'features.tsv',
      'nodes.tsv',
      'networks.tsv',
      'curves.tsv',
      'intervals.tsv',
      'subjects.tsv',
      'group-curves.tsv',
      'group-intervals.tsv',
      'group-nodes.tsv',
      'stats.tsv',
      'diagram-tests.tsv',
      'embedding.tsv',
      'provenance.json',
    ]) {
      expect(existsSync(join(out, f)), f).toBe(true);
    }
    const features = readTsv('features.tsv');
    expect(features).toHaveLength(24);
    expect(features.every((r) => r.session === 'post')).toBe(true);
    expect(Object.keys(features[0]).slice(0, 6)).toEqual([
      'participant_id',
      'session',
      'group',
      'age',
      'sex',
      'fd_mean',
    ]);
  });

  it('ranks the planted regions first by their group difference in persistence-weighted participation', () => {
    const groups = new Map(readTsv('features.tsv').map((r) => [r.participant_id, r.group]));
    const sums = new Map<string, { training: number[]; waitlist: number[] }>();
    for (const r of readTsv('nodes.tsv')) {
      if (r.measure !== 'h1_weighted') continue;
      if (!sums.has(r.label)) sums.set(r.label, { training: [], waitlist: [] });
      sums.get(r.label)![groups.get(r.participant_id) as 'training' | 'waitlist'].push(Number(r.value));
    }
    const mean = (a: number[]) => a.reduce((x, y) => x + y, 0) / a.length;
    const ranked = [...sums]
      .map(([label, g]) => ({ label, diff: mean(g.training) - mean(g.waitlist) }))
      .sort((a, b) => b.diff - a.diff)
      .map((x) => x.label);
    expect(ranked.slice(0, 4).sort()).toEqual([...PLANTED].sort());
  });

  it('finds the planted regions significant after FWER correction, and nothing outside the networks they bridge', () => {
    const rows = readTsv('stats.tsv').filter((r) => r.family === 'nodes:h1_weighted');
    expect(rows).toHaveLength(60);
    const significant = rows.filter((r) => Number(r.p_fwer) <= 0.05).map((r) => r.node_or_point);
    for (const label of PLANTED) expect(significant).toContain(label);
    for (const label of significant) expect(TARGET_NETWORKS).toContain(label.split('_')[1]);
    // The design adjusted for the covariates, so the scheme is Freedman–Lane; seed and count recorded.
    expect(new Set(rows.map((r) => `${r.scheme}|${r.permutations}|${r.seed}`))).toEqual(
      new Set(['freedman-lane|2000|11']),
    );
  });

  it('records provenance: versions, settings, grid and a SHA-256 per input file', () => {
    const p = JSON.parse(readFileSync(join(out, 'provenance.json'), 'utf8'));
    expect(p.tool).toBe('loopwise');
    expect(p.engineVersion).toBeTruthy();
    expect(p.settings.transform).toBe('one-minus');
    expect(p.stats).toMatchObject({ groupColumn: 'group', permutations: 2000, seed: 11 });
    expect(Object.keys(p.inputHashes)).toHaveLength(24);
    expect(p.grid).toHaveLength(100);
    expect(p.grid.every((x: number, i: number) => i === 0 || x > p.grid[i - 1])).toBe(true);
    for (const h of Object.values(p.inputHashes)) expect(h).toMatch(/^[0-9a-f]{64}$/);
  });

  it.skipIf(!hasPandas)(
    'every table reads with pandas.read_csv(sep="\\t") alone (Debian python3-pandas)',
    () => {
      const tables = readdirSync(out).filter((f) => f.endsWith('.tsv'));
      const script = `
import json, sys, pandas as pd
out = {}
for f in ${JSON.stringify(tables)}:
    d = pd.read_csv(${JSON.stringify(out)} + '/' + f, sep='\\t')
    out[f] = [len(d), len(d.columns), [str(t) for t in d.dtypes]]
print(json.dumps(out))`;
      const r = spawnSync('/usr/bin/python3', ['-c', script], { encoding: 'utf8' });
      expect(r.stderr).toBe('');
      const shapes = JSON.parse(r.stdout);
      expect(shapes['features.tsv'][0]).toBe(24);
      // Numeric columns come out numeric, missing values as NaN (written NA).
      expect(shapes['stats.tsv'][2][shapes['stats.tsv'][1] - 1]).toBe('int64');
      expect(shapes['nodes.tsv'][2][6]).toBe('float64');
    },
  );

  it.skipIf(!hasR)("every table reads with R's read.delim alone (Debian r-base)", () => {
    const r = spawnSync(
      'Rscript',
      [
        '-e',
        `for (f in list.files("${out}", pattern = "\\\\.tsv$", full.names = TRUE)) { d <- read.delim(f); cat(basename(f), nrow(d), is.numeric(d[[ncol(d)]]), "\\n") }`,
      ],
      { encoding: 'utf8' },
    );
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/features\.tsv 24 /);
    expect(r.stdout).toMatch(/nodes\.tsv \d+ TRUE/);
  });
});

describe('loopwise analyze on the malformed companion cohort', () => {
  it('analyses the good subjects and lists every other one as excluded with its reason', async () => {
    const messyOut = join(mkdtempSync(join(tmpdir(), 'loopwise-messy-')), 'out');
    let err = '';
    const rc = await main(
      ['analyze', 'sample-data/rhythm-study-messy', '--out', messyOut, '--workers', '1'],
      {
        out: () => {},
        err: (t) => (err += t),
      },
    );
    expect(rc).toBe(0);
    const [head, ...lines] = readFileSync(join(messyOut, 'subjects.tsv'), 'utf8').trimEnd().split('\n');
    expect(head.split('\t').slice(0, 3)).toEqual(['participant_id', 'status', 'reason']);
    const status = Object.fromEntries(lines.map((l) => l.split('\t')).map((c) => [c[0], [c[1], c[2]]]));
    expect(Object.keys(status).sort()).toEqual([
      'sub-01',
      'sub-02',
      'sub-03',
      'sub-04',
      'sub-05',
      'sub-06',
      'sub-07',
      'sub-08',
    ]);
    for (const id of ['sub-01', 'sub-02', 'sub-03']) expect(status[id][0]).toBe('analysed');
    expect(status['sub-04']).toEqual(['excluded', expect.stringMatching(/not symmetric/)]);
    expect(status['sub-05'][1]).toMatch(/dead region/);
    expect(status['sub-06'][1]).toMatch(/58 regions/);
    expect(status['sub-07'][1]).toMatch(/no matrix file/);
    expect(err).toMatch(/3 analysed/);
    // The matrix without a participant (sub-09) is a QC finding, not a subject.
    expect(status['sub-09']).toBeUndefined();
  }, 120_000);
});

describe('the longitudinal design on both sessions (group × session, participant blocks)', () => {
  it('finds the planted regions in the interaction after FWER correction, nothing outside the networks they bridge', async () => {
    const longOut = join(work, 'longitudinal');
    const service = createLoopwiseService();
    try {
      const { runId } = await service.startRun({
        cohort: { dir: 'sample-data/rhythm-study' },
        settings: defaultAnalysisSettings(),
        stats: {
          ...defaultStatsSettings(),
          model: 'group*session + age + sex + fd_mean',
          test: 'group:session',
          blocks: 'participant_id',
          permutations: 1000,
          seed: 11,
        },
        outDir: longOut,
        workers: 2,
      });
      const summary = await service.waitForRun(runId);
      expect(summary.status).toBe('done');
    } finally {
      await service.close();
    }
    const [head, ...lines] = readFileSync(join(longOut, 'stats.tsv'), 'utf8').trimEnd().split('\n');
    const cols = head.split('\t');
    const rows = lines
      .map((l) => Object.fromEntries(l.split('\t').map((v, i) => [cols[i], v])))
      .filter((r) => r.family === 'nodes:h1_weighted');
    expect(rows).toHaveLength(60);
    const significant = rows.filter((r) => Number(r.p_fwer) <= 0.05).map((r) => r.node_or_point);
    for (const label of PLANTED) expect(significant).toContain(label);
    for (const label of significant) expect(TARGET_NETWORKS).toContain(label.split('_')[1]);
    // Scans of one participant are not exchangeable with other participants': blocked permutations.
    expect(new Set(rows.map((r) => r.scheme)).size).toBe(1);
    expect(rows[0].scheme).toMatch(/block/);
    const [fhead, ...features] = readFileSync(join(longOut, 'features.tsv'), 'utf8').trimEnd().split('\n');
    expect(fhead.split('\t').slice(0, 2)).toEqual(['participant_id', 'session']);
    expect(features).toHaveLength(48);
  }, 240_000);
});
