/**
 * Delimited text matrices: .csv, .tsv, .txt with comma, tab, semicolon or whitespace between
 * fields (detected from the first lines), with or without a header row and/or a first column of
 * region names, decimal points only. NaN, nan, NA, n/a and empty cells are missing (NaN);
 * Inf, -Inf, Infinity are infinite. Lines starting with '#' are comments.
 *
 * The file is streamed line by line, so every message names the line of the file as an editor
 * shows it (comment and blank lines counted). Fields may be quoted as RFC 4180 says (a quoted
 * field may hold the separator, doubled quotes and line breaks); in whitespace-aligned files
 * (MATLAB `save -ascii`, numpy.savetxt) a run of blanks is one separator. The text encoding is
 * settled by text.ts: a file that is not UTF-8 is read as Windows-1252 with a note, never with
 * replacement characters.
 */
import { createReadStream } from 'node:fs';
import { open } from 'node:fs/promises';
import { StringDecoder } from 'node:string_decoder';
import type { Matrix2D } from './array.ts';
import { InputFileError, fsError } from './errors.ts';
import { Utf8Scanner, excerpt, replacementNote, settleEncoding, sniffEncoding } from './text.ts';
import type { TextEncoding } from './text.ts';

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
  const lines = sample.split(/\r?\n|\r/);
  // The last line of a sample may be cut short.
  if (lines.length > 1 && !/[\r\n]\s*$/.test(sample)) lines.pop();
  // A quoted field may hold line breaks: lines join into records while a quote is open.
  const records: string[] = [];
  let open: string | null = null;
  for (const l of lines) {
    if (open === null && (l.trim().length === 0 || l.startsWith('#'))) continue;
    const r: string = open === null ? l : `${open}\n${l}`;
    if ((r.match(/"/g)?.length ?? 0) % 2 === 1) open = r;
    else {
      open = null;
      records.push(r);
      if (records.length === 30) break;
    }
  }
  // A quote still open at the end of the sample says nothing about the separator.
  if (open !== null && records.length === 0) records.push(open);
  for (const d of ['\t', ';', ','] as const) {
    if (records.length > 0 && records.every((l) => countOutsideQuotes(l, d) > 0)) return d;
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
 * row is a header and the first column region names. Every row remembers its line in the file.
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
  /** The line of the file each row came from (index 0: the first row). */
  private lines: number[] = [];

  constructor(
    private readonly file: string,
    private readonly squareHint: boolean,
  ) {}

  push(cells: string[], line: number): void {
    this.lines.push(line);
    if (this.row0 === null) {
      this.row0 = cells;
      return;
    }
    const r = ++this.rows; // 0-based row among the file's rows (row 0 is row0)
    if (this.width < 0) this.width = cells.length;
    else if (cells.length !== this.width) {
      // Line 2 alone differs from lines 1 and 3: line 2 is the odd one.
      if (r === 2 && cells.length === this.row0.length) {
        throw new InputFileError(
          this.file,
          `ragged rows: line ${this.lines[1]} has ${this.width} fields but lines ${this.lines[0]} and ${line} have ${cells.length}`,
          'ragged',
          [1, Math.min(cells.length, this.width) - 1],
        );
      }
      throw new InputFileError(
        this.file,
        `ragged rows: line ${line} has ${cells.length} fields but line ${this.lines[r - 1]} has ${this.width}`,
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
      if (v === undefined) throw this.notANumber(r, j, cells[j]);
      this.data[this.used++] = v;
    }
    if (cells[cells.length - 1].trim() !== '') this.lastAlwaysEmpty = false;
    if (!this.othersFilled) this.othersFilled = cells.some((c, j) => j < cells.length - 1 && c.trim() !== '');
  }

  /** A cell that is no number: its line and column as an editor shows them, and a short excerpt. */
  private notANumber(r: number, j: number, text: string): InputFileError {
    return new InputFileError(
      this.file,
      `line ${this.lines[r]}, column ${j + 1}: '${excerpt(text)}' is not a number${notNumberHint(text)}`,
      'not-a-number',
      [r, j],
    );
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
    const c0v = this.col0.map(parseCell);
    const cornerless =
      nrows > 0 &&
      r0.length === w - 1 &&
      (this.col0Text || isIndexRun(c0v)) &&
      (p0.some((v) => v === undefined) || isIndexRun(p0));
    if (nrows > 0 && !cornerless && r0.length !== w) {
      throw new InputFileError(
        file,
        `ragged rows: line ${this.lines[0]} has ${r0.length} fields but line ${this.lines[1]} has ${w}`,
        'ragged',
        [0, Math.min(r0.length, w) - 1],
      );
    }
    // A first column of numbers with a few words among them is data with typos, not region names;
    // likewise a first row of numbers with a few words after its first cell is no header.
    const headerLike = p0.slice(1).some((v) => v === undefined);
    const dataRows = nrows + (headerLike ? 0 : 1);
    if (this.col0Text && !cornerless) {
      const text = c0v.filter((v) => v === undefined).length;
      // Square with the first column as data, not square without it: that column is data.
      const squareAsData = this.squareHint && w === dataRows && w - 1 !== dataRows;
      if (text < c0v.length / 2 || (squareAsData && text < c0v.length)) {
        const i = c0v.findIndex((v) => v === undefined);
        throw this.notANumber(i + 1, 0, this.col0[i]);
      }
    }
    if (!cornerless && p0.length > 2 && headerLike) {
      const text = p0.slice(1).filter((v) => v === undefined).length;
      const cols = w - (this.col0Text ? 1 : 0);
      const squareAsData = this.squareHint && nrows + 1 === cols && nrows !== cols;
      if (text < (p0.length - 1) / 2 || (squareAsData && text < p0.length - 1)) {
        const j = p0.findIndex((v, k) => k > 0 && v === undefined);
        throw this.notANumber(0, j, r0[j]);
      }
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
      const first = [...(header ? [] : [p0[0]]), ...c0v];
      if (isIndexRun(first)) {
        labels = true;
        cols--;
      }
    }
    // Time series: a first column that steps evenly (0, 1, 2, … or 0, 2, 4, … seconds) looks like a
    // time or row index, as no region's signal is a straight line. It is read as given, with a word.
    let indexNote: string | null = null;
    if (!this.squareHint && !labels && cols >= 2 && rows >= 3) {
      const t = [...(header ? [] : [p0[0]]), ...c0v] as number[];
      const step = t[1] - t[0];
      const even = t.every((x, k) => Math.abs(x - (t[0] + k * step)) <= 1e-9 * Math.max(1, Math.abs(x)));
      if (step !== 0 && Number.isFinite(step) && even) {
        indexNote = `column 1 steps evenly from ${t[0]} to ${t[t.length - 1]}, like a time or row index, yet is read as region 1; remove the column if it is an index`;
      }
    }
    if (cols <= 0 || rows <= 0) throw new InputFileError(file, 'empty file: no numeric data', 'empty-file');
    const c0 = labels ? 1 : 0;

    const values = new Float64Array(rows * cols);
    let r = 0;
    if (!header) {
      for (let j = 0; j < cols; j++) {
        const v = p0[c0 + j];
        if (v === undefined) throw this.notANumber(0, c0 + j, r0[c0 + j]);
        values[j] = v;
      }
      r = 1;
    }
    for (let i = 0; i < nrows; i++, r++) {
      values.set(this.data.subarray(i * width + c0, i * width + c0 + cols), r * cols);
    }
    const colLabels = header ? (cornerless ? r0 : r0.slice(c0, c0 + cols)).map((s) => s.trim()) : null;
    const rowLabels = labels ? [...(header ? [] : [r0[0]]), ...this.col0].map((s) => s.trim()) : null;
    const m: Matrix2D = { rows, cols, values, colLabels, rowLabels };
    if (indexNote) m.notes = [{ code: 'index-column', message: indexNote }];
    return m;
  }
}

function isIndexRun(v: Array<number | undefined>): boolean {
  if (v.length < 2) return false;
  const start = v[0];
  if (start !== 0 && start !== 1) return false;
  return v.every((x, k) => x === start + k);
}

function notNumberHint(s: string): string {
  const t = s.trim();
  if (/^[+-]?\d*,\d+$/.test(t)) return ' (a decimal comma? Loopwise reads decimal points only)';
  if (/^[+-]?\d+(\.\d*)?([eE][+-]?\d+)?([,;]\s*[+-]?\d*\.?\d+([eE][+-]?\d+)?)+$/.test(t)) {
    return ' (several numbers in one field: a different separator on this line?)';
  }
  if (/^[+-]?0[xXbBoO][0-9a-fA-F]+$/.test(t))
    return ' (hexadecimal, binary or octal: Loopwise reads decimal numbers only)';
  if (/^[+-]?(\d+\.?\d*|\.\d+)[dD][+-]?\d+$/.test(t)) return " (a Fortran exponent? write 'e', as in 1e-3)";
  return '';
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
 * Splits one record at the separator `d`, with RFC 4180 quoting: a field that starts with a
 * double quote runs to the next lone quote and may hold the separator, doubled quotes ("") and
 * line breaks. Returns null when a quoted field is still open at the end (the record goes on on
 * the next line).
 */
export function splitRecord(s: string, d: string): string[] | null {
  if (!s.includes('"')) return s.split(d);
  const out: string[] = [];
  let i = 0;
  for (;;) {
    if (s[i] === '"') {
      let field = '';
      let j = i + 1;
      for (;;) {
        const q = s.indexOf('"', j);
        if (q < 0) return null;
        field += s.slice(j, q);
        if (s[q + 1] === '"') {
          field += '"';
          j = q + 2;
        } else {
          j = q + 1;
          break;
        }
      }
      // Anything after the closing quote, up to the separator, still belongs to the field.
      const e = s.indexOf(d, j);
      out.push(field + s.slice(j, e < 0 ? s.length : e));
      if (e < 0) return out;
      i = e + 1;
    } else {
      const e = s.indexOf(d, i);
      if (e < 0) {
        out.push(s.slice(i));
        return out;
      }
      out.push(s.slice(i, e));
      i = e + 1;
    }
  }
}

/** Cuts decoded text into lines (\n, \r\n or \r) across chunk boundaries, counting them from 1. */
export class LineSplitter {
  private rest = '';
  private no = 0;
  constructor(private readonly emit: (line: string, no: number) => void) {}
  feed(text: string): void {
    let s = this.rest + text;
    // A chunk may end between the \r and the \n of one line break.
    const held = s.endsWith('\r');
    if (held) s = s.slice(0, -1);
    const parts = s.split(/\r\n|\n|\r/);
    this.rest = parts.pop()! + (held ? '\r' : '');
    for (const line of parts) this.emit(line, ++this.no);
  }
  end(): void {
    const last = this.rest.replace(/\r$/, '');
    if (last !== '' || this.rest !== '') this.emit(last, ++this.no);
    this.rest = '';
  }
}

/** A quoted field may run over this many lines before the file is called malformed. */
const MAX_RECORD_LINES = 1000;

/**
 * Turns lines into records of fields: skips blank and comment lines ('#'; also '%' in
 * whitespace-aligned files), joins lines inside a quoted field, and hands each record to `take`
 * with the line it starts on.
 */
export class RecordAssembler {
  private pending: string | null = null;
  private pendingLine = 0;
  private pendingCount = 0;
  constructor(
    private readonly file: string,
    private readonly d: Delimiter,
    private readonly take: (cells: string[], line: number) => void,
    /** Lines starting with '#' are comments (matrices); tables have none. */
    private readonly comments = true,
  ) {}
  /** The first line that holds U+FFFD: text garbled before it reached us. */
  replacement: { line: number; text: string } | null = null;
  line(text: string, no: number): void {
    if (this.replacement === null && text.includes('\uFFFD')) this.replacement = { line: no, text };
    if (this.pending === null) {
      const t = this.d === 'whitespace' ? text.trim() : text;
      const lead = t.trimStart();
      if (lead === '') return;
      if (this.comments && (lead.startsWith('#') || (this.d === 'whitespace' && lead.startsWith('%'))))
        return;
      if (this.d === 'whitespace') {
        this.take(t.split(/\s+/), no);
        return;
      }
      const cells = splitRecord(text, this.d);
      if (cells) this.take(cells, no);
      else {
        this.pending = text;
        this.pendingLine = no;
        this.pendingCount = 1;
      }
      return;
    }
    this.pending += '\n' + text;
    this.pendingCount++;
    const cells = splitRecord(this.pending, this.d as string);
    if (cells) {
      this.pending = null;
      this.take(cells, this.pendingLine);
    } else if (this.pendingCount > MAX_RECORD_LINES) this.unclosed();
  }
  end(): void {
    if (this.pending !== null) this.unclosed();
  }
  private unclosed(): never {
    throw new InputFileError(
      this.file,
      `line ${this.pendingLine}: a quoted field (starting with ") is never closed`,
      'unclosed-quote',
      undefined,
    );
  }
}

/** Signals that the bytes are not UTF-8 and the file must be read again as Windows-1252. */
const NOT_UTF8 = Symbol('not UTF-8');

/**
 * Streams a file's text through `onText`, decoding it as `encoding`. With a scanner (files without
 * a byte-order mark) the bytes are checked as they pass: a first pass as UTF-8 stops at the first
 * byte that is not.
 */
export async function streamText(
  file: string,
  encoding: TextEncoding,
  scan: Utf8Scanner | null,
  onText: (text: string) => void,
): Promise<void> {
  // 64 KiB chunks: a chunk's cells are garbage once pushed, and smaller chunks keep the young
  // generation small (a 10 MB matrix peaked 10 MB lower than with 1 MiB chunks).
  const stream = createReadStream(file, { highWaterMark: 1 << 16 });
  // Node's StringDecoder is the faster for UTF-8 and UTF-16LE; TextDecoder knows the others.
  const dec =
    encoding === 'utf-8' || encoding === 'utf-16le'
      ? new StringDecoder(encoding === 'utf-8' ? 'utf8' : 'utf16le')
      : null;
  const textDec = dec ? null : new TextDecoder(encoding);
  let first = true;
  const emit = (t: string): void => {
    if (first && t.length > 0) {
      first = false;
      // StringDecoder keeps a byte-order mark; it is no part of the text.
      if (t.charCodeAt(0) === 0xfeff) t = t.slice(1);
    }
    onText(t);
  };
  try {
    for await (const chunk of stream) {
      const bytes = chunk as Buffer;
      if (scan) {
        scan.feed(bytes);
        if (encoding === 'utf-8' && scan.invalid) throw NOT_UTF8;
      }
      emit(dec ? dec.write(bytes) : textDec!.decode(bytes, { stream: true }));
    }
    if (scan) {
      scan.end();
      if (encoding === 'utf-8' && scan.invalid) throw NOT_UTF8;
    }
    emit(dec ? dec.end() : textDec!.decode());
  } catch (e) {
    if (e instanceof InputFileError || e === NOT_UTF8) throw e;
    throw fsError(file, e);
  } finally {
    stream.destroy();
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
  const sniffed = sniffEncoding(file, sample);
  let encoding: TextEncoding = sniffed === 'scan' ? 'utf-8' : sniffed;
  for (;;) {
    const scan = sniffed === 'scan' ? new Utf8Scanner() : null;
    const d = options.delimiter ?? detectDelimiter(new TextDecoder(encoding).decode(sample));
    const sink = new RowSink(file, options.squareHint ?? true);
    const records = new RecordAssembler(file, d, (cells, line) => sink.push(cells, line));
    const lines = new LineSplitter((line, no) => records.line(line, no));
    try {
      await streamText(file, encoding, scan, (text) => lines.feed(text));
    } catch (e) {
      if (e === NOT_UTF8 && encoding === 'utf-8') {
        encoding = 'windows-1252';
        continue;
      }
      throw e;
    }
    lines.end();
    records.end();
    const note = scan ? settleEncoding(file, scan).note : null;
    const m = sink.finish();
    const garbled = records.replacement ? replacementNote(records.replacement) : null;
    const notes = [note, garbled].filter((x): x is string => x !== null);
    if (notes.length > 0)
      m.notes = [...notes.map((message) => ({ code: 'text-encoding', message })), ...(m.notes ?? [])];
    return m;
  }
}
