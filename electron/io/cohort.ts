/**
 * Opening a cohort: find every scan's matrix (or time series), read each once to check it, and
 * report. The report keeps where each matrix lives, never the values: loadSubjectMatrix reads
 * one scan again when the analysis needs it, so memory stays with one matrix at a time.
 *
 * Matching a participant to its files, in this order:
 *   1. a participants-table column naming the file (OpenCohortRequest.fileColumn, or a column
 *      called matrix_file, file, filename or path), relative to the cohort folder;
 *   2. a single 3-D stack file (.npy or .mat) in the folder: its matrices are the participants in
 *      table order;
 *   3. the participant_id as a whole token of the file's path below the cohort folder
 *      (sub-1 matches sub-1_conn.tsv and sub-1/func/..., never sub-10_conn.tsv); an id written
 *      without the BIDS 'sub-' prefix also matches 'sub-<id>'.
 * Without a participants table every matrix file is a scan, named by its sub-<label> token or
 * else its file name. Ids and paths are compared after Unicode NFC normalisation.
 *
 * Sessions: a BIDS `ses-<label>` entity in a file's name (or folder) makes it the scan of that
 * session, with the row key `${participant}_ses-${label}`; a participant may have one file per
 * session, and two files for one scan are an ambiguity. sub-XX_sessions.tsv rows join their
 * scans as covariates (by session_id). Without `ses-` entities nothing of this applies.
 *
 * Confinement: every file the cohort refers to (matrices found by walking the folder, through
 * symlinks too; file-column paths; sessions tables; participants and node tables found in the
 * folder) must resolve inside the cohort folder or OpenCohortOptions.allowedRoots. A file outside
 * is a QC error and is never read. Tables named explicitly in the request are the caller's
 * choice (each door confines them to its own roots) and are read where they are.
 */
import { readdir, stat } from 'node:fs/promises';
import { basename, extname, isAbsolute, join, relative, resolve, sep } from 'node:path';
import type {
  CohortReport,
  ColumnInfo,
  CovariateValue,
  MatrixSource,
  NodeInfo,
  OpenCohortRequest,
  QcFinding,
  SubjectEntry,
} from '../api.ts';
import { ledoitWolf, pearson } from '../engine/correlation.ts';
import { dropRegions } from '../engine/transform.ts';
import type { InputKind } from '../engine/transform.ts';
import type { SquareMatrix } from '../engine/types.ts';
import type { Matrix2D } from './array.ts';
import {
  isTableFile,
  naturalOrder,
  nfc,
  participantOf,
  participantTokens,
  scanId,
  sessionOf,
  sessionsTableOf,
  tokenRe,
} from './bids.ts';
import { confinement, outsideFinding } from './confine.ts';
import type { Confinement } from './confine.ts';
import { InputFileError } from './errors.ts';
import { checkSquare, checkTimeSeries } from './qc.ts';
import type { CheckResult } from './qc.ts';
import { formatOf, readArrayFile, readTable2D } from './read-matrix.ts';
import type { ArrayFile } from './read-matrix.ts';
import { readSessionsTables } from './sessions.ts';
import { covariateColumns, isMissing, readNodeTable, readStringTable } from './table.ts';

export interface OpenCohortOptions {
  /** What the matrices hold; the range and diagonal checks apply to correlations. Default 'correlation'. */
  input?: InputKind;
  /** Regions (0-based) to be dropped from every subject: they are left out of the checks. */
  dropRegions?: number[];
  /** As TransformOptions.symmetryTolerance (default 1e-6). */
  symmetryTolerance?: number;
  /** Files read at once (default 4). */
  concurrency?: number;
  onProgress?: (done: number, total: number) => void;
  /** Folders besides the cohort folder that the cohort's files may resolve into (default none). */
  allowedRoots?: string[];
}

export interface LoadOptions {
  /** How time series become a correlation matrix (default 'pearson'). */
  correlation?: 'pearson' | 'ledoit-wolf';
  /** Regions (0-based) removed from the matrix. */
  dropRegions?: number[];
}

const FILE_COLUMNS = ['matrix_file', 'file', 'filename', 'path'];

/** What the walk of the cohort folder found: matrix candidates and tables, absolute paths, sorted. */
interface Listing {
  matrices: string[];
  tables: string[];
}

/** What every step of opening a cohort shares. */
interface Scope {
  root: string;
  req: OpenCohortRequest;
  conf: Confinement;
  /** A path as reported: relative to the cohort folder (forward slashes) where it lies below it. */
  rel: (p: string) => string;
  findings: QcFinding[];
  add: (f: QcFinding) => void;
}

interface Pending {
  entry: SubjectEntry;
  /** Errors found before reading (duplicate id, several files, a file outside the folders). */
  preErrors: boolean;
  /** The file resolves outside the chosen folders: never read. */
  outside: boolean;
}

interface ParticipantsTable {
  file: string;
  ids: string[];
  covariates: Array<Record<string, CovariateValue>>;
  fileCells: string[] | null;
  columns: ColumnInfo[];
}

