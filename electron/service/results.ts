/**
 * Result assembly: what a finished run answers to the doors, from the run's records, its stages'
 * output and the cache. The doors get what a view shows, typed by api.ts: the cohort's small
 * results (features, curves, the feature tests), one subject, every region's effect for a node
 * measure, one region's values per scan, and pages of the long tables. Column names are the
 * files' own (engine/features/columns.ts); nothing here guesses a column.
 */
import type {
  Cell,
  CohortReport,
  CohortResults,
  DiagramTestRow,
  NetworkEffect,
  Provenance,
  RegionEffect,
  RegionEffects,
  RegionValues,
  StatsRow,
  SubjectResult,
  Table,
  TablePage,
  TablePageRequest,
} from '../api.ts';
import { scanId } from '../contract.ts';
import {
  DIAGRAM_TEST_COLUMNS,
  NODE_TABLE_COLUMNS,
  STATS_COLUMNS,
  nodeFamily,
  regionName,
  regionNumber,
} from '../engine/features/columns.ts';
import type { FiltrationCache } from './cache.ts';
import type { CohortSource } from './cohort-source.ts';
import type { StageOutput } from './hooks.ts';
import { groupingColumn } from './stages.ts';
import type { RunRecords } from './tables.ts';

/** The parts of a run that results are assembled from. */
export interface RunView {
  runId: string;
  status: 'running' | 'done' | 'cancelled' | 'failed';
  run: RunRecords | null;
  provenance: Provenance | null;
  results: StageOutput;
  report: CohortReport;
  cache: FiltrationCache;
  source: CohortSource | null;
}

/** Significance level of the `significant` flags, on the FWER-corrected p (common practice: 0.05). */
export const REGION_ALPHA = 0.05;

/** Most rows one table page may hold. */
export const MAX_PAGE_ROWS = 5000;

/** Per-subject interval counts: the features table until the features stage fills it. */
async function countsTable(s: RunView): Promise<Table> {
  const run = s.run as RunRecords;
  const dims = Array.from({ length: run.settings.maxDim + 1 }, (_, d) => d);
  const table: Table = {
    columns: ['participant_id', 'status', ...dims.map((d) => `h${d}_intervals`)],
    rows: [],
  };
  for (const rec of run.records) {
    const e = rec.status === 'analysed' && rec.key ? await s.cache.get(rec.key) : null;
    table.rows.push([rec.id, rec.status, ...dims.map((d) => (e ? e.diagrams[d].length : null))]);
  }
  return table;
}

function finished(s: RunView): boolean {
  return (s.status === 'done' || s.status === 'failed') && s.run !== null && s.provenance !== null;
}

/** The design's grouping column for this run's cohort (the stages' rule, the contract's). */
export function runGroupColumn(s: RunView): string | null {
  return s.run ? groupingColumn(s.report, s.run.stats) : null;
}

/** The table's rows as typed objects; throws when its columns are not exactly the expected ones. */
function typedRows<T>(table: Table, columns: readonly string[], what: string): T[] {
  if (table.columns.length !== columns.length || table.columns.some((c, i) => c !== columns[i]))
    throw new Error(`${what} has columns ${table.columns.join(', ')}; expected ${columns.join(', ')}`);
  return table.rows.map((r) => Object.fromEntries(columns.map((c, i) => [c, r[i] ?? null])) as T);
}

const statsCache = new WeakMap<Table, StatsRow[]>();

/** stats.tsv's rows, typed (computed once per table). */
export function statsRows(table: Table): StatsRow[] {
  let rows = statsCache.get(table);
  if (!rows) {
    rows = typedRows<StatsRow>(table, STATS_COLUMNS, 'stats.tsv');
    statsCache.set(table, rows);
  }
  return rows;
}

export function diagramTestRows(table: Table): DiagramTestRow[] {
  return typedRows<DiagramTestRow>(table, DIAGRAM_TEST_COLUMNS, 'diagram-tests.tsv');
}

/** How many columns of the features table come before the features: the scan's and the participants table's. */
function featureStart(features: Table, report: CohortReport): number {
  const lead = new Set(['participant_id', 'session', 'status', ...report.columns.map((c) => c.name)]);
  let k = 0;
  while (k < features.columns.length && lead.has(features.columns[k])) k++;
  return k;
}

/**
 * The node scores of a run, indexed: one Float64Array per measure, scans × regions (NaN where
 * undefined), built once from the long table the features stage keeps.
 */
interface NodeIndex {
  measures: string[];
  n: number;
  /** Scan key → row of the arrays. */
  scans: Map<string, number>;
  values: Map<string, Float64Array>;
  /** Region index → label and network as the node table gave them (null without one). */
  labels: Array<string | null>;
  networks: Array<string | null>;
}

