/**
 * Writes a corpus of malformed and tricky input files and says, for each, what reading it must
 * give: the values (a correct read) or the one finding (code, and the words and place of its
 * message). Byte layouts follow the published formats: the NumPy .npy format description
 * (numpy.lib.format: magic, version, little-endian header length, dict literal padded to a
 * multiple of 64 bytes with '\n' last), MathWorks' "MAT-File Format" (level 5: 128-byte header,
 * tagged elements, miMATRIX with array flags, dimensions, name and real part, miCOMPRESSED as a
 * zlib stream), RFC 4180 for quoted CSV fields, and the Windows-1252 / UTF-16 code pages.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { deflateSync, gzipSync } from 'node:zlib';

/** A 3 × 3 correlation matrix whose values print exactly in decimal. */
export const R3 = [1, 0.5, -0.25, 0.5, 1, 0.125, -0.25, 0.125, 1];

export type Outcome =
  /** readTable2D gives these values (row-major), shape and labels; `notes` lists reader note codes. */
  | {
      kind: 'read';
      rows: number;
      cols: number;
      values: number[];
      rowLabels?: string[] | null;
      colLabels?: string[] | null;
      notes?: string[];
      /** Words the first reader note must contain. */
      note?: RegExp;
      pick?: { variable?: string; stackIndex?: number; timeSeries?: boolean };
    }
  /** Reading (readMatrixFile, or readTable2D with `pick`) fails with this code and message. */
  | {
      kind: 'error';
      code: string;
      message: RegExp;
      where?: [number, number];
      pick?: { variable?: string; stackIndex?: number; timeSeries?: boolean };
    }
  /** Reads, then checkSquare (correlation input) files this finding. */
  | { kind: 'qc'; code: string; severity: 'error' | 'warning'; message: RegExp }
  /** A participants/nodes table: the header, the rows kept, and the findings filed. */
  | {
      kind: 'table';
      table: 'participants' | 'nodes';
      header: string[];
      rows: string[][];
      findings: Array<{
        code: string;
        severity: 'error' | 'warning';
        message: RegExp;
        subject?: string | null;
      }>;
    };

export interface Case {
  name: string;
  bytes: Buffer;
  expect: Outcome;
}

const csv = (rows: Array<Array<string | number>>, sep = ',', eol = '\n'): string =>
  rows.map((r) => r.join(sep)).join(eol) + eol;
const rowsOf = (v: number[], n: number): number[][] =>
  Array.from({ length: n }, (_, i) => v.slice(i * n, (i + 1) * n));
const text = (s: string): Buffer => Buffer.from(s, 'utf8');
const read = (values = R3, extra: Partial<Extract<Outcome, { kind: 'read' }>> = {}): Outcome => ({
  kind: 'read',
  rows: Math.round(Math.sqrt(values.length)),
  cols: Math.round(Math.sqrt(values.length)),
  values,
  ...extra,
});
const error = (
  code: string,
  message: RegExp,
  extra: { where?: [number, number]; pick?: object } = {},
): Outcome => ({
  kind: 'error',
  code,
  message,
  ...extra,
});

// ---- .npy (numpy.lib.format) ----

function npy(
  descr: string,
  shape: number[],
  data: Buffer,
  o: { fortran?: boolean; version?: 1 | 2; dict?: string } = {},
): Buffer {
  const version = o.version ?? 1;
  const dict =
    o.dict ??
    `{'descr': '${descr}', 'fortran_order': ${o.fortran ? 'True' : 'False'}, 'shape': (${shape.join(', ')}${shape.length === 1 ? ',' : ''}), }`;
  const pre = version === 1 ? 10 : 12;
  const total = Math.ceil((pre + dict.length + 1) / 64) * 64;
  const header = dict.padEnd(total - pre - 1, ' ') + '\n';
  const lead = Buffer.alloc(pre);
  Buffer.from([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, version, 0]).copy(lead);
  if (version === 1) lead.writeUInt16LE(header.length, 8);
  else lead.writeUInt32LE(header.length, 8);
  return Buffer.concat([lead, Buffer.from(header, 'latin1'), data]);
}

function f64(values: number[], le = true): Buffer {
  const b = Buffer.alloc(values.length * 8);
  values.forEach((v, k) => (le ? b.writeDoubleLE(v, k * 8) : b.writeDoubleBE(v, k * 8)));
  return b;
}
function f32(values: number[], le = true): Buffer {
  const b = Buffer.alloc(values.length * 4);
  values.forEach((v, k) => (le ? b.writeFloatLE(v, k * 4) : b.writeFloatBE(v, k * 4)));
  return b;
}
/** Column-major copy of a row-major n × m table. */
const fortran = (v: number[], n: number, m: number): number[] =>
  Array.from({ length: n * m }, (_, k) => v[(k % n) * m + Math.floor(k / n)]);

// ---- .mat (level 5) ----