const byName = (a: string, b: string): number => (a < b ? -1 : a > b ? 1 : 0);

/** Every file below root, sorted, skipping hidden folders; symlinked files are listed, symlinked folders not followed. */
async function listFiles(root: string, scope: Pick<Scope, 'add' | 'rel'>): Promise<Listing> {
  const out: Listing = { matrices: [], tables: [] };
  const walk = async (dir: string): Promise<void> => {
    const entries = await readdir(dir, { withFileTypes: true });
    for (const e of entries) {
      if (e.name.startsWith('.') || e.name === 'node_modules') continue;
      const p = join(dir, e.name);
      let isDir = e.isDirectory();
      if (e.isSymbolicLink()) {
        try {
          isDir = (await stat(p)).isDirectory();
        } catch {
          isDir = false; // A broken link: listed, and reported when read.
        }
        if (isDir) {
          scope.add({
            severity: 'warning',
            code: 'symlink-folder',
            file: scope.rel(p),
            subject: null,
            message: `${scope.rel(p)} is a link to a folder; links to folders are not followed`,
          });
          continue;
        }
      }
      if (isDir) await walk(p);
      else if (isTableFile(e.name)) out.tables.push(p);
      else if (formatOf(e.name)) out.matrices.push(p);
    }
  };
  await walk(root);
  out.matrices.sort(byName);
  out.tables.sort(byName);
  return out;
}

async function exists(p: string): Promise<boolean> {
  try {
    return (await stat(p)).isFile();
  } catch {
    return false;
  }
}

/** sub-07_task-rest.tsv → sub-07; otherwise the file name without its extension. */
export function subjectIdOfFile(rel: string): string {
  return participantOf(rel) ?? nfc(basename(rel, extname(rel)));
}

/** Runs `work` over items with at most `limit` at a time, in order of start. */
async function pool<T>(
  items: T[],
  limit: number,
  work: (item: T, k: number) => Promise<void>,
): Promise<void> {
  let next = 0;
  const run = async (): Promise<void> => {
    while (next < items.length) {
      const k = next++;
      await work(items[k], k);
    }
  };
  await Promise.all(Array.from({ length: Math.min(limit, items.length) }, run));
}

/**
 * The participants and node tables: named in the request (must exist), else participants.tsv /
 * participants.csv and nodes.tsv / nodes.csv in the cohort folder (confined like every file).
 */
async function locateTables(scope: Scope): Promise<{ participants: string | null; nodes: string | null }> {
  const { root, req } = scope;
  const found = async (names: string[], what: string): Promise<string | null> => {
    const present: string[] = [];
    for (const name of names) if (await exists(join(root, name))) present.push(join(root, name));
    if (present.length === 0) return null;
    if (present.length > 1) {
      scope.add({
        severity: 'warning',
        code: `${what}-two-tables`,
        file: scope.rel(present[0]),
        subject: null,
        message: `both ${present.map(scope.rel).join(' and ')} exist; ${scope.rel(present[0])} is used (BIDS names the .tsv), ${scope.rel(present[1])} is ignored — remove one to be sure which is meant`,
      });
    }
    if ((await scope.conf.place(present[0])) === 'outside') {
      scope.add(outsideFinding(scope.rel(present[0]), null, `the ${what} table`));
      return null;
    }
    return present[0];
  };
  let participants: string | null;
  // Tables named explicitly must exist: a typo there is the caller's mistake, not the cohort's.
  if (req.participants) {
    participants = resolve(root, req.participants);
    if (!(await exists(participants))) {
      throw new InputFileError(participants, 'no such participants table', 'no-participants-file');
    }
  } else participants = await found(['participants.tsv', 'participants.csv'], 'participants');
  let nodes: string | null;
  if (req.nodes) {
    nodes = resolve(root, req.nodes);
    if (!(await exists(nodes))) throw new InputFileError(nodes, 'no such node table', 'no-nodes-file');
  } else nodes = await found(['nodes.tsv', 'nodes.csv'], 'nodes');
  return { participants, nodes };
}

async function readNodes(scope: Scope, file: string): Promise<NodeInfo[] | null> {
  try {
    return await readNodeTable(file, scope.findings, scope.rel(file));
  } catch (e) {
    scope.add({
      severity: 'warning',
      code: 'nodes-unreadable',
      file: scope.rel(file),
      subject: null,
      message: detail(e),
    });
    return null;
  }
}

