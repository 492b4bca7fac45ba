// Cohort loading and its QC report on committed fixtures written by
// test/reference/make_io_fixtures.py (numpy, scipy.io.savemat, pandas; versions in each expected.json).
import { createHash } from 'node:crypto';
import {
  copyFileSync,
  mkdirSync,
  mkdtempSync,
  readFileSync,
  readdirSync,
  rmSync,
  statSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { CohortReport } from '../../electron/api.ts';
import { loadSubjectMatrix, openCohort } from '../../electron/io/cohort.ts';
import { dropRegions } from '../../electron/engine/transform.ts';

const FIX = join(import.meta.dirname, '..', 'fixtures', 'io');
type Json = number | null | Json[];
const flat = (rows: Json[]): Float64Array =>
  Float64Array.from((rows as Json[][]).flat().map((x) => (x === null ? NaN : (x as number))));
const readJson = <T>(p: string): T => JSON.parse(readFileSync(p, 'utf8')) as T;
const temps: string[] = [];
afterAll(() => temps.forEach((d) => rmSync(d, { recursive: true, force: true })));
function tempDir(): string {
  const d = mkdtempSync(join(tmpdir(), 'loopwise-io-'));
  temps.push(d);
  return d;
}

function snapshot(dir: string): Map<string, string> {
  const out = new Map<string, string>();
  const walk = (d: string): void => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const p = join(d, e.name);
      if (e.isDirectory()) walk(p);
      else out.set(p, createHash('sha256').update(readFileSync(p)).digest('hex') + ':' + statSync(p).mtimeMs);
    }
  };
  walk(dir);
  return out;
}

describe('malformed corpus: every case gets its own finding, the good subjects still load', () => {
  const expected = readJson<{ good: string[]; cases: Record<string, string> }>(
    join(FIX, 'malformed-expected.json'),
  );
  let report: CohortReport;
  const dir = join(FIX, 'malformed');
  const before = snapshot(dir);

  it('opens without throwing', async () => {
    report = await openCohort({ dir });
    expect(report.n).toBe(5);
  });

  it(`has at least 20 distinct broken cases`, () => {
    expect(Object.keys(expected.cases).length).toBeGreaterThanOrEqual(20);
    expect(new Set(Object.values(expected.cases)).size).toBeGreaterThanOrEqual(20);
  });

  for (const [subject, code] of Object.entries(expected.cases)) {
    it(`${subject || '(empty id)'} → ${code}`, () => {
      const hit = report.findings.find(
        (f) =>
          f.code === code &&
          (subject === '' ||
            f.subject === subject ||
            (code === 'no-participant' && f.file?.includes(subject))),
      );
      expect(hit, JSON.stringify(report.findings.filter((f) => f.subject === subject))).toBeDefined();
      expect(hit!.message.length).toBeGreaterThan(10);
      const entry = report.subjects.find((s) => s.id === subject);
      if (entry && !expected.good.includes(subject)) expect(entry.usable).toBe(false);
    });
  }

  it('gives exactly the good subjects as usable, and they load', async () => {
    expect(report.subjects.filter((s) => s.usable).map((s) => s.id)).toEqual(expected.good);
    for (const s of report.subjects.filter((x) => x.usable)) {
      const m = await loadSubjectMatrix(s);
      expect(m.n).toBe(5);
    }
  });

  it('says where: asymmetry with its size and cell, the dead region by name', () => {
    const asym = report.findings.find((f) => f.code === 'asymmetric')!;
    expect(asym.where).toEqual([3, 1]);
    expect(asym.message).toMatch(/max \|r_ij − r_ji\| = 0\.2 at row 4, column 2/);
    expect(report.deadRegions).toEqual([{ index: 2, label: 'region 3', subjects: ['sub-11'] }]);
    expect(report.findings.find((f) => f.code === 'mat-v73')!.message).toMatch(/save\(.*'-v7'\)/);
    expect(report.findings.find((f) => f.code === 'fisher-z')!.message).toMatch(/Fisher z/);
  });

  it('dropping the dead region makes that subject usable', async () => {
    const again = await openCohort({ dir }, { dropRegions: [2] });
    expect(again.subjects.find((s) => s.id === 'sub-11')!.usable).toBe(true);
    expect(again.deadRegions).toEqual([]);
    const m = await loadSubjectMatrix(
      again.subjects.find((s) => s.id === 'sub-11')!,
      { dropRegions: [2] },
    );
    expect(m.n).toBe(4);
    expect(m.values.some(Number.isNaN)).toBe(false);
  });

  it('picks the .mat variable when asked', async () => {
    const again = await openCohort({ dir, variable: 'R_raw' });
    const s = again.subjects.find((x) => x.id === 'sub-15')!;
    expect(s.usable).toBe(true);
    expect(s.source.variable).toBe('R_raw');
    // The other .mat files hold no R_raw: a specific error for each, not a crash.
    expect(again.findings.find((f) => f.subject === 'sub-03')!.code).toBe('mat-variable-missing');
  });

  it('modifies nothing on disk', () => {
    expect(snapshot(dir)).toEqual(before);
  });
});

