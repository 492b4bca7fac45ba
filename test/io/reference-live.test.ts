// Live cross-check: run test/reference/make_io_fixtures.py with this machine's numpy, scipy and
// pandas into a temporary folder, then read every file it wrote and compare with the values it
// says it wrote. Skipped when /usr/bin/python3 with those packages is missing (CI installs them).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { openCohort } from '../../electron/io/cohort.ts';
import { readArrayFile, readTable2D } from '../../electron/io/read-matrix.ts';

const PY = '/usr/bin/python3';
const SCRIPT = join(import.meta.dirname, '..', 'reference', 'make_io_fixtures.py');
const haveTools =
  existsSync(PY) &&
  spawnSync(PY, ['-c', 'import numpy, scipy, pandas, sklearn'], { encoding: 'utf8' }).status === 0;

type Json = number | string | null | Json[];
const decode = (x: Json): number =>
  x === null ? NaN : x === 'Infinity' ? Infinity : x === '-Infinity' ? -Infinity : (x as number);
const same = (a: number, b: number): boolean => Object.is(a, b) || (Number.isNaN(a) && Number.isNaN(b));

describe.skipIf(!haveTools)('fresh fixtures from the reference tools on this machine', () => {
  const out = mkdtempSync(join(tmpdir(), 'loopwise-ref-io-'));
  afterAll(() => rmSync(out, { recursive: true, force: true }));

  it('reads exactly what numpy, scipy.io.savemat and pandas wrote just now', async () => {
    const r = spawnSync(PY, [SCRIPT], {
      env: { ...process.env, LOOPWISE_FIXTURE_OUT: out },
      encoding: 'utf8',
    });
    expect(r.status, r.stderr).toBe(0);
    const { files, tools } = JSON.parse(readFileSync(join(out, 'readers', 'expected.json'), 'utf8')) as {
      files: Record<
        string,
        { values?: Json[]; stack?: boolean; variables?: Record<string, { values: Json[] }> }
      >;
      tools: Record<string, string>;
    };
    expect(Object.keys(tools)).toEqual(['python', 'numpy', 'scipy', 'pandas', 'sklearn']);
    let cells = 0;
    for (const [name, exp] of Object.entries(files)) {
      const file = join(out, 'readers', name);
      const tables: Array<[Json[], Promise<{ values: Float64Array }>]> = [];
      if (exp.variables) {
        for (const [variable, v] of Object.entries(exp.variables))
          tables.push([v.values, readTable2D(file, { variable })]);
      } else if (exp.stack) {
        (exp.values as Json[]).forEach((slice, s) =>
          tables.push([slice as Json[], readTable2D(file, { stackIndex: s })]),
        );
      } else {
        tables.push([
          exp.values as Json[],
          readArrayFile(file).then((f) => (f.kind === 'matrix' ? f.matrix : { values: new Float64Array() })),
        ]);
      }
      for (const [want, got] of tables) {
        const w = (want as Json[][]).flat().map(decode);
        const g = Array.from((await got).values);
        expect(g.length, name).toBe(w.length);
        const bad = g.findIndex((v, k) => !same(v, w[k]));
        expect(bad, `${name} cell ${bad}`).toBe(-1);
        cells += g.length;
      }
    }
    expect(cells).toBeGreaterThan(1000);
    // The malformed corpus written just now gives the same good subjects.
    const expected = JSON.parse(readFileSync(join(out, 'malformed-expected.json'), 'utf8')) as {
      good: string[];
    };
    const report = await openCohort({ dir: join(out, 'malformed') });
    expect(report.subjects.filter((s) => s.usable).map((s) => s.id)).toEqual(expected.good);
  });
});