/** The participants table: ids (NFC), covariates, the file column's cells; null when unusable. */
async function readParticipants(scope: Scope, file: string): Promise<ParticipantsTable | null> {
  const { req, add } = scope;
  const pf = scope.rel(file);
  try {
    const t = await readStringTable(file, { findings: scope.findings, rel: pf, table: 'participants' });
    const idCol = t.header.findIndex((h) => h.toLowerCase() === 'participant_id');
    if (idCol < 0) {
      add({
        severity: 'error',
        code: 'participants-no-id',
        file: pf,
        subject: null,
        message: `no participant_id column (columns: ${t.header.join(', ')}); subjects are named from their files instead`,
      });
      return null;
    }
    const fileColName =
      req.fileColumn ?? t.header.find((h) => FILE_COLUMNS.includes(h.toLowerCase())) ?? null;
    if (req.fileColumn && !t.header.includes(req.fileColumn)) {
      throw new InputFileError(
        file,
        `has no column '${req.fileColumn}' (columns: ${t.header.join(', ')})`,
        'usage',
      );
    }
    const fileCol = fileColName ? t.header.indexOf(fileColName) : -1;
    const skip = new Set([t.header[idCol], ...(fileColName ? [fileColName] : [])]);
    for (const name of Object.keys(req.columnKinds ?? {})) {
      if (!t.header.includes(name)) {
        add({
          severity: 'warning',
          code: 'covariate-unknown',
          file: pf,
          subject: null,
          message: `no column '${name}' to read as ${req.columnKinds![name]} (columns: ${t.header.join(', ')})`,
        });
      }
    }
    const cov = covariateColumns(pf, t, skip, req.columnKinds, scope.findings);
    t.rows.forEach((r, k) => {
      if (r.length !== t.header.length) {
        add({
          severity: 'warning',
          code: 'participants-ragged',
          file: pf,
          subject: r[idCol]?.trim() ?? null,
          message: `row ${k + 2} has ${r.length} fields, the header ${t.header.length}`,
          where: [k + 1, Math.min(r.length, t.header.length)],
        });
      }
    });
    return {
      file,
      ids: t.rows.map((r) => nfc((r[idCol] ?? '').trim())),
      covariates: cov.values,
      fileCells: fileCol >= 0 ? t.rows.map((r) => (r[fileCol] ?? '').trim()) : null,
      columns: cov.columns,
    };
  } catch (e) {
    if (e instanceof InputFileError && e.code === 'usage') throw e;
    add({
      severity: 'error',
      code: 'participants-unreadable',
      file: pf,
      subject: null,
      message: detail(e),
    });
    return null;
  }
}

/** The scans found, in order, with what is known of each before reading. */
class Scans {
  readonly pending: Pending[] = [];
  constructor(
    private readonly scope: Scope,
    private readonly outside: Set<string>,
  ) {}

  add(
    participant: string,
    session: string | null,
    source: MatrixSource,
    covariates: Record<string, CovariateValue>,
  ): Pending {
    const p: Pending = {
      entry: {
        id: scanId(participant, session),
        participant,
        session,
        source: this.scope.req.timeSeries ? { ...source, timeSeries: true } : source,
        covariates,
        usable: true,
      },
      preErrors: false,
      outside: this.outside.has(source.file),
    };
    if (p.outside) {
      p.preErrors = true;
      this.scope.add(outsideFinding(this.scope.rel(source.file), p.entry.id, 'the matrix file'));
    }
    this.pending.push(p);
    return p;
  }

  /** A scan whose file is outside the chosen folders (already reported): listed as unusable, never read. */
  refused(
    participant: string,
    session: string | null,
    source: MatrixSource,
    covariates: Record<string, CovariateValue>,
  ): void {
    const p = this.add(participant, session, source, covariates);
    p.preErrors = true;
    p.outside = true;
  }
}

/** A participant's files grouped by session (null: the file names none), sessions in natural order. */
function bySession(files: string[], rel: (p: string) => string): Array<[string | null, string[]]> {
  const groups = new Map<string | null, string[]>();
  for (const f of files) {
    const s = sessionOf(rel(f));
    groups.set(s, [...(groups.get(s) ?? []), f]);
  }
  return [...groups].sort((a, b) =>
    a[0] === null ? -1 : b[0] === null ? 1 : naturalOrder.compare(a[0], b[0]),
  );
}

/** A participants table's ids: their rows, with empty ids and ids without 'sub-' reported. */
interface TableIds {
  pf: string;
  ids: string[];
  rowsOf: Map<string, number[]>;
}

function tableIds(scope: Scope, table: ParticipantsTable): TableIds {
  const { rel, add } = scope;
  const pf = rel(table.file);
  const rowsOf = new Map<string, number[]>();
  table.ids.forEach((id, k) => {
    if (id === '' || isMissing(id)) {
      add({
        severity: 'error',
        code: 'empty-id',
        file: pf,
        subject: null,
        message: `row ${k + 2} has no participant_id; the row is skipped`,
        where: [k + 1, 0],
      });
      return;
    }
    rowsOf.set(id, [...(rowsOf.get(id) ?? []), k]);
  });
  const ids = [...rowsOf.keys()];
  for (const id of ids) {
    if (!id.startsWith('sub-')) {
      add({
        severity: 'warning',
        code: 'id-format',
        file: pf,
        subject: id,
        message: `participant_id '${id}' lacks the BIDS 'sub-' prefix; matched as '${id}' or 'sub-${id}'`,
      });
    }
  }
  return { pf, ids, rowsOf };
}

