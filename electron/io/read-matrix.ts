/**
 * Reads one square matrix from a file. Placeholder reader for delimited text
 * (comma, tab, semicolon or whitespace); the cohort readers replace it.
 */
import { readFile } from 'node:fs/promises';
import type { SquareMatrix } from '../engine/types.ts';

export class InputFileError extends Error {
  readonly file: string;
  constructor(file: string, message: string) {
    super(`${file}: ${message}`);
    this.name = 'InputFileError';
    this.file = file;
  }
}

export async function readMatrixFile(file: string): Promise<SquareMatrix> {
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch (e) {
    throw new InputFileError(file, `cannot read (${(e as NodeJS.ErrnoException).code ?? String(e)})`);
  }
  const rows = text
    .split(/\r?\n/)
    .map((l) => l.trim())
    .filter((l) => l.length > 0)
    .map((l) => l.split(/[,;\t ]+/));
  const n = rows.length;
  if (n === 0) throw new InputFileError(file, 'empty file');
  const values = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    if (rows[i].length !== n)
      throw new InputFileError(file, `not square: ${n} rows but row ${i + 1} has ${rows[i].length} values`);
    for (let j = 0; j < n; j++) {
      const s = rows[i][j];
      const v = /^(nan|n\/a|na)$/i.test(s)
        ? NaN
        : /^[+-]?inf(inity)?$/i.test(s)
          ? s.startsWith('-')
            ? -Infinity
            : Infinity
          : Number(s);
      if (Number.isNaN(v) && !/^(nan|n\/a|na)$/i.test(s)) {
        throw new InputFileError(file, `row ${i + 1}, column ${j + 1}: '${s}' is not a number`);
      }
      values[i * n + j] = v;
    }
  }
  return { n, values };
}
