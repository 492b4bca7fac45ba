/**
 * Delimited text matrices: .csv, .tsv, .txt with comma, tab, semicolon or whitespace between
 * fields (detected from the first lines), with or without a header row and/or a first column of
 * region names, decimal points only. NaN, nan, NA, n/a and empty cells are missing (NaN);
 * Inf, -Inf, Infinity are infinite. Lines starting with '#' are comments.
 *
 * The file is streamed: comma, tab and semicolon files through papaparse; whitespace-aligned
 * files (MATLAB `save -ascii`, numpy.savetxt) by a line splitter of our own, because runs of
 * spaces are one separator there and papaparse takes a delimiter of fixed width.
 */
import { createReadStream } from 'node:fs';
import { open } from 'node:fs/promises';
import Papa from 'papaparse';
import type { Matrix2D } from './array.ts';
import { InputFileError, fsError } from './errors.ts';

export type Delimiter = ',' | '\t' | ';' | 'whitespace';

const MISSING = new Set(['', 'nan', '-nan', '+nan', 'na', 'n/a', 'null', 'none']);
const POS_INF = new Set(['inf', '+inf', 'infinity', '+infinity']);
const NEG_INF = new Set(['-inf', '-infinity']);

/** A cell as a number, NaN for a missing cell, undefined when it is text. */
export function parseCell(s: string): number | undefined {
  const c = s.charCodeAt(0);
  // Fast path for the common case: a cell that starts like a decimal number.
  if ((c >= 48 && c <= 57) || c === 45 || c === 43 || c === 46) {
    const v = +s;
    if (v === v) {
      // Number() also reads 0x.., 0b.., 0o..; a matrix cell in those forms is a mistake.
      if (c === 48 && s.length > 2) {
        const c1 = s.charCodeAt(1) | 0x20;
        if (c1 === 120 || c1 === 98 || c1 === 111) return undefined;
      }
      return v;
    }
  }
  const t = s.trim().toLowerCase();
  if (MISSING.has(t)) return NaN;
  if (POS_INF.has(t)) return Infinity;
  if (NEG_INF.has(t)) return -Infinity;
  if (t !== s && t.length > 0) {
    const v = Number(t);
    if (v === v && !/[xbo]/.test(t)) return v;
  }
  return undefined;
}

/**
 * The separator of a text sample: tab, then semicolon, then comma, the first that appears on
 * every line; whitespace when none does. Semicolon goes before comma because files that use it
 * are usually written where the comma is the decimal mark.
 */
export function detectDelimiter(sample: string): Delimiter {
  const lines = sample
    .split(/\r?\n|\r/)
    .slice(0, 30)
    .filter((l) => l.trim().length > 0 && !l.startsWith('#'));
  // The last line of a sample may be cut short.
  if (lines.length > 1 && !/[\r\n]\s*$/.test(sample)) lines.pop();
  for (const d of ['\t', ';', ','] as const) {
    if (lines.length > 0 && lines.every((l) => countOutsideQuotes(l, d) > 0)) return d;
  }
  return 'whitespace';
}

function countOutsideQuotes(line: string, d: string): number {
  let k = 0;
  let quoted = false;
  for (let i = 0; i < line.length; i++) {
    const ch = line[i];
    if (ch === '"') quoted = !quoted;
    else if (ch === d && !quoted) k++;
  }
  return k;
}

/**
 * Collects rows of text cells into numbers while they stream by, then decides whether the first
 * row is a header and the first column region names.
 */
class RowSink {
  private row0: string[] | null = null;
  private col0: string[] = [];
  private col0Text = false;
  private width = -1;
  private rows = 0;
  private data = new Float64Array(1024);
  private used = 0;
  private lastAlwaysEmpty = true;
  private othersFilled = false;

  constructor(
    private readonly file: string,
    private readonly squareHint: boolean,
  ) {}

  push(cells: string[]): void {
    if (this.row0 === null) {
      this.row0 = cells;
      return;
    }
    const r = ++this.rows; // 1-based row of the file (row 0 is row0)
    if (this.width < 0) this.width = cells.length;
    else if (cells.length !== this.width) {
      throw new InputFileError(
        this.file,
        `ragged rows: row ${r + 1} has ${cells.length} fields but row ${r} has ${this.width}`,
        'ragged',
        [r, Math.min(cells.length, this.width) - 1],
      );
    }
    if (this.used + cells.length > this.data.length) {
      const grown = new Float64Array(Math.max(this.data.length * 2, this.used + cells.length));
      grown.set(this.data.subarray(0, this.used));
      this.data = grown;
    }
    const first = cells[0];
    this.col0.push(first);
    const v0 = parseCell(first);
    if (v0 === undefined) this.col0Text = true;
    this.data[this.used++] = v0 ?? NaN;
    for (let j = 1; j < cells.length; j++) {
      const v = parseCell(cells[j]);
      if (v === undefined) {
        throw new InputFileError(
          this.file,
          `row ${r + 1}, field ${j + 1}: '${clip(cells[j])}' is not a number${notNumberHint(cells[j])}`,
          'not-a-number',
          [r, j],
        );
      }
      this.data[this.used++] = v;
    }
    if (cells[cells.length - 1].trim() !== '') this.lastAlwaysEmpty = false;
    if (!this.othersFilled) this.othersFilled = cells.some((c, j) => j < cells.length - 1 && c.trim() !== '');
  }