/** Each participant's file named in its row (relative to the cohort folder, confined to it). Returns the files matched. */
async function matchByFileColumn(
  scope: Scope,
  table: ParticipantsTable,
  { pf, ids, rowsOf }: TableIds,
  scans: Scans,
): Promise<Set<string>> {
  const { root, rel, add } = scope;
  const fileCells = table.fileCells!;
  const matched = new Set<string>();
  for (const id of ids) {
    const k = rowsOf.get(id)![0];
    const cellText = fileCells[k];
    if (isMissing(cellText)) {
      add({
        severity: 'error',
        code: 'no-matrix',
        file: pf,
        subject: id,
        message: `${id}: no file named in row ${k + 2}`,
      });
      continue;
    }
    const file = resolve(root, cellText);
    const place = await scope.conf.place(file);
    if (place === 'missing' || !(await exists(file))) {
      add({
        severity: 'error',
        code: 'no-matrix',
        file: pf,
        subject: id,
        message: `${id}: row ${k + 2} names '${cellText}', which does not exist`,
      });
      continue;
    }
    if (place === 'outside') {
      add(outsideFinding(cellText, id, `row ${k + 2} of ${pf} names`));
      scans.refused(id, sessionOf(basename(cellText)), { file }, table.covariates[k]);
      continue;
    }
    matched.add(file);
    scans.add(id, sessionOf(rel(file)), { file }, table.covariates[k]);
  }
  return matched;
}

/** The participants in table order, matrix by matrix of the one stack file. */
function matchStack(
  scope: Scope,
  table: ParticipantsTable,
  { pf, ids, rowsOf }: TableIds,
  stack: { file: string; data: ArrayFile },
  scans: Scans,
): void {
  const { rel, add } = scope;
  const { file, data } = stack;
  const count = data.kind === 'stack' ? data.count : 0;
  if (count !== ids.length) {
    add({
      severity: 'warning',
      code: 'stack-count',
      file: rel(file),
      subject: null,
      message: `the stack holds ${count} matrices but ${pf} lists ${ids.length} participants; matched in order, check that the order is the same`,
    });
  }
  ids.forEach((id, s) => {
    if (s >= count) {
      add({
        severity: 'error',
        code: 'no-matrix',
        file: pf,
        subject: id,
        message: `${id}: the stack has no matrix ${s + 1}`,
      });
      return;
    }
    const k = rowsOf.get(id)![0];
    scans.add(
      id,
      null,
      { file, stackIndex: s, ...(data.variable ? { variable: data.variable } : {}) },
      table.covariates[k],
    );
  });
  for (let s = ids.length; s < count; s++) {
    add({
      severity: 'warning',
      code: 'no-participant',
      file: rel(file),
      subject: null,
      message: `stack matrix ${s + 1} has no participant (only ${ids.length} in ${pf}); not analysed`,
    });
  }
}

/** Each participant's files by its id as a token of their paths, one scan per session. Returns the files matched. */
function matchByName(
  scope: Scope,
  table: ParticipantsTable,
  { pf, ids, rowsOf }: TableIds,
  files: string[],
  scans: Scans,
): Set<string> {
  const { rel, add } = scope;
  const matched = new Set<string>();
  // Index the sub-<label> tokens of every path, then match ids; ids without the prefix by scanning.
  const byToken = new Map<string, string[]>();
  for (const f of files) {
    for (const token of participantTokens(rel(f))) byToken.set(token, [...(byToken.get(token) ?? []), f]);
  }
  for (const id of ids) {
    let hits = byToken.get(id.startsWith('sub-') ? id : `sub-${id}`) ?? [];
    if (hits.length === 0 && !id.startsWith('sub-')) {
      const re = tokenRe(id);
      hits = files.filter((f) => re.test(nfc(rel(f))));
    }
    const k = rowsOf.get(id)![0];
    if (hits.length === 0) {
      add({
        severity: 'error',
        code: 'no-matrix',
        file: pf,
        subject: id,
        message: `${id}: no matrix file with '${id}' in its name`,
      });
      continue;
    }
    hits.forEach((f) => matched.add(f));
    for (const [session, group] of bySession(hits, rel)) {
      const p = scans.add(id, session, { file: group[0] }, table.covariates[k]);
      if (group.length > 1) {
        p.preErrors = true;
        add({
          severity: 'error',
          code: 'several-matrices',
          file: rel(group[0]),
          subject: p.entry.id,
          message: `${p.entry.id} matches ${group.length} files for one scan: ${group.map(rel).join(', ')}; keep one, name it in a file column, or narrow with match`,
        });
      }
    }
  }
  return matched;
}

