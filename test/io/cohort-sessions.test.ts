// Sessions, table files, Unicode names and confinement, on cohorts laid out the way studies are
// stored: a nested BIDS tree (sub-XX/ses-YY/func/…, sidecars, scans and sessions tables) and a
// flat folder. Layout and entity rules: the BIDS specification, "Entities" and "Sessions file"
// (common practice). The sessions join is checked against pandas.merge (Debian python3-pandas).
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { CohortReport } from '../../electron/api.ts';
import { factorModel, sampleCorrelation } from '../../electron/engine/generator/index.ts';
import { createRng } from '../../electron/engine/random.ts';
import type { SquareMatrix } from '../../electron/engine/types.ts';
import { loadSubjectMatrix, openCohort } from '../../electron/io/cohort.ts';
import { main } from '../../electron/cli.ts';
import { createLoopwiseService } from '../../electron/service/service.ts';

const temps: string[] = [];
afterAll(() => temps.forEach((d) => rmSync(d, { recursive: true, force: true })));
function tempDir(): string {
  const d = mkdtempSync(join(tmpdir(), 'loopwise-ses-'));
  temps.push(d);
  return d;
}
function write(root: string, rel: string, text: string): void {
  mkdirSync(dirname(join(root, rel)), { recursive: true });
  writeFileSync(join(root, rel), text);
}

/** A 6-region sample correlation matrix from the seeded block model. */
function matrix(seed: number): SquareMatrix {
  const rng = createRng(seed);
  return sampleCorrelation(factorModel({ modules: [0, 0, 0, 1, 1, 1], within: 0.5, between: 0.1 }), 40, rng);
}
const tsv = (m: SquareMatrix): string =>
  Array.from({ length: m.n }, (_, i) =>
    Array.from({ length: m.n }, (_, j) => String(m.values[i * m.n + j])).join('\t'),
  ).join('\n') + '\n';

const hasPandas = spawnSync('/usr/bin/python3', ['-c', 'import pandas'], { encoding: 'utf8' }).status === 0;

/**
 * A nested BIDS dataset: 52 participants scanned at ses-pre and ses-post (sub-52 only at pre),
 * 103 scans, each with a JSON sidecar and a per-session scans table; participants.tsv and a
 * sessions table per participant (session_id written with and without the 'ses-' prefix).
 */
function nestedStudy(): { dir: string; seeds: Map<string, number> } {
  const dir = tempDir();
  const seeds = new Map<string, number>();
  const rng = createRng(77);
  write(dir, 'dataset_description.json', '{"Name": "invented", "BIDSVersion": "1.8.0"}\n');
  const people = ['participant_id\tgroup\tage\tsex'];
  for (let k = 1; k <= 52; k++) {
    const sub = `sub-${String(k).padStart(2, '0')}`;
    people.push(
      `${sub}\t${k % 2 ? 'training' : 'waitlist'}\t${20 + rng.int(15)}\t${rng.next() < 0.5 ? 'F' : 'M'}`,
    );
    const sessions = k === 52 ? ['pre'] : ['pre', 'post'];
    const rows = ['session_id\tacq_time\tfd_mean'];
    sessions.forEach((ses, s) => {
      const base = `${sub}/ses-${ses}/func/${sub}_ses-${ses}_task-rest_desc-corr_relmat`;
      const seed = 1000 + k * 10 + s;
      seeds.set(`${sub}_ses-${ses}`, seed);
      write(dir, `${base}.tsv`, tsv(matrix(seed)));
      write(dir, `${base}.json`, '{"Description": "Pearson correlation"}\n');
      write(
        dir,
        `${sub}/ses-${ses}/${sub}_ses-${ses}_scans.tsv`,
        `filename\tacq_time\nfunc/${sub}_ses-${ses}_task-rest_bold.nii.gz\t2026-0${s + 1}-01T09:00:00\n`,
      );
      const id = k % 3 === 0 ? ses : `ses-${ses}`;
      rows.push(`${id}\t2026-0${s + 1}-01T09:00:00\t${(0.05 + rng.next() * 0.1).toFixed(3)}`);
    });
    write(dir, `${sub}/${sub}_sessions.tsv`, rows.join('\n') + '\n');
  }
  write(dir, 'participants.tsv', people.join('\n') + '\n');
  return { dir, seeds };
}