  finish(): Matrix2D {
    const file = this.file;
    if (this.row0 === null) throw new InputFileError(file, 'empty file: no rows', 'empty-file');
    const nrows = this.rows;
    const width = nrows > 0 ? this.width : this.row0.length;
    let r0 = this.row0;
    // A separator at the end of every line makes an empty last column that is not data; a square
    // table whose last column is empty is a dead last region instead.
    const dropLast =
      nrows > 0 &&
      this.lastAlwaysEmpty &&
      this.othersFilled &&
      width > 1 &&
      (r0.length < width || r0[width - 1].trim() === '') &&
      nrows + 1 !== width;
    let w = dropLast ? width - 1 : width;
    if (r0.length > 1 && r0.length === w + 1 && r0[r0.length - 1].trim() === '') r0 = r0.slice(0, -1);
    if (nrows === 0) w = r0.length;
    // A header may lack the corner cell above the region names (R's write.table does that).
    const p0 = r0.map(parseCell);
    const cornerless =
      nrows > 0 &&
      r0.length === w - 1 &&
      (this.col0Text || isIndexRun(this.col0.map(parseCell))) &&
      (p0.some((v) => v === undefined) || isIndexRun(p0));
    if (nrows > 0 && !cornerless && r0.length !== w) {
      throw new InputFileError(
        file,
        `ragged rows: row 1 has ${r0.length} fields but row 2 has ${w}`,
        'ragged',
        [0, Math.min(r0.length, w) - 1],
      );
    }
    let labels = cornerless || this.col0Text;
    let header = cornerless || p0.some((v, j) => v === undefined && !(labels && j === 0));
    if (nrows === 0 && header)
      throw new InputFileError(file, 'has a header row but no data rows', 'empty-file');

    let cols = w - (labels ? 1 : 0);
    let rows = nrows + (header ? 0 : 1);
    // A header or label column of region numbers (0..n−1 or 1..n) is told from data by the table turning square.
    if (
      this.squareHint &&
      !header &&
      rows === cols + 1 &&
      isIndexRun(p0.slice(labels ? 1 : 0, (labels ? 1 : 0) + cols))
    ) {
      header = true;
      rows--;
    }
    if (this.squareHint && !labels && cols === rows + 1) {
      const first = [...(header ? [] : [p0[0]]), ...this.col0.map(parseCell)];
      if (isIndexRun(first)) {
        labels = true;
        cols--;
      }
    }
    if (cols <= 0 || rows <= 0) throw new InputFileError(file, 'empty file: no numeric data', 'empty-file');
    const c0 = labels ? 1 : 0;

    const values = new Float64Array(rows * cols);
    let r = 0;
    if (!header) {
      for (let j = 0; j < cols; j++) {
        const v = p0[c0 + j];
        if (v === undefined) {
          throw new InputFileError(
            file,
            `row 1, field ${c0 + j + 1}: '${clip(r0[c0 + j])}' is not a number${notNumberHint(r0[c0 + j])}`,
            'not-a-number',
            [0, c0 + j],
          );
        }
        values[j] = v;
      }
      r = 1;
    }
    for (let i = 0; i < nrows; i++, r++) {
      values.set(this.data.subarray(i * width + c0, i * width + c0 + cols), r * cols);
    }
    const colLabels = header ? (cornerless ? r0 : r0.slice(c0, c0 + cols)).map((s) => s.trim()) : null;
    const rowLabels = labels ? [...(header ? [] : [r0[0]]), ...this.col0].map((s) => s.trim()) : null;
    return { rows, cols, values, colLabels, rowLabels };
  }
}

function isIndexRun(v: Array<number | undefined>): boolean {
  if (v.length < 2) return false;
  const start = v[0];
  if (start !== 0 && start !== 1) return false;
  return v.every((x, k) => x === start + k);
}