describe('a BIDS-like cohort', () => {
  const dir = join(FIX, 'cohort-bids');
  const expected = readJson<{ matrices: Record<string, Json[]> }>(join(dir, 'expected.json'));

  it('matches sub-1 and sub-10 to their own files and reads each exactly', async () => {
    const report = await openCohort({ dir });
    expect(report.findings).toEqual([]);
    expect(report.n).toBe(6);
    expect(report.subjects.map((s) => s.id)).toEqual(['sub-1', 'sub-2', 'sub-10', 'sub-11']);
    for (const s of report.subjects) {
      expect(s.source.file).toMatch(new RegExp(`/${s.id}/func/${s.id}_task-rest`));
      const m = await loadSubjectMatrix(s);
      expect(Array.from(m.values)).toEqual(Array.from(flat(expected.matrices[s.id])));
    }
    expect(report.subjects[3].source.variable).toBe('conn');
  });

  it('reads covariates with kinds and missing values, and the node table', async () => {
    const report = await openCohort({ dir });
    // participant_id is always a column the design may name (categorical, one level per participant).
    expect(report.columns[0]).toMatchObject({ name: 'participant_id', kind: 'categorical', missing: 0 });
    expect(report.columns.slice(1)).toEqual([
      { name: 'age', kind: 'numeric', missing: 1 },
      { name: 'group', kind: 'categorical', levels: ['control', 'patient'], missing: 0 },
      { name: 'site', kind: 'categorical', levels: ['3', 'A', 'B'], missing: 0 },
      { name: 'score', kind: 'numeric', missing: 1 },
    ]);
    expect(report.subjects[2].covariates).toEqual({
      participant_id: report.subjects[2].participant,
      age: null,
      group: 'patient',
      site: 'A',
      score: 2.25,
    });
    expect(report.sessions).toBeNull();
    expect(report.nodes).toHaveLength(6);
    expect(report.nodes![0]).toEqual({ index: 0, label: 'L_V1', network: 'visual', x: -30, y: 0, z: 0 });
    expect(report.nodes![5].z).toBeNull();
    const forced = await openCohort({ dir, columnKinds: { age: 'categorical' } });
    expect(forced.columns[1]).toEqual({
      name: 'age',
      kind: 'categorical',
      levels: ['23', '31', '45'],
      missing: 1,
    });
    expect(forced.subjects[0].covariates.age).toBe('23');
  });

  it('keeps no matrix values in the report', async () => {
    const report = await openCohort({ dir });
    const text = JSON.stringify(report);
    expect(text.length).toBeLessThan(3000);
    for (const s of report.subjects)
      expect(Object.keys(s).sort()).toEqual([
        'covariates',
        'id',
        'participant',
        'session',
        'source',
        'usable',
      ]);
  });
});

