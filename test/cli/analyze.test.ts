/**
 * `loopwise analyze`, `merge` and `diagram` as the installed command (node bin/loopwise.js):
 * columns the cohort lacks are refused before any filtration, a statistics stage that cannot run
 * exits 3, the fixed grid makes a subject's features independent of the rest of the cohort, the
 * Ledoit–Wolf estimator is reachable, a stack's matrix and a .mat variable can be picked, and the
 * written tables read as numbers in R and pandas.
 */
import { spawnSync } from 'node:child_process';
import {
  copyFileSync,
  existsSync,
  mkdirSync,
  mkdtempSync,
  readFileSync,
  readdirSync,
  rmSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunSummary } from '../../electron/api.ts';
import { exitCodeOf } from '../../electron/cli/analyze.ts';
import { tableLine } from '../../electron/service/tables.ts';
import { writeCohort } from '../service/support.ts';

const BIN = new URL('../../bin/loopwise.js', import.meta.url).pathname;
const FIXTURES = new URL('../fixtures/io/', import.meta.url).pathname;
const hasR = spawnSync('Rscript', ['--version']).status === 0;
const hasPandas = spawnSync('/usr/bin/python3', ['-c', 'import pandas']).status === 0;

let root: string;
let big: string;
let ids: string[];

function loopwise(args: string[]): { code: number | null; out: string; err: string } {
  const r = spawnSync(process.execPath, [BIN, ...args], { encoding: 'utf8' });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

/** A TSV as rows of column → text. */
function readTsv(file: string): Array<Record<string, string>> {
  const [head, ...rows] = readFileSync(file, 'utf8').trimEnd().split('\n');
  const cols = head.split('\t');
  return rows.map((r) => Object.fromEntries(r.split('\t').map((v, i) => [cols[i], v])));
}

/** The edge lengths of a minimum spanning tree of the complete graph with distances d (Kruskal). */
function mstLengths(d: number[][]): number[] {
  const n = d.length;
  const edges: Array<[number, number, number]> = [];
  for (let i = 0; i < n; i++) for (let j = 0; j < i; j++) edges.push([d[i][j], i, j]);
  edges.sort((a, b) => a[0] - b[0]);
  const parent = Array.from({ length: n }, (_, i) => i);
  const find = (x: number): number => (parent[x] === x ? x : (parent[x] = find(parent[x])));
  const out: number[] = [];
  for (const [w, i, j] of edges) {
    const a = find(i);
    const b = find(j);
    if (a !== b) {
      parent[a] = b;
      out.push(w);
    }
  }
  return out;
}

beforeAll(() => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-analyze-'));
  big = join(root, 'big');
  ids = writeCohort(big, { subjects: 8, n: 14, seed: 11 });
});
afterAll(() => rmSync(root, { recursive: true, force: true }));

describe('columns the cohort lacks', () => {
  it('exit 2 naming the column and listing the available ones, before any filtration runs', () => {
    const cases: Array<[string[], RegExp]> = [
      [['--group', 'diagnosis'], /--group: no column 'diagnosis'/],
      [['--group', 'group', '--covariates', 'agee'], /--covariates: no column 'agee'/],
      [['--effect', 'dx'], /--effect: no column 'dx'/],
      [['--group', 'group', '--blocks', 'site'], /--blocks: no column 'site'/],
      [['--model', 'group + agee', '--test', 'group'], /--model: no column 'agee'/],
      [
        ['--group', 'group', '--reference', 'patients'],
        /--reference: 'patients' is not a level of group; its levels: control, patient/,
      ],
    ];
    for (const [args, message] of cases) {
      const out = join(root, `cols-${args[1]}`);
      const r = loopwise(['analyze', big, '--out', out, '--workers', '1', ...args]);
      expect(r.code, args.join(' ')).toBe(2);
      const lines = r.err.trimEnd().split('\n');
      expect(lines, args.join(' ')).toHaveLength(1);
      expect(lines[0]).toMatch(message);
      if (!/reference/.test(args.join(' '))) expect(lines[0]).toMatch(/available: .*group, age/);
      // Nothing was computed: no progress line, no cached filtration.
      const cache = join(out, '.loopwise-cache');
      const cached = existsSync(cache)
        ? readdirSync(cache, { recursive: true }).filter((f) => String(f).endsWith('.bin'))
        : [];
      expect(cached).toEqual([]);
    }
  });
});

