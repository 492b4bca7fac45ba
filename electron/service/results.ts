/**
 * Result assembly: what a finished run answers to the doors (the cohort's results, one subject's
 * diagrams, representatives and matrix), from the run's records, its stages' output and the cache.
 */
import type { CohortReport, CohortResults, Provenance, SubjectResult, Table } from '../api.ts';
import type { FiltrationCache } from './cache.ts';
import type { CohortSource } from './cohort-source.ts';
import type { StageOutput } from './hooks.ts';
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

function emptyTable(columns: string[]): Table {
  return { columns, rows: [] };
}

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

/**
 * The cohort's results, or null while the run is going or when it made none. A run whose later
 * stage failed still answers with what it made (e.g. features without statistics).
 */
export async function assembleCohortResults(s: RunView): Promise<CohortResults | null> {
  if ((s.status !== 'done' && s.status !== 'failed') || !s.run || !s.provenance) return null;
  const r = s.results;
  return {
    runId: s.runId,
    provenance: s.provenance,
    ...(r.grid ? { grid: r.grid } : {}),
    features: r.features ?? (await countsTable(s)),
    nodeScores:
      r.nodeScores ?? emptyTable(['participant_id', 'node', 'label', 'network', 'measure', 'value']),
    groupCurves: r.groupCurves ?? [],
    groupDiagrams: r.groupDiagrams ?? [],
    groupFiltrations: r.groupFiltrations ?? [],
    ...(r.diagramMetric ? { diagramMetric: r.diagramMetric } : {}),
    stats: r.stats ?? null,
    diagramTests: r.diagramTests ?? null,
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
  const groupColumn = s.run?.stats.groupColumn;
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
    nodeScores: {},
  };
}
