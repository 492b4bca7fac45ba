/**
 * BIDS sessions tables (sub-XX/sub-XX_sessions.tsv): one row per session of a participant, keyed
 * by `session_id` (`ses-pre`, or `pre`), with values that change between scans (age at scan,
 * head motion, …). Their columns become scan-level covariates: the row of a session joins every
 * scan of that participant and session. Column kinds are decided over all the tables together,
 * so a column is numeric in every participant or in none.
 */
import type { ColumnInfo, CovariateValue, QcFinding } from '../api.ts';
import { naturalOrder, sessionLabel } from './bids.ts';
import { covariateColumns, isMissing, readStringTable } from './table.ts';
import type { StringTable } from './table.ts';

export interface SessionsTableFile {
  participant: string;
  /** Absolute path, already confined. */
  file: string;
  /** As reported (relative to the cohort folder). */
  rel: string;
}

export interface ScanCovariates {
  columns: ColumnInfo[];
  /** participant → session label → the row's values. */
  values: Map<string, Map<string, Record<string, CovariateValue>>>;
  /** participant → the table's reported name. */
  files: Map<string, string>;
}

const SESSION_ID = 'session_id';

export async function readSessionsTables(
  tables: SessionsTableFile[],
  kinds: Record<string, 'numeric' | 'categorical'> | undefined,
  findings: QcFinding[],
): Promise<ScanCovariates> {
  const read: Array<{ t: SessionsTableFile; table: StringTable; idCol: number }> = [];
  for (const t of tables) {
    try {
      const table = await readStringTable(t.file, { findings, rel: t.rel, table: 'sessions' });
      const idCol = table.header.findIndex((h) => h.toLowerCase() === SESSION_ID);
      if (idCol < 0) {
        findings.push({
          severity: 'warning',
          code: 'sessions-no-id',
          file: t.rel,
          subject: t.participant,
          message: `no session_id column (columns: ${table.header.join(', ')}); the table is not used`,
        });
        continue;
      }
      read.push({ t, table, idCol });
    } catch (e) {
      findings.push({
        severity: 'warning',
        code: 'sessions-unreadable',
        file: t.rel,
        subject: t.participant,
        message: e instanceof Error ? e.message : String(e),
      });
    }
  }

  // Kinds over every table at once: the union of the columns, absent cells missing.
  const names: string[] = [];
  for (const { table, idCol } of read)
    table.header.forEach((h, c) => {
      if (c !== idCol && h !== '' && !names.includes(h)) names.push(h);
    });
  const combined: StringTable = {
    header: names,
    rows: read.flatMap(({ table }) =>
      table.rows.map((r) => names.map((n) => r[table.header.indexOf(n)] ?? '')),
    ),
  };
  const together = covariateColumns('sessions tables', combined, new Set(), kinds, []);
  const decided: Record<string, 'numeric' | 'categorical'> = Object.fromEntries(
    together.columns.map((c) => [c.name, c.kind]),
  );

  const values = new Map<string, Map<string, Record<string, CovariateValue>>>();
  const files = new Map<string, string>();
  for (const { t, table, idCol } of read) {
    const cov = covariateColumns(t.rel, table, new Set([table.header[idCol]]), decided, findings);
    const bySession = new Map<string, Record<string, CovariateValue>>();
    table.rows.forEach((r, k) => {
      const cell = r[idCol];
      if (isMissing(cell)) {
        findings.push({
          severity: 'warning',
          code: 'sessions-empty-id',
          file: t.rel,
          subject: t.participant,
          message: `row ${k + 2} has no session_id; the row is skipped`,
          where: [k + 1, idCol],
        });
        return;
      }
      const label = sessionLabel(cell);
      if (bySession.has(label)) {
        findings.push({
          severity: 'warning',
          code: 'sessions-duplicate-id',
          file: t.rel,
          subject: t.participant,
          message: `session ${label} is on more than one row; the first is used`,
          where: [k + 1, idCol],
        });
        return;
      }
      bySession.set(label, cov.values[k]);
    });
    values.set(t.participant, bySession);
    files.set(t.participant, t.rel);
  }
  const columns = together.columns.map((c) =>
    c.kind === 'categorical' ? { ...c, levels: [...(c.levels ?? [])].sort(naturalOrder.compare) } : c,
  );
  return { columns, values, files };
}
