/** What a table on screen shows of its rows: filtered by text, sorted by one column. */
import { formatCell } from './format.ts';

type Cell = string | number | null;

export interface SortState {
  column: number;
  descending: boolean;
}

/**
 * Rows whose cells, as shown (formatted), contain every word of the filter, case-insensitively.
 * An empty filter keeps every row.
 */
export function filterRows<T extends { row: Cell[] }>(rows: T[], filter: string): T[] {
  const words = filter.toLowerCase().split(/\s+/).filter(Boolean);
  if (words.length === 0) return rows;
  return rows.filter(({ row }) => {
    const text = row.map((c) => formatCell(c).toLowerCase()).join('\t');
    return words.every((w) => text.includes(w));
  });
}

/** Orders two cells: numbers by value, text in natural order (sub-2 before sub-10), missing last. */
export function compareCells(a: Cell, b: Cell): number {
  const missing = (c: Cell) => c === null || (typeof c === 'number' && Number.isNaN(c));
  if (missing(a) || missing(b)) return missing(a) === missing(b) ? 0 : missing(a) ? 1 : -1;
  if (typeof a === 'number' && typeof b === 'number') return a - b;
  return String(a).localeCompare(String(b), undefined, { numeric: true, sensitivity: 'base' });
}

/** Rows sorted by one column (stable: ties keep their order); missing values last either way. */
export function sortRows<T extends { row: Cell[] }>(rows: T[], sort: SortState | null): T[] {
  if (!sort) return rows;
  const k = sort.column;
  const sign = sort.descending ? -1 : 1;
  return rows
    .map((r, i) => ({ r, i }))
    .sort((x, y) => {
      const a = x.r.row[k] ?? null;
      const b = y.r.row[k] ?? null;
      const aMissing = a === null || (typeof a === 'number' && Number.isNaN(a));
      const bMissing = b === null || (typeof b === 'number' && Number.isNaN(b));
      if (aMissing || bMissing) return aMissing === bMissing ? x.i - y.i : aMissing ? 1 : -1;
      return sign * compareCells(a, b) || x.i - y.i;
    })
    .map(({ r }) => r);
}
