// Every fixture under test/fixtures/io/readers/ was written by numpy, scipy.io.savemat or pandas
// (or by hand in MATLAB's text layouts) by test/reference/make_io_fixtures.py, which also wrote
// the values each file holds to expected.json. Reading a file must give exactly those values.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { Matrix2D } from '../../electron/io/array.ts';
import { detectDelimiter, parseCell } from '../../electron/io/delimited.ts';
import { readArrayFile, readMatrixFile, readTable2D } from '../../electron/io/read-matrix.ts';
import { InputFileError } from '../../electron/io/errors.ts';

const DIR = join(import.meta.dirname, '..', 'fixtures', 'io', 'readers');
type Json = number | string | null | Json[];
interface Expected {
  values?: Json;
  shape?: number[];
  stack?: boolean;
  rowLabels?: string[];
  colLabels?: string[];
  variable?: string;
  variables?: Record<string, { shape: number[]; values: Json }>;
}
const EXPECTED = JSON.parse(readFileSync(join(DIR, 'expected.json'), 'utf8')) as {
  files: Record<string, Expected>;
};

function decode(x: Json): number {
  if (x === null) return NaN;
  if (x === 'Infinity') return Infinity;
  if (x === '-Infinity') return -Infinity;
  return x as number;
}

/** Exact equality, NaN equal to NaN: the reader must give the bits the tool wrote. */
function expectExactly(m: Matrix2D, rows: Json[]): void {
  expect([m.rows, m.cols]).toEqual([rows.length, (rows[0] as Json[]).length]);
  const want = (rows as Json[][]).flat().map(decode);
  const got = Array.from(m.values);
  const bad = got.findIndex((v, k) => !Object.is(v, want[k]) && !(Number.isNaN(v) && Number.isNaN(want[k])));
  expect(bad, bad >= 0 ? `cell ${bad}: got ${got[bad]}, want ${want[bad]}` : '').toBe(-1);
}

describe('readers give exactly what numpy / scipy / pandas wrote (expected.json by make_io_fixtures.py)', () => {
  for (const [name, exp] of Object.entries(EXPECTED.files)) {
    it(name, async () => {
      const file = join(DIR, name);
      if (exp.variables) {
        for (const [variable, v] of Object.entries(exp.variables)) {
          const m = await readTable2D(file, { variable });
          expectExactly(m, v.values as Json[]);
        }
        await expect(readArrayFile(file)).rejects.toMatchObject({ code: 'mat-variable-ambiguous' });
        await expect(readArrayFile(file, { variable: 'names' })).rejects.toMatchObject({
          code: 'mat-variable-type',
        });
        await expect(readArrayFile(file, { variable: 'nope' })).rejects.toMatchObject({
          code: 'mat-variable-missing',
        });
        return;
      }
      const f = await readArrayFile(file);
      if (exp.variable) expect(f.variable).toBe(exp.variable);
      if (exp.stack) {
        expect(f.kind).toBe('stack');
        if (f.kind !== 'stack') return;
        const slices = exp.values as Json[];
        expect(f.count).toBe(slices.length);
        for (let s = 0; s < slices.length; s++) {
          expectExactly(f.slice(s), slices[s] as Json[]);
          // The slice-by-slice path (a C-order .npy is read at an offset) gives the same.
          expectExactly(await readTable2D(file, { stackIndex: s }), slices[s] as Json[]);
        }
        await expect(readTable2D(file)).rejects.toMatchObject({ code: 'stack-index' });
        await expect(readTable2D(file, { stackIndex: slices.length })).rejects.toMatchObject({
          code: 'stack-index',
        });
        return;
      }
      expect(f.kind).toBe('matrix');
      if (f.kind !== 'matrix') return;
      expectExactly(f.matrix, exp.values as Json[]);
      expect(f.matrix.rowLabels).toEqual(exp.rowLabels ?? null);
      expect(f.matrix.colLabels).toEqual(exp.colLabels ?? null);
    });
  }

  it('covers every format and layout the issue names', () => {
    const names = Object.keys(EXPECTED.files);
    for (const pattern of [
      /v1\.npy$/,
      /v2\.npy$/,
      /v3\.npy$/,
      /fortran/,
      /_be_/,
      /zlib\.mat$/,
      /plain\.mat$/,
    ]) {
      expect(names.some((n) => pattern.test(n))).toBe(true);
    }
  });
});

describe('readMatrixFile (the loopwise diagram door)', () => {
  it('reads .csv, .npy and .mat alike and refuses a rectangle', async () => {
    const a = await readMatrixFile(join(DIR, 'f8_c_v1.npy'));
    expect(a.n).toBe(7);
    const b = await readMatrixFile(join(DIR, 'double_zlib.mat'));
    expect(b.n).toBe(6);
    const c = await readMatrixFile(join(DIR, 'pandas_index_header.csv'));
    expect(c.n).toBe(6);
    await expect(readMatrixFile(join(DIR, 'rect_f8_v1.npy'))).rejects.toMatchObject({ code: 'not-square' });
    await expect(readMatrixFile(join(DIR, 'stack_c_v1.npy'), { stackIndex: 2 })).resolves.toMatchObject({
      n: 5,
    });
  });

  it('names the file and the problem', async () => {
    const err = await readMatrixFile(join(DIR, 'nope.csv')).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(InputFileError);
    expect((err as InputFileError).message).toMatch(/nope\.csv: cannot read \(no such file\)/);
    await expect(readMatrixFile(join(DIR, 'expected.json'))).rejects.toMatchObject({
      code: 'unknown-format',
    });
  });
});

describe('cells and separators', () => {
  it('parses numbers, missing and infinite cells; leaves text undefined', () => {
    expect(parseCell('0.25')).toBe(0.25);
    expect(parseCell('-1e-3')).toBe(-0.001);
    expect(parseCell(' 2.5 ')).toBe(2.5);
    for (const s of ['', 'NaN', 'nan', 'n/a', 'N/A', 'NA', ' ']) expect(parseCell(s)).toBeNaN();
    expect(parseCell('Inf')).toBe(Infinity);
    expect(parseCell('-Infinity')).toBe(-Infinity);
    for (const s of ['abc', '0x1F', '0,5', '1.2.3']) expect(parseCell(s)).toBeUndefined();
  });

  it('detects the separator from the first lines', () => {
    expect(detectDelimiter('a\tb\n1\t2\n')).toBe('\t');
    expect(detectDelimiter('0,5;0,25\n0,1;1,0\n')).toBe(';');
    expect(detectDelimiter('1,2,3\n4,5,6\n')).toBe(',');
    expect(detectDelimiter('  1.0e+00  2.0e+00\n  3.0e+00  4.0e+00\n')).toBe('whitespace');
    // A comma inside a quoted label does not count.
    expect(detectDelimiter('"a,b"\t1\n"c"\t2\n')).toBe('\t');
  });
});