/** Matching with a participants table: by file column, by a stack, or by the id in the path. */
async function matchWithTable(
  scope: Scope,
  table: ParticipantsTable,
  files: string[],
  stack: { file: string; data: ArrayFile } | null,
  scans: Scans,
): Promise<void> {
  const { rel, add } = scope;
  const found = tableIds(scope, table);
  const { pf, ids, rowsOf } = found;
  const duplicates = new Set(ids.filter((id) => rowsOf.get(id)!.length > 1));
  let matched: Set<string>;
  if (table.fileCells) matched = await matchByFileColumn(scope, table, found, scans);
  else if (stack) {
    matchStack(scope, table, found, stack, scans);
    matched = new Set([stack.file]);
  } else matched = matchByName(scope, table, found, files, scans);
  for (const p of scans.pending) {
    if (duplicates.has(p.entry.participant)) {
      p.preErrors = true;
      const rows = rowsOf.get(p.entry.participant)!.map((k) => k + 2);
      add({
        severity: 'error',
        code: 'duplicate-id',
        file: pf,
        subject: p.entry.id,
        message: `participant_id ${p.entry.participant} is on rows ${rows.join(' and ')}: which covariates belong to it?`,
        where: [rows[1] - 1, 0],
      });
    }
  }
  if (!stack) {
    for (const f of files) {
      if (matched.has(f)) continue;
      if ((await scope.conf.place(f)) === 'outside') {
        add(outsideFinding(rel(f), null, 'the matrix file'));
        continue;
      }
      add({
        severity: 'warning',
        code: 'no-participant',
        file: rel(f),
        subject: null,
        message: `${rel(f)} matches no participant_id in ${pf}; not analysed`,
      });
    }
  }
}

/** Matching without a participants table: every file a scan, named by its sub- and ses- entities. */
function matchFiles(
  scope: Scope,
  files: string[],
  stack: { file: string; data: ArrayFile } | null,
  scans: Scans,
  /** A participants table exists but could not be used (reported already). */
  unusableTable: boolean,
): void {
  const { rel, add } = scope;
  if (files.length === 0) {
    add({
      severity: 'error',
      code: 'no-matrices',
      file: null,
      subject: null,
      message: `no matrix files (.csv, .tsv, .txt, .npy, .mat) in ${scope.root}`,
    });
  }
  if (!unusableTable && files.length > 0) {
    add({
      severity: 'warning',
      code: 'no-participants',
      file: null,
      subject: null,
      message: 'no participants.tsv: subjects are named from their files and have no covariates',
    });
  }
  if (stack && stack.data.kind === 'stack') {
    const stem = basename(stack.file, extname(stack.file));
    const width = String(stack.data.count).length;
    for (let s = 0; s < stack.data.count; s++) {
      scans.add(
        `${stem}-${String(s + 1).padStart(width, '0')}`,
        null,
        {
          file: stack.file,
          stackIndex: s,
          ...(stack.data.variable ? { variable: stack.data.variable } : {}),
        },
        {},
      );
    }
    return;
  }
  const seen = new Map<string, string>();
  for (const f of files) {
    const participant = subjectIdOfFile(rel(f));
    const id = scanId(participant, sessionOf(rel(f)));
    const before = seen.get(id);
    if (before !== undefined) {
      add({
        severity: 'error',
        code: 'several-matrices',
        file: rel(f),
        subject: id,
        message: `${id} has two files for one scan: ${before} and ${rel(f)}; the second is not analysed`,
      });
      const p = scans.pending.find((q) => q.entry.id === id);
      if (p) p.preErrors = true;
      continue;
    }
    seen.set(id, rel(f));
    scans.add(participant, sessionOf(rel(f)), { file: f }, {});
  }
}

/**
 * Covariates of every scan: participant_id, session (with sessions), the participants row and
 * the scan's sessions-table row. Returns the report's columns.
 */
