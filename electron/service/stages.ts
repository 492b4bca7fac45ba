/**
 * Stages (2)–(4) of a cohort run (see hooks.ts): group-level filtrations, per-subject features
 * with their exports, and group statistics. One `cohortStages()` object serves one run: the
 * features stage leaves its tables for the statistics stage.
 *
 * Files written (TSV, or CSV with --csv; NA for missing):
 *   features.tsv        participant_id, the participants table's columns, every scalar feature
 *   nodes.tsv           participant_id, node, label, network, measure, value
 *   networks.tsv        participant_id, network, measure, mean, nodes   (when the node table names networks)
 *   curves.tsv          participant_id, curve, dimension, grid_value, value
 *   group-curves.tsv    group, curve, dimension, grid_value, mean, lower, upper   (bootstrap 95% band)
 *   group-intervals.tsv group, dimension, birth, death, nodes
 *   group-nodes.tsv     group, node, label, network, measure, value
 *   stats.tsv, excluded-features.tsv, diagram-tests.tsv, embedding.tsv   (with --group, --effect or --model)
 * Where the cohort has sessions, every per-scan table has a `session` column right after
 * participant_id (which then holds the participant, shared by its scans).
 */
import type {
  CohortReport,
  CurveBand,
  GroupFiltration,
  NodeInfo,
  StatsSettings,
  SubjectEntry,
  Table,
} from '../api.ts';
import {
  curveBands,
  featureTable,
  GridRange,
  GroupMeanAccumulator,
  maskDroppedRegions,
  networkScoreTable,
  nodeScoreTable,
  subjectNodeScores,
  subjectOnGrid,
} from '../engine/features/index.ts';
import type { FeatureRow } from '../engine/features/index.ts';
import { wholeDiagramMetric } from '../engine/stats/compare.ts';
import { buildDesign } from '../engine/stats/design.ts';
import { designGroupColumn } from '../contract.ts';
import type { Design, DesignSpec, DesignSubject } from '../engine/stats/design.ts';
import { diagramDistanceMatrix, finiteDiagram, metricName } from '../engine/stats/diagram-distance.ts';
import type { DiagramInput, DiagramMetric } from '../engine/stats/diagram-distance.ts';
import { distanceRegression, jointLossTest } from '../engine/stats/diagram-tests.ts';
import { classicalMds, umapEmbedding } from '../engine/stats/embedding.ts';
import { alignFamily, familyPermutationInputs } from '../engine/stats/family.ts';
import type { FamilyFeature, FamilyResult, FeatureFamily } from '../engine/stats/family.ts';
import { finishPermutationTest, preparePermutationTest } from '../engine/stats/permutation.ts';
import { diagramTestsTable, statsTable } from '../engine/stats/tables.ts';
import type { DiagramTestEntry } from '../engine/stats/tables.ts';
import type { DistanceMatrix, SquareMatrix } from '../engine/types.ts';
import { resultFromCache } from '../shared/filtration-record.ts';
import { featureTaskSettings, filtrationAsRead, subjectFeatures } from '../workers/filtration.ts';
import type { SubjectFeatures } from '../workers/filtration.ts';
import { distanceRowRanges } from '../workers/statistics.ts';
import { StatisticsPool } from '../workers/statistics-pool.ts';
import type { RunHooks, StageContext, StageOutput } from './hooks.ts';

const GROUP_SEED_OFFSET = 7919; // bootstrap bands use seed + offset, so they do not reuse the permutation stream

