/**
 * MATLAB level-5 MAT-files (what `save` writes by default up to -v7): a 128-byte header (text,
 * version 0x0100, endian indicator 'IM'), then tagged data elements. A variable is an miMATRIX
 * element (array flags, dimensions, name, real part, optional imaginary part), possibly wrapped in
 * a zlib-compressed miCOMPRESSED element. Numeric arrays are stored column-major. Layout from
 * MathWorks' "MAT-File Format" document (level 5 section). A -v7.3 file is HDF5 underneath and is
 * refused with a message saying how to re-save it.
 */
import { readFile } from 'node:fs/promises';
import { constants as zlibConstants, inflateSync } from 'node:zlib';
import type { NdArray } from './array.ts';
import { InputFileError, fsError } from './errors.ts';
import { excerpt } from './text.ts';

// Data types (miXXX) and array classes (mxXXX_CLASS) of the level-5 format.
const MI_MATRIX = 14;
const MI_COMPRESSED = 15;
const CLASS_NAMES: Record<number, string> = {
  1: 'cell',
  2: 'struct',
  3: 'object',
  4: 'char',
  5: 'sparse',
  6: 'double',
  7: 'single',
  8: 'int8',
  9: 'uint8',
  10: 'int16',
  11: 'uint16',
  12: 'int32',
  13: 'uint32',
  14: 'int64',
  15: 'uint64',
  16: 'function handle',
  17: 'opaque',
};
const NUMERIC_CLASSES = new Set([6, 7, 8, 9, 10, 11, 12, 13, 14, 15]);
/** Item size and decoder per miXXX numeric data type. */
const MI_TYPES: Record<number, { size: number; get: (dv: DataView, o: number, le: boolean) => number }> = {
  1: { size: 1, get: (dv, o) => dv.getInt8(o) },
  2: { size: 1, get: (dv, o) => dv.getUint8(o) },
  3: { size: 2, get: (dv, o, le) => dv.getInt16(o, le) },
  4: { size: 2, get: (dv, o, le) => dv.getUint16(o, le) },
  5: { size: 4, get: (dv, o, le) => dv.getInt32(o, le) },
  6: { size: 4, get: (dv, o, le) => dv.getUint32(o, le) },
  7: { size: 4, get: (dv, o, le) => dv.getFloat32(o, le) },
  9: { size: 8, get: (dv, o, le) => dv.getFloat64(o, le) },
  12: { size: 8, get: (dv, o, le) => Number(dv.getBigInt64(o, le)) },
  13: { size: 8, get: (dv, o, le) => Number(dv.getBigUint64(o, le)) },
};

export const V73_ADVICE =
  "is a MATLAB -v7.3 file (HDF5 inside), which Loopwise does not read; in MATLAB, load it and re-save with save('FILE.mat', 'VARIABLE', '-v7')";

export interface MatVariable {
  name: string;
  /** MATLAB class: 'double', 'single', 'int32', 'struct', 'cell', ... */
  className: string;
  dims: number[];
  numeric: boolean;
  complex: boolean;
  /** Decodes the real part, column-major (only for numeric, non-sparse variables). */
  read(): NdArray;
}

interface Element {
  type: number;
  data: Buffer;
  next: number;
}

function readElement(file: string, buf: Buffer, p: number, le: boolean, what: string): Element {
  if (p + 8 > buf.length) throw new InputFileError(file, `truncated: ${what} is cut short`, 'truncated');
  const word = le ? buf.readUInt32LE(p) : buf.readUInt32BE(p);
  if (word >>> 16 !== 0) {
    // Small data element: type and size share the first word, up to 4 bytes of data follow.
    const type = word & 0xffff;
    const nbytes = word >>> 16;
    return { type, data: buf.subarray(p + 4, p + 4 + nbytes), next: p + 8 };
  }
  const nbytes = le ? buf.readUInt32LE(p + 4) : buf.readUInt32BE(p + 4);
  const end = p + 8 + nbytes;
  if (end > buf.length) {
    throw new InputFileError(
      file,
      `truncated: ${what} claims ${nbytes} bytes but the file ends after ${buf.length - p - 8}`,
      'truncated',
    );
  }
  // Compressed elements are not padded; all others end on an 8-byte boundary.
  const next = word === MI_COMPRESSED ? end : p + 8 + Math.ceil(nbytes / 8) * 8;
  return { type: word, data: buf.subarray(p + 8, end), next: Math.min(next, buf.length) };
}

function intsOf(e: Element, le: boolean): number[] {
  const out: number[] = [];
  for (let o = 0; o + 4 <= e.data.length; o += 4)
    out.push(le ? e.data.readInt32LE(o) : e.data.readInt32BE(o));
  return out;
}