async function joinCovariates(
  scope: Scope,
  pending: Pending[],
  tables: string[],
  participantColumns: ColumnInfo[],
  participantsFile: string | null,
  sessions: string[] | null,
): Promise<ColumnInfo[]> {
  const { rel, add } = scope;
  let sessionColumns: ColumnInfo[] = [];
  if (sessions) {
    // sub-XX_sessions.tsv anywhere in the folder, for the participants that have scans.
    const participants = new Set(pending.map((p) => p.entry.participant));
    const candidates = new Map<string, string[]>();
    for (const t of tables) {
      const named = sessionsTableOf(t);
      // An id written without 'sub-' in the participants table owns sub-<id>_sessions.tsv.
      const owner =
        named === null
          ? null
          : participants.has(named)
            ? named
            : named.startsWith('sub-') && participants.has(named.slice(4))
              ? named.slice(4)
              : null;
      if (owner !== null) candidates.set(owner, [...(candidates.get(owner) ?? []), t]);
    }
    const chosen: Array<{ participant: string; file: string; rel: string }> = [];
    for (const [participant, list] of candidates) {
      const ranked = [...list].sort((a, b) => rel(a).split('/').length - rel(b).split('/').length);
      if (ranked.length > 1) {
        add({
          severity: 'warning',
          code: 'sessions-several',
          file: rel(ranked[0]),
          subject: participant,
          message: `${participant} has ${ranked.length} sessions tables (${ranked.map(rel).join(', ')}); ${rel(ranked[0])} is used`,
        });
      }
      if ((await scope.conf.place(ranked[0])) === 'outside') {
        add(outsideFinding(rel(ranked[0]), participant, 'the sessions table'));
        continue;
      }
      chosen.push({ participant, file: ranked[0], rel: rel(ranked[0]) });
    }
    const scan = await readSessionsTables(chosen, scope.req.columnKinds, scope.findings);
    const conflicts = new Set<string>();
    for (const p of pending) {
      const row =
        p.entry.session === null ? undefined : scan.values.get(p.entry.participant)?.get(p.entry.session);
      if (!row) continue;
      for (const [name, value] of Object.entries(row)) {
        const before = p.entry.covariates[name];
        const key = `${p.entry.participant}\0${name}`;
        if (name in p.entry.covariates && before !== value && !conflicts.has(key)) {
          conflicts.add(key);
          const sf = scan.files.get(p.entry.participant)!;
          add({
            severity: 'warning',
            code: 'covariate-conflict',
            file: sf,
            subject: p.entry.participant,
            message: `column '${name}' is in both ${participantsFile ? rel(participantsFile) : 'the participants table'} and ${sf} with different values for ${p.entry.participant}; the sessions table's (per-scan) value is used`,
          });
        }
      }
      p.entry.covariates = { ...p.entry.covariates, ...row };
    }
    sessionColumns = scan.columns;
  }
  // The always-present keys first, then the tables' columns.
  for (const p of pending) {
    const { participant, session } = p.entry;
    p.entry.covariates = {
      participant_id: participant,
      ...(sessions ? { session } : {}),
      ...p.entry.covariates,
    };
  }
  const names = new Set(sessionColumns.map((c) => c.name));
  const columns: ColumnInfo[] = [
    {
      name: 'participant_id',
      kind: 'categorical',
      levels: [...new Set(pending.map((p) => p.entry.participant))].sort(naturalOrder.compare),
      missing: 0,
    },
    ...(sessions
      ? [
          {
            name: 'session',
            kind: 'categorical' as const,
            levels: sessions,
            missing: pending.filter((p) => p.entry.session === null).length,
          },
        ]
      : []),
    ...participantColumns.filter((c) => !names.has(c.name) && c.name !== 'session'),
    ...sessionColumns.map((c) => ({
      ...c,
      missing: pending.filter((p) => (p.entry.covariates[c.name] ?? null) === null).length,
    })),
  ];
  return columns;
}

/** The matrix candidates (tables left out, narrowed by match), those outside the chosen folders, and a lone stack. */
async function candidates(
  scope: Scope,
  matrices: string[],
  located: { participants: string | null; nodes: string | null },
  table: ParticipantsTable | null,
): Promise<{ files: string[]; outside: Set<string>; stack: { file: string; data: ArrayFile } | null }> {
  const { req } = scope;
  const skipFiles = new Set([located.participants, located.nodes].filter((x): x is string => x !== null));
  let files = matrices.filter((f) => !skipFiles.has(f));
  if (req.match) {
    const match = nfc(req.match);
    files = files.filter((f) => nfc(basename(f)).includes(match));
  }
  const outside = new Set<string>();
  for (const f of files) if ((await scope.conf.place(f)) === 'outside') outside.add(f);

  // A single stack file is the whole cohort.
  let stack: { file: string; data: ArrayFile } | null = null;
  if (
    files.length === 1 &&
    formatOf(files[0]) !== 'delimited' &&
    !table?.fileCells &&
    !outside.has(files[0])
  ) {
    try {
      const data = await readArrayFile(files[0], { variable: req.variable, timeSeries: req.timeSeries });
      if (data.kind === 'stack') stack = { file: files[0], data };
    } catch {
      // Not readable: reported below as that subject's file.
    }
  }

  return { files, outside, stack };
}

/** The cohort's session labels (natural order), or null; warns of missing sessions and files naming none. */
function sessionsOf(scope: Scope, pending: Pending[]): string[] | null {
  const { rel, add } = scope;
  const labels = [...new Set(pending.map((p) => p.entry.session).filter((s): s is string => s !== null))];
  const sessions = labels.length > 0 ? labels.sort(naturalOrder.compare) : null;
  if (sessions) {
    const seen = new Map<string, Set<string | null>>();
    for (const p of pending) {
      if (!seen.has(p.entry.participant)) seen.set(p.entry.participant, new Set());
      seen.get(p.entry.participant)!.add(p.entry.session);
    }
    for (const [participant, theirs] of seen) {
      const missing = sessions.filter((s) => !theirs.has(s));
      if (missing.length > 0 && missing.length < sessions.length) {
        add({
          severity: 'warning',
          code: 'missing-session',
          file: null,
          subject: participant,
          message: `${participant} has no scan for session${missing.length > 1 ? 's' : ''} ${missing.join(', ')} (the cohort has ${sessions.join(', ')})`,
        });
      }
    }
    for (const p of pending) {
      if (p.entry.session === null) {
        add({
          severity: 'warning',
          code: 'no-session',
          file: rel(p.entry.source.file),
          subject: p.entry.id,
          message: `${rel(p.entry.source.file)} names no session (ses-…) although other files do; analysed as ${p.entry.id}`,
        });
      }
    }
  }
  return sessions;
}