export function cohortStages(): RunHooks {
  // Carried from the features stage to the statistics stage of the same run.
  let featureRows: Array<{ subject: string; features: FeatureRow }> = [];
  let nodeScores: Array<{ subject: string; scores: Record<string, number[]> }> = [];
  let curveRows: Array<{ subject: string; curves: Record<string, Float64Array> }> = [];
  let gridValues: Float64Array = new Float64Array(0);
  let diagramsBySubject: Array<Array<Array<[number, number | null]>>> = [];

  let entries: Map<string, SubjectEntry> | null = null;
  const entryOf = (ctx: StageContext, id: string): SubjectEntry | undefined => {
    if (!entries || entries.size !== ctx.report.subjects.length) {
      entries = new Map(ctx.report.subjects.map((s) => [s.id, s]));
    }
    return entries.get(id);
  };
  const groupOf = (ctx: StageContext, id: string): string | null => {
    const col = groupingColumn(ctx.report, ctx.stats);
    if (!col) return null;
    const v = entryOf(ctx, id)?.covariates[col];
    return v === null || v === undefined ? null : String(v);
  };
  /** participant_id, and session where the cohort has sessions: the first cells of a scan's rows. */
  const scanCells = (ctx: StageContext, id: string): Array<string | null> => {
    const e = entryOf(ctx, id);
    return ctx.report.sessions ? [e?.participant ?? id, e?.session ?? null] : [e?.participant ?? id];
  };
  const scanColumns = (ctx: StageContext): string[] =>
    ctx.report.sessions ? ['participant_id', 'session'] : ['participant_id'];

  return {
    async groupFiltrations(ctx) {
      const col = groupingColumn(ctx.report, ctx.stats);
      if (!col) return {};
      const settings = ctx.run.settings;
      const groups = new Map<string, SubjectEntry[]>();
      for (const rec of ctx.analysed) {
        const g = groupOf(ctx, rec.id);
        const entry = entryOf(ctx, rec.id);
        if (g === null || !entry) continue;
        if (!groups.has(g)) groups.set(g, []);
        groups.get(g)!.push(entry);
      }
      const intervals: Table = { columns: ['group', 'dimension', 'birth', 'death', 'nodes'], rows: [] };
      const nodeRows: Array<{ subject: string; scores: Record<string, number[]> }> = [];
      const groupDiagrams: StageOutput['groupDiagrams'] = [];
      const groupFiltrations: GroupFiltration[] = [];
      const groupDistances = new Map<string, DistanceMatrix>();
      let done = 0;
      for (const [g, entries] of [...groups].sort((a, b) => a[0].localeCompare(b[0]))) {
        if (ctx.cancelled()) break;
        ctx.progress('group-filtrations', done, groups.size, `group ${g}`);
        const gathered = ctx.groupMeans?.complete(g, entries.length);
        const mean = gathered
          ? gathered.mean()
          : await streamingGroupMean(ctx, entries, settings.input === 'correlation');
        if (!mean) continue;
        const { result: mapped, distances } = filtrationAsRead(mean, settings);
        const diagrams = mapped.diagrams.map((dg) =>
          dg.map((iv) => [iv.birth, Number.isFinite(iv.death) ? iv.death : null] as [number, number | null]),
        );
        groupDiagrams.push({ group: g, diagrams });
        const scores = maskDroppedRegions(subjectNodeScores(mapped, settings), settings.dropRegions);
        groupFiltrations.push({
          group: g,
          scans: entries.length,
          nodeCount: mean.n,
          threshold: Number.isFinite(mapped.threshold) ? mapped.threshold : null,
          diagrams,
          representatives: (mapped.representatives ?? []).map((rep) => ({
            birth: rep.birth,
            death: Number.isFinite(rep.death) ? rep.death : null,
            nodes: rep.nodes,
            edges: rep.edges,
          })),
          nodeScores: scores,
        });
        groupDistances.set(g, distances);
        mapped.diagrams.forEach((dg, d) =>
          dg.forEach((iv, k) =>
            intervals.rows.push([
              g,
              d,
              iv.birth,
              Number.isFinite(iv.death) ? iv.death : 'inf',
              d === 1 && mapped.representatives ? mapped.representatives[k].nodes.join(' ') : null,
            ]),
          ),
        );
        nodeRows.push({ subject: g, scores });
        done++;
      }
      await ctx.writeTable('group-intervals', intervals);
      const gn = nodeScoreTable(nodeRows, ctx.report.nodes);
      gn.columns[0] = 'group';
      await ctx.writeTable('group-nodes', gn);
      return { groupDiagrams, groupFiltrations, groupDistances };
    },

    async features(ctx) {
      const settings = ctx.run.settings;
      const nRead = ctx.report.n ?? 0;
      // Pass 1: each subject's features as its worker computed them from the one read of its
      // matrix (computed here, from one read, when it did not: after a merge, or from a source
      // read on this thread), and the cohort grid (the cohort's filtration range unless the user set one).
      const fset = featureTaskSettings(settings);
      const perSubject: SubjectFeatures[] = [];
      const range = new GridRange();
      for (const [k, rec] of ctx.analysed.entries()) {
        if (ctx.cancelled()) return {};
        let f: SubjectFeatures | null = ctx.takeFeatures?.(rec) ?? null;
        if (!f) {
          ctx.progress('features', k, ctx.analysed.length, rec.id);
          const entry = entryOf(ctx, rec.id);
          const m = entry ? await ctx.matrix(entry) : null;
          f = subjectFeatures(await ctx.filtration(rec), m, nRead, settings, fset);
        }
        perSubject.push(f);
        range.add(f.summary.first, f.summary.end);
      }
      gridValues = range.grid(settings);

      // Pass 2: one subject at a time. The long tables go to disk row by row; what the statistics
      // need (scalar features, node scores, curves) stays in memory as plain numbers.
      featureRows = [];
      nodeScores = [];
      curveRows = [];
      diagramsBySubject = [];
      const curvesSink = await ctx.openTable('curves', [
        ...scanColumns(ctx),
        'curve',
        'dimension',
        'grid_value',
        'value',
      ]);
      const nodesSink = await ctx.openTable('nodes', [
        ...scanColumns(ctx),
        'node',
        'label',
        'network',
        'measure',
        'value',
      ]);
      const withNetworks = ctx.report.nodes?.some((x) => x.network !== null) ?? false;
      const networksSink = withNetworks
        ? await ctx.openTable('networks', [...scanColumns(ctx), 'network', 'measure', 'mean', 'nodes'])
        : null;
      const sinks = [curvesSink, nodesSink, ...(networksSink ? [networksSink] : [])];
      // The renderer gets the long node table in its results up to this size (the file has all rows).
      const RESULT_NODE_ROWS = 1_000_000;
      const nodesForResults: Table = {
        columns: [...scanColumns(ctx), 'node', 'label', 'network', 'measure', 'value'],
        rows: [],
      };
      let done = 0;
      try {
        for (const rec of ctx.analysed) {
          if (ctx.cancelled()) {
            for (const sink of sinks) await sink.abort();
            return {};
          }
          ctx.progress('features', done, ctx.analysed.length, rec.id);
          const cached = await ctx.filtration(rec);
          diagramsBySubject.push(cached.diagrams);
          const f = perSubject[done];
          const { features: row, curves } =
            f.onGrid ?? subjectOnGrid(f.summary, resultFromCache(cached, nRead), gridValues, settings);
          f.summary.euler = null; // the simplex events are done with
          featureRows.push({ subject: rec.id, features: row });
          const scores = f.summary.nodeScores;
          nodeScores.push({ subject: rec.id, scores });
          const cells = scanCells(ctx, rec.id);
          for (const scored of nodeScoreTable([{ subject: rec.id, scores }], ctx.report.nodes).rows) {
            const row = [...cells, ...scored.slice(1)];
            await nodesSink.row(row);
            if (nodesForResults.rows.length < RESULT_NODE_ROWS) nodesForResults.rows.push(row);
          }
          if (networksSink) {
            for (const row of networkScoreTable([{ subject: rec.id, scores }], ctx.report.nodes).rows) {
              await networksSink.row([...cells, ...row.slice(1)]);
            }
          }
          curveRows.push({ subject: rec.id, curves });
          for (const [name, values] of Object.entries(curves)) {
            const dim = curveDimension(name);
            for (let i = 0; i < values.length; i++)
              await curvesSink.row([...cells, name, dim, gridValues[i], values[i]]);
          }
          done++;
        }
        for (const sink of sinks) await sink.close();
      } catch (e) {
        for (const sink of sinks) await sink.abort();
        throw e;
      }
      ctx.progress('features', done, ctx.analysed.length);

      const features = withParticipants(featureTable(featureRows), ctx.report);
      await ctx.writeTable('features', features);
      const nodes = nodesForResults;

      // Group means of every curve with a seeded bootstrap band.
      const groupCurves: CurveBand[] = [];
      const bandTable: Table = {
        columns: ['group', 'curve', 'dimension', 'grid_value', 'mean', 'lower', 'upper'],
        rows: [],
      };
      const curveNames = curveRows.length > 0 ? Object.keys(curveRows[0].curves) : [];
      for (const name of curveNames) {
        const input = curveRows.map(({ subject, curves }) => ({
          group: groupOf(ctx, subject) ?? 'all',
          values: curves[name],
        }));
        for (const band of curveBands(input, name, gridValues, {
          seed: ctx.stats.seed + GROUP_SEED_OFFSET,
        })) {
          groupCurves.push(band);
          band.grid.forEach((x, i) =>
            bandTable.rows.push([
              band.group,
              band.curve,
              curveDimension(band.curve),
              x,
              band.mean[i],
              band.lower[i],
              band.upper[i],
            ]),
          );
        }
      }
      await ctx.writeTable('group-curves', bandTable);
      return { features, nodeScores: nodes, groupCurves, grid: Array.from(gridValues) };
    },

    async statistics(ctx) {
      const st = ctx.stats;
      if (!(st.groupColumn || st.effect || st.model) || featureRows.length === 0) return {};
      // A DesignError (unknown column, one level, repeated participants without blocks, …) fails the stage with its message.
      const design: Design = buildDesign(
        featureRows.flatMap((f) => {
          const s = entryOf(ctx, f.subject);
          return s ? [designRow(s)] : [];
        }),
        designSpec(st),
      );
      const subjects = featureRows.map((f) => f.subject);
      const { families, excluded } = buildFamilies(
        subjects,
        featureRows,
        nodeScores,
        curveRows,
        gridValues,
        ctx.report.nodes,
      );
      const options = { permutations: st.permutations, seed: st.seed };
      // Every family × contrast, prepared here (cheap; a design error surfaces at once).
      const jobs = families
        .filter((f) => f.features.length > 0)
        .flatMap((family) => {
          const aligned = alignFamily(design, family);
          return design.contrasts.map((contrast) => {
            const inputs = familyPermutationInputs(design, contrast, aligned, options);
            const prep = preparePermutationTest(inputs.columns, contrast, aligned, inputs.options);
            return { family, contrast, aligned, inputs, prep };
          });
        });
      const dimensions = diagramsBySubject[0]?.length ?? 0;
      const position = new Map(subjects.map((s, i) => [s, i]));
      const idx = design.ids.map((id) => position.get(id)!);
      const metric: DiagramMetric = wholeDiagramMetric(idx.length);

      // Permutation chunks and distance-matrix rows run on worker threads (as many as the run's
      // workers); each result depends on its task alone, so the tables are the same for any count.
      const pool = new StatisticsPool(Math.max(1, ctx.workers ?? 1));
      const stopOnCancel = setInterval(() => {
        if (ctx.cancelled()) void pool.terminate();
      }, 20);
      const rowParts = metric.kind === 'sliced-wasserstein' ? 0 : 4 * pool.size;
      const distanceParts = rowParts > 0 ? distanceRowRanges(idx.length, rowParts).length : 0;
      // Progress: a step per permutation chunk and family result, per distance-matrix part, per
      // dimension's diagram tests.
      const total = jobs.reduce((a, j) => a + j.prep.chunks + 1, 0) + dimensions * (distanceParts + 1);
      const started = performance.now();
      let done = 0;
      const step = (message: string): void => {
        done++;
        const rate = done / (performance.now() - started);
        ctx.progress('statistics', done, total, message, (total - done) / rate);
      };
      try {
        ctx.progress('statistics', 0, total, jobs[0]?.family.name ?? 'diagram tests', null);
        let taskId = 0;
        const results: FamilyResult[] = await Promise.all(
          jobs.map(async (job) => {
            const chunks = await Promise.all(
              Array.from({ length: job.prep.chunks }, async (_, chunk) => {
                const reply = await pool.run({
                  kind: 'permutation-chunks',
                  taskId: taskId++,
                  columns: job.inputs.columns,
                  contrast: job.contrast,
                  features: job.aligned,
                  exchangeability: job.inputs.options.exchangeability,
                  invariantColumns: job.inputs.options.invariantColumns,
                  permutations: job.prep.requested,
                  seed: job.prep.seed,
                  chunks: [chunk],
                });
                if (reply.kind !== 'permutation-chunks') throw new Error('unexpected statistics reply');
                step(`${job.family.name}, ${job.contrast.name}`);
                return reply.chunks;
              }),
            );
            const permutation = finishPermutationTest(job.prep, chunks.flat());
            // The GLM and the bootstrap effect sizes of the family, on a worker too.
            const reply = await pool.run({
              kind: 'family-result',
              taskId: taskId++,
              design,
              contrast: job.contrast,
              family: job.family,
              aligned: job.aligned,
              permutation,
              options,
            });
            if (reply.kind !== 'family-result') throw new Error('unexpected statistics reply');
            step(`${job.family.name}, ${job.contrast.name}: effect sizes`);
            return reply.result;
          }),
        );
        if (ctx.cancelled()) return {};
        for (const [k, r] of results.entries())
          for (const x of r.excluded) excluded.push({ family: jobs[k].family.name, ...x });
        const { table: stats, warnings } = statsTable(results);
        warnings.unshift(...design.notes);
        if (design.excluded.length > 0) {
          warnings.unshift(
            `${design.excluded.length} scan(s) left out of the design: ${design.excluded.map((x) => `${x.id} (${x.reason})`).join(', ')}`,
          );
        }
        await ctx.writeTable('stats', stats);
        await ctx.writeTable('excluded-features', {
          columns: ['family', 'feature', 'node_or_point', 'reason'],
          rows: excluded.map((x) => [x.family, x.feature, x.nodeOrPoint, x.reason]),
        });

        // Whole-diagram tests and the subject map, per dimension.
        const groupSizes =
          design.levels.length > 0
            ? design.levels.map((level, g) => ({ level, n: design.groupSizes[g] }))
            : [{ level: 'all', n: design.ids.length }];
        // The joint loss compares groups only: a categorical effect without covariates or blocks.
        const jointLoss =
          design.effect.kind === 'categorical' &&
          !design.exchangeability &&
          design.columns.length === design.levels.length;
        const entries: DiagramTestEntry[] = [];
        let embedding: StageOutput['embedding'] = null;
        const matrices = await Promise.all(
          Array.from({ length: dimensions }, (_, d) =>
            distanceMatrixOnPool(
              pool,
              idx.map((i) => diagramsBySubject[i][d]),
              metric,
              rowParts,
              () => step(`H${d} diagram distances`),
            ),
          ),
        );
        for (let d = 0; d < dimensions; d++) {
          if (ctx.cancelled()) return {};
          const dm = matrices[d];
          const tests = [
            ...(jointLoss ? [jointLossTest(dm, design.group, options)] : []),
            ...design.contrasts.map((c) =>
              distanceRegression(dm, design.columns, c, {
                ...options,
                exchangeability: design.exchangeability,
                invariantColumns: design.blockColumns,
              }),
            ),
          ];
          for (const test of tests) {
            entries.push({
              family: `H${d}`,
              metric: metricName(metric),
              result: test,
              groupSizes,
              effect: design.effect.term,
            });
          }
          if (d === 1 || (d === 0 && diagramsBySubject[0].length === 1))
            embedding = subjectMap(dm, design, st.seed);
          step(`H${d} diagram tests`);
        }
        const diagramTests = diagramTestsTable(entries);
        await ctx.writeTable('diagram-tests', diagramTests);
        if (embedding) {
          // participant_id, then session where the cohort has sessions (the scan rows' shared layout).
          await ctx.writeTable('embedding', {
            columns: [...scanColumns(ctx), 'group', 'method', 'x', 'y'],
            rows: embedding.map((e) => [...scanCells(ctx, e.subject), e.group, e.method, e.x, e.y]),
          });
        }
        if (warnings.length > 0) await ctx.writeJson('stats-warnings.json', warnings);
        return { stats, diagramTests, embedding, diagramMetric: metricName(metric) };
      } catch (e) {
        // A cancel terminates the pool: the tasks in flight reject, and the stage stops quietly.
        if (ctx.cancelled()) return {};
        throw e;
      } finally {
        clearInterval(stopOnCancel);
        await pool.terminate();
      }
    },
  };
}

