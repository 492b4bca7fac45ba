/**
 * Comparisons a finished run answers: two scans side by side, a scan against its group's
 * mean-matrix filtration, two groups' mean-matrix filtrations. Each side is read from what the
 * run holds (a scan's cached filtration, a group's filtration from the group stage); only a scan's
 * Euler curve reads its matrix again (on demand, one scan). The distance is the one the run's
 * whole-diagram tests use (engine/stats/compare.ts wholeDiagramMetric), named in the answer.
 */
import type {
  CohortReport,
  Comparison,
  ComparisonSide,
  FeaturePosition,
  FiltrationSide,
  GroupFiltration,
  SubjectEntry,
} from '../api.ts';
import { subjectCurves } from '../engine/features/curves.ts';
import { maskDroppedRegions, subjectNodeScores } from '../engine/features/rows.ts';
import {
  diagramDistances,
  matchCycles,
  percentileRank,
  rankedNodeDifferences,
  wholeDiagramMetric,
} from '../engine/stats/compare.ts';
import { metricName } from '../engine/stats/diagram-distance.ts';
import { toDistances } from '../engine/transform.ts';
import type { DistanceMatrix, PersistenceResult } from '../engine/types.ts';
import { dropRegions } from '../workers/filtration.ts';
import type { RunView } from './results.ts';
import { resultFromCache } from '../shared/filtration-record.ts';
import { groupingColumn } from './stages.ts';

/** A comparison the run cannot answer (an unknown scan or group, a run without results): a bad request. */
export class ComparisonError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ComparisonError';
  }
}

interface Resolved {
  view: FiltrationSide;
  result: PersistenceResult;
  distances: DistanceMatrix | null;
}

/** The two sides' filtrations, the distance between their diagrams, their cycles matched and their regions ranked. */
export async function compareSides(s: RunView, a: ComparisonSide, b: ComparisonSide): Promise<Comparison> {
  if (s.status !== 'done' || !s.run)
    throw new ComparisonError(`run ${s.runId} has no results to compare yet`);
  const grid = s.results.grid ?? [];
  const [left, right] = [await resolveSide(s, a, grid), await resolveSide(s, b, grid)];
  const analysed = s.run.records.filter((r) => r.status === 'analysed').length;
  const metric = s.results.diagramMetric ?? metricName(wholeDiagramMetric(analysed));
  const parsed = parseMetric(metric);
  const distances = diagramDistances(left.view.diagrams, right.view.diagrams, parsed).map(
    (distance, dimension) => ({
      dimension,
      distance,
    }),
  );
  const measures = Object.keys(left.view.nodeScores).filter((m) => m in right.view.nodeScores);
  const nodes = s.report.nodes;
  const nodeDifferences = measures.flatMap((measure) =>
    rankedNodeDifferences(left.view.nodeScores[measure], right.view.nodeScores[measure]).map((d, rank) => ({
      measure,
      rank: rank + 1,
      node: d.node,
      label: regionLabel(nodes, d.node),
      network: nodes?.[d.node]?.network ?? null,
      a: d.a,
      b: d.b,
      difference: d.difference,
    })),
  );
  return {
    runId: s.runId,
    a: left.view,
    b: right.view,
    grid,
    metric,
    distances,
    cycleMatches: matchCycles(left.view.representatives, right.view.representatives),
    nodeDifferences,
    positions: featurePositions(s, left, right),
  };
}

/** Region `i` (0-based) as the app names it: the node table's label, else "region i+1" (1-based, as shown everywhere). */
export function regionLabel(nodes: CohortReport['nodes'], i: number): string {
  return nodes?.[i]?.label ?? `region ${i + 1}`;
}

async function resolveSide(s: RunView, side: ComparisonSide, grid: number[]): Promise<Resolved> {
  const run = s.run!;
  const settings = run.settings;
  if (side.kind === 'group') {
    const g = (s.results.groupFiltrations ?? []).find((x) => x.group === side.group);
    if (!g)
      throw new ComparisonError(
        `no group-level filtration for group "${side.group}"${(s.results.groupFiltrations ?? []).length ? ` (groups: ${s.results.groupFiltrations!.map((x) => x.group).join(', ')})` : ': the run has no grouping column'}`,
      );
    const result = groupResult(g, s.report.n ?? g.nodeCount);
    const distances = s.results.groupDistances?.get(g.group) ?? null;
    return {
      view: {
        side,
        label: `${g.group}: mean of ${g.scans} scan${g.scans === 1 ? '' : 's'}`,
        group: g.group,
        diagrams: g.diagrams,
        representatives: g.representatives,
        nodeScores: g.nodeScores,
        curves: curvesOf(result, grid, settings, distances),
      },
      result,
      distances,
    };
  }
  const rec = run.records.find((r) => r.id === side.id);
  if (!rec) throw new ComparisonError(`no scan "${side.id}" in run ${s.runId}`);
  if (rec.status !== 'analysed' || !rec.key)
    throw new ComparisonError(`scan "${side.id}" was not analysed in run ${s.runId} (${rec.status})`);
  const cached = await s.cache.get(rec.key);
  if (!cached) throw new ComparisonError(`the filtration of "${side.id}" is no longer in the cache`);
  const nRead = s.report.n ?? cached.n;
  const result = resultFromCache(cached, nRead);
  const entry = s.report.subjects[rec.index];
  const distances = await scanDistances(s, entry);
  const scores = maskDroppedRegions(subjectNodeScores(result, settings), settings.dropRegions);
  const col = groupingColumn(s.report, s.run!.stats);
  const g = col ? entry.covariates[col] : null;
  return {
    view: {
      side,
      label: side.id,
      group: g === null || g === undefined ? null : String(g),
      diagrams: cached.diagrams,
      representatives: (result.representatives ?? []).map((r) => ({
        birth: r.birth,
        death: Number.isFinite(r.death) ? r.death : null,
        nodes: r.nodes,
        edges: r.edges,
      })),
      nodeScores: scores,
      curves: curvesOf(result, grid, settings, distances),
    },
    result,
    distances,
  };
}