function parseMatrix(file: string, body: Buffer, le: boolean, index: number): MatVariable | null {
  if (body.length === 0) return null;
  const flags = readElement(file, body, 0, le, `the array flags of variable ${index + 1}`);
  const flagWord = le ? flags.data.readUInt32LE(0) : flags.data.readUInt32BE(0);
  const cls = flagWord & 0xff;
  const complex = (flagWord & 0x0800) !== 0;
  const logical = (flagWord & 0x0200) !== 0;
  const dimsEl = readElement(file, body, flags.next, le, `the dimensions of variable ${index + 1}`);
  const dims = intsOf(dimsEl, le);
  const nameEl = readElement(file, body, dimsEl.next, le, `the name of variable ${index + 1}`);
  const name = excerpt(nameEl.data.toString('latin1').replace(/\0+$/, ''), 63);
  const className = logical ? 'logical' : (CLASS_NAMES[cls] ?? `class ${cls}`);
  const numeric = NUMERIC_CLASSES.has(cls) && !complex;
  const realAt = nameEl.next;
  return {
    name,
    className,
    dims,
    numeric,
    complex,
    read(): NdArray {
      if (!numeric) {
        throw new InputFileError(
          file,
          `variable '${name}' is ${complex ? 'complex' : `a ${className}`}, not a real numeric array`,
          'mat-variable-type',
        );
      }
      const count = dims.reduce((a, b) => a * b, 1);
      const real = readElement(file, body, realAt, le, `the values of '${name}'`);
      const t = MI_TYPES[real.type];
      if (!t)
        throw new InputFileError(
          file,
          `variable '${name}' stores its values as unknown data type ${real.type}`,
          'bad-format',
        );
      if (real.data.length < count * t.size) {
        throw new InputFileError(
          file,
          `truncated: variable '${name}' (${dims.join('×')}) has ${real.data.length / t.size} of ${count} values`,
          'truncated',
        );
      }
      if (real.data.length > count * t.size) {
        throw new InputFileError(
          file,
          `variable '${name}' stores ${Math.floor(real.data.length / t.size)} values but its dimensions (${dims.join('×')}) hold ${count}: corrupt`,
          'bad-format',
        );
      }
      const dv = new DataView(real.data.buffer, real.data.byteOffset, real.data.byteLength);
      const data = new Float64Array(count);
      for (let k = 0; k < count; k++) data[k] = t.get(dv, k * t.size, le);
      return { shape: dims, order: 'F', data, dtype: className === 'logical' ? 'bool' : className };
    },
  };
}

/** The largest inflated variable accepted (2 GiB): a hard cap whatever a header declares. */
export const MAX_INFLATED_BYTES = 2 ** 31;
/** Inflated bytes tolerated beyond what a compressed variable's own tag declares. */
const INFLATE_MARGIN = 4096;

const bytesText = (n: number): string =>
  n >= 2 ** 30
    ? `${(n / 2 ** 30).toFixed(1)} GiB`
    : n >= 2 ** 20
      ? `${(n / 2 ** 20).toFixed(1)} MiB`
      : `${n} bytes`;

/**
 * Inflates one miCOMPRESSED element without trusting it: a prefix is inflated first to read the
 * inner element's tag (its byte count) and, for a numeric array, its class and dimensions; the
 * whole is then inflated with zlib's output bound set to what the tag declares plus a small margin
 * (never above MAX_INFLATED_BYTES), so a small file that inflates to gigabytes is stopped as soon
 * as its output passes that bound, before the memory is taken.
 */
function inflateBounded(file: string, data: Buffer, le: boolean, index: number): Buffer {
  const corrupt = (err: unknown): InputFileError =>
    new InputFileError(
      file,
      `truncated or corrupt compressed variable ${index} (${(err as Error).message})`,
      'truncated',
    );
  let head: Buffer;
  try {
    head = inflateSync(data.subarray(0, 1024), { finishFlush: zlibConstants.Z_SYNC_FLUSH });
  } catch (err) {
    throw corrupt(err);
  }
  if (head.length < 8) throw corrupt(new Error('no element inside'));
  const type = le ? head.readUInt32LE(0) : head.readUInt32BE(0);
  const declared = 8 + (le ? head.readUInt32LE(4) : head.readUInt32BE(4));
  if (declared > MAX_INFLATED_BYTES) {
    throw new InputFileError(
      file,
      `compressed variable ${index} declares ${bytesText(declared)} uncompressed, over Loopwise's limit of ${bytesText(MAX_INFLATED_BYTES)}`,
      'mat-too-large',
    );
  }
  if (type === MI_MATRIX) {
    // A numeric array's values cannot take more than 8 bytes each (twice that when complex).
    try {
      const body = head.subarray(8);
      const flags = readElement(file, body, 0, le, '');
      const flagWord = le ? flags.data.readUInt32LE(0) : flags.data.readUInt32BE(0);
      const dimsEl = readElement(file, body, flags.next, le, '');
      const dims = intsOf(dimsEl, le);
      const cls = flagWord & 0xff;
      if (NUMERIC_CLASSES.has(cls) && dims.length >= 2 && dims.every((x) => x >= 0)) {
        const count = dims.reduce((a, b) => a * b, 1);
        const most = 8 + 1024 + count * 8 * ((flagWord & 0x0800) !== 0 ? 2 : 1);
        if (declared > most) {
          throw new InputFileError(
            file,
            `compressed variable ${index} declares ${bytesText(declared)} uncompressed, but its dimensions (${dims.join('×')} ${CLASS_NAMES[cls]}) need at most ${bytesText(most)}: corrupt or a decompression bomb`,
            'mat-inflate-bound',
          );
        }
      }
    } catch (err) {
      if (err instanceof InputFileError && err.code === 'mat-inflate-bound') throw err;
      // The prefix did not reach the dimensions: the byte count alone bounds the output.
    }
  }
  const bound = Math.min(MAX_INFLATED_BYTES, declared + INFLATE_MARGIN);
  try {
    return inflateSync(data, { maxOutputLength: bound });
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ERR_BUFFER_TOO_LARGE' || err instanceof RangeError) {
      throw new InputFileError(
        file,
        `compressed variable ${index} inflates to more than the ${bytesText(declared)} its header declares; stopped at ${bytesText(bound)} (corrupt, or a decompression bomb)`,
        'mat-inflate-bound',
      );
    }
    throw corrupt(err);
  }
}