describe('one stack file and a participants table in the same order', () => {
  it('gives each participant its slice', async () => {
    const dir = join(FIX, 'cohort-stack');
    const { stack } = readJson<{ stack: Json[][] }>(join(dir, 'expected.json'));
    const report = await openCohort({ dir });
    expect(report.findings).toEqual([]);
    expect(report.subjects.map((s) => [s.id, s.source.stackIndex])).toEqual([
      ['sub-a', 0],
      ['sub-b', 1],
      ['sub-c', 2],
      ['sub-d', 3],
    ]);
    for (const [k, s] of report.subjects.entries()) {
      expect(Array.from((await loadSubjectMatrix(s)).values)).toEqual(Array.from(flat(stack[k])));
    }
  });

  it('flags a count that differs from the participants', async () => {
    const d = tempDir();
    copyFileSync(join(FIX, 'cohort-stack', 'all_subjects.npy'), join(d, 'all_subjects.npy'));
    writeFileSync(join(d, 'participants.tsv'), 'participant_id\nsub-a\nsub-b\nsub-c\nsub-d\nsub-e\n');
    const report = await openCohort({ dir: d });
    expect(report.findings.map((f) => f.code).sort()).toEqual(['no-matrix', 'stack-count']);
    expect(report.subjects.filter((s) => s.usable)).toHaveLength(4);
  });
});

describe('time series per subject, files named in a column', () => {
  it('correlates on load: Pearson equals numpy.corrcoef to 1e-12', async () => {
    const dir = join(FIX, 'cohort-timeseries');
    const { pearson } = readJson<{ pearson: Record<string, Json[]> }>(join(dir, 'expected.json'));
    const report = await openCohort({ dir, timeSeries: true });
    expect(report.findings).toEqual([]);
    expect(report.n).toBe(5);
    expect(report.columns.map((c) => c.name)).toEqual(['participant_id', 'age']);
    for (const s of report.subjects) {
      expect(s.source.timeSeries).toBe(true);
      const m = await loadSubjectMatrix(s);
      const want = flat(pearson[s.id]);
      expect(Math.max(...Array.from(m.values, (v, k) => Math.abs(v - want[k])))).toBeLessThan(1e-12);
      const lw = await loadSubjectMatrix(s, { correlation: 'ledoit-wolf' });
      expect(lw.n).toBe(5);
      expect(lw.values[0]).toBe(1);
    }
  });

  it('without the time-series switch, T × N files are not square', async () => {
    const report = await openCohort({ dir: join(FIX, 'cohort-timeseries') });
    expect(report.subjects.every((s) => !s.usable)).toBe(true);
    expect(report.findings.every((f) => f.code === 'not-square')).toBe(true);
    expect(report.findings[0].message).toMatch(/time series/);
  });

  it('flags missing time points and fewer time points than regions', async () => {
    const d = tempDir();
    const rows = Array.from({ length: 4 }, (_, t) =>
      [t, Math.sin(t), t === 2 ? 'NaN' : Math.cos(t), t * t, 1 / (t + 1)].join('\t'),
    );
    writeFileSync(join(d, 'sub-01_ts.tsv'), rows.join('\n') + '\n');
    const report = await openCohort({ dir: d, timeSeries: true });
    const codes = report.findings.map((f) => f.code);
    expect(codes).toContain('nan-cells');
    expect(codes).toContain('few-timepoints');
    expect(report.findings.find((f) => f.code === 'nan-cells')!.where).toEqual([2, 2]);
    expect(report.subjects[0].usable).toBe(false);
  });

  it('names a constant region as dead', async () => {
    const d = tempDir();
    const rows = Array.from({ length: 10 }, (_, t) => [Math.sin(t), 3, Math.cos(t * 1.3), t % 3].join(','));
    writeFileSync(join(d, 'sub-01_ts.csv'), rows.join('\n') + '\n');
    writeFileSync(join(d, 'nodes.tsv'), 'label\tnetwork\nA\tn1\nB\tn1\nC\tn2\nD\tn2\n');
    const report = await openCohort({ dir: d, timeSeries: true });
    expect(report.deadRegions).toEqual([{ index: 1, label: 'B', subjects: ['sub-01'] }]);
    expect(report.findings.find((f) => f.code === 'constant-region')!.message).toMatch(/region 2 \(B\)/);
  });
});