/**
 * A diagram distance matrix with its pairs computed on the pool, in `parts` row ranges of similar
 * size (each pair by the same function as in-process, so the matrix is the same to the bit); the
 * sliced Wasserstein matrix (parts = 0) is computed here by its own method.
 */
async function distanceMatrixOnPool(
  pool: StatisticsPool,
  diagrams: DiagramInput[],
  metric: DiagramMetric,
  parts: number,
  onPart: () => void,
): Promise<SquareMatrix> {
  if (parts === 0) return diagramDistanceMatrix(diagrams, metric);
  const finite = diagrams.map((d, i) => {
    try {
      return finiteDiagram(d);
    } catch (e) {
      throw new Error(`diagram ${i}: ${(e as Error).message}`);
    }
  });
  const n = finite.length;
  const values = new Float64Array(n * n);
  await Promise.all(
    distanceRowRanges(n, parts).map(async ([from, to], k) => {
      const reply = await pool.run({ kind: 'distance-rows', taskId: k, diagrams: finite, metric, from, to });
      if (reply.kind !== 'distance-rows') throw new Error('unexpected statistics reply');
      let p = 0;
      for (let i = from; i < to; i++) {
        for (let j = 0; j < i; j++) {
          values[i * n + j] = reply.values[p];
          values[j * n + i] = reply.values[p++];
        }
      }
      onPart();
    }),
  );
  return { n, values };
}