describe('a statistics stage that was asked for and could not run', () => {
  it('exits 3 with the tables written, and says so', () => {
    const one = join(root, 'one-level');
    mkdirSync(one);
    for (const id of ids.slice(0, 4)) copyFileSync(join(big, `${id}_conn.csv`), join(one, `${id}_conn.csv`));
    writeFileSync(
      join(one, 'participants.tsv'),
      ['participant_id\tgroup', ...ids.slice(0, 4).map((id) => `${id}\tsame`)].join('\n') + '\n',
    );
    const out = join(root, 'one-level-out');
    const r = loopwise([
      'analyze',
      one,
      '--out',
      out,
      '--group',
      'group',
      '--permutations',
      '9',
      '--workers',
      '1',
    ]);
    expect(r.code).toBe(3);
    expect(r.err).toMatch(/failed +\(statistics\): .*group/);
    expect(r.err).toMatch(/statistics asked for could not run \(exit 3\)/);
    expect(existsSync(join(out, 'features.tsv'))).toBe(true);
    // Without statistics the same cohort exits 0.
    const plain = loopwise(['analyze', one, '--out', join(root, 'one-level-plain'), '--workers', '1']);
    expect(plain.code).toBe(0);
  });
});

describe('exit codes of a finished run', () => {
  const done: RunSummary = {
    runId: 'run-1',
    status: 'done',
    computed: 4,
    reused: 0,
    failures: [],
    outDir: '/out',
    analysed: 4,
    files: ['features.tsv', 'stats.tsv'],
  };
  it('3 when statistics were asked for and the stage failed or wrote no stats table; else 0', () => {
    expect(exitCodeOf(done, true)).toBe(0);
    expect(exitCodeOf({ ...done, files: ['features.tsv'] }, true)).toBe(3);
    expect(exitCodeOf({ ...done, files: ['features.tsv'] }, false)).toBe(0);
    const failed = { ...done, failures: [{ subject: '(statistics)', reason: 'one level' }] };
    expect(exitCodeOf(failed, true)).toBe(3);
    expect(exitCodeOf({ ...done, status: 'cancelled' }, true)).toBe(130);
    expect(exitCodeOf({ ...done, analysed: 0, computed: 0 }, true)).toBe(1);
  });
});

describe('the summary names what the cohort check flagged', () => {
  it('an unreadable node table is a warning the run prints, naming the file; the run goes on (exit 0)', () => {
    const dir = join(root, 'garbage-nodes');
    writeCohort(dir, { subjects: 4, n: 8, seed: 3 });
    writeFileSync(join(dir, 'nodes.tsv'), Buffer.from([0x6c, 0x61, 0x62, 0x0a, 0x00, 0x01, 0xff, 0x0a]));
    const r = loopwise(['analyze', dir, '--out', join(root, 'garbage-nodes-out'), '--workers', '1']);
    expect(r.code).toBe(0);
    expect(r.err).toMatch(/warning\s+nodes\.tsv \[nodes-unreadable\]/);
    expect(existsSync(join(root, 'garbage-nodes-out', 'nodes.tsv'))).toBe(true);
  });
});