describe('other layouts and doors', () => {
  it('a MATLAB-layout stack (N × N × subjects) in a .mat gives each participant its slice', async () => {
    const d = tempDir();
    copyFileSync(join(FIX, 'readers', 'stack_matlab_layout.mat'), join(d, 'stack.mat'));
    writeFileSync(
      join(d, 'participants.tsv'),
      'participant_id\tgroup\nsub-p\t1\nsub-q\t2\nsub-r\t1\nsub-s\t2\n',
    );
    const exp = readJson<{ files: Record<string, { values: Json[][] }> }>(
      join(FIX, 'readers', 'expected.json'),
    );
    const report = await openCohort({ dir: d, columnKinds: { group: 'categorical', nope: 'numeric' } });
    expect(report.columns.slice(1)).toEqual([
      { name: 'group', kind: 'categorical', levels: ['1', '2'], missing: 0 },
    ]);
    expect(report.findings.map((f) => f.code)).toEqual(['covariate-unknown']);
    for (const [k, s] of report.subjects.entries()) {
      expect(s.source).toMatchObject({ stackIndex: k, variable: 'S' });
      const m = await loadSubjectMatrix(s);
      expect(Array.from(m.values)).toEqual(Array.from(flat(exp.files['stack_matlab_layout.mat'].values[k])));
    }
  });

  it('a file column names each file; a named file that is missing is reported', async () => {
    const d = tempDir();
    copyFileSync(join(FIX, 'readers', 'f8_c_v1.npy'), join(d, 'a.npy'));
    copyFileSync(join(FIX, 'readers', 'f4_c_v2.npy'), join(d, 'b.npy'));
    writeFileSync(join(d, 'table.csv'), 'participant_id,conn\nsub-a,a.npy\nsub-b,b.npy\nsub-c,c.npy\n');
    writeFileSync(join(d, 'nodes.tsv'), 'name\tmodule\nA\tm\nB\tm\n');
    const report = await openCohort({ dir: d, participants: 'table.csv', fileColumn: 'conn' });
    expect(report.subjects.map((s) => [s.id, s.usable])).toEqual([
      ['sub-a', true],
      ['sub-b', true],
    ]);
    expect(report.findings.map((f) => `${f.code}:${f.subject}`).sort()).toEqual([
      'no-matrix:sub-c',
      'nodes-count:null',
    ]);
    expect(report.nodes!.map((x) => [x.label, x.network])).toEqual([
      ['A', 'm'],
      ['B', 'm'],
    ]);
    await expect(openCohort({ dir: d, participants: 'table.csv', fileColumn: 'nope' })).rejects.toThrow(
      /no column 'nope'/,
    );
  });

  it('without a participants table names subjects from their files', async () => {
    const d = tempDir();
    mkdirSync(join(d, 'sub-x1'));
    copyFileSync(join(FIX, 'readers', 'double_zlib.mat'), join(d, 'sub-x1', 'sub-x1_conn.mat'));
    copyFileSync(join(FIX, 'readers', 'pandas_index_header.csv'), join(d, 'patientA.csv'));
    const report = await openCohort({ dir: d });
    expect(report.subjects.map((s) => s.id)).toEqual(['patientA', 'sub-x1']);
    expect(report.findings.map((f) => f.code)).toEqual(['no-participants']);
    expect(report.subjects.every((s) => s.usable)).toBe(true);
  });

  it('a folder that does not exist is an error naming it', async () => {
    await expect(openCohort({ dir: join(FIX, 'no-such-folder') })).rejects.toThrow(
      /no-such-folder: no such folder/,
    );
  });

  it('dropRegions removes rows and columns', () => {
    const m = { n: 3, values: Float64Array.of(1, 2, 3, 4, 5, 6, 7, 8, 9) };
    expect(Array.from(dropRegions(m, [1]).matrix.values)).toEqual([1, 3, 7, 9]);
  });
});