/**
 * The column scans are grouped by (group curves, group filtrations): --group, an --effect holding
 * text, or the first column holding text of a --model's --test term other than the --blocks
 * column (group for group:session).
 */
export function groupingColumn(report: CohortReport, stats: StatsSettings): string | null {
  // The contract's rule (the renderer applies the same), a column holding text being categorical.
  return designGroupColumn(stats, (col) =>
    report.subjects.some((s) => {
      const v = s.covariates[col];
      return v !== null && v !== undefined && typeof v !== 'number';
    }),
  );
}

/**
 * The group-mean matrices of the group filtrations, gathered while stage (1) runs from the
 * matrices its workers read (so each file is read once): each analysed subject's matrix is added
 * to its group's GroupMeanAccumulator in cohort order (a subject that finishes early waits in a
 * buffer, bounded by the subjects in flight), so the sums are exactly those of reading the
 * subjects in order afterwards. A group whose subjects did not all come is read by the stage.
 */
export class GroupMeansGatherer {
  readonly means = new Map<string, GroupMeanAccumulator>();
  private readonly column: string;
  private readonly byId: Map<string, SubjectEntry>;
  private readonly kind: 'correlation' | 'plain';
  private readonly order: number[];
  private pos = 0;
  private readonly waiting = new Map<number, { id: string; matrix: SquareMatrix | null } | null>();
  private broken = new Set<string>();

