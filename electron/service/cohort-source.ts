/**
 * Where the service gets subjects from. The run only needs the cohort report (the subject list in
 * order, with covariates and usability) and a way to load one subject's matrix on demand, so tests
 * can inject in-memory cohorts and the matrices are never all held at once.
 *
 * openCohortSource below is a MINIMAL STAND-IN for the cohort readers of electron/io/cohort.ts
 * (openCohort / loadSubjectMatrix), to be replaced by them when they land: it reads a folder of
 * delimited-text matrices, one per subject, plus an optional BIDS-style participants.tsv.
 */
import { readFile, readdir } from 'node:fs/promises';
import { basename, join, resolve } from 'node:path';
import type { CohortReport, CovariateValue, OpenCohortRequest, QcFinding, SubjectEntry } from '../api.ts';
import type { SquareMatrix } from '../engine/types.ts';
import { readMatrixFile } from '../io/read-matrix.ts';

export interface CohortSource {
  report: CohortReport;
  load(entry: SubjectEntry): Promise<SquareMatrix>;
}

const MATRIX_EXT = /\.(csv|tsv|txt)$/i;

/** sub-01_task-rest_conn.csv → sub-01; anything else → the name without its extension. */
export function subjectIdOf(file: string): string {
  const name = basename(file).replace(MATRIX_EXT, '');
  const m = /^(sub-[A-Za-z0-9]+)/.exec(name);
  return m ? m[1] : name;
}

function parseCell(s: string): CovariateValue {
  const t = s.trim();
  if (t === '' || t.toLowerCase() === 'n/a') return null;
  const x = Number(t);
  return Number.isFinite(x) ? x : t;
}

/** Reads a participants table (tab-separated, first column participant_id). */
async function readParticipants(
  file: string,
): Promise<{ columns: string[]; rows: Map<string, Record<string, CovariateValue>> }> {
  const lines = (await readFile(file, 'utf8')).split(/\r?\n/).filter((l) => l.trim() !== '');
  if (lines.length === 0) throw new Error(`${file}: empty participants table`);
  const columns = lines[0].split('\t').map((c) => c.trim());
  const rows = new Map<string, Record<string, CovariateValue>>();
  for (const line of lines.slice(1)) {
    const cells = line.split('\t');
    const row: Record<string, CovariateValue> = {};
    columns.forEach((c, i) => (row[c] = parseCell(cells[i] ?? '')));
    rows.set(String(cells[0]).trim(), row);
  }
  return { columns, rows };
}

export async function openCohortSource(req: OpenCohortRequest): Promise<CohortSource> {
  const root = resolve(req.dir);
  let names: string[];
  try {
    names = (await readdir(root)).sort();
  } catch (e) {
    throw new Error(
      `${root}: cannot read the cohort folder (${(e as NodeJS.ErrnoException).code ?? String(e)})`,
    );
  }
  const participantsFile = req.participants
    ? resolve(req.participants)
    : names.includes('participants.tsv')
      ? join(root, 'participants.tsv')
      : null;
  const participants = participantsFile ? await readParticipants(participantsFile) : null;
  const findings: QcFinding[] = [];
  const subjects: SubjectEntry[] = [];
  const seen = new Set<string>();
  for (const name of names) {
    if (!MATRIX_EXT.test(name) || name.startsWith('.') || join(root, name) === participantsFile) continue;
    if (/^(participants|nodes|atlas)\b/i.test(name)) continue;
    const id = subjectIdOf(name);
    if (seen.has(id)) {
      findings.push({
        severity: 'error',
        code: 'duplicate-id',
        file: name,
        subject: id,
        message: `${name}: a second matrix for subject ${id}; only the first is used`,
      });
      continue;
    }
    seen.add(id);
    const covariates = participants?.rows.get(id) ?? {};
    subjects.push({ id, source: { file: join(root, name) }, covariates, usable: true });
  }
  return {
    report: {
      root,
      n: null,
      subjects,
      columns:
        participants?.columns.slice(1).map((name) => ({ name, kind: 'categorical' as const, missing: 0 })) ??
        [],
      nodes: null,
      findings,
      deadRegions: [],
    },
    load: (entry) => readMatrixFile(entry.source.file),
  };
}
