/**
 * The in-memory forms the readers hand over: a row-major 2-D table of numbers (a matrix or a
 * T × N block of time series) and a 3-D stack of such tables as stored on disk.
 */
import { InputFileError } from './errors.ts';

/** A rows × cols table of numbers, row-major; missing cells are NaN. */
export interface Matrix2D {
  rows: number;
  cols: number;
  values: Float64Array;
  /** Names from a header row, when the file had one. */
  colLabels: string[] | null;
  /** Names from a first label column, when the file had one. */
  rowLabels: string[] | null;
  /** The stored type when the file has one ('float64', 'int8', 'uint16', 'bool', ...). */
  dtype?: string;
  /** What the reader noticed without refusing the file (e.g. the text was not UTF-8). */
  notes?: Array<{ code: string; message: string }>;
}

/**
 * A numeric array as stored: `shape` in the file's own axis order, `data` in C order (last axis
 * fastest) or Fortran order (first axis fastest).
 */
export interface NdArray {
  shape: number[];
  order: 'C' | 'F';
  data: Float64Array;
  /** The stored type ('float64', 'int8', 'uint16', 'bool', ...). */
  dtype?: string;
}

/** Offset of element (a, b, c) of a 3-D array. */
function offset3(shape: number[], order: 'C' | 'F', a: number, b: number, c: number): number {
  const [d0, d1, d2] = shape;
  return order === 'C' ? (a * d1 + b) * d2 + c : a + d0 * (b + d1 * c);
}

/**
 * Which axis of a 3-D array runs over subjects. The axis whose two companions are equal wins
 * (subjects × N × N or N × N × subjects); when all three agree or none do, the storage's own
 * custom decides: axis 0 for NumPy (subjects × N × N), the last axis for MATLAB (N × N × subjects).
 */
export function stackAxis(shape: number[], custom: 'numpy' | 'matlab'): 0 | 2 {
  const [d0, d1, d2] = shape;
  if (d1 === d2 && d0 !== d1) return 0;
  if (d0 === d1 && d2 !== d0) return 2;
  return custom === 'numpy' ? 0 : 2;
}

export function as2D(file: string, arr: NdArray): Matrix2D {
  if (arr.shape.length !== 2) {
    throw new InputFileError(
      file,
      `holds a ${arr.shape.length}-D array of shape (${arr.shape.join(', ')}); expected a 2-D matrix`,
      'bad-shape',
    );
  }
  const [rows, cols] = arr.shape;
  const dtype = arr.dtype ? { dtype: arr.dtype } : {};
  if (arr.order === 'C') return { rows, cols, values: arr.data, colLabels: null, rowLabels: null, ...dtype };
  const values = new Float64Array(rows * cols);
  for (let j = 0; j < cols; j++) for (let i = 0; i < rows; i++) values[i * cols + j] = arr.data[i + rows * j];
  return { rows, cols, values, colLabels: null, rowLabels: null, ...dtype };
}

/** The index-th 2-D slice of a 3-D stack along `axis`, row-major. */
export function stackSlice(arr: NdArray, axis: 0 | 2, index: number): Matrix2D {
  const [d0, d1, d2] = arr.shape;
  const rows = axis === 0 ? d1 : d0;
  const cols = axis === 0 ? d2 : d1;
  const values = new Float64Array(rows * cols);
  for (let i = 0; i < rows; i++) {
    for (let j = 0; j < cols; j++) {
      values[i * cols + j] =
        arr.data[
          axis === 0 ? offset3(arr.shape, arr.order, index, i, j) : offset3(arr.shape, arr.order, i, j, index)
        ];
    }
  }
  return { rows, cols, values, colLabels: null, rowLabels: null, ...(arr.dtype ? { dtype: arr.dtype } : {}) };
}