  /** Null when the run groups no subjects (no grouping column). */
  static for(
    report: CohortReport,
    stats: StatsSettings,
    settings: { input: string },
    share: number[],
  ): GroupMeansGatherer | null {
    const column = groupingColumn(report, stats);
    return column ? new GroupMeansGatherer(report, column, settings.input, share) : null;
  }

  private constructor(report: CohortReport, column: string, input: string, share: number[]) {
    this.column = column;
    this.byId = new Map(report.subjects.map((x) => [x.id, x]));
    this.kind = input === 'correlation' ? 'correlation' : 'plain';
    this.order = share;
  }

  /** A subject's outcome in stage (1): analysed (id) with its matrix as read, or not analysed (null). */
  offer(index: number, subject: { id: string; matrix: SquareMatrix | null } | null): void {
    this.waiting.set(index, subject);
    while (this.pos < this.order.length && this.waiting.has(this.order[this.pos])) {
      const next = this.waiting.get(this.order[this.pos]);
      this.waiting.delete(this.order[this.pos]);
      this.pos++;
      if (next) this.add(next.id, next.matrix);
    }
  }

  /** The group's accumulated mean input, when every one of its `subjects` was added. */
  complete(group: string, subjects: number): GroupMeanAccumulator | null {
    const acc = this.means.get(group);
    return acc && !this.broken.has(group) && acc.count === subjects ? acc : null;
  }

