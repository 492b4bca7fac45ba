/**
 * From one subject's persistence result to named scalar features and per-node scores, and from many
 * subjects to the api.ts tables. Column names come from columns.ts.
 */
import type { AnalysisSettings, NodeInfo, Table } from '../../api.ts';
import type { DistanceMatrix, PersistenceResult } from '../types.ts';
import { bettiArea } from './betti.ts';
import { featureColumnNames } from './columns.ts';
import { eulerArea, simplexEvents } from './euler.ts';
import type { SimplexEvents, SimplexSource } from './euler.ts';
import { filtrationEnd, userCap } from './grid.ts';
import { h0BirthComponentLifetime, h0JoinValue } from './h0-merge-tree.ts';
import { h1Participation } from './h1-participation.ts';
import { intervalStats } from './interval-stats.ts';
import { landscapeNorms, landscapes } from './landscape.ts';
import { networkMeans } from './networks.ts';
import { subjectCurves } from './curves.ts';

export type FeatureRow = Record<string, number | null>;

export type FeatureSettings = Pick<AnalysisSettings, 'maxDim' | 'persistenceFloor' | 'landscapeLevels'>;

const finiteOrNull = (x: number): number | null => (Number.isFinite(x) ? x : null);

/**
 * The subject's scalar features on the cohort grid, keyed by the names of featureColumnNames.
 * Undefined values (a mean of nothing, a dimension not computed, the Euler area without distances)
 * are null. The Euler area needs the subject's distances; beyond a user cap it counts the complex
 * as frozen at the cap, like the Betti curves.
 *
 *   subjectFeatureRow(computePersistence(d, {maxDim: 1}), grid(0, 1, 100), settings, d)
 *   → {h0_count: 30, …, betti1_area: 0.12, …, euler_area: 3.4}
 */
export function subjectFeatureRow(
  result: PersistenceResult,
  gridValues: ArrayLike<number>,
  settings: FeatureSettings,
  distances?: SimplexSource,
): FeatureRow {
  const row = emptyFeatureRow(settings);
  intervalFeatures(row, result, settings);
  gridFeatures(row, result, gridValues, settings, distances);
  return row;
}

function emptyFeatureRow(settings: FeatureSettings): FeatureRow {
  const row: FeatureRow = {};
  for (const name of featureColumnNames(settings.maxDim, settings.landscapeLevels)) row[name] = null;
  return row;
}

/** The features that do not depend on the grid: interval statistics (intervalStats) of every dimension. */
function intervalFeatures(row: FeatureRow, result: PersistenceResult, settings: FeatureSettings): void {
  for (let d = 0; d <= settings.maxDim; d++) {
    const dg = result.diagrams[d];
    if (!dg) continue;
    const s = intervalStats(dg, settings.persistenceFloor);
    const p = `h${d}_`;
    row[p + 'count'] = s.count;
    row[p + 'count_essential'] = s.countEssential;
    row[p + 'count_finite'] = s.countFinite;
    row[p + 'count_finite_above_floor'] = s.countFiniteAboveFloor;
    row[p + 'total_persistence_finite_p1'] = s.totalPersistenceP1;
    row[p + 'total_persistence_finite_p2'] = s.totalPersistenceP2;
    row[p + 'max_persistence_finite'] = s.maxPersistence;
    row[p + 'mean_birth'] = finiteOrNull(s.meanBirth);
    row[p + 'median_birth'] = finiteOrNull(s.medianBirth);
    row[p + 'mean_death_finite'] = finiteOrNull(s.meanDeath);
    row[p + 'median_death_finite'] = finiteOrNull(s.medianDeath);
    row[p + 'mean_lifetime_finite'] = finiteOrNull(s.meanLifetime);
    row[p + 'median_lifetime_finite'] = finiteOrNull(s.medianLifetime);
    row[p + 'entropy_finite'] = finiteOrNull(s.entropy);
  }
}