function notNumberHint(s: string): string {
  if (/^\s*[+-]?\d*,\d+\s*$/.test(s)) return ' (a decimal comma? Loopwise reads decimal points only)';
  if (/^\s*[+-]?\d+(\.\d*)?([eE][+-]?\d+)?([,;]\s*[+-]?\d*\.?\d+([eE][+-]?\d+)?)+\s*$/.test(s)) {
    return ' (several numbers in one field: a different separator on this line?)';
  }
  return '';
}

function clip(s: string): string {
  const t = s.replace(/[^\x20-\x7e]/g, '?');
  return t.length > 24 ? t.slice(0, 21) + '...' : t;
}

async function readSample(file: string, bytes: number): Promise<Buffer> {
  let fh;
  try {
    fh = await open(file, 'r');
    const buf = Buffer.alloc(bytes);
    const { bytesRead } = await fh.read(buf, 0, bytes, 0);
    return buf.subarray(0, bytesRead);
  } catch (e) {
    throw fsError(file, e);
  } finally {
    await fh?.close();
  }
}

/**
 * Reads a delimited text file into a table of numbers. With `squareHint` (the default, for
 * matrices) a first row or column of region numbers that would leave the table square is taken
 * as a header or label column; time series are read without it.
 */
export async function readDelimited(
  file: string,
  options: { delimiter?: Delimiter; squareHint?: boolean } = {},
): Promise<Matrix2D> {
  const sample = await readSample(file, 65536);
  if (sample.length === 0) throw new InputFileError(file, 'empty file (0 bytes)', 'empty-file');
  if (sample[0] === 0x1f && sample[1] === 0x8b) {
    throw new InputFileError(file, 'is gzip-compressed; decompress it (gunzip) first', 'bad-format');
  }
  if ((sample[0] === 0xff && sample[1] === 0xfe) || (sample[0] === 0xfe && sample[1] === 0xff)) {
    throw new InputFileError(file, 'is UTF-16 text; save it as UTF-8', 'bad-format');
  }
  if (sample.subarray(0, 4096).includes(0)) {
    throw new InputFileError(file, 'is binary, not delimited text', 'bad-format');
  }
  const text = sample.toString('utf8').replace(/^\uFEFF/, '');
  const d = options.delimiter ?? detectDelimiter(text);
  const sink = new RowSink(file, options.squareHint ?? true);
  if (d === 'whitespace') await streamWhitespace(file, sink);
  else await streamPapa(file, d, sink);
  return sink.finish();
}

function streamPapa(file: string, delimiter: string, sink: RowSink): Promise<void> {
  return new Promise((resolve, reject) => {
    // 64 KiB chunks: each chunk's cells are garbage once pushed; bigger chunks keep more of them
    // alive at once and grow the young generation (a 10 MB matrix peaked 20 MB higher with 1 MiB).
    const stream = createReadStream(file, { encoding: 'utf8', highWaterMark: 1 << 16 });
    let failed: unknown = null;
    let first = true;
    stream.on('error', (e) => reject(fsError(file, e)));
    Papa.parse<string[]>(stream, {
      delimiter,
      comments: '#',
      skipEmptyLines: true,
      chunk(results, parser) {
        if (failed) return;
        try {
          for (const row of results.data) {
            if (first) {
              first = false;
              if (row.length > 0) row[0] = row[0].replace(/^\uFEFF/, '');
            }
            // A line of blanks only is no row; a line of empty fields is a row of missing values.
            if (row.length === 1 && row[0].trim() === '') continue;
            sink.push(row);
          }
        } catch (e) {
          failed = e;
          parser.abort();
          stream.destroy();
        }
      },
      complete() {
        if (failed) reject(failed);
        else resolve();
      },
      error(e: Error) {
        reject(failed ?? new InputFileError(file, `cannot parse (${e.message})`, 'unreadable'));
      },
    });
  });
}

async function streamWhitespace(file: string, sink: RowSink): Promise<void> {
  const stream = createReadStream(file, { encoding: 'utf8', highWaterMark: 1 << 20 });
  let rest = '';
  let first = true;
  const take = (line: string): void => {
    const t = line.trim();
    if (t.length === 0 || t.startsWith('#') || t.startsWith('%')) return;
    sink.push((first ? t.replace(/^\uFEFF/, '') : t).split(/\s+/));
    first = false;
  };
  try {
    for await (const chunk of stream) {
      const text = rest + (chunk as string);
      const lines = text.split(/\r?\n|\r/);
      rest = lines.pop() ?? '';
      for (const line of lines) take(line);
    }
  } catch (e) {
    if (e instanceof InputFileError) throw e;
    throw fsError(file, e);
  } finally {
    stream.destroy();
  }
  take(rest);
}