  private add(id: string, m: SquareMatrix | null): void {
    const v = this.byId.get(id)?.covariates[this.column];
    if (v === null || v === undefined) return;
    const g = String(v);
    if (!m) {
      this.broken.add(g);
      return;
    }
    let acc = this.means.get(g);
    if (!acc) this.means.set(g, (acc = new GroupMeanAccumulator(this.kind)));
    if (acc.size >= 0 && m.n !== acc.size) return;
    try {
      acc.add(m);
    } catch {
      this.broken.add(g);
    }
  }
}

/** Fisher-z (or plain) mean of a group's matrices (GroupMeanAccumulator), reading one subject at a time. */
async function streamingGroupMean(
  ctx: StageContext,
  entries: SubjectEntry[],
  fisher: boolean,
): Promise<SquareMatrix | null> {
  const acc = new GroupMeanAccumulator(fisher ? 'correlation' : 'plain');
  for (const e of entries) {
    const m = await ctx.matrix(e);
    if (!m) continue;
    if (acc.size >= 0 && m.n !== acc.size) continue;
    acc.add(m);
  }
  return acc.count > 0 ? acc.mean() : null;
}

function curveDimension(name: string): number | null {
  const m = /^(?:betti|landscape)(\d)/.exec(name);
  return m ? Number(m[1]) : null;
}