export async function openCohort(
  req: OpenCohortRequest,
  options: OpenCohortOptions = {},
): Promise<CohortReport> {
  const root = resolve(req.dir);
  let isDir = false;
  try {
    isDir = (await stat(root)).isDirectory();
  } catch {
    throw new InputFileError(root, 'no such folder', 'no-cohort');
  }
  if (!isDir) throw new InputFileError(root, 'is not a folder', 'no-cohort');
  const findings: QcFinding[] = [];
  const scope: Scope = {
    root,
    req,
    conf: await confinement(root, options.allowedRoots),
    rel: (p: string): string => {
      const r = relative(root, p);
      return r.startsWith('..') || isAbsolute(r) ? p : r.split(sep).join('/');
    },
    findings,
    add: (f) => findings.push(f),
  };

  const located = await locateTables(scope);
  const nodes = located.nodes ? await readNodes(scope, located.nodes) : null;
  const table = located.participants ? await readParticipants(scope, located.participants) : null;

  const listing = await listFiles(root, scope);
  const { files, outside, stack } = await candidates(scope, listing.matrices, located, table);

  const scans = new Scans(scope, outside);
  if (table) await matchWithTable(scope, table, files, stack, scans);
  else matchFiles(scope, files, stack, scans, located.participants !== null);
  const pending = scans.pending;
  const sessions = sessionsOf(scope, pending);
  const columns = await joinCovariates(
    scope,
    pending,
    listing.tables,
    table?.columns ?? [],
    located.participants,
    sessions,
  );

  const checked = await checkScans(scope, pending, nodes, stack, options);
  const { n, deadRegions } = cohortSize(scope, pending, checked, nodes, located.nodes);

  const subjects = pending.map((p, k) => {
    p.entry.usable = !p.preErrors && !checked.perSubject[k].some((x) => x.severity === 'error');
    return p.entry;
  });
  return {
    root,
    n,
    subjects,
    sessions,
    columns,
    nodes,
    findings: [...findings, ...checked.perSubject.flat()],
    deadRegions,
  };
}

interface Checked {
  results: Array<{ check: CheckResult | null; labels: string[] | null }>;
  perSubject: QcFinding[][];
}

/** Reads and checks each scan once (never a file outside the chosen folders). */
async function checkScans(
  scope: Scope,
  pending: Pending[],
  nodes: NodeInfo[] | null,
  stack: { file: string; data: ArrayFile } | null,
  options: OpenCohortOptions,
): Promise<Checked> {
  const { req, rel } = scope;
  const drop = new Set(options.dropRegions ?? []);
  const input = options.input ?? 'correlation';
  const results: Checked['results'] = [];
  const perSubject: QcFinding[][] = pending.map(() => []);
  let done = 0;
  await pool(pending, options.concurrency ?? 4, async (p, k) => {
    const { entry } = p;
    const file = entry.source.file;
    const f = (x: Omit<QcFinding, 'file' | 'subject'>): void => {
      perSubject[k].push({ ...x, file: rel(file), subject: entry.id });
    };
    let check: CheckResult | null = null;
    let labels: string[] | null = null;
    if (p.outside) {
      results[k] = { check, labels };
      options.onProgress?.(++done, pending.length);
      return;
    }
    try {
      let m: Matrix2D;
      if (stack && file === stack.file && stack.data.kind === 'stack')
        m = stack.data.slice(entry.source.stackIndex!);
      else {
        const data = await readArrayFile(file, { variable: req.variable, timeSeries: req.timeSeries });
        if (data.variable) entry.source.variable = data.variable;
        if (data.kind === 'stack') {
          throw new InputFileError(
            file,
            `holds a stack of ${data.count} matrices, not one subject's; a stack must be the cohort's only matrix file, with the participants table in the same order`,
            'unexpected-stack',
          );
        }
        m = data.matrix;
      }
      labels = m.colLabels ?? m.rowLabels;
      if (
        m.colLabels &&
        m.rowLabels &&
        !req.timeSeries &&
        m.colLabels.join('\n') !== m.rowLabels.join('\n')
      ) {
        f({
          severity: 'warning',
          code: 'labels-differ',
          message: 'the header row and the label column name the regions differently',
        });
      }
      const name = (i: number): string => {
        const label = nodes?.[i]?.label ?? labels?.[i];
        return label ? `region ${i + 1} (${label})` : `region ${i + 1}`;
      };
      const opts = { input, drop, symmetryTolerance: options.symmetryTolerance ?? 1e-6, name };
      check = req.timeSeries ? checkTimeSeries(m, opts) : checkSquare(m, opts);
      for (const x of check.findings) f(x);
      if (nodes && labels && labels.length === nodes.length) {
        const i = labels.findIndex((l, j) => l !== nodes[j].label && !/^\d+$/.test(l));
        if (i >= 0) {
          f({
            severity: 'warning',
            code: 'labels-differ',
            message: `region ${i + 1} is '${labels[i]}' in the file but '${nodes[i].label}' in the node table`,
          });
        }
      }
    } catch (e) {
      if (e instanceof InputFileError)
        f({ severity: 'error', code: e.code, message: e.detail, ...(e.where ? { where: e.where } : {}) });
      else f({ severity: 'error', code: 'unreadable', message: detail(e) });
    }
    results[k] = { check, labels };
    options.onProgress?.(++done, pending.length);
  });
  return { results, perSubject };
}