describe('a nested BIDS tree with sessions (103 scans, no node table)', () => {
  const { dir, seeds } = nestedStudy();
  let report: CohortReport;

  it('makes one row per scan, keyed participant_ses-label, with the sessions in natural order', async () => {
    report = await openCohort({ dir }, { concurrency: 2 });
    expect(report.subjects).toHaveLength(103);
    expect(report.sessions).toEqual(['post', 'pre']);
    expect(report.subjects.every((s) => s.usable)).toBe(true);
    expect(report.findings.filter((f) => f.severity === 'error')).toEqual([]);
    const s = report.subjects.find((x) => x.id === 'sub-07_ses-post')!;
    expect(s).toMatchObject({ participant: 'sub-07', session: 'post' });
    expect(new Set(report.subjects.map((x) => x.id)).size).toBe(103);
    for (const x of report.subjects) expect(x.id).toBe(`${x.participant}_ses-${x.session}`);
    expect(report.n).toBe(6);
    // A participant scanned once is flagged, not excluded.
    expect(
      report.findings.filter((f) => f.code === 'missing-session').map((f) => [f.subject, f.message]),
    ).toEqual([['sub-52', 'sub-52 has no scan for session post (the cohort has post, pre)']]);
    // A participant with two sessions is two scans, not an ambiguity.
    expect(report.findings.some((f) => f.code === 'several-matrices')).toBe(false);
  });

  it('never takes a table or sidecar for a matrix', () => {
    for (const x of report.subjects) expect(x.source.file).toMatch(/_relmat\.tsv$/);
    const named = report.findings.map((f) => f.file ?? '').join('\n');
    expect(named).not.toMatch(/_scans\.tsv|_sessions\.tsv|\.json|participants\.tsv/);
  });

  it('loads each scan from its own file', async () => {
    for (const id of ['sub-01_ses-pre', 'sub-01_ses-post', 'sub-52_ses-pre', 'sub-33_ses-post']) {
      const entry = report.subjects.find((x) => x.id === id)!;
      const m = await loadSubjectMatrix(entry);
      const want = matrix(seeds.get(id)!);
      expect([...m.values]).toEqual([...want.values]);
    }
  });

  it('lists participant_id and session as categorical columns, fd_mean as numeric', () => {
    const cols = Object.fromEntries(report.columns.map((c) => [c.name, c]));
    expect(cols.participant_id.kind).toBe('categorical');
    expect(cols.participant_id.levels).toHaveLength(52);
    expect(cols.session).toEqual({
      name: 'session',
      kind: 'categorical',
      levels: ['post', 'pre'],
      missing: 0,
    });
    expect(cols.fd_mean).toMatchObject({ kind: 'numeric', missing: 0 });
    expect(cols.group.levels).toEqual(['training', 'waitlist']);
  });

  it.skipIf(!hasPandas)('joins participants and sessions tables exactly as pandas.merge does', () => {
    const script = `
import glob, json, os, pandas as pd
root = ${JSON.stringify(dir)}
p = pd.read_csv(os.path.join(root, 'participants.tsv'), sep='\\t')
frames = []
for f in sorted(glob.glob(os.path.join(root, 'sub-*', 'sub-*_sessions.tsv'))):
    s = pd.read_csv(f, sep='\\t')
    s['participant_id'] = os.path.basename(f)[:-len('_sessions.tsv')]
    s['session'] = s['session_id'].str.replace('^ses-', '', regex=True)
    frames.append(s.drop(columns=['session_id']))
m = pd.concat(frames).merge(p, on='participant_id', how='left')
out = {r.participant_id + '_ses-' + r.session: {'group': r.group, 'age': int(r.age), 'sex': r.sex,
       'fd_mean': float(r.fd_mean), 'acq_time': r.acq_time} for r in m.itertuples()}
print(json.dumps(out))`;
    const r = spawnSync('/usr/bin/python3', ['-c', script], { encoding: 'utf8' });
    expect(r.stderr).toBe('');
    const want = JSON.parse(r.stdout) as Record<string, Record<string, unknown>>;
    expect(Object.keys(want).sort()).toEqual(report.subjects.map((s) => s.id).sort());
    for (const s of report.subjects) {
      expect(s.covariates, s.id).toEqual({
        participant_id: s.participant,
        session: s.session,
        ...want[s.id],
      });
    }
  });
});

