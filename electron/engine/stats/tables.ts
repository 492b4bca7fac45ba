/**
 * The rows of stats.tsv and diagram-tests.tsv as api.ts Tables (null is written as NA).
 * Every row carries its family, the permutation scheme, how many permutations were run and the
 * seed, so that any p-value can be reproduced from the table alone.
 *
 *   statsTable([testFamily(design, contrast, family, { seed: 1 })]).columns[0]  // 'family'
 */
import type { CohortResults, Table } from '../../api.ts';
import type { DistanceTest } from './diagram-tests.ts';
import type { Embedding } from './embedding.ts';
import type { FamilyResult } from './family.ts';
import { DIAGRAM_TEST_COLUMNS, STATS_COLUMNS } from '../features/columns.ts';

// The column lists live with every other output column name, in features/columns.ts.
export { DIAGRAM_TEST_COLUMNS, STATS_COLUMNS } from '../features/columns.ts';

const num = (v: number): number | null => (Number.isFinite(v) ? v : null);

/** One row per feature and contrast. */
export function statsTable(results: FamilyResult[]): { table: Table; warnings: string[] } {
  const rows: Table['rows'] = [];
  const warnings: string[] = [];
  for (const r of results) {
    const perm = r.permutation;
    const nPerGroup = r.groupSizes.map((g) => `${g.level}:${g.n}`).join(' ');
    r.features.forEach((f, j) => {
      let effect: [string, number | null, number | null, number | null];
      const kind = r.effect.kind.replace(/-/g, '_');
      if ('sizes' in r.effect) {
        const e = r.effect.sizes;
        effect = [kind, num(e.value[j]), num(e.low[j]), num(e.high[j])];
      } else effect = [kind, num(r.effect.values[j]), null, null];
      rows.push([
        r.family,
        f.feature,
        f.nodeOrPoint,
        r.contrast.name,
        perm.kind,
        num(perm.statistic[j]),
        perm.df1,
        perm.df2,
        r.parametricValid ? num(r.glm.p[j]) : null,
        num(perm.pUncorrected[j]),
        num(perm.pFwer[j]),
        num(r.qFdr[j]),
        ...effect,
        num(r.partialR[j]),
        num(r.partialEtaSquared[j]),
        nPerGroup,
        r.blocks,
        perm.scheme,
        perm.run.mode,
        perm.run.visited,
        perm.run.seed,
      ]);
    });
    warnings.push(...r.warnings);
  }
  return { table: { columns: [...STATS_COLUMNS], rows }, warnings };
}

export interface DiagramTestEntry {
  /** e.g. 'H1'. */
  family: string;
  /** e.g. 'wasserstein-2'. */
  metric: string;
  result: DistanceTest;
  groupSizes: Array<{ level: string; n: number }>;
  /** The tested effect or term (default: the group). */
  effect?: string | null;
}

/** One row per diagram family, metric and test. */
export function diagramTestsTable(entries: DiagramTestEntry[]): Table {
  return {
    columns: [...DIAGRAM_TEST_COLUMNS],
    rows: entries.map((e) => [
      e.family,
      e.metric,
      e.result.test,
      num(e.result.statistic),
      e.result.df1,
      e.result.df2,
      num(e.result.p),
      e.groupSizes.map((g) => `${g.level}:${g.n}`).join(' '),
      e.result.run.mode,
      e.result.run.visited,
      e.result.run.seed,
      e.result.warnings.length > 0 ? e.result.warnings.join('; ') : null,
      e.result.scheme,
      e.effect ?? null,
    ]),
  };
}

/** The `embedding` entries of CohortResults from a 2-D map, aligned with `ids`. */
export function embeddingEntries(
  ids: string[],
  groups: Array<string | null>,
  embedding: Embedding,
): NonNullable<CohortResults['embedding']> {
  if (ids.length !== embedding.coordinates.length || groups.length !== ids.length) {
    throw new Error(
      `embedding has ${embedding.coordinates.length} points for ${ids.length} subjects and ${groups.length} group labels`,
    );
  }
  return ids.map((subject, i) => ({
    subject,
    group: groups[i],
    x: embedding.coordinates[i][0],
    y: embedding.coordinates[i][1],
    method: embedding.method,
  }));
}
