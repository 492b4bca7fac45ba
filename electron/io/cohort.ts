/**
 * Opening a cohort: find every subject's matrix (or time series), read each once to check it,
 * and report. The report keeps where each matrix lives, never the values: loadSubjectMatrix reads
 * one subject again when the analysis needs it, so memory stays with one matrix at a time.
 *
 * Matching a participant to its file, in this order:
 *   1. a participants-table column naming the file (OpenCohortRequest.fileColumn, or a column
 *      called matrix_file, file, filename or path), relative to the cohort folder;
 *   2. a single 3-D stack file (.npy or .mat) in the folder: its matrices are the participants in
 *      table order;
 *   3. the participant_id as a whole token of the file's path below the cohort folder
 *      (sub-1 matches sub-1_conn.tsv and sub-1/func/..., never sub-10_conn.tsv); an id written
 *      without the BIDS 'sub-' prefix also matches 'sub-<id>'.
 * Without a participants table every matrix file is a subject, named by its sub-<label> token or
 * else its file name.
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
import type { InputKind } from '../engine/transform.ts';
import type { SquareMatrix } from '../engine/types.ts';
import type { Matrix2D } from './array.ts';
import { InputFileError } from './errors.ts';
import { checkSquare, checkTimeSeries } from './qc.ts';
import type { CheckResult } from './qc.ts';
import { formatOf, readArrayFile, readTable2D } from './read-matrix.ts';
import type { ArrayFile } from './read-matrix.ts';
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
}

export interface LoadOptions {
  /** How time series become a correlation matrix (default 'pearson'). */
  correlation?: 'pearson' | 'ledoit-wolf';
  /** Regions (0-based) removed from the matrix. */
  dropRegions?: number[];
}

const FILE_COLUMNS = ['matrix_file', 'file', 'filename', 'path'];
const NOT_MATRICES = /^(participants|nodes|readme|changes|license|dataset_description)(\.|$)/i;

/** Every matrix file below root, sorted, skipping hidden folders. */
async function listFiles(root: string): Promise<string[]> {
  const out: string[] = [];
  const walk = async (dir: string): Promise<void> => {
    const entries = await readdir(dir, { withFileTypes: true });
    for (const e of entries) {
      if (e.name.startsWith('.') || e.name === 'node_modules') continue;
      const p = join(dir, e.name);
      if (e.isDirectory()) await walk(p);
      else if (formatOf(e.name) && !NOT_MATRICES.test(e.name)) out.push(p);
    }
  };
  await walk(root);
  return out.sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
}

async function exists(p: string): Promise<boolean> {
  try {
    return (await stat(p)).isFile();
  } catch {
    return false;
  }
}