describe('the grid', () => {
  const cols = [
    'betti0_area',
    'betti1_area',
    'euler_area',
    'landscape0_1_l1',
    'landscape1_1_l1',
    'landscape1_1_l2',
    'landscape1_2_l2',
  ];

  /** Analyses dir and returns the chosen subjects' curve-derived features, the summary and the provenance. */
  function featuresOf(
    dir: string,
    subjects: string[],
    extra: string[],
  ): { features: Array<Record<string, string>>; err: string; prov: Record<string, unknown> } {
    const out = join(root, `grid-${readdirSync(root).length}`);
    const r = loopwise(['analyze', dir, '--out', out, '--workers', '1', ...extra]);
    expect(r.code, r.err).toBe(0);
    const rows = readTsv(join(out, 'features.tsv'));
    const prov = JSON.parse(readFileSync(join(out, 'provenance.json'), 'utf8')) as Record<string, unknown>;
    const features = subjects.map((id) => {
      const row = rows.find((x) => x.participant_id === id)!;
      return Object.fromEntries(cols.map((c) => [c, row[c]]));
    });
    return { features, err: r.err, prov };
  }

  it('with --grid-range, a subject’s features are the same alone and within a larger cohort', () => {
    const small = join(root, 'small');
    mkdirSync(small);
    const three = ids.slice(0, 3);
    for (const id of three) copyFileSync(join(big, `${id}_conn.csv`), join(small, `${id}_conn.csv`));
    const table = readFileSync(join(big, 'participants.tsv'), 'utf8').trimEnd().split('\n');
    writeFileSync(join(small, 'participants.tsv'), table.slice(0, 4).join('\n') + '\n');

    const fixed = ['--grid-range', '0,1.5', '--grid-points', '64', '--floor', '0.01'];
    const { features: alone, err, prov } = featuresOf(small, three, fixed);
    expect(prov.gridSource).toBe('fixed');
    expect(prov.settings).toMatchObject({ gridRange: [0, 1.5], gridPoints: 64, persistenceFloor: 0.01 });
    expect((prov.grid as number[]).length).toBe(64);
    expect(err).toMatch(/grid +fixed 0 to 1.5 \(64 points\)/);
    // The larger cohort: all eight subjects plus one whose correlations are negated, which
    // stretches the cohort's filtration range well beyond the three subjects' own.
    const larger = join(root, 'larger');
    mkdirSync(larger);
    for (const id of ids) copyFileSync(join(big, `${id}_conn.csv`), join(larger, `${id}_conn.csv`));
    const flipped = readFileSync(join(big, `${ids[3]}_conn.csv`), 'utf8')
      .trimEnd()
      .split('\n')
      .map((line, i) =>
        line
          .split(',')
          .map((v, j) => (i === j ? v : String(-Number(v))))
          .join(','),
      );
    writeFileSync(join(larger, 'sub-100_conn.csv'), flipped.join('\n') + '\n');
    writeFileSync(join(larger, 'participants.tsv'), [...table, 'sub-100\tpatient\t30'].join('\n') + '\n');
    const within = featuresOf(larger, three, fixed).features;
    expect(within).toEqual(alone);
    expect(Number(alone[0].betti0_area)).toBeGreaterThan(0);

    // The cohort grid (the default) depends on the other subjects, and the run says so.
    const last = featuresOf(small, three, []);
    expect(last.prov.gridSource).toBe('cohort');
    expect(last.err).toMatch(/features are comparable only within this run/);
    const withinCohort = featuresOf(larger, three, []).features;
    const aloneCohort = last.features;
    expect(withinCohort).not.toEqual(aloneCohort);
  });
});

