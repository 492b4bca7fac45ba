// What the readers' findings become in a cohort report: a Windows-1252 participants table keeps
// its levels apart with a warning naming the file; a participants row with an extra tab is an
// error naming the file and the line, and that participant is not analysed; a matrix whose labels
// are Windows-1252 is read with a warning on that subject.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { openCohort } from '../../electron/io/cohort.ts';

const temps: string[] = [];
afterAll(() => temps.forEach((d) => rmSync(d, { recursive: true, force: true })));

const R = '1,0.5,-0.25\n0.5,1,0.125\n-0.25,0.125,1\n';

function cohort(participants: Buffer, files: Record<string, Buffer | string>): string {
  const d = mkdtempSync(join(tmpdir(), 'loopwise-readers-cohort-'));
  temps.push(d);
  writeFileSync(join(d, 'participants.tsv'), participants);
  for (const [name, bytes] of Object.entries(files)) writeFileSync(join(d, name), bytes);
  return d;
}

describe('reader findings in a cohort report', () => {
  it('a Windows-1252 participants table: "Gruppe Ä" and "Gruppe Ö" stay two levels, with a warning', async () => {
    const table = 'participant_id\tgroup\tsite\nsub-01\tGruppe Ä\tMontréal\nsub-02\tGruppe Ö\tMontréal\n';
    const d = cohort(Buffer.from(table, 'latin1'), { 'sub-01_conn.csv': R, 'sub-02_conn.csv': R });
    const report = await openCohort({ dir: d });
    const group = report.columns.find((c) => c.name === 'group')!;
    expect(group.kind === 'categorical' && group.levels).toEqual(['Gruppe Ä', 'Gruppe Ö']);
    const site = report.columns.find((c) => c.name === 'site')!;
    expect(site.kind === 'categorical' && site.levels).toEqual(['Montréal']);
    const w = report.findings.filter((f) => f.code === 'text-encoding');
    expect(w).toHaveLength(1);
    expect(w[0]).toMatchObject({ severity: 'warning', file: 'participants.tsv' });
    expect(w[0].message).toMatch(/0xC4 at line 2, byte offset 40.*read as Windows-1252/);
    expect(report.subjects.every((s) => s.usable)).toBe(true);
  });

  it('an extra tab in a participants row: an error naming the line; that participant is not analysed', async () => {
    const table = 'participant_id\tage\tgroup\nsub-01\t31\tA\nsub-02\t\t44\tB\nsub-03\t28\tB\n';
    const d = cohort(Buffer.from(table), {
      'sub-01_conn.csv': R,
      'sub-02_conn.csv': R,
      'sub-03_conn.csv': R,
    });
    const report = await openCohort({ dir: d });
    const ragged = report.findings.filter((f) => f.code === 'participants-ragged');
    expect(ragged).toHaveLength(1);
    expect(ragged[0]).toMatchObject({ severity: 'error', file: 'participants.tsv', subject: 'sub-02' });
    expect(ragged[0].message).toBe(
      'line 3 has 4 fields but the header has 3 (an extra separator?); the row is not used',
    );
    // Its covariates never reach the analysis: the group column holds A and B from the good rows only.
    const group = report.columns.find((c) => c.name === 'group')!;
    expect(group.kind === 'categorical' && group.levels).toEqual(['A', 'B']);
    expect(report.subjects.find((s) => s.id === 'sub-02' && s.usable)).toBeUndefined();
    expect(report.subjects.filter((s) => s.usable).map((s) => s.id)).toEqual(['sub-01', 'sub-03']);
  });

  it('a numeric column with one typo, or with decimal commas, does not silently turn categorical', async () => {
    const table =
      'participant_id\tage\tfd\tsite\n' +
      'sub-01\t31\t0,12\tA\nsub-02\t3O\t0,2\tB\nsub-03\t28\t0,31\tA\nsub-04\t45\t0,05\tB\nsub-05\t39\tn/a\tA\n';
    const files: Record<string, string> = {};
    for (let k = 1; k <= 5; k++) files[`sub-0${k}_conn.csv`] = R;
    const report = await openCohort({ dir: cohort(Buffer.from(table), files) });
    const age = report.findings.filter((f) => f.code === 'covariate-mostly-numeric');
    expect(age).toHaveLength(1);
    expect(age[0]).toMatchObject({ severity: 'warning', file: 'participants.tsv' });
    expect(age[0].message).toBe(
      "column 'age' is read as categorical because 1 of 5 values is not a number (line 3: '3O'); fix it, or read the column as numbers (--numeric age) to take it as missing",
    );
    const fd = report.findings.filter((f) => f.code === 'covariate-decimal-comma');
    expect(fd).toHaveLength(1);
    expect(fd[0].message).toMatch(
      /^column 'fd' holds numbers with a decimal comma \(line 2: '0,12'\); read as categorical with 4 levels/,
    );
    // A truly categorical column says nothing.
    expect(report.findings.filter((f) => /'site'/.test(f.message))).toEqual([]);
  });

  it('a matrix with Windows-1252 region names: read, with a warning on that subject', async () => {
    const m = Buffer.from(
      ',Précuneus,Insula,Cingulum\nPrécuneus,1,0.5,-0.25\nInsula,0.5,1,0.125\nCingulum,-0.25,0.125,1\n',
      'latin1',
    );
    const d = cohort(Buffer.from('participant_id\nsub-01\n'), { 'sub-01_conn.csv': m });
    const report = await openCohort({ dir: d });
    const w = report.findings.filter((f) => f.code === 'text-encoding');
    expect(w).toHaveLength(1);
    expect(w[0]).toMatchObject({ severity: 'warning', file: 'sub-01_conn.csv', subject: 'sub-01' });
    expect(w[0].message).toMatch(/0xE9 at line 1, byte offset 3: .*Précuneus/);
    expect(report.subjects[0].usable).toBe(true);
  });
});