function escapeRe(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

/** A whole-token match of an id in a path: not preceded or followed by a letter or digit. */
function tokenRe(id: string): RegExp {
  return new RegExp(`(^|[^A-Za-z0-9])${escapeRe(id)}(?![A-Za-z0-9])`);
}

/** sub-07_task-rest.tsv → sub-07; otherwise the file name without its extension. */
export function subjectIdOfFile(rel: string): string {
  const m =
    /(?:^|[^A-Za-z0-9])(sub-[A-Za-z0-9]+)/.exec(basename(rel)) ??
    /(?:^|[^A-Za-z0-9])(sub-[A-Za-z0-9]+)/.exec(rel);
  return m ? m[1] : basename(rel, extname(rel));
}

interface Pending {
  entry: SubjectEntry;
  /** Errors found before reading (duplicate id, several files). */
  preErrors: boolean;
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
  const rel = (p: string): string => {
    const r = relative(root, p);
    return r.startsWith('..') || isAbsolute(r) ? p : r.split(sep).join('/');
  };
  const findings: QcFinding[] = [];
  const add = (f: QcFinding): void => {
    findings.push(f);
  };

  // ---- participants and nodes tables ----
  let participantsFile: string | null = null;
  // Tables named explicitly must exist: a typo there is the caller's mistake, not the cohort's.
  if (req.participants) {
    participantsFile = resolve(root, req.participants);
    if (!(await exists(participantsFile))) {
      throw new InputFileError(participantsFile, 'no such participants table', 'no-participants-file');
    }
  } else {
    for (const name of ['participants.tsv', 'participants.csv']) {
      if (await exists(join(root, name))) {
        participantsFile = join(root, name);
        break;
      }
    }
  }
  let nodesFile: string | null = req.nodes ? resolve(root, req.nodes) : null;
  if (nodesFile && !(await exists(nodesFile))) {
    throw new InputFileError(nodesFile, 'no such node table', 'no-nodes-file');
  }
  if (!nodesFile) {
    for (const name of ['nodes.tsv', 'nodes.csv']) {
      if (await exists(join(root, name))) {
        nodesFile = join(root, name);
        break;
      }
    }
  }

  let nodes: NodeInfo[] | null = null;
  if (nodesFile) {
    try {
      nodes = await readNodeTable(nodesFile, findings, rel(nodesFile));
    } catch (e) {
      add({
        severity: 'warning',
        code: 'nodes-unreadable',
        file: rel(nodesFile),
        subject: null,
        message: detail(e),
      });
    }
  }

  let table: {
    ids: string[];
    covariates: Array<Record<string, CovariateValue>>;
    fileCells: string[] | null;
  } | null = null;
  let columns: ColumnInfo[] = [];
  if (participantsFile) {
    const pf = rel(participantsFile);
    try {
      const t = await readStringTable(participantsFile, { findings, rel: pf, table: 'participants' });
      const idCol = t.header.findIndex((h) => h.toLowerCase() === 'participant_id');
      if (idCol < 0) {
        add({
          severity: 'error',
          code: 'participants-no-id',
          file: pf,
          subject: null,
          message: `no participant_id column (columns: ${t.header.join(', ')}); subjects are named from their files instead`,
        });
      } else {
        const fileColName =
          req.fileColumn ?? t.header.find((h) => FILE_COLUMNS.includes(h.toLowerCase())) ?? null;
        if (req.fileColumn && !t.header.includes(req.fileColumn)) {
          throw new InputFileError(
            participantsFile,
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
        const cov = covariateColumns(pf, t, skip, req.columnKinds, findings);
        columns = cov.columns;
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
        table = {
          ids: t.rows.map((r) => (r[idCol] ?? '').trim()),
          covariates: cov.values,
          fileCells: fileCol >= 0 ? t.rows.map((r) => (r[fileCol] ?? '').trim()) : null,
        };
      }
    } catch (e) {
      if (e instanceof InputFileError && e.code === 'usage') throw e;
      add({
        severity: 'error',
        code: 'participants-unreadable',
        file: pf,
        subject: null,
        message: detail(e),
      });
    }
  }

  // ---- candidate files ----
  const skipFiles = new Set([participantsFile, nodesFile].filter((x): x is string => x !== null));
  let files = (await listFiles(root)).filter((f) => !skipFiles.has(f));
  if (req.match) files = files.filter((f) => basename(f).includes(req.match!));

  // A single stack file is the whole cohort.
  let stack: { file: string; data: ArrayFile } | null = null;
  if (files.length === 1 && formatOf(files[0]) !== 'delimited' && !table?.fileCells) {
    try {
      const data = await readArrayFile(files[0], { variable: req.variable, timeSeries: req.timeSeries });
      if (data.kind === 'stack') stack = { file: files[0], data };
    } catch {
      // Not readable: reported below as that subject's file.
    }
  }

  const pending: Pending[] = [];
  const newEntry = (
    id: string,
    source: MatrixSource,
    covariates: Record<string, CovariateValue>,
  ): Pending => {
    const p: Pending = {
      entry: { id, participant: id, session: null, source, covariates, usable: true },
      preErrors: false,
    };
    pending.push(p);
    return p;
  };
  const withSeries = (s: MatrixSource): MatrixSource => (req.timeSeries ? { ...s, timeSeries: true } : s);

  if (table) {
    const pf = rel(participantsFile!);
    // Ids, their rows, duplicates and empty ids.
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
    const duplicates = new Set(ids.filter((id) => rowsOf.get(id)!.length > 1));
    const matched = new Set<string>();

    if (table.fileCells) {
      for (const id of ids) {
        const k = rowsOf.get(id)![0];
        const cellText = table.fileCells[k];
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
        if (!(await exists(file))) {
          add({
            severity: 'error',
            code: 'no-matrix',
            file: pf,
            subject: id,
            message: `${id}: row ${k + 2} names '${cellText}', which does not exist`,
          });
          continue;
        }
        matched.add(file);
        newEntry(id, withSeries({ file }), table.covariates[k]);
      }
    } else if (stack) {
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
        newEntry(
          id,
          withSeries({ file, stackIndex: s, ...(data.variable ? { variable: data.variable } : {}) }),
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
      matched.add(file);
    } else {
      // Index the sub-<label> tokens of every path, then match ids; ids without the prefix by scanning.
      const byToken = new Map<string, string[]>();
      for (const f of files) {
        for (const m of rel(f).matchAll(/(?:^|[^A-Za-z0-9])(sub-[A-Za-z0-9]+)(?![A-Za-z0-9])/g)) {
          const list = byToken.get(m[1]) ?? [];
          if (!list.includes(f)) list.push(f);
          byToken.set(m[1], list);
        }
      }
      for (const id of ids) {
        let hits = byToken.get(id.startsWith('sub-') ? id : `sub-${id}`) ?? [];
        if (hits.length === 0 && !id.startsWith('sub-')) {
          const re = tokenRe(id);
          hits = files.filter((f) => re.test(rel(f)));
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
        const p = newEntry(id, withSeries({ file: hits[0] }), table.covariates[k]);
        if (hits.length > 1) {
          p.preErrors = true;
          add({
            severity: 'error',
            code: 'several-matrices',
            file: rel(hits[0]),
            subject: id,
            message: `${id} matches ${hits.length} files: ${hits.map(rel).join(', ')}; keep one, name it in a file column, or narrow with match`,
          });
        }
      }
    }
    for (const p of pending) {
      if (duplicates.has(p.entry.id)) {
        p.preErrors = true;
        const rows = rowsOf.get(p.entry.id)!.map((k) => k + 2);
        add({
          severity: 'error',
          code: 'duplicate-id',
          file: pf,
          subject: p.entry.id,
          message: `participant_id ${p.entry.id} is on rows ${rows.join(' and ')}: which covariates belong to it?`,
          where: [rows[1] - 1, 0],
        });
      }
    }
    if (!stack) {
      for (const f of files) {
        if (!matched.has(f)) {
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
  } else {
    if (files.length === 0) {
      add({
        severity: 'error',
        code: 'no-matrices',
        file: null,
        subject: null,
        message: `no matrix files (.csv, .tsv, .txt, .npy, .mat) in ${root}`,
      });
    }
    if (!participantsFile && files.length > 0) {
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
        newEntry(
          `${stem}-${String(s + 1).padStart(width, '0')}`,
          withSeries({
            file: stack.file,
            stackIndex: s,
            ...(stack.data.variable ? { variable: stack.data.variable } : {}),
          }),
          {},
        );
      }
    } else {
      const seen = new Map<string, string>();
      for (const f of files) {
        const id = subjectIdOfFile(rel(f));
        const before = seen.get(id);
        if (before !== undefined) {
          add({
            severity: 'error',
            code: 'several-matrices',
            file: rel(f),
            subject: id,
            message: `${id} has two files: ${before} and ${rel(f)}; the second is not analysed`,
          });
          const p = pending.find((q) => q.entry.id === id);
          if (p) p.preErrors = true;
          continue;
        }
        seen.set(id, rel(f));
        newEntry(id, withSeries({ file: f }), {});
      }
    }
  }

  // ---- read and check each subject once ----
  const drop = new Set(options.dropRegions ?? []);
  const input = options.input ?? 'correlation';
  const results: Array<{ check: CheckResult | null; labels: string[] | null }> = [];
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
        const i = labels.findIndex((l, j) => l !== nodes![j].label && !/^\d+$/.test(l));
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

  // ---- the cohort's N and what does not fit it ----
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
    add({
      severity: 'warning',
      code: 'nodes-count',
      file: rel(nodesFile!),
      subject: null,
      message: `the node table has ${nodes.length} regions, the matrices ${n}`,
    });
  }

  // ---- dead regions across subjects ----
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

  const subjects = pending.map((p, k) => {
    p.entry.usable = !p.preErrors && !perSubject[k].some((x) => x.severity === 'error');
    return p.entry;
  });
  return {
    root,
    n,
    subjects,
    sessions: null,
    columns,
    nodes,
    findings: [...findings, ...perSubject.flat()],
    deadRegions,
  };
}

function detail(e: unknown): string {
  if (e instanceof InputFileError) return e.detail;
  return e instanceof Error ? e.message : String(e);
}

/** The matrix without the given regions (rows and columns). */
export function dropRegions(m: SquareMatrix, drop: number[]): SquareMatrix {
  if (drop.length === 0) return m;
  const gone = new Set(drop);
  const keep = [...Array(m.n).keys()].filter((i) => !gone.has(i));
  const k = keep.length;
  const values = new Float64Array(k * k);
  for (let a = 0; a < k; a++)
    for (let b = 0; b < k; b++) values[a * k + b] = m.values[keep[a] * m.n + keep[b]];
  return { n: k, values };
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
  return dropRegions(matrix, options.dropRegions ?? []);
}