const nodeCache = new WeakMap<Table, NodeIndex>();

function nodeIndex(table: Table): NodeIndex {
  const cached = nodeCache.get(table);
  if (cached) return cached;
  const lead = table.columns.length - NODE_TABLE_COLUMNS.length;
  if (
    lead < 1 ||
    table.columns[0] !== 'participant_id' ||
    NODE_TABLE_COLUMNS.some((c, i) => table.columns[lead + i] !== c)
  )
    throw new Error(`the node table has columns ${table.columns.join(', ')}`);
  const withSession = lead >= 2 && table.columns[1] === 'session';
  const [NODE, LABEL, NETWORK, MEASURE, VALUE] = [0, 1, 2, 3, 4].map((i) => lead + i);
  const measures: string[] = [];
  const scans = new Map<string, number>();
  let n = 0;
  for (const r of table.rows) {
    const m = String(r[MEASURE]);
    if (!measures.includes(m)) measures.push(m);
    const key = scanId(String(r[0]), withSession && r[1] !== null ? String(r[1]) : null);
    if (!scans.has(key)) scans.set(key, scans.size);
    n = Math.max(n, Number(r[NODE]) + 1);
  }
  const values = new Map(measures.map((m) => [m, new Float64Array(scans.size * n).fill(NaN)]));
  const labels = new Array<string | null>(n).fill(null);
  const networks = new Array<string | null>(n).fill(null);
  for (const r of table.rows) {
    const i = Number(r[NODE]);
    const key = scanId(String(r[0]), withSession && r[1] !== null ? String(r[1]) : null);
    const v = r[VALUE];
    if (typeof v === 'number') values.get(String(r[MEASURE]))![scans.get(key)! * n + i] = v;
    if (labels[i] === null && r[LABEL] !== null) labels[i] = String(r[LABEL]);
    if (networks[i] === null && r[NETWORK] !== null) networks[i] = String(r[NETWORK]);
  }
  const index = { measures, n, scans, values, labels, networks };
  nodeCache.set(table, index);
  return index;
}

/**
 * The cohort's results, or null while the run is going or when it made none. A run whose later
 * stage failed still answers with what it made (e.g. features without statistics).
 */
export async function assembleCohortResults(s: RunView): Promise<CohortResults | null> {
  if (!finished(s)) return null;
  const r = s.results;
  const features = r.features ?? (await countsTable(s));
  const stats = r.stats ? statsRows(r.stats) : null;
  const families = new Map<string, number>();
  for (const row of stats ?? []) families.set(row.family, (families.get(row.family) ?? 0) + 1);
  return {
    runId: s.runId,
    provenance: s.provenance as Provenance,
    ...(r.grid ? { grid: r.grid } : {}),
    features,
    featureNames: r.features ? features.columns.slice(featureStart(features, s.report)) : [],
    nodeMeasures: r.nodeScores ? nodeIndex(r.nodeScores).measures : [],
    groupColumn: runGroupColumn(s),
    groupCurves: r.groupCurves ?? [],
    groupDiagrams: r.groupDiagrams ?? [],
    groupFiltrations: r.groupFiltrations ?? [],
    ...(r.diagramMetric ? { diagramMetric: r.diagramMetric } : {}),
    featureTests: stats ? stats.filter((x) => x.family === 'features') : null,
    statsFamilies: stats ? [...families].map(([family, rows]) => ({ family, rows })) : null,
    diagramTests: r.diagramTests ? diagramTestRows(r.diagramTests) : null,
    embedding: r.embedding ?? null,
  };
}

/** One analysed subject's result, or null (not analysed, or its cache entry is gone). */
export async function assembleSubjectResult(s: RunView, subjectId: string): Promise<SubjectResult | null> {
  const rec = s.run?.records.find((r) => r.id === subjectId);
  if (!rec || rec.status !== 'analysed' || !rec.key) return null;
  const e = await s.cache.get(rec.key);
  if (!e) return null;
  const entry = s.report.subjects[rec.index];
  const matrix = s.source ? await s.source.load(entry).catch(() => null) : null;
  const groupColumn = runGroupColumn(s);
  const g = groupColumn ? entry.covariates[groupColumn] : null;
  return {
    id: rec.id,
    group: g === null || g === undefined ? null : String(g),
    n: matrix?.n ?? e.n,
    matrix: matrix ? Array.from(matrix.values) : [],
    diagrams: e.diagrams,
    representatives: (e.representatives ?? []).map((rep, k) => ({
      birth: e.diagrams[1][k][0],
      death: e.diagrams[1][k][1],
      edges: rep.edges,
      nodes: rep.nodes,
    })),
    nodeScores: subjectNodeScores(s, rec.id),
  };
}