function curvesOf(
  result: PersistenceResult,
  grid: number[],
  settings: { maxDim: 1 | 2; landscapeLevels: number },
  distances: DistanceMatrix | null,
): Record<string, number[]> {
  if (grid.length === 0) return {};
  const all = subjectCurves(result, grid, settings, distances ?? undefined);
  return Object.fromEntries(
    Object.entries(all)
      .filter(([k]) => k.startsWith('betti') || k === 'euler')
      .map(([k, v]) => [k, Array.from(v)]),
  );
}

/** A group's filtration as the engine's result type (diagrams and representatives; no merge tree is kept). */
function groupResult(g: GroupFiltration, n: number): PersistenceResult {
  const diagrams = g.diagrams.map((dg) => dg.map(([birth, death]) => ({ birth, death: death ?? Infinity })));
  return {
    n,
    threshold: g.threshold ?? Infinity,
    thresholdSource: 'enclosing-radius',
    diagrams,
    representatives: g.representatives.map((r) => ({
      birth: r.birth,
      death: r.death ?? Infinity,
      edges: r.edges,
      nodes: r.nodes,
    })),
    mergeTree: [],
    counts: { edges: 0, columnsReduced: [], apparentPairs: [] },
  };
}

/** The scan's distances as its filtration saw them (regions dropped, transform applied), or null when unreadable. */
async function scanDistances(s: RunView, entry: SubjectEntry): Promise<DistanceMatrix | null> {
  if (!s.source) return null;
  const m = await s.source.load(entry).catch(() => null);
  if (!m) return null;
  const settings = s.run!.settings;
  try {
    return toDistances(dropRegions(m, settings.dropRegions).matrix, {
      input: settings.input,
      transform: settings.transform,
    });
  } catch {
    return null;
  }
}

/**
 * Where a scan lies among a group's scans for each scalar feature, when one side is a scan and
 * the other a group: the percentile rank within the group's scans of the run (the scan itself
 * included when it belongs to the group). A position in this cohort, not a clinical norm.
 */
function featurePositions(s: RunView, left: Resolved, right: Resolved): FeaturePosition[] | null {
  const scan = left.view.side.kind === 'scan' ? left : right.view.side.kind === 'scan' ? right : null;
  const group = left.view.side.kind === 'group' ? left : right.view.side.kind === 'group' ? right : null;
  const features = s.results.features;
  if (!scan || !group || !features || scan.view.side.kind !== 'scan') return null;
  const col = groupingColumn(s.report, s.run!.stats);
  if (!col) return null;
  const byId = new Map(s.report.subjects.map((e) => [e.id, e]));
  const ids = featureRowIds(s);
  const inGroup = ids.map((id) => {
    const v = id === null ? null : byId.get(id)?.covariates[col];
    return v !== null && v !== undefined && String(v) === group.view.group;
  });
  const me = ids.indexOf(scan.view.side.id);
  if (me < 0) return null;
  const first = featureColumnStart(s);
  const out: FeaturePosition[] = [];
  for (let c = first; c < features.columns.length; c++) {
    const values: number[] = [];
    features.rows.forEach((row, i) => {
      const v = row[c];
      if (inGroup[i] && typeof v === 'number' && Number.isFinite(v)) values.push(v);
    });
    const x = features.rows[me][c];
    if (typeof x !== 'number' || values.length === 0) continue;
    const mean = values.reduce((p, q) => p + q, 0) / values.length;
    out.push({
      feature: features.columns[c],
      value: x,
      groupMean: mean,
      groupScans: values.length,
      percentile: percentileRank(values, x),
    });
  }
  return out;
}

/** The scan id of each features row (participant_id, with the session where the cohort has them). */
function featureRowIds(s: RunView): Array<string | null> {
  const f = s.results.features!;
  const sessions = s.report.sessions !== null;
  const byKey = new Map(s.report.subjects.map((e) => [`${e.participant}\u0000${e.session ?? ''}`, e.id]));
  return f.rows.map((row) => byKey.get(`${row[0]}\u0000${sessions ? (row[1] ?? '') : ''}`) ?? null);
}

/** Index of the first feature column of features.tsv (after the scan columns and the covariates). */
function featureColumnStart(s: RunView): number {
  return (
    (s.report.sessions ? 2 : 1) +
    s.report.columns.filter((c) => c.name !== 'participant_id' && c.name !== 'session').length
  );
}

function parseMetric(name: string): Parameters<typeof diagramDistances>[2] {
  const w = /^wasserstein-(\d+(?:\.\d+)?)$/.exec(name);
  if (w) return { kind: 'wasserstein', p: Number(w[1]) };
  if (name === 'bottleneck') return { kind: 'bottleneck' };
  const sw = /^sliced-wasserstein-(\d+)$/.exec(name);
  if (sw) return { kind: 'sliced-wasserstein', directions: Number(sw[1]) };
  throw new ComparisonError(`unknown diagram distance "${name}"`);
}