describe('a flat folder with sessions', () => {
  function flat(withTable: boolean): string {
    const dir = tempDir();
    for (let k = 1; k <= 12; k++) {
      const sub = `sub-${k}`;
      for (const ses of ['1', '2', '10'])
        write(dir, `${sub}_ses-${ses}_conn.tsv`, tsv(matrix(k * 100 + Number(ses))));
      write(
        dir,
        `${sub}_sessions.tsv`,
        `session_id\tage\nses-1\t${30 + k}\nses-2\t${30 + k}\nses-10\t${31 + k}\n`,
      );
    }
    write(
      dir,
      'nodes.tsv',
      'label\tnetwork\n' +
        ['a', 'b', 'c', 'd', 'e', 'f'].map((l, i) => `${l}\t${i < 3 ? 'x' : 'y'}`).join('\n') +
        '\n',
    );
    if (withTable) {
      write(
        dir,
        'participants.tsv',
        'participant_id\tage\tgroup\n' +
          Array.from({ length: 12 }, (_, i) => `sub-${i + 1}\t${30 + i + 1}\t${i % 2 ? 'a' : 'b'}`).join(
            '\n',
          ) +
          '\n',
      );
    }
    return dir;
  }

  it('without a participants table names scans from their files, sessions in natural order', async () => {
    const report = await openCohort({ dir: flat(false) });
    expect(report.sessions).toEqual(['1', '2', '10']);
    expect(report.subjects).toHaveLength(36);
    // Scans keep the order of their file paths, as without sessions.
    expect(report.subjects.filter((s) => s.participant === 'sub-1').map((s) => s.id)).toEqual([
      'sub-1_ses-10',
      'sub-1_ses-1',
      'sub-1_ses-2',
    ]);
    expect(report.subjects.find((s) => s.id === 'sub-3_ses-10')!.covariates).toEqual({
      participant_id: 'sub-3',
      session: '10',
      age: 34,
    });
    expect(report.nodes).toHaveLength(6);
    expect(report.findings.filter((f) => f.severity === 'error')).toEqual([]);
  });

  it('a column in both tables: the per-scan value is used and a warning names both files', async () => {
    const report = await openCohort({ dir: flat(true) });
    expect(report.subjects).toHaveLength(36);
    // participants.tsv says age 33 for sub-3; its sessions table says 34 at ses-10.
    expect(report.subjects.find((s) => s.id === 'sub-3_ses-10')!.covariates.age).toBe(34);
    expect(report.subjects.find((s) => s.id === 'sub-3_ses-1')!.covariates.age).toBe(33);
    const w = report.findings.filter((f) => f.code === 'covariate-conflict');
    expect(w).toHaveLength(12);
    expect(w[0].message).toMatch(/'age'.*participants\.tsv.*sub-\d+_sessions\.tsv/);
  });
});