describe('time series and the correlation estimator', () => {
  it('--time-series --correlation ledoit-wolf analyses sklearn’s Ledoit–Wolf correlation', () => {
    // Reference: sklearn.covariance.LedoitWolf on the z-scored series, scaled to a unit diagonal,
    // stored by test/reference/make_io_fixtures.py (versions in the file). H0 deaths of the Rips
    // filtration are the minimum spanning tree's edge lengths (common practice).
    const expected = JSON.parse(readFileSync(join(FIXTURES, 'timeseries', 'expected.json'), 'utf8'));
    const ts = join(root, 'ts');
    mkdirSync(ts);
    copyFileSync(join(FIXTURES, 'timeseries', 'ts_long.csv'), join(ts, 'sub-01_bold.csv'));
    writeFileSync(join(ts, 'participants.tsv'), 'participant_id\nsub-01\n');
    const deaths = (estimator: string[]): number[] => {
      const out = join(root, `ts-out-${estimator.join('')}`);
      const r = loopwise(['analyze', ts, '--out', out, '--time-series', ...estimator, '--workers', '1']);
      expect(r.code, r.err).toBe(0);
      const prov = JSON.parse(readFileSync(join(out, 'provenance.json'), 'utf8'));
      expect(prov.correlation).toBe(estimator.length ? estimator[1] : 'pearson');
      return readTsv(join(out, 'intervals.tsv'))
        .filter((x) => x.dimension === '0' && x.death !== 'inf')
        .map((x) => Number(x.death))
        .sort((a, b) => a - b);
    };
    const mst = (m: number[][]) => mstLengths(m.map((row) => row.map((r) => 1 - r))).sort((a, b) => a - b);
    const lw = deaths(['--correlation', 'ledoit-wolf']);
    const want = mst(expected.series['ts_long.csv'].ledoitWolf);
    expect(lw).toHaveLength(want.length);
    lw.forEach((d, i) => expect(Math.abs(d - want[i])).toBeLessThan(1e-9));
    const pearson = deaths([]);
    const wantPearson = mst(expected.series['ts_long.csv'].pearson);
    pearson.forEach((d, i) => expect(Math.abs(d - wantPearson[i])).toBeLessThan(1e-9));
    expect(Math.max(...lw.map((d, i) => Math.abs(d - pearson[i])))).toBeGreaterThan(1e-6);
  });
});

describe('loopwise diagram picks one matrix of a file', () => {
  const readers = join(FIXTURES, 'readers');
  const expected = JSON.parse(readFileSync(join(readers, 'expected.json'), 'utf8')).files;
  const h0 = (line: string): number[] =>
    (JSON.parse(line).diagrams['0'] as Array<[number, number | null]>)
      .filter(([, d]) => d !== null)
      .map(([, d]) => d as number)
      .sort((a, b) => a - b);

  it('--stack-index K is 0-based; out of range exits 2 naming the file', () => {
    // Reference: the stack's values as numpy read them (test/reference/make_io_fixtures.py).
    const stack = expected['stack_c_v1.npy'].values as number[][][];
    for (const k of [0, 2]) {
      const r = loopwise(['diagram', join(readers, 'stack_c_v1.npy'), '--stack-index', String(k)]);
      expect(r.code).toBe(0);
      const want = mstLengths(stack[k].map((row) => row.map((v) => 1 - v))).sort((a, b) => a - b);
      h0(r.out).forEach((d, i) => expect(Math.abs(d - want[i])).toBeLessThan(1e-12));
      expect(JSON.parse(r.out).settings.stackIndex).toBe(k);
    }
    const none = loopwise(['diagram', join(readers, 'stack_c_v1.npy')]);
    expect(none.code).toBe(2);
    expect(none.err).toMatch(/stack_c_v1\.npy: .*stack/);
    const far = loopwise(['diagram', join(readers, 'stack_c_v1.npy'), '--stack-index', '3']);
    expect(far.code).toBe(2);
    expect(far.err).toMatch(/stack_c_v1\.npy/);
    const neg = loopwise(['diagram', join(readers, 'stack_c_v1.npy'), '--stack-index', '-1']);
    expect(neg.code).toBe(2);
    expect(neg.err).toMatch(/--stack-index: must be an integer in \[0, 1000000\], got -1/);
  });

  it('--variable NAME reads that variable of a .mat file', () => {
    const conn = expected['several_zlib.mat'].variables.conn.values as number[][];
    const r = loopwise(['diagram', join(readers, 'several_zlib.mat'), '--variable', 'conn']);
    expect(r.code, r.err).toBe(0);
    const want = mstLengths(conn.map((row) => row.map((v) => 1 - v))).sort((a, b) => a - b);
    h0(r.out).forEach((d, i) => expect(Math.abs(d - want[i])).toBeLessThan(1e-12));
    const missing = loopwise(['diagram', join(readers, 'several_zlib.mat'), '--variable', 'nope']);
    expect(missing.code).toBe(2);
    expect(missing.err).toMatch(/several_zlib\.mat/);
  });
});