/** The subject's row of every node measure (null where undefined), or {} when the run made none. */
function subjectNodeScores(s: RunView, id: string): Record<string, Array<number | null>> {
  if (!s.results.nodeScores) return {};
  const idx = nodeIndex(s.results.nodeScores);
  const row = idx.scans.get(id);
  if (row === undefined) return {};
  const out: Record<string, Array<number | null>> = {};
  for (const m of idx.measures) {
    const v = idx.values.get(m)!;
    out[m] = Array.from({ length: idx.n }, (_, i) => {
      const x = v[row * idx.n + i];
      return Number.isFinite(x) ? x : null;
    });
  }
  return out;
}

/** The label and network of region i: the node table's when the cohort has one. */
function regionOf(s: RunView, idx: NodeIndex, i: number): { label: string; network: string | null } {
  const node = s.report.nodes?.[i];
  return {
    label: regionName(i, node?.label ?? idx.labels[i]),
    network: node?.network ?? idx.networks[i] ?? null,
  };
}

/**
 * The region index a stats.tsv row names: its label when the cohort has a node table (the
 * statistics stage writes the label), else the 0-based index it writes instead.
 */
function regionIndexOf(s: RunView, idx: NodeIndex): (v: StatsRow['node_or_point']) => number | null {
  const byLabel = new Map<string, number>();
  idx.labels.forEach((l, i) => {
    if (l !== null && !byLabel.has(l)) byLabel.set(l, i);
  });
  (s.report.nodes ?? []).forEach((n) => {
    if (!byLabel.has(n.label)) byLabel.set(n.label, n.index);
  });
  return (v) => {
    if (v === null) return null;
    const named = byLabel.get(String(v));
    if (named !== undefined) return named;
    const i = typeof v === 'number' ? v : Number(v);
    return Number.isInteger(i) && i >= 0 && i < idx.n ? i : null;
  };
}

/** Every region's effect for a node measure, ranked; null when the run or the measure is not there. */
export function assembleRegionEffects(s: RunView, measure: string): RegionEffects | null {
  if (!finished(s) || !s.results.nodeScores) return null;
  const idx = nodeIndex(s.results.nodeScores);
  const values = idx.values.get(measure);
  if (!values) return null;
  const family = nodeFamily(measure);
  const rows = s.results.stats ? statsRows(s.results.stats).filter((r) => r.family === family) : [];
  const indexOf = regionIndexOf(s, idx);
  const tested = new Map<number, StatsRow>();
  for (const r of rows) {
    const i = indexOf(r.node_or_point);
    if (i !== null && !tested.has(i)) tested.set(i, r);
  }
  const scans = idx.scans.size;
  const regions: RegionEffect[] = Array.from({ length: idx.n }, (_, i) => {
    let sum = 0;
    let k = 0;
    for (let j = 0; j < scans; j++) {
      const v = values[j * idx.n + i];
      if (Number.isFinite(v)) {
        sum += v;
        k++;
      }
    }
    const t = tested.get(i);
    return {
      node: i,
      number: regionNumber(i),
      ...regionOf(s, idx, i),
      mean: k > 0 ? sum / k : null,
      tested: t !== undefined,
      statistic: t?.statistic ?? null,
      p_uncorrected: t?.p_uncorrected ?? null,
      p_fwer: t?.p_fwer ?? null,
      q_fdr: t?.q_fdr ?? null,
      effect_size: t?.effect_size ?? null,
      effect_low: t?.effect_low ?? null,
      effect_high: t?.effect_high ?? null,
      significant: t?.p_fwer !== null && t?.p_fwer !== undefined && t.p_fwer < REGION_ALPHA,
    };
  });
  regions.sort(rankRegions);
  const first = rows[0] ?? null;
  return {
    runId: s.runId,
    measure,
    family,
    contrast: first?.contrast ?? null,
    test: first?.test ?? null,
    effect_kind: first?.effect_kind ?? null,
    alpha: REGION_ALPHA,
    regions,
    tested: tested.size,
    significant: regions.filter((r) => r.significant).length,
    networks: networkEffects(regions),
  };
}

/** Tested regions by |effect_size| (largest first, undefined last), then the rest by |mean|; ties by index. */
function rankRegions(a: RegionEffect, b: RegionEffect): number {
  if (a.tested !== b.tested) return a.tested ? -1 : 1;
  const key = (r: RegionEffect) => {
    const v = r.tested ? r.effect_size : r.mean;
    return v === null ? -1 : Math.abs(v);
  };
  return key(b) - key(a) || a.node - b.node;
}