/** The cohort's N (the most common size), what does not fit it, and dead regions across scans. */
function cohortSize(
  scope: Scope,
  pending: Pending[],
  { results, perSubject }: Checked,
  nodes: NodeInfo[] | null,
  nodesFile: string | null,
): { n: number | null; deadRegions: CohortReport['deadRegions'] } {
  const { rel } = scope;
  const counts = new Map<number, number>();
  for (const r of results)
    if (r.check && r.check.findings.every((x) => x.code !== 'not-square'))
      counts.set(r.check.n, (counts.get(r.check.n) ?? 0) + 1);
  let n: number | null = null;
  for (const [size, c] of counts) if (n === null || c > counts.get(n)!) n = size;
  pending.forEach((p, k) => {
    const r = results[k];
    if (n !== null && r.check && r.check.n !== n && !perSubject[k].some((x) => x.code === 'not-square')) {
      perSubject[k].push({
        severity: 'error',
        code: 'n-mismatch',
        file: rel(p.entry.source.file),
        subject: p.entry.id,
        message: `${r.check.n} regions, but the cohort's matrices have ${n} (the most common size)`,
      });
    }
  });
  if (nodes && n !== null && nodes.length !== n) {
    scope.add({
      severity: 'warning',
      code: 'nodes-count',
      file: rel(nodesFile!),
      subject: null,
      message: `the node table has ${nodes.length} regions, the matrices ${n}`,
    });
  }
  const deadMap = new Map<number, string[]>();
  let fileLabels: string[] | null = null;
  pending.forEach((p, k) => {
    const r = results[k];
    if (!r.check || r.check.n !== n) return;
    fileLabels ??= r.labels;
    for (const i of r.check.dead) deadMap.set(i, [...(deadMap.get(i) ?? []), p.entry.id]);
  });
  const deadRegions = [...deadMap.entries()]
    .sort((a, b) => a[0] - b[0])
    .map(([index, subjects]) => ({
      index,
      label: nodes?.[index]?.label ?? (fileLabels as string[] | null)?.[index] ?? `region ${index + 1}`,
      subjects,
    }));
  return { n, deadRegions };
}

function detail(e: unknown): string {
  if (e instanceof InputFileError) return e.detail;
  return e instanceof Error ? e.message : String(e);
}

/**
 * A .mat stack can only be read whole (its values may be compressed), so the last one read is
 * kept for the next subject: loading a stack cohort subject by subject reads the file once, not
 * once per subject. Keyed by size and modification time, so a changed file is read again.
 */
let lastStack: { key: string; data: ArrayFile } | null = null;

async function matStackSlice(file: string, variable: string | undefined, index: number): Promise<Matrix2D> {
  let key = '';
  try {
    const st = await stat(file);
    key = `${file}\0${variable ?? ''}\0${st.size}\0${st.mtimeMs}`;
  } catch {
    // Unreadable: readArrayFile below says why.
  }
  if (!lastStack || lastStack.key !== key || key === '') {
    lastStack = null;
    lastStack = { key, data: await readArrayFile(file, { variable }) };
  }
  const data = lastStack.data;
  if (data.kind !== 'stack') {
    if (index === 0) return { ...data.matrix, values: data.matrix.values.slice() };
    throw new InputFileError(
      file,
      `holds one matrix, not a stack; stack index ${index} does not exist`,
      'stack-index',
    );
  }
  return data.slice(index);
}

/**
 * One subject's matrix, read again from its source: a square matrix as stored, or the
 * correlation of its time series (Pearson by default, Ledoit–Wolf by option).
 */
export async function loadSubjectMatrix(
  entry: SubjectEntry,
  options: LoadOptions = {},
): Promise<SquareMatrix> {
  const { file, variable, stackIndex, timeSeries } = entry.source;
  const m =
    stackIndex !== undefined && formatOf(file) === 'mat'
      ? await matStackSlice(file, variable, stackIndex)
      : await readTable2D(file, { variable, stackIndex, timeSeries });
  let matrix: SquareMatrix;
  if (timeSeries) {
    if (m.rows < 3)
      throw new InputFileError(
        file,
        `only ${m.rows} time points; at least 3 are needed`,
        'too-few-timepoints',
      );
    const series = { t: m.rows, n: m.cols, values: m.values };
    const estimator = options.correlation ?? entry.source.correlation;
    matrix = estimator === 'ledoit-wolf' ? ledoitWolf(series).matrix : pearson(series);
  } else {
    if (m.rows !== m.cols)
      throw new InputFileError(file, `not square: ${m.rows} rows × ${m.cols} columns`, 'not-square');
    matrix = { n: m.rows, values: m.values };
  }
  return dropRegions(matrix, options.dropRegions ?? []).matrix;
}
