/**
 * One door to every matrix file: dispatches by extension to the delimited text (.csv, .tsv,
 * .txt), NumPy (.npy) and MATLAB level-5 (.mat) readers. A file holds either one 2-D table
 * (a square matrix, or T × N region time series) or a 3-D stack of them, one per subject.
 */
import { extname } from 'node:path';
import type { SquareMatrix } from '../engine/types.ts';
import { as2D, stackAxis, stackSlice } from './array.ts';
import type { Matrix2D, NdArray } from './array.ts';
import { readDelimited } from './delimited.ts';
import { InputFileError } from './errors.ts';
import { readMat } from './mat.ts';
import { readNpy } from './npy.ts';

export { InputFileError } from './errors.ts';

export type MatrixFormat = 'delimited' | 'npy' | 'mat';

export const MATRIX_EXTENSIONS: Record<string, MatrixFormat> = {
  '.csv': 'delimited',
  '.tsv': 'delimited',
  '.txt': 'delimited',
  '.npy': 'npy',
  '.mat': 'mat',
};

export function formatOf(file: string): MatrixFormat | null {
  return MATRIX_EXTENSIONS[extname(file).toLowerCase()] ?? null;
}

/** Which part of a file to read: a .mat variable and/or a subject of a 3-D stack (0-based). */
export interface MatrixPick {
  variable?: string;
  stackIndex?: number;
  /** The file holds time series, not a square matrix: no guessing of header rows from squareness. */
  timeSeries?: boolean;
}

/** What a file holds, read whole. */
export type ArrayFile =
  | { format: MatrixFormat; variable: string | null; kind: 'matrix'; matrix: Matrix2D }
  | {
      format: MatrixFormat;
      variable: string | null;
      kind: 'stack';
      /** Number of 2-D tables (subjects) in the stack. */
      count: number;
      /** Shape of each table. */
      rows: number;
      cols: number;
      slice(index: number): Matrix2D;
    };

function wrap(file: string, format: MatrixFormat, variable: string | null, arr: NdArray): ArrayFile {
  // MATLAB has no 1-D arrays and drops trailing singleton dimensions; NumPy keeps them.
  const shape =
    arr.shape.length > 2 && arr.shape[arr.shape.length - 1] === 1 ? arr.shape.slice(0, -1) : arr.shape;
  if (shape.length >= 2 && shape.length <= 3 && shape.some((d) => d === 0)) {
    throw new InputFileError(
      file,
      `${variable ? `variable '${variable}' ` : ''}holds an empty array of shape (${shape.join(', ')})`,
      'empty-file',
    );
  }
  if (shape.length === 2) return { format, variable, kind: 'matrix', matrix: as2D(file, { ...arr, shape }) };
  if (shape.length === 3) {
    const axis = stackAxis(shape, format === 'mat' ? 'matlab' : 'numpy');
    const a = { ...arr, shape };
    const count = shape[axis];
    return {
      format,
      variable,
      kind: 'stack',
      count,
      rows: axis === 0 ? shape[1] : shape[0],
      cols: axis === 0 ? shape[2] : shape[1],
      slice: (i) => {
        if (!Number.isInteger(i) || i < 0 || i >= count) {
          throw new InputFileError(
            file,
            `stack index ${i} is outside the stack of ${count} matrices`,
            'stack-index',
          );
        }
        return stackSlice(a, axis, i);
      },
    };
  }
  throw new InputFileError(
    file,
    `holds a ${shape.length}-D array of shape (${shape.join(', ')}); expected a 2-D matrix or a 3-D stack (subjects × N × N)`,
    'bad-shape',
  );
}

/** Reads a whole matrix file: one table or a stack. */
export async function readArrayFile(file: string, pick: MatrixPick = {}): Promise<ArrayFile> {
  const format = formatOf(file);
  switch (format) {
    case 'delimited':
      return {
        format,
        variable: null,
        kind: 'matrix',
        matrix: await readDelimited(file, { squareHint: !pick.timeSeries }),
      };
    case 'npy':
      return wrap(file, format, null, await readNpy(file));
    case 'mat': {
      const { variable, array } = await readMat(file, pick.variable);
      return wrap(file, format, variable, array);
    }
    default:
      throw new InputFileError(
        file,
        `unknown matrix file type '${extname(file)}' (use .csv, .tsv, .txt, .npy or .mat)`,
        'unknown-format',
      );
  }
}

/**
 * One 2-D table from a file: the file's only table, or the `stackIndex`-th of a stack.
 * A .npy stack in C order is read slice by slice from disk.
 */
export async function readTable2D(file: string, pick: MatrixPick = {}): Promise<Matrix2D> {
  if (formatOf(file) === 'npy' && pick.stackIndex !== undefined) {
    const arr = await readNpy(file, pick.stackIndex);
    const f = wrap(file, 'npy', null, arr);
    if (f.kind === 'matrix') return f.matrix;
    return f.slice(pick.stackIndex);
  }
  const f = await readArrayFile(file, pick);
  if (f.kind === 'matrix') {
    if (pick.stackIndex !== undefined && pick.stackIndex !== 0) {
      throw new InputFileError(
        file,
        `holds one matrix, not a stack; stack index ${pick.stackIndex} does not exist`,
        'stack-index',
      );
    }
    return f.matrix;
  }
  if (pick.stackIndex === undefined) {
    throw new InputFileError(
      file,
      `holds a stack of ${f.count} matrices (${f.rows} × ${f.cols} each); pick one by its stack index`,
      'stack-index',
    );
  }
  return f.slice(pick.stackIndex);
}

/** Reads one square matrix (the `loopwise diagram` door and every subject load go through here). */
export async function readMatrixFile(file: string, pick: MatrixPick = {}): Promise<SquareMatrix> {
  const m = await readTable2D(file, pick);
  if (m.rows !== m.cols) {
    throw new InputFileError(file, `not square: ${m.rows} rows × ${m.cols} columns`, 'not-square');
  }
  return { n: m.rows, values: m.values };
}