function networkEffects(regions: RegionEffect[]): NetworkEffect[] | null {
  if (!regions.some((r) => r.network !== null)) return null;
  const by = new Map<string, RegionEffect[]>();
  for (const r of regions) {
    const key = r.network ?? '(none)';
    by.set(key, [...(by.get(key) ?? []), r]);
  }
  return [...by].map(([network, rs]) => {
    const sizes = rs.map((r) => r.effect_size).filter((v): v is number => v !== null);
    return {
      network,
      regions: rs.length,
      tested: rs.filter((r) => r.tested).length,
      mean_effect: sizes.length ? sizes.reduce((a, v) => a + v, 0) / sizes.length : null,
      max_abs_effect: sizes.length ? Math.max(...sizes.map(Math.abs)) : null,
      significant: rs.filter((r) => r.significant).length,
    };
  });
}

/** One region's values per analysed scan, with its participant, session and group. */
export function assembleRegionValues(s: RunView, measure: string, node: number): RegionValues | null {
  if (!finished(s) || !s.results.nodeScores || !s.run) return null;
  const idx = nodeIndex(s.results.nodeScores);
  const values = idx.values.get(measure);
  if (!values || !Number.isInteger(node) || node < 0 || node >= idx.n) return null;
  const groupColumn = runGroupColumn(s);
  const out: RegionValues['values'] = [];
  for (const rec of s.run.records) {
    const row = idx.scans.get(rec.id);
    if (rec.status !== 'analysed' || row === undefined) continue;
    const entry = s.report.subjects[rec.index];
    const g = groupColumn ? entry?.covariates[groupColumn] : null;
    const v = values[row * idx.n + node];
    out.push({
      subject: rec.id,
      participant: entry?.participant ?? rec.participant ?? rec.id,
      session: entry?.session ?? rec.session ?? null,
      group: g === null || g === undefined ? null : String(g),
      value: Number.isFinite(v) ? v : null,
    });
  }
  return {
    runId: s.runId,
    measure,
    node,
    number: regionNumber(node),
    ...regionOf(s, idx, node),
    groupColumn,
    sessions: s.report.sessions,
    values: out,
  };
}

function compareCells(a: Cell, b: Cell): number {
  if (a === null || b === null) return a === b ? 0 : a === null ? 1 : -1;
  if (typeof a === 'number' && typeof b === 'number') return a - b;
  return String(a).localeCompare(String(b), undefined, { numeric: true });
}

/**
 * A page of a result table: rows kept by `equals` and `filter`, sorted (stable: file order breaks
 * ties; missing values last in either direction), then `limit` rows from `offset`.
 */
export function assembleTablePage(s: RunView, req: TablePageRequest): TablePage | null {
  if (!finished(s)) return null;
  const r = s.results;
  const source: Table | null | undefined =
    req.table === 'features'
      ? r.features
      : req.table === 'stats'
        ? r.stats
        : req.table === 'diagram-tests'
          ? r.diagramTests
          : r.nodeScores;
  if (!source) return null;
  const { columns } = source;
  const col = (name: string) => {
    const i = columns.indexOf(name);
    if (i < 0)
      throw new ResultQueryError(`${req.table} has no column ${name}; its columns: ${columns.join(', ')}`);
    return i;
  };
  const equals = Object.entries(req.equals ?? {}).map(([c, v]) => [col(c), v] as const);
  const text = req.filter ? req.filter.toLowerCase() : null;
  let rows = source.rows;
  if (equals.length > 0 || text)
    rows = rows.filter(
      (row) =>
        equals.every(([i, v]) => row[i] === v || (row[i] !== null && String(row[i]) === String(v))) &&
        (!text || row.some((c) => c !== null && String(c).toLowerCase().includes(text))),
    );
  if (req.sort) {
    const i = col(req.sort.column);
    const sign = req.sort.descending ? -1 : 1;
    const order = rows.map((_, k) => k);
    order.sort((a, b) => {
      const x = rows[a][i];
      const y = rows[b][i];
      if (x === null || y === null) return x === y ? a - b : x === null ? 1 : -1;
      return sign * compareCells(x, y) || a - b;
    });
    rows = order.map((k) => rows[k]);
  }
  const limit = Math.min(Math.max(1, Math.floor(req.limit)), MAX_PAGE_ROWS);
  const offset = Math.max(0, Math.floor(req.offset));
  return {
    table: req.table,
    columns: [...columns],
    rows: rows.slice(offset, offset + limit),
    offset,
    total: rows.length,
    all: source.rows.length,
  };
}

/** A results query naming something the table does not have (a column): a bad request, not a fault. */
export class ResultQueryError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ResultQueryError';
  }
}