describe('merge takes the same statistics options', () => {
  it('runs the design given to merge, and refuses an unknown column with exit 2', () => {
    const out = join(root, 'sharded');
    for (const k of [1, 2]) {
      const r = loopwise(['analyze', big, '--out', out, '--shard', `${k}/2`, '--workers', '1']);
      expect(r.code, r.err).toBe(0);
    }
    const bad = loopwise(['merge', out, '--effect', 'agee']);
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/--effect: no column 'agee'.*available: .*age/);
    const badSeed = loopwise(['merge', out, '--seed', '-1']);
    expect(badSeed.code).toBe(2);
    expect(badSeed.err.trimEnd().split('\n')).toHaveLength(1);
    const r = loopwise([
      'merge',
      out,
      '--group',
      'group',
      '--reference',
      'patient',
      '--permutations',
      '19',
      '--seed',
      '7',
    ]);
    expect(r.code, r.err).toBe(0);
    expect(existsSync(join(out, 'stats.tsv'))).toBe(true);
    const prov = JSON.parse(readFileSync(join(out, 'provenance.json'), 'utf8'));
    expect(prov.stats).toMatchObject({
      groupColumn: 'group',
      reference: 'patient',
      permutations: 19,
      seed: 7,
    });
  });
});

describe('tables read as numbers in R and pandas, as written', () => {
  // A table as the service writes it: missing values (null) and infinite deaths.
  const table = {
    columns: ['participant_id', 'value', 'death', 'nodes'],
    rows: [
      ['sub-01', 1.5, 0.25, '1 2 3'],
      ['sub-02', null, Infinity, null],
      ['sub-03', -2, -Infinity, '4'],
    ],
  };
  let file: string;
  beforeAll(() => {
    file = join(root, 'written.tsv');
    writeFileSync(
      file,
      table.columns.join('\t') + '\n' + table.rows.map((r) => tableLine(r, 'tsv')).join(''),
    );
  });

  it('writes NA for a missing value and inf for an infinite one', () => {
    expect(readFileSync(file, 'utf8').split('\n')[2]).toBe('sub-02\tNA\tinf\tNA');
  });

  it.skipIf(!hasR)(
    "R's read.delim reads the numeric columns as numeric, NA and Inf included (Debian r-base)",
    () => {
      const r = spawnSync(
        'Rscript',
        [
          '-e',
          `d <- read.delim("${file}"); stopifnot(is.numeric(d$value), is.numeric(d$death), is.na(d$value[2]), d$death[2] == Inf, d$death[3] == -Inf, is.na(d$nodes[2])); cat("ok")`,
        ],
        { encoding: 'utf8' },
      );
      expect(r.stderr).toBe('');
      expect(r.stdout).toBe('ok');
    },
  );

  it.skipIf(!hasPandas)(
    'pandas.read_csv reads them as float64, NaN and ±inf included (Debian python3-pandas)',
    () => {
      const r = spawnSync(
        '/usr/bin/python3',
        [
          '-c',
          `import math, pandas; d = pandas.read_csv("${file}", sep="\\t"); assert str(d.value.dtype) == "float64" and str(d.death.dtype) == "float64"; assert math.isnan(d.value[1]) and d.death[1] == math.inf and d.death[2] == -math.inf and pandas.isna(d.nodes[1]); print("ok", end="")`,
        ],
        { encoding: 'utf8' },
      );
      expect(r.stderr).toBe('');
      expect(r.stdout).toBe('ok');
    },
  );
});
