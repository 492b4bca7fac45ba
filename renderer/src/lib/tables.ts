/** Reading the result tables by column name, and writing them back out as text. */
import type { Table } from '../../../electron/api.ts';
import { MISSING_SPELLINGS, MISSING_VALUE, scanId } from '../../../electron/contract.ts';

export type Cell = string | number | null;

/**
 * The scan key of a row of a service table: the participant, plus `_ses-LABEL` where the table has
 * a session column (the key the service's subject entries carry).
 */
export function scanKey(r: Record<string, Cell>, idColumn: string): string {
  const id = String(r[idColumn]);
  const session = r.session;
  return scanId(id, session === null || session === undefined || session === '' ? null : String(session));
}

/** Rows as objects, column → value. */
export function records(table: Table): Array<Record<string, Cell>> {
  return table.rows.map((r) => Object.fromEntries(table.columns.map((c, i) => [c, r[i] ?? null])));
}

export function asNumber(v: Cell): number | null {
  if (typeof v === 'number') return Number.isFinite(v) ? v : null;
  if (typeof v === 'string' && !MISSING_SPELLINGS.includes(v.trim())) {
    const x = Number(v);
    return Number.isFinite(x) ? x : null;
  }
  return null;
}

function cellText(v: Cell, sep: string): string {
  if (v === null) return MISSING_VALUE;
  if (typeof v === 'number') return v === Infinity ? 'inf' : v === -Infinity ? '-inf' : String(v);
  // RFC 4180 quoting for CSV; TSV cells cannot hold tabs or newlines, so they are replaced.
  if (sep === '\t') return v.replace(/[\t\r\n]+/g, ' ');
  return /[",\r\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
}

/** The table as TSV or CSV text, missing values as NA (as the service writes them). */
export function tableText(table: Table, format: 'tsv' | 'csv' = 'tsv'): string {
  const sep = format === 'tsv' ? '\t' : ',';
  const line = (cells: Cell[]) => cells.map((c) => cellText(c, sep)).join(sep);
  return [line(table.columns), ...table.rows.map(line)].join('\n') + '\n';
}