describe('what names a session', () => {
  it('a ses- entity of the file name or a folder named ses-<label>; not text that merely contains ses-', async () => {
    const dir = tempDir();
    write(dir, 'pre-ses-data/sub-01_conn.tsv', tsv(matrix(1)));
    write(dir, 'my_ses-notes/sub-02_run-ses-1_conn.tsv', tsv(matrix(2)));
    const none = await openCohort({ dir });
    expect(none.sessions).toBeNull();
    expect(none.subjects.map((s) => s.id)).toEqual(['sub-02', 'sub-01']);
    write(dir, 'sub-03/ses-b/sub-03_conn.tsv', tsv(matrix(3)));
    write(dir, 'sub-04_ses-a_conn.tsv', tsv(matrix(4)));
    const some = await openCohort({ dir });
    expect(some.sessions).toEqual(['a', 'b']);
    expect(some.subjects.map((s) => s.id).sort()).toEqual([
      'sub-01',
      'sub-02',
      'sub-03_ses-b',
      'sub-04_ses-a',
    ]);
    // Files without a session in a cohort with sessions are analysed and flagged.
    expect(
      some.findings
        .filter((f) => f.code === 'no-session')
        .map((f) => f.subject)
        .sort(),
    ).toEqual(['sub-01', 'sub-02']);
  });
});

describe('two files for one scan', () => {
  it('is an error naming both files; the other session of the participant is fine', async () => {
    const dir = tempDir();
    write(dir, 'participants.tsv', 'participant_id\nsub-01\nsub-02\n');
    for (const sub of ['sub-01', 'sub-02'])
      for (const ses of ['a', 'b'])
        write(dir, `${sub}/ses-${ses}/func/${sub}_ses-${ses}_run-1_relmat.tsv`, tsv(matrix(3)));
    write(dir, 'sub-01/ses-a/func/sub-01_ses-a_run-2_relmat.tsv', tsv(matrix(4)));
    const report = await openCohort({ dir });
    const bad = report.findings.filter((f) => f.code === 'several-matrices');
    expect(bad).toHaveLength(1);
    expect(bad[0].subject).toBe('sub-01_ses-a');
    expect(bad[0].message).toContain('sub-01/ses-a/func/sub-01_ses-a_run-1_relmat.tsv');
    expect(bad[0].message).toContain('sub-01/ses-a/func/sub-01_ses-a_run-2_relmat.tsv');
    const usable = Object.fromEntries(report.subjects.map((s) => [s.id, s.usable]));
    expect(usable).toEqual({
      'sub-01_ses-a': false,
      'sub-01_ses-b': true,
      'sub-02_ses-a': true,
      'sub-02_ses-b': true,
    });
  });

  it('without sessions two files of a participant are still an ambiguity', async () => {
    const dir = tempDir();
    write(dir, 'participants.tsv', 'participant_id\nsub-01\n');
    write(dir, 'sub-01_run-1_conn.tsv', tsv(matrix(5)));
    write(dir, 'sub-01_run-2_conn.tsv', tsv(matrix(6)));
    const report = await openCohort({ dir });
    expect(report.sessions).toBeNull();
    expect(report.subjects.map((s) => [s.id, s.usable])).toEqual([['sub-01', false]]);
    expect(report.findings.find((f) => f.code === 'several-matrices')!.message).toMatch(
      /sub-01_run-1_conn\.tsv, sub-01_run-2_conn\.tsv/,
    );
  });
});

describe('Unicode names', () => {
  const composed = 'sub-\u00fc07'; // ü as one code point (NFC)
  const decomposed = 'sub-u\u030807'; // u + combining diaeresis (NFD, as some file systems store names)

  for (const [table, file] of [
    [composed, decomposed],
    [decomposed, composed],
  ]) {
    it(`participant ${table === composed ? 'NFC' : 'NFD'} finds its file written ${file === composed ? 'NFC' : 'NFD'}`, async () => {
      const dir = tempDir();
      write(dir, 'participants.tsv', `participant_id\tage\n${table}\t30\nsub-08\t31\n`);
      write(dir, `${file}_ses-pre_conn.tsv`, tsv(matrix(7)));
      write(dir, 'sub-08_ses-pre_conn.tsv', tsv(matrix(8)));
      const report = await openCohort({ dir });
      expect(report.findings.filter((f) => f.severity === 'error')).toEqual([]);
      expect(report.subjects.map((s) => s.id)).toEqual([`${composed}_ses-pre`, 'sub-08_ses-pre']);
      expect(report.subjects[0].covariates.age).toBe(30);
      expect([...(await loadSubjectMatrix(report.subjects[0])).values]).toEqual([...matrix(7).values]);
    });
  }
});