/** The features on the grid: Betti areas, landscape norms, and the Euler area when the simplices are given. */
function gridFeatures(
  row: FeatureRow,
  result: PersistenceResult,
  gridValues: ArrayLike<number>,
  settings: FeatureSettings,
  simplices?: SimplexSource,
): void {
  const a = gridValues[0];
  const b = gridValues[gridValues.length - 1];
  for (let d = 0; d <= settings.maxDim; d++) {
    const dg = result.diagrams[d];
    if (!dg) continue;
    row[`betti${d}_area`] = bettiArea(dg, a, b);
    const lambdas = landscapes(dg, gridValues, settings.landscapeLevels);
    lambdas.forEach((lambda, k) => {
      const { l1, l2 } = landscapeNorms(lambda, gridValues);
      row[`landscape${d}_${k + 1}_l1`] = l1;
      row[`landscape${d}_${k + 1}_l2`] = l2;
    });
  }
  if (simplices) {
    row['euler_area'] = eulerArea(simplices, a, b, (settings.maxDim + 1) as 2 | 3, userCap(result));
  }
}

/**
 * What one subject contributes to a cohort's features before the cohort's grid is known, computed
 * where its matrix was read (a worker) from that one read: the grid-free features (interval
 * statistics), its node scores (dropped regions NaN), its share of the cohort grid's range, and
 * its simplices recorded as SimplexEvents (up to its user cap), from which subjectOnGrid evaluates
 * the Euler curve and area on any grid exactly as from the distances. Without distances there are
 * no Euler values (as in subjectFeatureRow).
 *
 *   subjectSummary(resultAsRead, settings, distancesAfterDrop)
 *   → {first: 0.12, end: 0.83, features: {h0_count: 30, …, betti0_area: null, …}, nodeScores: {…}, euler: {…}}
 */
export interface SubjectSummary {
  /** The first merge value of the H0 merge tree (the smallest edge), null without merges. */
  first: number | null;
  /** filtrationEnd of the result. */
  end: number;
  features: FeatureRow;
  nodeScores: Record<string, number[]>;
  euler: SimplexEvents | null;
}

export function subjectSummary(
  result: PersistenceResult,
  settings: FeatureSettings & Pick<AnalysisSettings, 'dropRegions'>,
  distances?: DistanceMatrix,
): SubjectSummary {
  const features = emptyFeatureRow(settings);
  intervalFeatures(features, result, settings);
  return {
    first: result.mergeTree.length > 0 ? result.mergeTree[0].value : null,
    end: filtrationEnd(result),
    features,
    nodeScores: maskDroppedRegions(subjectNodeScores(result, settings), settings.dropRegions),
    euler: distances ? simplexEvents(distances, (settings.maxDim + 1) as 2 | 3, userCap(result)) : null,
  };
}

/**
 * A subject's scalar features and curves on the cohort grid from its summary and its result: the
 * same numbers as subjectFeatureRow and subjectCurves from the distances.
 */
export function subjectOnGrid(
  summary: SubjectSummary,
  result: PersistenceResult,
  gridValues: ArrayLike<number>,
  settings: FeatureSettings,
): { features: FeatureRow; curves: Record<string, Float64Array> } {
  const features = { ...summary.features };
  gridFeatures(features, result, gridValues, settings, summary.euler ?? undefined);
  return { features, curves: subjectCurves(result, gridValues, settings, summary.euler ?? undefined) };
}

/** Sets the scores of dropped regions to NaN (written as NA). */
export function maskDroppedRegions(
  scores: Record<string, number[]>,
  drop: number[],
): Record<string, number[]> {
  if (drop.length === 0) return scores;
  const gone = new Set(drop);
  for (const v of Object.values(scores)) for (let i = 0; i < v.length; i++) if (gone.has(i)) v[i] = NaN;
  return scores;
}

/**
 * Rows of subjects → a Table: 'subject' first, then the feature columns in the order of the first
 * row (every row built with the same settings has the same keys).
 *
 *   featureTable([{subject: 'sub-01', features: row}]) → {columns: ['subject', 'h0_count', …], rows: [['sub-01', 30, …]]}
 */
export function featureTable(rows: Array<{ subject: string; features: FeatureRow }>): Table {
  const names = rows.length > 0 ? Object.keys(rows[0].features) : [];
  return {
    columns: ['subject', ...names],
    rows: rows.map(({ subject, features }) => [
      subject,
      ...names.map((c) => {
        const v = features[c];
        return v === undefined || v === null || !Number.isFinite(v) ? null : v;
      }),
    ]),
  };
}

