/**
 * The stages of a cohort run after the per-subject filtrations, as hooks the service calls in
 * order once every filtration of the cohort is committed (after a single run, or after `merge`
 * has combined the shards):
 *
 *   (1) filtrations per subject      — the service itself (pipeline.ts), cached and resumable
 *   (2) group-level filtrations      — hooks.groupFiltrations (e.g. the mean matrix of each group)
 *   (3) features + exports           — hooks.features (per-subject features, node scores, curves)
 *   (4) statistics                   — hooks.statistics (group comparisons; uses ctx.stats)
 *
 * Each hook reads subjects through ctx (filtrations from the cache, matrices from the source, one
 * at a time), writes its own tables with ctx.writeTable (atomic, and registered as Loopwise's own
 * in the output folder), and returns the parts of CohortResults it fills. A hook may be slow:
 * it reports progress with ctx.progress and stops early when ctx.cancelled() is true.
 * Until a hook is given, the stage is skipped and its CohortResults fields stay empty.
 */
import type {
  CohortReport,
  CohortResults,
  ProgressEvent,
  StatsSettings,
  SubjectEntry,
  Table,
} from '../api.ts';
import type { DistanceMatrix, SquareMatrix } from '../engine/types.ts';
import type { CachedFiltration } from './cache.ts';
import type { SubjectFeatures } from '../workers/filtration.ts';
import type { GroupMeansGatherer } from './stages.ts';
import type { RunRecords, SubjectRecord, TableFormat } from './tables.ts';

export interface StageContext {
  runId: string;
  run: RunRecords;
  stats: StatsSettings;
  /** The cohort as opened (subject covariates, nodes, findings). */
  report: CohortReport;
  /** The analysed subjects in cohort order. */
  analysed: SubjectRecord[];
  /** One subject's cached filtration. */
  filtration(record: SubjectRecord): Promise<CachedFiltration>;
  /**
   * The subject's features its worker computed from the read of its matrix in stage (1), once
   * (null when it did not, e.g. after a merge, or when already taken).
   */
  takeFeatures?(record: SubjectRecord): SubjectFeatures | null;
  /** The group means gathered from the workers' reads in stage (1), when the run groups its subjects. */
  groupMeans?: GroupMeansGatherer | null;
  /** One subject's matrix as read (null when the cohort's files are not reachable, e.g. a merge elsewhere). */
  matrix(entry: SubjectEntry): Promise<SquareMatrix | null>;
  /** Writes a table into the output folder (when there is one) as NAME.tsv or NAME.csv; returns the file name or null. */
  writeTable(name: string, table: Table): Promise<string | null>;
  /**
   * Opens a table to be written row by row (for tables too large to hold, e.g. long-form node
   * scores), committed atomically by close(). Without an output folder the rows are discarded.
   */
  openTable(name: string, columns: string[]): Promise<TableSink>;
  /** Writes a JSON file into the output folder (when there is one). */
  writeJson(name: string, value: unknown): Promise<string | null>;
  format: TableFormat;
  /** `etaMs`: the stage's own estimate of the time left, when it has one. */
  progress(
    phase: ProgressEvent['phase'],
    done: number,
    total: number,
    message?: string,
    etaMs?: number | null,
  ): void;
  /** Worker threads the run may use (its `workers` setting); the statistics stage runs on as many. */
  workers?: number;
  cancelled(): boolean;
}

export interface TableSink {
  row(cells: Array<string | number | null>): Promise<void>;
  /** Commits the table; returns its file name, or null without an output folder. */
  close(): Promise<string | null>;
  /** Drops the partial table. */
  abort(): Promise<void>;
}

/** What the stages make; results.ts assembles the doors' answers from it. */
export interface StageOutput {
  grid?: number[];
  diagramMetric?: CohortResults['diagramMetric'];
  groupFiltrations?: CohortResults['groupFiltrations'];
  features?: Table;
  /** Long form as nodes.tsv: participant_id (session), node, label, network, measure, value. */
  nodeScores?: Table;
  groupCurves?: CohortResults['groupCurves'];
  groupDiagrams?: CohortResults['groupDiagrams'];
  /** As stats.tsv (STATS_COLUMNS). */
  stats?: Table | null;
  /** As diagram-tests.tsv (DIAGRAM_TEST_COLUMNS). */
  diagramTests?: Table | null;
  embedding?: CohortResults['embedding'];
  /** Each group's mean-matrix distances (for its Euler curve in comparisons); held by the run, never sent. */
  groupDistances?: Map<string, DistanceMatrix>;
}

export interface RunHooks {
  groupFiltrations?(ctx: StageContext): Promise<StageOutput>;
  features?(ctx: StageContext): Promise<StageOutput>;
  statistics?(ctx: StageContext): Promise<StageOutput>;
}