const MI = {
  INT8: 1,
  UINT8: 2,
  INT16: 3,
  INT32: 5,
  UINT32: 6,
  DOUBLE: 9,
  MATRIX: 14,
  COMPRESSED: 15,
} as const;
const CLASS = { cell: 1, struct: 2, double: 6, int16: 10 } as const;

function matHeader(le = true): Buffer {
  const h = Buffer.alloc(128, 0x20);
  h.write('MATLAB 5.0 MAT-file, Platform: GLNXA64, Created on: Wed Dec  2 12:00:00 2026', 0, 'latin1');
  h.fill(0, 116, 124);
  if (le) {
    h.writeUInt16LE(0x0100, 124);
    h.write('IM', 126, 'latin1');
  } else {
    h.writeUInt16BE(0x0100, 124);
    h.write('MI', 126, 'latin1');
  }
  return h;
}

function element(type: number, data: Buffer, le = true, pad = true): Buffer {
  const tag = Buffer.alloc(8);
  if (le) {
    tag.writeUInt32LE(type, 0);
    tag.writeUInt32LE(data.length, 4);
  } else {
    tag.writeUInt32BE(type, 0);
    tag.writeUInt32BE(data.length, 4);
  }
  const padded = pad ? Math.ceil(data.length / 8) * 8 : data.length;
  return Buffer.concat([tag, data, Buffer.alloc(padded - data.length)]);
}

function int32s(v: number[], le = true): Buffer {
  const b = Buffer.alloc(v.length * 4);
  v.forEach((x, k) => (le ? b.writeInt32LE(x, k * 4) : b.writeInt32BE(x, k * 4)));
  return b;
}

/** One miMATRIX element: `values` column-major, stored as doubles (or int16 for that class). */
function matrixElement(
  name: string,
  dims: number[],
  values: number[],
  o: { cls?: number; complex?: boolean; le?: boolean } = {},
): Buffer {
  const le = o.le ?? true;
  const cls = o.cls ?? CLASS.double;
  const flags = Buffer.alloc(8);
  const word = cls | (o.complex ? 0x0800 : 0);
  if (le) flags.writeUInt32LE(word, 0);
  else flags.writeUInt32BE(word, 0);
  let real: Buffer;
  if (cls === CLASS.int16) {
    real = Buffer.alloc(values.length * 2);
    values.forEach((v, k) => (le ? real.writeInt16LE(v, k * 2) : real.writeInt16BE(v, k * 2)));
    real = element(MI.INT16, real, le);
  } else real = element(MI.DOUBLE, f64(values, le), le);
  const parts = [
    element(MI.UINT32, flags, le),
    element(MI.INT32, int32s(dims, le), le),
    element(MI.INT8, Buffer.from(name, 'latin1'), le),
    real,
  ];
  if (o.complex)
    parts.push(
      element(
        MI.DOUBLE,
        f64(
          values.map(() => 0),
          le,
        ),
        le,
      ),
    );
  return element(MI.MATRIX, Buffer.concat(parts), le);
}

const compressed = (inner: Buffer): Buffer => element(MI.COMPRESSED, deflateSync(inner), true, false);
const mat = (...elements: Buffer[]): Buffer => Buffer.concat([matHeader(), ...elements]);

// ---- the corpus ----