describe('files outside the chosen folders are refused and never read', () => {
  // Distinctive contents: none of these may appear anywhere in the report.
  const SECRETS = ['0.987654321', 'SECRETLABEL', 'SECRETNODE', 'SECRETCOV', 'SECRETSES', '0.13579'];
  function secretMatrix(): string {
    const m = matrix(9);
    m.values[1] = m.values[6] = 0.987654321;
    return (
      'SECRETLABEL\t' +
      tsv(m)
        .replace(/\n/g, '\nSECRETLABEL\t')
        .replace(/SECRETLABEL\t$/, '')
    );
  }
  function setup(): { dir: string; outside: string } {
    const outside = tempDir();
    write(outside, 'secret_conn.tsv', secretMatrix());
    write(outside, 'nodes.tsv', 'label\nSECRETNODE\n');
    write(outside, 'participants.tsv', 'participant_id\tnote\nsub-01\tSECRETCOV\n');
    write(outside, 'sub-02_sessions.tsv', 'session_id\tSECRETSES\nses-1\t0.13579\n');
    const dir = tempDir();
    return { dir, outside };
  }
  const clean = (report: CohortReport): void => {
    const text = JSON.stringify(report);
    for (const s of SECRETS) expect(text).not.toContain(s);
  };

  it('a matrix reached through a symlink', async () => {
    const { dir, outside } = setup();
    write(dir, 'participants.tsv', 'participant_id\nsub-01\nsub-02\n');
    write(dir, 'sub-01_ses-1_conn.tsv', tsv(matrix(1)));
    symlinkSync(join(outside, 'secret_conn.tsv'), join(dir, 'sub-02_ses-1_conn.tsv'));
    symlinkSync(join(outside, 'sub-02_sessions.tsv'), join(dir, 'sub-02_sessions.tsv'));
    const report = await openCohort({ dir });
    const refused = report.findings.filter((f) => f.code === 'outside-folder');
    expect(refused.map((f) => f.file).sort()).toEqual(['sub-02_ses-1_conn.tsv', 'sub-02_sessions.tsv']);
    for (const f of refused) expect(f.message).toMatch(/outside the chosen folders/);
    expect(report.subjects.map((s) => [s.id, s.usable])).toEqual([
      ['sub-01_ses-1', true],
      ['sub-02_ses-1', false],
    ]);
    clean(report);
    // An allowed root admits the same link (the folder the user also chose).
    const allowed = await openCohort({ dir }, { allowedRoots: [outside] });
    expect(allowed.findings.some((f) => f.code === 'outside-folder')).toBe(false);
    expect(allowed.subjects.find((s) => s.id === 'sub-02_ses-1')!.covariates.SECRETSES).toBe(0.13579);
  });

  it("the service passes a door's roots as allowed roots", async () => {
    const { dir, outside } = setup();
    write(dir, 'sub-01_conn.tsv', tsv(matrix(1)));
    symlinkSync(join(outside, 'secret_conn.tsv'), join(dir, 'sub-02_conn.tsv'));
    const closed = createLoopwiseService();
    const open = createLoopwiseService({ allowedRoots: () => [outside] });
    try {
      const refused = await closed.openCohort({ dir });
      expect(refused.subjects.map((s) => s.usable)).toEqual([true, false]);
      clean(refused);
      const admitted = await open.openCohort({ dir });
      expect(admitted.findings.some((f) => f.code === 'outside-folder')).toBe(false);
    } finally {
      await closed.close();
      await open.close();
    }
  });

  it('a file-column path leading out of the folder', async () => {
    const { dir, outside } = setup();
    const rel = join('..', outside.split('/').pop()!, 'secret_conn.tsv');
    write(
      dir,
      'participants.tsv',
      `participant_id\tfile\nsub-01\tsub-01.tsv\nsub-02\t${rel}\nsub-03\t${join(outside, 'secret_conn.tsv')}\n`,
    );
    write(dir, 'sub-01.tsv', tsv(matrix(1)));
    const report = await openCohort({ dir });
    const refused = report.findings.filter((f) => f.code === 'outside-folder');
    expect(refused.map((f) => f.subject)).toEqual(['sub-02', 'sub-03']);
    expect(refused[0].message).toContain(rel);
    // Listed as excluded, with the refusal as the reason.
    expect(report.subjects.map((s) => [s.id, s.usable])).toEqual([
      ['sub-01', true],
      ['sub-02', false],
      ['sub-03', false],
    ]);
    clean(report);
  });

  it('participants and node tables linked from outside', async () => {
    const { dir, outside } = setup();
    symlinkSync(join(outside, 'participants.tsv'), join(dir, 'participants.tsv'));
    symlinkSync(join(outside, 'nodes.tsv'), join(dir, 'nodes.tsv'));
    write(dir, 'sub-01_conn.tsv', tsv(matrix(1)));
    const report = await openCohort({ dir });
    expect(report.findings.filter((f) => f.code === 'outside-folder').map((f) => f.file)).toEqual([
      'participants.tsv',
      'nodes.tsv',
    ]);
    expect(report.nodes).toBeNull();
    expect(report.subjects.map((s) => [s.id, s.usable])).toEqual([['sub-01', true]]);
    clean(report);
  });
});

