/**
 * NumPy .npy arrays, format versions 1.0, 2.0 and 3.0: a magic string, a version, a header
 * length (2 bytes in 1.0, 4 bytes after), a Python dict literal giving 'descr' (byte order, kind,
 * item size), 'fortran_order' and 'shape', then the raw array. Real numbers only: float16/32/64,
 * signed and unsigned integers and booleans, little or big endian, C or Fortran order.
 */
import { open } from 'node:fs/promises';
import type { FileHandle } from 'node:fs/promises';
import type { NdArray } from './array.ts';
import { InputFileError, fsError } from './errors.ts';
import { excerpt } from './text.ts';

const MAGIC = [0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]; // \x93NUMPY

export interface NpyHeader {
  version: [number, number];
  littleEndian: boolean;
  kind: 'f' | 'i' | 'u' | 'b';
  itemSize: number;
  fortran: boolean;
  shape: number[];
  dataOffset: number;
}

export function parseNpyHeader(file: string, head: Buffer): NpyHeader {
  if (head.length < 10 || !MAGIC.every((b, k) => head[k] === b)) {
    throw new InputFileError(
      file,
      'is not a NumPy .npy file (the magic string \\x93NUMPY is missing)',
      'bad-format',
    );
  }
  const major = head[6];
  const minor = head[7];
  if (major < 1 || major > 3)
    throw new InputFileError(file, `unknown .npy format version ${major}.${minor}`, 'bad-format');
  const lenBytes = major === 1 ? 2 : 4;
  if (head.length < 8 + lenBytes)
    throw new InputFileError(file, 'truncated: the .npy header is cut short', 'truncated');
  const headerLen = major === 1 ? head.readUInt16LE(8) : head.readUInt32LE(8);
  const start = 8 + lenBytes;
  if (head.length < start + headerLen)
    throw new InputFileError(file, 'truncated: the .npy header is cut short', 'truncated');
  const dict = head.subarray(start, start + headerLen).toString(major === 3 ? 'utf8' : 'latin1');

  const descrMatch = /['"]descr['"]\s*:\s*['"]([^'"]+)['"]/.exec(dict);
  if (!descrMatch) {
    throw new InputFileError(
      file,
      `unsupported .npy data type (a structured dtype?): ${excerpt(dict.trim(), 60)}`,
      'unsupported-dtype',
    );
  }
  const descr = descrMatch[1];
  const m = /^([<>|=]?)([fiub])(\d+)$/.exec(descr);
  if (!m) {
    throw new InputFileError(
      file,
      `unsupported .npy data type '${excerpt(descr)}' (real numbers only: float, int, uint, bool)`,
      'unsupported-dtype',
    );
  }
  const kind = m[2] as NpyHeader['kind'];
  const itemSize = Number(m[3]);
  const okSize = kind === 'f' ? [2, 4, 8] : kind === 'b' ? [1] : [1, 2, 4, 8];
  if (!okSize.includes(itemSize))
    throw new InputFileError(file, `unsupported .npy data type '${excerpt(descr)}'`, 'unsupported-dtype');
  const fortranMatch = /['"]fortran_order['"]\s*:\s*(True|False)/.exec(dict);
  const shapeMatch = /['"]shape['"]\s*:\s*\(([^)]*)\)/.exec(dict);
  if (!fortranMatch || !shapeMatch)
    throw new InputFileError(file, 'the .npy header lacks fortran_order or shape', 'bad-format');
  const shape = shapeMatch[1]
    .split(',')
    .map((s) => s.trim())
    .filter((s) => s.length > 0)
    // Python 2 wrote long integers with an L suffix: (3L, 3L).
    .map((s) => Number(s.replace(/^(\d+)L$/, '$1')));
  if (shape.some((d) => !Number.isInteger(d) || d < 0))
    throw new InputFileError(file, `bad .npy shape (${excerpt(shapeMatch[1], 40)})`, 'bad-format');
  return {
    version: [major, minor],
    littleEndian: m[1] !== '>',
    kind,
    itemSize,
    fortran: fortranMatch[1] === 'True',
    shape,
    dataOffset: start + headerLen,
  };
}

/** numpy's name of the header's type: float64, int8, uint16, bool, ... */
export function dtypeName(h: Pick<NpyHeader, 'kind' | 'itemSize'>): string {
  if (h.kind === 'b') return 'bool';
  return `${h.kind === 'f' ? 'float' : h.kind === 'i' ? 'int' : 'uint'}${h.itemSize * 8}`;
}

/** IEEE half precision to a double (float16 has no DataView getter in Node 20). */
function half(bits: number): number {
  const sign = bits & 0x8000 ? -1 : 1;
  const exp = (bits >> 10) & 0x1f;
  const frac = bits & 0x3ff;
  if (exp === 0) return sign * frac * 2 ** -24;
  if (exp === 31) return frac ? NaN : sign * Infinity;
  return sign * (1 + frac / 1024) * 2 ** (exp - 15);
}

/** Decodes `count` items of the header's type from `bytes` into doubles. */
export function decodeItems(
  h: Pick<NpyHeader, 'kind' | 'itemSize' | 'littleEndian'>,
  bytes: Buffer,
  count: number,
): Float64Array {
  const out = new Float64Array(count);
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const le = h.littleEndian;
  const s = h.itemSize;
  const key = `${h.kind}${s}`;
  switch (key) {
    case 'f8':
      for (let k = 0; k < count; k++) out[k] = dv.getFloat64(k * 8, le);
      break;
    case 'f4':
      for (let k = 0; k < count; k++) out[k] = dv.getFloat32(k * 4, le);
      break;
    case 'f2':
      for (let k = 0; k < count; k++) out[k] = half(dv.getUint16(k * 2, le));
      break;
    case 'i1':
      for (let k = 0; k < count; k++) out[k] = dv.getInt8(k);
      break;
    case 'u1':
    case 'b1':
      for (let k = 0; k < count; k++) out[k] = dv.getUint8(k);
      break;
    case 'i2':
      for (let k = 0; k < count; k++) out[k] = dv.getInt16(k * 2, le);
      break;
    case 'u2':
      for (let k = 0; k < count; k++) out[k] = dv.getUint16(k * 2, le);
      break;
    case 'i4':
      for (let k = 0; k < count; k++) out[k] = dv.getInt32(k * 4, le);
      break;
    case 'u4':
      for (let k = 0; k < count; k++) out[k] = dv.getUint32(k * 4, le);
      break;
    case 'i8':
      for (let k = 0; k < count; k++) out[k] = Number(dv.getBigInt64(k * 8, le));
      break;
    case 'u8':
      for (let k = 0; k < count; k++) out[k] = Number(dv.getBigUint64(k * 8, le));
      break;
    default:
      throw new Error(`no decoder for ${key}`);
  }
  return out;
}

async function readAt(fh: FileHandle, position: number, length: number): Promise<Buffer> {
  const buf = Buffer.alloc(length);
  let got = 0;
  while (got < length) {
    const { bytesRead } = await fh.read(buf, got, length - got, position + got);
    if (bytesRead === 0) break;
    got += bytesRead;
  }
  return buf.subarray(0, got);
}

/**
 * Reads a .npy file. With `stackIndex` on a C-order 3-D array, only that subject's slice
 * (along axis 0) is read from disk; the result is then that slice as a 2-D array.
 */
export async function readNpy(file: string, stackIndex?: number): Promise<NdArray> {
  let fh: FileHandle | undefined;
  try {
    try {
      fh = await open(file, 'r');
    } catch (e) {
      throw fsError(file, e);
    }
    const size = (await fh.stat()).size;
    if (size === 0) throw new InputFileError(file, 'empty file (0 bytes)', 'empty-file');
    const first = await readAt(fh, 0, Math.min(size, 12));
    let headLen = 12;
    if (first.length >= 12 && MAGIC.every((b, k) => first[k] === b)) {
      headLen = first[6] === 1 ? 10 + first.readUInt16LE(8) : 12 + first.readUInt32LE(8);
    }
    const head = await readAt(fh, 0, Math.min(size, headLen));
    const h = parseNpyHeader(file, head);
    const count = h.shape.reduce((a, b) => a * b, 1);
    const need = count * h.itemSize;
    const have = size - h.dataOffset;
    if (have < need) {
      throw new InputFileError(
        file,
        `truncated: shape (${h.shape.join(', ')}) needs ${need} bytes of data but the file holds ${have}`,
        'truncated',
      );
    }
    // numpy writes exactly the array after the header; more bytes mean the header's shape is wrong.
    if (have > need) {
      throw new InputFileError(
        file,
        `holds ${have} bytes of data but the header's shape (${h.shape.join(', ')}) of ${dtypeName(h)} needs ${need}; the header does not describe the data`,
        'bad-format',
      );
    }
    const dtype = dtypeName(h);
    if (stackIndex !== undefined && h.shape.length === 3 && !h.fortran) {
      const [s, a, b] = h.shape;
      if (!Number.isInteger(stackIndex) || stackIndex < 0 || stackIndex >= s) {
        throw new InputFileError(
          file,
          `stack index ${stackIndex} is outside the stack of ${s} matrices`,
          'stack-index',
        );
      }
      const bytes = await readAt(fh, h.dataOffset + stackIndex * a * b * h.itemSize, a * b * h.itemSize);
      return { shape: [a, b], order: 'C', data: decodeItems(h, bytes, a * b), dtype };
    }
    const bytes = await readAt(fh, h.dataOffset, need);
    return { shape: h.shape, order: h.fortran ? 'F' : 'C', data: decodeItems(h, bytes, count), dtype };
  } finally {
    await fh?.close();
  }
}