/** participant_id (and session where the cohort has sessions), then the covariate columns, then the features. */
function withParticipants(features: Table, report: CohortReport): Table {
  const first = report.sessions ? ['participant_id', 'session'] : ['participant_id'];
  const cols = report.columns.map((c) => c.name).filter((c) => !first.includes(c));
  const byId = new Map(report.subjects.map((s) => [s.id, s]));
  return {
    columns: [...first, ...cols, ...features.columns.slice(1)],
    rows: features.rows.map((row) => {
      const s = byId.get(String(row[0]));
      const scan = report.sessions
        ? [s?.participant ?? row[0], s?.session ?? null]
        : [s?.participant ?? row[0]];
      return [...scan, ...cols.map((c) => s?.covariates[c] ?? null), ...row.slice(1)];
    }),
  };
}

/** The statistics settings as a design spec (the group column is the categorical shorthand of the effect). */
export function designSpec(st: StatsSettings): DesignSpec {
  return {
    groupColumn: st.groupColumn,
    effect: st.effect ?? null,
    model: st.model ?? null,
    test: st.test ?? null,
    reference: st.reference ?? null,
    blocks: st.blocks ?? null,
    covariates: st.covariates,
  };
}

/** A scan's design row: its covariates, with participant_id (and session) always present. */
function designRow(s: SubjectEntry): DesignSubject {
  const covariates = { ...s.covariates };
  if (covariates.participant_id === undefined || covariates.participant_id === null) {
    covariates.participant_id = s.participant ?? s.id;
  }
  if ((covariates.session === undefined || covariates.session === null) && s.session) {
    covariates.session = s.session;
  }
  return { id: s.id, covariates };
}