describe('the caller’s own choices and links inside the folder', () => {
  it('a participants table named explicitly is read where it is; the files it names stay confined', async () => {
    const elsewhere = tempDir();
    const dir = tempDir();
    write(elsewhere, 'secret_conn.tsv', tsv(matrix(2)));
    write(elsewhere, 'table.tsv', 'participant_id\tage\nsub-01\t40\nsub-02\t41\n');
    write(dir, 'sub-01_conn.tsv', tsv(matrix(1)));
    symlinkSync(join(elsewhere, 'secret_conn.tsv'), join(dir, 'sub-02_conn.tsv'));
    const report = await openCohort({ dir, participants: join(elsewhere, 'table.tsv') });
    expect(report.subjects.map((s) => [s.id, s.covariates.age, s.usable])).toEqual([
      ['sub-01', 40, true],
      ['sub-02', 41, false],
    ]);
    expect(report.findings.find((f) => f.code === 'outside-folder')!.file).toBe('sub-02_conn.tsv');
  });

  it('a link to a file inside the folder is followed; a link to a folder is reported, not followed', async () => {
    const dir = tempDir();
    write(dir, 'participants.tsv', 'participant_id\n01\n02\n');
    write(dir, 'store/a.tsv', tsv(matrix(11)));
    symlinkSync(join(dir, 'store', 'a.tsv'), join(dir, 'sub-01_ses-1_conn.tsv'));
    write(dir, 'real/sub-02_ses-1_conn.tsv', tsv(matrix(12)));
    write(dir, 'sub-02_sessions.tsv', 'session_id\tfd_mean\n1\t0.2\n');
    symlinkSync(join(dir, 'real'), join(dir, 'linked'));
    const report = await openCohort({ dir });
    expect(report.findings.find((f) => f.code === 'symlink-folder')!.file).toBe('linked');
    const s1 = report.subjects.find((s) => s.participant === '01')!;
    expect(s1.usable).toBe(true);
    expect([...(await loadSubjectMatrix(s1)).values]).toEqual([...matrix(11).values]);
    // An id written without 'sub-' owns sub-<id>_sessions.tsv; session_id without 'ses-' joins too.
    const s2 = report.subjects.find((s) => s.participant === '02')!;
    expect(s2).toMatchObject({ id: '02_ses-1', session: '1' });
    expect(s2.covariates.fd_mean).toBe(0.2);
    // store/a.tsv names no participant: a file without one, as always.
    expect(report.findings.some((f) => f.code === 'no-participant' && f.file === 'store/a.tsv')).toBe(true);
  });
});