export function corpus(): Case[] {
  const cases: Case[] = [];
  const add = (name: string, bytes: Buffer | string, expect: Outcome): void => {
    cases.push({ name, bytes: typeof bytes === 'string' ? text(bytes) : bytes, expect });
  };
  const R = rowsOf(R3, 3);
  const labels = ['L_M1', 'R_M1', 'Precuneus'];

  // Separators, headers, label columns.
  add('comma.csv', csv(R), read());
  add('tab.tsv', csv(R, '\t'), read());
  add('semicolon.csv', csv(R, ';'), read());
  add('aligned.txt', R.map((r) => r.map((x) => String(x).padStart(8)).join('  ')).join('\n') + '\n', read());
  add('header.csv', csv([labels, ...R]), read(R3, { colLabels: labels, rowLabels: null }));
  add(
    'header-and-labels.csv',
    csv([['', ...labels], ...R.map((r, i) => [labels[i], ...r])]),
    read(R3, { colLabels: labels, rowLabels: labels }),
  );
  add(
    'cornerless-header.tsv',
    csv([labels, ...R.map((r, i) => [labels[i], ...r])], '\t'),
    read(R3, { colLabels: labels, rowLabels: labels }),
  );
  add(
    'labels-only.csv',
    csv(R.map((r, i) => [labels[i], ...r])),
    read(R3, { rowLabels: labels, colLabels: null }),
  );
  add('index-header.csv', csv([[0, 1, 2], ...R]), read(R3, { colLabels: ['0', '1', '2'] }));
  add('trailing-separator.csv', R.map((r) => r.join(',') + ',').join('\n') + '\n', read());
  add(
    'quoted-labels.csv',
    csv([
      ['""', '"L, M1"', '"R ""M1"""', 'Precuneus'],
      ...R.map((r, i) => [`"${['L, M1', 'R "M1"', 'Precuneus'][i].replace(/"/g, '""')}"`, ...r]),
    ]),
    read(R3, { colLabels: ['L, M1', 'R "M1"', 'Precuneus'], rowLabels: ['L, M1', 'R "M1"', 'Precuneus'] }),
  );
  add('no-final-newline.csv', csv(R).trimEnd(), read());
  add(
    'aligned-header-percent-comments.txt',
    '% saved by MATLAB\n' +
      ['A B C', ...R.map((r) => r.map((x) => String(x).padStart(7)).join(' '))].join('\n') +
      '\n',
    read(R3, { colLabels: ['A', 'B', 'C'], rowLabels: null }),
  );
  add(
    'semicolon-labels.csv',
    csv([['', ...labels], ...R.map((r, i) => [labels[i], ...r])], ';'),
    read(R3, { colLabels: labels, rowLabels: labels }),
  );
  add(
    'tab-labels-trailing-tab.tsv',
    R.map((r, i) => [labels[i], ...r].join('\t') + '\t').join('\n') + '\n',
    read(R3, { rowLabels: labels, colLabels: null }),
  );
  add(
    'index-label-column.csv',
    csv(R.map((r, i) => [i + 1, ...r])),
    read(R3, { rowLabels: ['1', '2', '3'], colLabels: null }),
  );
  add('whitespace-tabs-and-spaces.txt', R.map((r) => r.join(' \t ')).join('\n') + '\n', read());

  // Line ends, byte-order marks, encodings.
  add(
    'bom-utf8.csv',
    Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), text(csv([labels, ...R]))]),
    read(R3, { colLabels: labels }),
  );
  add('crlf.csv', csv(R, ',', '\r\n'), read());
  add('cr-only.csv', csv(R, ',', '\r'), read());
  add(
    'comments-and-blank-lines.csv',
    '# exported by hand\n\n' + csv(R).replace('\n', '\n\n# note\n'),
    read(),
  );
  const accented = ['Précuneus', 'Insula_ä', 'Cingulum'];
  const withAccents = csv([['', ...accented], ...R.map((r, i) => [accented[i], ...r])]);
  add(
    'utf16le-bom.csv',
    Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(withAccents, 'utf16le')]),
    read(R3, { colLabels: accented, rowLabels: accented }),
  );
  add(
    'utf16be-bom.csv',
    Buffer.concat([Buffer.from([0xfe, 0xff]), Buffer.from(withAccents, 'utf16le').swap16()]),
    read(R3, { colLabels: accented, rowLabels: accented }),
  );
  add(
    'cp1252-labels.csv',
    Buffer.from(withAccents, 'latin1'),
    read(R3, {
      colLabels: accented,
      rowLabels: accented,
      notes: ['text-encoding'],
      note: /is not UTF-8 \(0xE9 at line 1, byte offset 3: .*Précuneus.*\); read as Windows-1252/,
    }),
  );
  add(
    'cp1252-cr-line-ends.csv',
    Buffer.from(withAccents.replace(/\n/g, '\r').replace('Insula_ä,0.5', 'Insula_\u00e4,0.5'), 'latin1'),
    read(R3, {
      colLabels: accented,
      rowLabels: accented,
      notes: ['text-encoding'],
      note: /is not UTF-8 \(0xE9 at line 1, byte offset 3/,
    }),
  );
  add(
    'cp1252-crlf-third-line.csv',
    Buffer.from('"",A,B\r\nA,1,0.5\r\nB\u00e9,0.5,1\r\n', 'latin1'),
    read([1, 0.5, 0.5, 1], {
      colLabels: ['A', 'B'],
      rowLabels: ['A', 'Bé'],
      notes: ['text-encoding'],
      note: /is not UTF-8 \(0xE9 at line 3, byte offset 18: 'Bé,0.5,1'\)/,
    }),
  );
  add(
    'mixed-encodings.csv',
    Buffer.concat([text('"Précuneus",1,0.5\n'), Buffer.from('"Précuneus2",0.5,1\n', 'latin1')]),
    error(
      'bad-encoding',
      /mixes text encodings: 0xE9 at line 2, byte offset \d+ is not UTF-8, but line 1 holds UTF-8/,
    ),
  );
  add(
    'not-cp1252.csv',
    Buffer.concat([text('a,b\n1,0.5\n0.5,1\nx'), Buffer.from([0x81]), text('\n')]),
    error('bad-encoding', /neither UTF-8 nor Windows-1252: byte 0x81 at line 4/),
  );
  add(
    'already-garbled-labels.csv',
    csv([['', 'Montr\uFFFDal', 'B', 'C'], ...R.map((r, i) => [['Montr\uFFFDal', 'B', 'C'][i], ...r])]),
    read(R3, {
      colLabels: ['Montr\uFFFDal', 'B', 'C'],
      rowLabels: ['Montr\uFFFDal', 'B', 'C'],
      notes: ['text-encoding'],
      note: /^line 1 holds the replacement character U\+FFFD/,
    }),
  );
  add(
    'utf16le-no-bom.csv',
    Buffer.from(csv(R), 'utf16le'),
    error('bad-encoding', /UTF-16 \(little-endian\) text without a byte-order mark/),
  );
  add(
    'binary-junk.tsv',
    Buffer.from(Array.from({ length: 600 }, (_, k) => (k * 37 + 11) % 256)),
    error('bad-format', /is binary, not delimited text \(a NUL byte at byte offset \d+\)/),
  );
  add('gzipped.csv', gzipSync(csv(R)), error('bad-format', /gzip-compressed/));

  // Empty and degenerate files.
  add('empty.csv', '', error('empty-file', /empty file \(0 bytes\)/));
  add('blank-lines-only.csv', '\n  \n\r\n', error('empty-file', /empty file: no rows/));
  add('header-only.csv', 'a,b,c\n', error('empty-file', /header row but no data rows/));
  add('comments-only.txt', '# nothing\n% here\n', error('empty-file', /no rows/));

  // Ragged, typos, cells that are no numbers: the line and column as an editor shows them.
  add(
    'ragged.csv',
    '1,0.5,-0.25\n0.5,1,0.125,9\n-0.25,0.125,1\n',
    error('ragged', /ragged rows: line 2 has 4 fields but lines 1 and 3 have 3/),
  );
  add(
    'ragged-after-comments.csv',
    '# c\n\n1,0.5,-0.25\n0.5,1,0.125\n\n-0.25,0.125\n',
    error('ragged', /line 6 has 2 fields but line 4 has 3/),
  );
  add(
    'hex-typo-inner.csv',
    '1,0.5,-0.25\n0.5,1,0x1f\n-0.25,0.125,1\n',
    error('not-a-number', /line 2, column 3: '0x1f' is not a number \(hexadecimal/, { where: [1, 2] }),
  );
  add(
    'hex-typo-first-column.csv',
    '1,0.5,-0.25\n0x1f,1,0.125\n-0.25,0.125,1\n',
    error('not-a-number', /line 2, column 1: '0x1f' is not a number \(hexadecimal/),
  );
  add(
    'typo-first-row.csv',
    '# exported\n1,1e-3x,-0.25\n0.5,1,0.125\n-0.25,0.125,1\n',
    error('not-a-number', /line 2, column 2: '1e-3x' is not a number/),
  );
  add(
    'typo-first-column-time-series.csv',
    '0.1,0.2,0.3\n0.2,0.1,0.5\nO.3,0.4,0.1\n0.5,0.3,0.2\n0.2,0.2,0.6\n',
    error('not-a-number', /line 3, column 1: 'O.3' is not a number/, { pick: { timeSeries: true } }),
  );
  add(
    'decimal-comma.csv',
    '1;0,5;-0,25\n0,5;1;0,125\n-0,25;0,125;1\n',
    error('not-a-number', /line 2, column 3: '0,125' is not a number \(a decimal comma\?/),
  );
  add(
    'fortran-exponent.txt',
    '1.0D+00 5.0D-01\n5.0D-01 1.0D+00\n',
    error('not-a-number', /line 2, column 2: '1.0D\+00' is not a number \(a Fortran exponent\?/),
  );
  add(
    'long-cell.csv',
    `1,0.5,-0.25\n0.5,1,${'9'.repeat(3)}${'x'.repeat(20000)}\n-0.25,0.125,1\n`,
    error('not-a-number', /line 2, column 3: '999x{18}\.\.\.' is not a number$/),
  );
  add(
    'control-characters.csv',
    '1,0.5,-0.25\n0.5,1,ab\u0007\u202Ecd\n-0.25,0.125,1\n',
    error('not-a-number', /line 2, column 3: 'ab\?\?cd' is not a number/),
  );
  add(
    'quoted-line-break.csv',
    '"",a,b,c\n"two\nlines",1,0.5,-0.25\nb,0.5,1,oops\nc,-0.25,0.125,1\n',
    error('not-a-number', /line 4, column 4: 'oops'/),
  );
  add(
    'unclosed-quote.csv',
    '1,0.5\n"0.5,1\n',
    error('unclosed-quote', /line 2: a quoted field .* is never closed/),
  );
  add(
    'huge-line.csv',
    Array.from({ length: 100000 }, (_, k) => (k % 7) / 8).join(',') + '\n',
    error('not-square', /not square: 1 rows × 100000 columns/),
  );
  add(
    'not-square.csv',
    csv([
      [1, 0.5, -0.25, 0],
      [0.5, 1, 0.125, 0],
      [-0.25, 0.125, 1, 0],
    ]),
    error('not-square', /not square: 3 rows × 4 columns/),
  );
  add(
    'nan-inf-empty.csv',
    '1,NaN,inf\nnan,1,\n-Infinity,n/a,1\n',
    read([1, NaN, Infinity, NaN, 1, NaN, -Infinity, NaN, 1]),
  );

  add('time-index-column.csv', '0,0.1,0.2\n1,0.3,0.1\n2,0.2,0.5\n3,0.6,0.4\n', {
    kind: 'read',
    rows: 4,
    cols: 3,
    values: [0, 0.1, 0.2, 1, 0.3, 0.1, 2, 0.2, 0.5, 3, 0.6, 0.4],
    rowLabels: null,
    colLabels: null,
    notes: ['index-column'],
    note: /^column 1 steps evenly from 0 to 3, like a time or row index, yet is read as region 1; remove the column if it is an index$/,
    pick: { timeSeries: true },
  });
  add('time-seconds-column.tsv', 'time\tA\tB\n0\t0.1\t0.2\n2.5\t0.3\t0.1\n5\t0.2\t0.5\n', {
    kind: 'read',
    rows: 3,
    cols: 3,
    values: [0, 0.1, 0.2, 2.5, 0.3, 0.1, 5, 0.2, 0.5],
    rowLabels: null,
    colLabels: ['time', 'A', 'B'],
    notes: ['index-column'],
    note: /from 0 to 5, like a time/,
    pick: { timeSeries: true },
  });

  // Values: QC of what was read.
  add(
    'asymmetric.csv',
    csv([
      [1, 0.5, -0.25],
      [0.5, 1, 0.125],
      [-0.25, 0.375, 1],
    ]),
    {
      kind: 'qc',
      code: 'asymmetric',
      severity: 'error',
      message: /max \|r_ij − r_ji\| = 0.25 at row 3, column 2 \(0.375\) vs row 2, column 3 \(0.125\)/,
    },
  );
  const z = R3.map((r) => (r === 1 ? Infinity : Math.atanh(r)));
  add('fisher-z-infinite-diagonal.csv', csv(rowsOf(z, 3)), {
    kind: 'qc',
    code: 'fisher-z',
    severity: 'error',
    message: /^looks like Fisher z \(diagonal Infinity, .*\): give correlations \(tanh/,
  });
  add(
    'fisher-z-large-diagonal.csv',
    csv(
      rowsOf(
        R3.map((r) => (r === 1 ? 18.7 : Math.atanh(r))),
        3,
      ),
    ),
    {
      kind: 'qc',
      code: 'fisher-z',
      severity: 'error',
      message: /looks like Fisher z \(diagonal 18.7/,
    },
  );
  add(
    'fisher-z-beyond-one.csv',
    csv(
      rowsOf(
        R3.map((r) => (r === 1 ? Infinity : 3 * Math.atanh(r))),
        3,
      ),
    ),
    {
      kind: 'qc',
      code: 'fisher-z',
      severity: 'error',
      message: /values outside \[−1, 1\] .* looks like Fisher z \(atanh r\); back-transform with tanh/,
    },
  );
  add(
    'zero-diagonal.csv',
    csv(
      rowsOf(
        R3.map((r) => (r === 1 ? 0 : r)),
        3,
      ),
    ),
    {
      kind: 'qc',
      code: 'diagonal-not-one',
      severity: 'warning',
      message: /the diagonal is 0, not 1 .*Fisher z/,
    },
  );
  add(
    'counts-as-text.csv',
    csv([
      [0, 12, 3],
      [12, 0, 40],
      [3, 40, 0],
    ]),
    {
      kind: 'qc',
      code: 'integer-values',
      severity: 'error',
      message: /holds only whole numbers \(largest \|v\| = 40\), not correlations: .*--input weight/,
    },
  );

  // .npy
  add('c-order.npy', npy('<f8', [3, 3], f64(R3)), read());
  add('big-endian-f4.npy', npy('>f4', [3, 3], f32(R3, false)), read());
  add('fortran-order.npy', npy('<f8', [3, 3], f64(fortran(R3, 3, 3)), { fortran: true }), read());
  const ts = [0.1, 0.2, 0.3, 0.4, 0.5, 0.6];
  add('fortran-order-2x3.npy', npy('<f8', [2, 3], f64(fortran(ts, 2, 3)), { fortran: true }), {
    kind: 'read',
    rows: 2,
    cols: 3,
    values: ts,
    pick: { timeSeries: true },
  });
  add(
    'python2-long-shape.npy',
    npy('<f8', [3, 3], f64(R3), { dict: "{'descr': '<f8', 'fortran_order': False, 'shape': (3L, 3L), }" }),
    read(),
  );
  add('version-2.npy', npy('<f8', [3, 3], f64(R3), { version: 2 }), read());
  const half = Buffer.alloc(18);
  [0x3c00, 0x3800, 0xb400, 0x3800, 0x3c00, 0x3000, 0xb400, 0x3000, 0x3c00].forEach((h, k) =>
    half.writeUInt16LE(h, k * 2),
  );
  add('float16.npy', npy('<f2', [3, 3], half), read());
  add('int8.npy', npy('|i1', [3, 3], Buffer.from([0, 5, 2, 5, 0, 7, 2, 7, 0])), {
    kind: 'qc',
    code: 'integer-values',
    severity: 'error',
    message:
      /stores int8 integers \(largest \|v\| = 7\), not correlations: probably a label \(atlas\) image or counts/,
  });
  add('int8-within-one.npy', npy('|i1', [3, 3], Buffer.from([1, 0, 1, 0, 1, 0, 1, 0, 1])), {
    kind: 'qc',
    code: 'integer-values',
    severity: 'error',
    message: /stores int8 integers, not correlations/,
  });
  const u16 = Buffer.alloc(18);
  [0, 300, 2, 300, 0, 9, 2, 9, 0].forEach((v, k) => u16.writeUInt16BE(v, k * 2));
  add('uint16-big-endian.npy', npy('>u2', [3, 3], u16), {
    kind: 'qc',
    code: 'integer-values',
    severity: 'error',
    message: /stores uint16 integers \(largest \|v\| = 300\)/,
  });
  add('bool.npy', npy('|b1', [3, 3], Buffer.from([1, 1, 0, 1, 1, 1, 0, 1, 1])), {
    kind: 'qc',
    code: 'integer-values',
    severity: 'error',
    message: /stores bool integers/,
  });
  const stack = [...R3, ...R3.map((v) => (v === 1 ? 1 : -v))];
  add(
    'stack-3d.npy',
    npy('<f8', [2, 3, 3], f64(stack)),
    read(
      R3.map((v) => (v === 1 ? 1 : -v)),
      { pick: { stackIndex: 1 } },
    ),
  );
  add(
    'stack-3d-no-index.npy',
    npy('<f8', [2, 3, 3], f64(stack)),
    error('stack-index', /holds a stack of 2 matrices \(3 × 3 each\)/),
  );
  add(
    'stack-index-outside.npy',
    npy('<f8', [2, 3, 3], f64(stack)),
    error('stack-index', /stack index 2 is outside the stack of 2/, { pick: { stackIndex: 2 } }),
  );
  add(
    'four-d.npy',
    npy('<f8', [2, 2, 3, 3], f64([...stack, ...stack])),
    error('bad-shape', /4-D array of shape \(2, 2, 3, 3\)/),
  );
  add('one-d.npy', npy('<f8', [9], f64(R3)), error('bad-shape', /1-D array of shape \(9\)/));
  add(
    'complex.npy',
    npy('<c16', [3, 3], f64([...R3, ...R3])),
    error('unsupported-dtype', /unsupported .npy data type '<c16' \(real numbers only/),
  );
  add('object.npy', npy('|O', [3, 3], Buffer.alloc(72)), error('unsupported-dtype', /'\|O'/));
  add(
    'structured.npy',
    npy('', [3], Buffer.alloc(48), {
      dict: "{'descr': [('a', '<f8'), ('b', '<f8')], 'fortran_order': False, 'shape': (3,), }",
    }),
    error('unsupported-dtype', /a structured dtype\?/),
  );
  add(
    'truncated-header.npy',
    npy('<f8', [3, 3], f64(R3)).subarray(0, 40),
    error('truncated', /the .npy header is cut short/),
  );
  add(
    'truncated-data.npy',
    npy('<f8', [3, 3], f64(R3)).subarray(0, 128 + 40),
    error('truncated', /needs 72 bytes of data but the file holds 40/),
  );
  add(
    'extra-data.npy',
    npy('<f8', [3, 3], f64([...R3, 0, 0])),
    error('bad-format', /holds 88 bytes of data but the header's shape \(3, 3\) of float64 needs 72/),
  );
  add(
    'garbled-header.npy',
    npy('<f8', [3, 3], f64(R3), { dict: "{'descr': '<f8', 'fortran': False, 'shape': [3, 3]}" }),
    error('bad-format', /lacks fortran_order or shape/),
  );
  add(
    'bad-shape-text.npy',
    npy('<f8', [3, 3], f64(R3), {
      dict: "{'descr': '<f8', 'fortran_order': False, 'shape': (3, x\u0007), }",
    }),
    error('bad-format', /bad .npy shape \(3, x\?\)/),
  );
  add(
    'zip-named-npy.npy',
    Buffer.concat([text('PK\u0003\u0004 not an array'), Buffer.alloc(40)]),
    error('bad-format', /magic string .* is missing/),
  );
  add(
    'future-version.npy',
    Buffer.concat([Buffer.from([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 9, 0]), Buffer.alloc(60)]),
    error('bad-format', /unknown .npy format version 9.0/),
  );

  // .mat (level 5)
  const colMajor = fortran(R3, 3, 3); // symmetric, so equal to R3; kept for what it says
  add('plain.mat', mat(matrixElement('R', [3, 3], colMajor)), read());
  add('compressed.mat', mat(compressed(matrixElement('R', [3, 3], colMajor))), read());
  add(
    'big-endian.mat',
    Buffer.concat([matHeader(false), matrixElement('R', [3, 3], colMajor, { le: false })]),
    read(),
  );
  add('int16-class.mat', mat(matrixElement('L', [3, 3], [0, 4, 9, 4, 0, 2, 9, 2, 0], { cls: CLASS.int16 })), {
    kind: 'qc',
    code: 'integer-values',
    severity: 'error',
    message: /stores int16 integers \(largest \|v\| = 9\)/,
  });
  add(
    'two-variables.mat',
    mat(
      matrixElement('R_pearson', [3, 3], colMajor),
      compressed(matrixElement('R_partial', [3, 3], colMajor)),
    ),
    error(
      'mat-variable-ambiguous',
      /R_pearson \(3×3 double\), R_partial \(3×3 double\); pick one: --variable R_pearson or --variable R_partial/,
    ),
  );
  add(
    'two-variables-picked.mat',
    mat(
      matrixElement(
        'R_pearson',
        [3, 3],
        colMajor.map((v) => v / 2),
      ),
      matrixElement('R_partial', [3, 3], colMajor),
    ),
    read(R3, { pick: { variable: 'R_partial' } }),
  );
  add(
    'more-values-than-dims.mat',
    mat(matrixElement('R', [3, 3], [...colMajor, 0])),
    error('bad-format', /variable 'R' stores 10 values but its dimensions \(3×3\) hold 9: corrupt/),
  );
  add(
    'empty-variable.mat',
    mat(matrixElement('E', [0, 0], [])),
    error('mat-variable-type', /holds no real numeric array \(E \(0×0 double\)\)/),
  );
  add('no-variables.mat', mat(), error('mat-variable-type', /holds no real numeric array \(no variables\)/));
  add(
    'complex-only.mat',
    mat(matrixElement('C', [3, 3], colMajor, { complex: true })),
    error('mat-variable-type', /holds no real numeric array \(C \(3×3 double\)\)/),
  );
  add(
    'stack-3d.mat',
    mat(matrixElement('S', [3, 3, 2], [...colMajor, ...colMajor.map((v) => (v === 1 ? 1 : -v))])),
    read(
      R3.map((v) => (v === 1 ? 1 : -v)),
      { pick: { stackIndex: 1 } },
    ),
  );
  add(
    'truncated.mat',
    mat(matrixElement('R', [3, 3], colMajor)).subarray(0, 128 + 90),
    error('truncated', /truncated: element 1 claims \d+ bytes but the file ends after/),
  );
  add(
    'truncated-compressed.mat',
    (() => {
      const b = mat(compressed(matrixElement('R', [3, 3], colMajor)));
      return b.subarray(0, b.length - 20);
    })(),
    error('truncated', /truncated: element 1 claims/),
  );
  add(
    'corrupt-compressed.mat',
    mat(element(MI.COMPRESSED, Buffer.from('this is not a zlib stream at all, just text'), true, false)),
    error('truncated', /truncated or corrupt compressed variable 1/),
  );
  // A decompression bomb: the inner tag declares a 3 × 3 array, the stream inflates to 64 MiB.
  add(
    'bomb.mat',
    mat(compressed(Buffer.concat([matrixElement('R', [3, 3], colMajor), Buffer.alloc(64 * 2 ** 20)]))),
    error(
      'mat-inflate-bound',
      /compressed variable 1 inflates to more than the 136 bytes its header declares; stopped at 4232 bytes/,
    ),
  );
  add(
    'declares-too-much.mat',
    (() => {
      const inner = matrixElement('R', [3, 3], colMajor);
      inner.writeUInt32LE(2 ** 30, 4);
      return mat(compressed(inner));
    })(),
    error(
      'mat-inflate-bound',
      /declares 1.0 GiB uncompressed, but its dimensions \(3×3 double\) need at most 1104 bytes/,
    ),
  );
  add(
    'v73.mat',
    Buffer.concat([
      Buffer.from('MATLAB 7.3 MAT-file, Platform: GLNXA64'.padEnd(512, ' '), 'latin1'),
      Buffer.from([0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a]),
      Buffer.alloc(64),
    ]),
    error('mat-v73', /-v7.3 file \(HDF5 inside\)/),
  );
  add(
    'text-named-mat.mat',
    'not a mat file at all, just some words that are long enough to fill the header of one: '.repeat(3),
    error('bad-format', /is not a level-5 MAT-file/),
  );
  add('short.mat', 'MATLAB 5.0', error('truncated', /shorter than the 128-byte MAT-file header/));
  add('empty.mat', '', error('empty-file', /empty file/));
  add('empty.npy', '', error('empty-file', /empty file/));

  // Participants and node tables.
  const cp =
    'participant_id\tgroup\tsite\nsub-01\tGruppe Ä\tMontréal\nsub-02\tGruppe Ö\tMontréal\nsub-03\tGruppe Ä\tKöln\n';
  add('participants-cp1252.tsv', Buffer.from(cp, 'latin1'), {
    kind: 'table',
    table: 'participants',
    header: ['participant_id', 'group', 'site'],
    rows: [
      ['sub-01', 'Gruppe Ä', 'Montréal'],
      ['sub-02', 'Gruppe Ö', 'Montréal'],
      ['sub-03', 'Gruppe Ä', 'Köln'],
    ],
    findings: [
      {
        code: 'text-encoding',
        severity: 'warning',
        message: /0xC4 at line 2.*'sub-01 Gruppe Ä Montréal'.*read as Windows-1252/,
      },
    ],
  });
  add('participants-utf16.tsv', Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(cp, 'utf16le')]), {
    kind: 'table',
    table: 'participants',
    header: ['participant_id', 'group', 'site'],
    rows: [
      ['sub-01', 'Gruppe Ä', 'Montréal'],
      ['sub-02', 'Gruppe Ö', 'Montréal'],
      ['sub-03', 'Gruppe Ä', 'Köln'],
    ],
    findings: [],
  });
  add(
    'participants-extra-tab.tsv',
    'participant_id\tage\tgroup\n\nsub-01\t31\tA\nsub-02\t\t44\tB\nsub-03\t28\tB\n',
    {
      kind: 'table',
      table: 'participants',
      header: ['participant_id', 'age', 'group'],
      rows: [
        ['sub-01', '31', 'A'],
        ['sub-03', '28', 'B'],
      ],
      findings: [
        {
          code: 'participants-ragged',
          severity: 'error',
          subject: 'sub-02',
          message: /^line 4 has 4 fields but the header has 3 \(an extra separator\?\); the row is not used$/,
        },
      ],
    },
  );
  add('participants-missing-field.csv', 'participant_id,age,group\nsub-01,31\nsub-02,44,B\n', {
    kind: 'table',
    table: 'participants',
    header: ['participant_id', 'age', 'group'],
    rows: [['sub-02', '44', 'B']],
    findings: [
      {
        code: 'participants-ragged',
        severity: 'error',
        subject: 'sub-01',
        message: /^line 2 has 2 fields but the header has 3; the row is not used$/,
      },
    ],
  });
  add('participants-trailing-tabs.tsv', 'participant_id\tage\t\nsub-01\t31\t\nsub-02\t44\t\t\n', {
    kind: 'table',
    table: 'participants',
    header: ['participant_id', 'age'],
    rows: [
      ['sub-01', '31'],
      ['sub-02', '44'],
    ],
    findings: [],
  });
  add(
    'participants-crlf-bom.csv',
    '\uFEFFparticipant_id,group\r\n"sub-01","A, left"\r\n,,\r\nsub-02,"say ""B"""\r\n',
    {
      kind: 'table',
      table: 'participants',
      header: ['participant_id', 'group'],
      rows: [
        ['sub-01', 'A, left'],
        ['sub-02', 'say "B"'],
      ],
      findings: [],
    },
  );
  add(
    'participants-mixed-encoding.tsv',
    Buffer.concat([text('participant_id\tsite\nsub-01\tKöln\n'), Buffer.from('sub-02\tKöln\n', 'latin1')]),
    {
      kind: 'table',
      table: 'participants',
      header: [],
      rows: [],
      findings: [
        {
          code: 'participants-unreadable',
          severity: 'error',
          message: /mixes text encodings: 0xF6 at line 3/,
        },
      ],
    },
  );
  add(
    'participants-already-garbled.tsv',
    'participant_id\tgroup\nsub-01\tGruppe \uFFFD\nsub-02\tGruppe \uFFFD\n',
    {
      kind: 'table',
      table: 'participants',
      header: ['participant_id', 'group'],
      rows: [
        ['sub-01', 'Gruppe \uFFFD'],
        ['sub-02', 'Gruppe \uFFFD'],
      ],
      findings: [
        {
          code: 'text-encoding',
          severity: 'warning',
          message:
            /^line 2 holds the replacement character U\+FFFD \(shown as \u25A1: 'sub-01 Gruppe \u25A1'\): the text was garbled/,
        },
      ],
    },
  );
  add(
    'nodes-ragged.tsv',
    'label\tnetwork\tx\ty\tz\nL_M1\tSomMot\t-38\t-22\t56\nR_M1\tSom\tMot\t38\t-22\t56\nPrecuneus\tDMN\t0\t-60\t40\n',
    {
      kind: 'table',
      table: 'nodes',
      header: ['label', 'network', 'x', 'y', 'z'],
      rows: [
        ['L_M1', 'SomMot', '-38', '-22', '56'],
        // Row k is region k: the ragged row keeps its place, every field empty.
        ['', '', '', '', ''],
        ['Precuneus', 'DMN', '0', '-60', '40'],
      ],
      findings: [
        {
          code: 'nodes-ragged',
          severity: 'error',
          subject: null,
          message:
            /^line 3 has 6 fields but the header has 5 \(an extra separator\?\); its fields are not used$/,
        },
      ],
    },
  );
  return cases;
}

/** Writes the corpus into `dir`; returns each case with its path. */
export function writeCorpus(dir: string): Array<Case & { file: string }> {
  return corpus().map((c) => {
    const file = join(dir, c.name);
    writeFileSync(file, c.bytes);
    return { ...c, file };
  });
}