export interface NodeScoreOptions {
  /** Restrict the H1 measures to cycles born in [lo, hi] (all measures, floor ones included). */
  birthBand?: [number, number];
}

/**
 * The node measures of columns.ts NODE_MEASURES for one subject (measure → one value per node).
 * The H1 measures need representatives and are left out when the result has none.
 *
 *   subjectNodeScores(computePersistence(d, {representatives: true}), settings)
 *   → {h1_cycle_count: [...], …, h0_join_value: [...], h0_birth_component_lifetime: [...]}
 */
export function subjectNodeScores(
  result: PersistenceResult,
  settings: Pick<AnalysisSettings, 'persistenceFloor'>,
  options: NodeScoreOptions = {},
): Record<string, number[]> {
  const n = result.n;
  const end = filtrationEnd(result);
  const scores: Record<string, number[]> = {};
  if (result.representatives) {
    const all = h1Participation(n, result.representatives, { threshold: end, birthBand: options.birthBand });
    const above = h1Participation(n, result.representatives, {
      threshold: end,
      birthBand: options.birthBand,
      floor: settings.persistenceFloor,
    });
    scores['h1_cycle_count'] = Array.from(all.count);
    scores['h1_weighted'] = Array.from(all.weighted);
    scores['h1_weighted_norm'] = Array.from(all.weightedNorm);
    scores['h1_cycle_count_above_floor'] = Array.from(above.count);
    scores['h1_weighted_above_floor'] = Array.from(above.weighted);
    scores['h1_weighted_norm_above_floor'] = Array.from(above.weightedNorm);
  }
  scores['h0_join_value'] = Array.from(h0JoinValue(n, result.mergeTree));
  scores['h0_birth_component_lifetime'] = Array.from(h0BirthComponentLifetime(n, result.mergeTree, end));
  return scores;
}

/**
 * Long-form node scores: one row per subject, measure and node, columns
 * subject, node (0-based index in file order), label, network, measure, value.
 * Without a node table, label and network are null.
 *
 *   nodeScoreTable([{subject: 's1', scores: {h0_join_value: [0, 1]}}], null)
 *   → rows [['s1', 0, null, null, 'h0_join_value', 0], ['s1', 1, null, null, 'h0_join_value', 1]]
 */
export function nodeScoreTable(
  entries: Array<{ subject: string; scores: Record<string, ArrayLike<number>> }>,
  nodes: NodeInfo[] | null,
): Table {
  const rows: Table['rows'] = [];
  for (const { subject, scores } of entries) {
    for (const [measure, values] of Object.entries(scores)) {
      for (let i = 0; i < values.length; i++) {
        const node = nodes?.[i];
        rows.push([
          subject,
          i,
          node?.label ?? null,
          node?.network ?? null,
          measure,
          Number.isFinite(values[i]) ? values[i] : null,
        ]);
      }
    }
  }
  return { columns: ['subject', 'node', 'label', 'network', 'measure', 'value'], rows };
}

/**
 * Node measures averaged per network of the node table: columns subject, network, measure, mean, nodes
 * (nodes = how many values entered the mean). Empty when the node table names no networks.
 *
 *   networkScoreTable([{subject: 's1', scores: {h1_weighted: [1, 3]}}], nodesWithNetworks)
 */
export function networkScoreTable(
  entries: Array<{ subject: string; scores: Record<string, ArrayLike<number>> }>,
  nodes: NodeInfo[] | null,
): Table {
  const columns = ['subject', 'network', 'measure', 'mean', 'nodes'];
  if (!nodes || nodes.every((x) => x.network === null)) return { columns, rows: [] };
  const nets = nodes.map((x) => x.network);
  const rows: Table['rows'] = [];
  for (const { subject, scores } of entries) {
    for (const [measure, values] of Object.entries(scores)) {
      for (const m of networkMeans(values, nets)) {
        rows.push([subject, m.network, measure, Number.isFinite(m.mean) ? m.mean : null, m.nodes]);
      }
    }
  }
  return { columns, rows };
}