/** The variables of a level-5 MAT-file, in file order. */
export async function readMatVariables(file: string): Promise<MatVariable[]> {
  let buf: Buffer;
  try {
    buf = await readFile(file);
  } catch (e) {
    throw fsError(file, e);
  }
  if (buf.length === 0) throw new InputFileError(file, 'empty file (0 bytes)', 'empty-file');
  const text = buf.subarray(0, 116).toString('latin1');
  const hdf5 = (o: number): boolean =>
    buf.length >= o + 8 &&
    buf.subarray(o, o + 8).equals(Buffer.from([0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a]));
  if (text.startsWith('MATLAB 7.3') || hdf5(0) || hdf5(512))
    throw new InputFileError(file, V73_ADVICE, 'mat-v73');
  if (buf.length < 128)
    throw new InputFileError(file, 'truncated: shorter than the 128-byte MAT-file header', 'truncated');
  const endian = buf.subarray(126, 128).toString('latin1');
  if (!text.startsWith('MATLAB') || (endian !== 'IM' && endian !== 'MI')) {
    throw new InputFileError(
      file,
      "is not a level-5 MAT-file (no 'MATLAB 5.0 MAT-file' header; a level-4 file? re-save it in MATLAB with save(..., '-v7'))",
      'bad-format',
    );
  }
  const le = endian === 'IM';
  const vars: MatVariable[] = [];
  let p = 128;
  while (p + 8 <= buf.length) {
    const e = readElement(file, buf, p, le, `element ${vars.length + 1}`);
    p = e.next;
    let body: Buffer;
    if (e.type === MI_COMPRESSED) {
      const inflated = inflateBounded(file, e.data, le, vars.length + 1);
      const inner = readElement(file, inflated, 0, le, `compressed variable ${vars.length + 1}`);
      if (inner.type !== MI_MATRIX) continue;
      body = inner.data;
    } else if (e.type === MI_MATRIX) {
      body = e.data;
    } else {
      continue;
    }
    const v = parseMatrix(file, body, le, vars.length);
    if (v) vars.push(v);
  }
  return vars;
}

/**
 * The variable to read: the one named, else the only numeric one. Several numeric variables
 * without a name is an error that lists them.
 */
export function pickVariable(file: string, vars: MatVariable[], name?: string): MatVariable {
  const list = vars.map((v) => `${v.name} (${v.dims.join('×')} ${v.className})`).join(', ');
  if (name !== undefined) {
    const v = vars.find((x) => x.name === name);
    if (!v)
      throw new InputFileError(
        file,
        `has no variable '${name}'; it holds ${list || 'no variables'}`,
        'mat-variable-missing',
      );
    if (!v.numeric)
      throw new InputFileError(
        file,
        `variable '${name}' is ${v.complex ? 'complex' : `a ${v.className}`}, not a real numeric array; the file holds ${list}`,
        'mat-variable-type',
      );
    return v;
  }
  const numeric = vars.filter((v) => v.numeric && v.dims.length >= 2 && v.dims.every((d) => d > 0));
  if (numeric.length === 1) return numeric[0];
  if (numeric.length === 0)
    throw new InputFileError(
      file,
      `holds no real numeric array (${list || 'no variables'})`,
      'mat-variable-type',
    );
  throw new InputFileError(
    file,
    `holds several numeric variables: ${list}; pick one: ${numeric.map((v) => `--variable ${v.name}`).join(' or ')}`,
    'mat-variable-ambiguous',
  );
}

export async function readMat(
  file: string,
  variable?: string,
): Promise<{ variable: string; array: NdArray }> {
  const vars = await readMatVariables(file);
  const v = pickVariable(file, vars, variable);
  return { variable: v.name, array: v.read() };
}