export interface ExcludedFeature {
  family: string;
  feature: string;
  nodeOrPoint: string | number | null;
  reason: string;
}

/**
 * The families of the statistics stage: all scalar features together; each node measure over
 * its nodes; each curve over its grid points. A feature that is missing or non-finite for some
 * scan or constant across scans cannot be tested and is left out, listed with its reason.
 */
function buildFamilies(
  subjects: string[],
  featureRows: Array<{ subject: string; features: FeatureRow }>,
  nodeScores: Array<{ subject: string; scores: Record<string, number[]> }>,
  curveRows: Array<{ subject: string; curves: Record<string, Float64Array> }>,
  gridValues: Float64Array,
  nodes: NodeInfo[] | null,
): { families: FeatureFamily[]; excluded: ExcludedFeature[] } {
  const excluded: ExcludedFeature[] = [];
  let current = '';
  const testable = (f: FamilyFeature): boolean => {
    const v = f.values;
    let min = Infinity;
    let max = -Infinity;
    for (let i = 0; i < v.length; i++) {
      if (!Number.isFinite(v[i])) {
        excluded.push({
          family: current,
          feature: f.feature,
          nodeOrPoint: f.nodeOrPoint,
          reason: 'missing or non-finite values',
        });
        return false;
      }
      min = Math.min(min, v[i]);
      max = Math.max(max, v[i]);
    }
    if (max - min > 1e-12 * Math.max(1, Math.abs(max))) return true;
    excluded.push({
      family: current,
      feature: f.feature,
      nodeOrPoint: f.nodeOrPoint,
      reason: 'constant across scans',
    });
    return false;
  };
  const families: FeatureFamily[] = [];
  const names = featureRows.length > 0 ? Object.keys(featureRows[0].features) : [];
  current = 'features';
  families.push({
    name: 'features',
    subjects,
    features: names
      .map((f) => ({ feature: f, nodeOrPoint: null, values: featureRows.map((r) => r.features[f] ?? NaN) }))
      .filter(testable),
  });
  const measures = nodeScores.length > 0 ? Object.keys(nodeScores[0].scores) : [];
  for (const m of measures) {
    const n = nodeScores[0].scores[m].length;
    current = `nodes:${m}`;
    families.push({
      name: `nodes:${m}`,
      subjects,
      features: Array.from({ length: n }, (_, i) => ({
        feature: m,
        nodeOrPoint: nodes?.[i]?.label ?? i,
        values: nodeScores.map((s) => s.scores[m][i]),
      })).filter(testable),
    });
  }
  const curves = curveRows.length > 0 ? Object.keys(curveRows[0].curves) : [];
  for (const c of curves) {
    current = `curve:${c}`;
    families.push({
      name: `curve:${c}`,
      subjects,
      features: Array.from(gridValues, (x, i) => ({
        feature: c,
        nodeOrPoint: x,
        values: curveRows.map((r) => r.curves[c][i]),
      })).filter(testable),
    });
  }
  return { families, excluded };
}

function subjectMap(dm: SquareMatrix, design: Design, seed: number): NonNullable<StageOutput['embedding']> {
  const mds = classicalMds(dm);
  const out: NonNullable<StageOutput['embedding']> = mds.coordinates.map(([x, y], i) => ({
    subject: design.ids[i],
    group: design.levels.length > 0 ? design.levels[design.group[i]] : null,
    x,
    y,
    method: 'mds' as const,
  }));
  if (dm.n >= 10) {
    const umap = umapEmbedding(dm, { seed });
    umap.coordinates.forEach(([x, y], i) =>
      out.push({
        subject: design.ids[i],
        group: design.levels.length > 0 ? design.levels[design.group[i]] : null,
        x,
        y,
        method: 'umap',
      }),
    );
  }
  return out;
}
