// `loopwise validate`: exit codes 0 / 1 / 2, the human report and the JSON CohortReport.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { CohortReport } from '../../electron/api.ts';
import { main } from '../../electron/cli.ts';

const FIX = join(import.meta.dirname, '..', 'fixtures', 'io');
const temps: string[] = [];
afterAll(() => temps.forEach((d) => rmSync(d, { recursive: true, force: true })));

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await main(args, { out: (t) => (out += t), err: (t) => (err += t) });
  return { code, out, err };
}

describe('loopwise validate', () => {
  it('prints the report of the malformed corpus and exits 0 (some subjects are usable)', async () => {
    const r = await run(['validate', join(FIX, 'malformed')]);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/regions \(N\): 5/);
    expect(r.out).toMatch(/subjects: 5 usable of 31/);
    expect(r.out).toMatch(
      /sub-06 {2}sub-06_conn\.csv {2}\[asymmetric\] not symmetric: max \|r_ij − r_ji\| = 0\.2/,
    );
    expect(r.out).toMatch(/--drop-regions 2/);
    expect(r.err).toBe('');
  });

  it('--json prints the CohortReport', async () => {
    const r = await run(['validate', join(FIX, 'cohort-bids'), '--json']);
    expect(r.code).toBe(0);
    const report = JSON.parse(r.out) as CohortReport;
    expect(report.n).toBe(6);
    expect(report.subjects.map((s) => s.id)).toEqual(['sub-1', 'sub-2', 'sub-10', 'sub-11']);
    expect(report.nodes).toHaveLength(6);
    expect(report.findings).toEqual([]);
  });

  it('passes --time-series, --drop-regions and --participants through', async () => {
    const ts = await run(['validate', join(FIX, 'cohort-timeseries'), '--time-series', '--json']);
    expect(ts.code).toBe(0);
    expect((JSON.parse(ts.out) as CohortReport).subjects.every((s) => s.source.timeSeries)).toBe(true);
    const dropped = await run(['validate', join(FIX, 'malformed'), '--drop-regions', '2', '--json']);
    const rep = JSON.parse(dropped.out) as CohortReport;
    expect(rep.subjects.find((s) => s.id === 'sub-11')!.usable).toBe(true);
    const other = await run([
      'validate',
      join(FIX, 'cohort-stack'),
      '--participants',
      join(FIX, 'cohort-stack', 'participants.csv'),
    ]);
    expect(other.code).toBe(0);
  });

  it('--numeric / --categorical override the detected column kinds', async () => {
    const r = await run([
      'validate',
      join(FIX, 'cohort-bids'),
      '--json',
      '--categorical',
      'age',
      '--numeric',
      'site',
    ]);
    const report = JSON.parse(r.out) as CohortReport;
    expect(report.columns.find((c) => c.name === 'age')!.kind).toBe('categorical');
    expect(report.columns.find((c) => c.name === 'site')!.kind).toBe('numeric');
    // 'A' and 'B' are no numbers: each is flagged and read as missing.
    expect(report.findings.filter((f) => f.code === 'covariate-not-numeric')).toHaveLength(3);
    expect((await run(['validate', FIX, '--numeric', 'x', '--categorical', 'x'])).code).toBe(2);
  });

  it('exits 1 when no subject is usable', async () => {
    const d = mkdtempSync(join(tmpdir(), 'loopwise-validate-'));
    temps.push(d);
    writeFileSync(join(d, 'sub-01.csv'), '1,2\n3,4,5\n');
    writeFileSync(join(d, 'sub-02.csv'), '');
    const r = await run(['validate', d]);
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/\[ragged\]/);
    expect(r.out).toMatch(/\[empty-file\]/);
  });

  it('exits 2 on a usage error', async () => {
    expect((await run(['validate'])).code).toBe(2);
    expect((await run(['validate', FIX, '--bogus'])).code).toBe(2);
    expect((await run(['validate', FIX, '--drop-regions', 'a,b'])).code).toBe(2);
    const missing = await run(['validate', join(FIX, 'nope')]);
    expect(missing.code).toBe(2);
    expect(missing.err).toMatch(/nope: no such folder/);
    expect((await run(['validate', '--help'])).code).toBe(0);
    const noTable = await run([
      'validate',
      join(FIX, 'cohort-bids'),
      '--participants',
      join(FIX, 'missing.tsv'),
    ]);
    expect(noTable.code).toBe(2);
    expect(noTable.err).toMatch(/missing\.tsv: no such participants table/);
    expect((await run(['validate', join(FIX, 'cohort-bids'), '--nodes', 'nope.tsv'])).code).toBe(2);
  });
});