describe('participants.tsv and participants.csv both present', () => {
  it('uses the .tsv and names both in a warning', async () => {
    const dir = tempDir();
    write(dir, 'participants.tsv', 'participant_id\tgroup\nsub-01\ta\n');
    write(dir, 'participants.csv', 'participant_id,group\nsub-01,b\n');
    write(dir, 'sub-01_conn.tsv', tsv(matrix(1)));
    const report = await openCohort({ dir });
    const w = report.findings.find((f) => f.code === 'participants-two-tables')!;
    expect(w.severity).toBe('warning');
    expect(w.message).toMatch(/participants\.tsv and participants\.csv/);
    expect(report.subjects[0].covariates.group).toBe('a');
    // Neither table is a matrix.
    expect(report.subjects).toHaveLength(1);
  });
});

describe('the tables of a run on a cohort with sessions', () => {
  it('put session right after participant_id, which holds the participant', async () => {
    const dir = tempDir();
    write(
      dir,
      'participants.tsv',
      'participant_id\tgroup\n' +
        [1, 2, 3, 4, 5, 6].map((k) => `sub-0${k}\t${k % 2 ? 'a' : 'b'}`).join('\n') +
        '\n',
    );
    write(
      dir,
      'nodes.tsv',
      'label\tnetwork\n' +
        ['a', 'b', 'c', 'd', 'e', 'f'].map((l, i) => `${l}\t${i < 3 ? 'x' : 'y'}`).join('\n') +
        '\n',
    );
    for (let k = 1; k <= 6; k++)
      for (const [s, ses] of ['pre', 'post'].entries()) {
        write(dir, `sub-0${k}/ses-${ses}/sub-0${k}_ses-${ses}_conn.tsv`, tsv(matrix(k * 10 + s)));
        write(dir, `sub-0${k}/sub-0${k}_sessions.tsv`, 'session_id\tfd_mean\nses-pre\t0.1\nses-post\t0.2\n');
      }
    write(dir, 'participants.tsv', readFileSync(join(dir, 'participants.tsv'), 'utf8') + 'sub-07\ta\n');
    const out = join(tempDir(), 'out');
    let err = '';
    const code = await main(['analyze', dir, '--out', out, '--workers', '1'], {
      out: () => {},
      err: (t) => (err += t),
    });
    expect(code, err).toBe(0);
    const read = (f: string): string[][] =>
      readFileSync(join(out, f), 'utf8')
        .trimEnd()
        .split('\n')
        .map((l) => l.split('\t'));
    for (const f of [
      'features.tsv',
      'nodes.tsv',
      'networks.tsv',
      'curves.tsv',
      'intervals.tsv',
      'subjects.tsv',
    ]) {
      const [head, ...rows] = read(f);
      expect(head.slice(0, 2), f).toEqual(['participant_id', 'session']);
      const scans = new Set(rows.map((r) => `${r[0]}|${r[1]}`));
      for (const k of [1, 2, 3, 4, 5, 6])
        for (const ses of ['pre', 'post'])
          expect(scans.has(`sub-0${k}|${ses}`), `${f} sub-0${k} ${ses}`).toBe(true);
    }
    const [fhead, ...features] = read('features.tsv');
    expect(features).toHaveLength(12);
    expect(fhead.slice(2, 4)).toEqual(['group', 'fd_mean']);
    expect(features.find((r) => r[0] === 'sub-02' && r[1] === 'post')!.slice(2, 4)).toEqual(['b', '0.2']);
    // The participant without any scan is listed, without a session.
    const [, ...subjects] = read('subjects.tsv');
    expect(subjects.find((r) => r[0] === 'sub-07')!.slice(1, 3)).toEqual(['NA', 'excluded']);
  }, 120_000);
});
