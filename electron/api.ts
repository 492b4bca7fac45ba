/**
 * The one typed contract between the service and its doors (Electron IPC, loopback HTTP, CLI)
 * and the renderer. Plain JSON-able data only. Change it deliberately: the CLI's JSON output
 * and the browser API are public interfaces.
 */
import type { DIAGRAM_TEST_COLUMNS, STATS_COLUMNS } from './engine/features/columns.ts';
import type { InputKind, TransformName } from './engine/transform.ts';
import type { CapSetting } from './engine/types.ts';

// ---------- Cohort and QC ----------

export type Severity = 'error' | 'warning';

/** One problem found while reading a study. `file` is relative to the cohort folder where possible. */
export interface QcFinding {
  severity: Severity;
  /** A stable machine-readable code, e.g. 'not-square', 'asymmetric', 'nan-row', 'duplicate-id'. */
  code: string;
  file: string | null;
  subject: string | null;
  message: string;
  /** 0-based [row, column] of the first offending cell, when there is one. */
  where?: [number, number];
}

export type CovariateValue = string | number | null;

/** Where a subject's matrix lives. */
export interface MatrixSource {
  /** Absolute path of the file. */
  file: string;
  /** For a .mat file: the variable name. */
  variable?: string;
  /** For a 3-D stack (subjects × N × N): the subject's position in it. */
  stackIndex?: number;
  /** The file holds region time series (T × N) to be correlated rather than a matrix. */
  timeSeries?: boolean;
  /** With timeSeries: the correlation estimator (absent: Pearson). */
  correlation?: 'pearson' | 'ledoit-wolf';
}

export interface SubjectEntry {
  /** The scan's unique key: the participant id, or `${participant}_ses-${session}` where the cohort has sessions. */
  id: string;
  /** The participant (BIDS participant_id) the scan belongs to. */
  participant: string;
  /** The BIDS session label (after `ses-`), or null in a cohort without sessions. */
  session: string | null;
  source: MatrixSource;
  /** The participants table row, column → value (numbers parsed; 'n/a' and empty → null). */
  covariates: Record<string, CovariateValue>;
  /** false when an error finding excludes the subject. */
  usable: boolean;
}

export interface NodeInfo {
  index: number;
  label: string;
  network: string | null;
  x: number | null;
  y: number | null;
  z: number | null;
}

export interface ColumnInfo {
  name: string;
  kind: 'numeric' | 'categorical';
  levels?: string[];
  missing: number;
}

export interface CohortReport {
  root: string;
  /** The cohort's number of regions (the most common N among readable matrices), or null when none is readable. */
  n: number | null;
  subjects: SubjectEntry[];
  columns: ColumnInfo[];
  nodes: NodeInfo[] | null;
  findings: QcFinding[];
  /** Regions that are NaN (dead) in some subject: region index → subject ids. */
  deadRegions: Array<{ index: number; label: string; subjects: string[] }>;
  /** Session labels in natural order, or null when no file names a BIDS `ses-` entity. */
  sessions: string[] | null;
}

// ---------- Analysis settings ----------

export interface AnalysisSettings {
  input: InputKind;
  transform: TransformName;
  maxDim: 1 | 2;
  cap: CapSetting;
  representatives: boolean;
  /** Intervals shorter than this count as noise in the "above floor" statistics. */
  persistenceFloor: number;
  /** Points of the shared grid for curves; the range is the cohort's filtration range unless given. */
  gridPoints: number;
  gridRange: [number, number] | null;
  landscapeLevels: number;
  /** Regions to drop from every subject (e.g. dead regions), 0-based. */
  dropRegions: number[];
}

export interface StatsSettings {
  /** Shorthand: the same as `effect` with the column taken as categorical. */
  groupColumn: string | null;
  /** The effect of interest: categorical (2 levels: t contrast; more: F) or numeric (slope t). */
  effect: string | null;
  /** A model formula in Wilkinson–Rogers notation ('+', ':', '*'), e.g. "group*session + age". */
  model: string | null;
  /** With `model`: the term tested, e.g. "group:session". */
  test: string | null;
  /** Reference level of a categorical effect (its contrast is other − reference). */
  reference: string | null;
  /** Exchangeability blocks (e.g. participant_id): permutations respect them. */
  blocks: string | null;
  covariates: string[];
  permutations: number;
  seed: number;
}

// ---------- Runs and progress ----------

export interface ProgressEvent {
  runId: string;
  phase:
    | 'filtrations'
    | 'group-filtrations'
    | 'features'
    | 'statistics'
    | 'export'
    | 'done'
    | 'cancelled'
    | 'failed';
  done: number;
  total: number;
  reused: number;
  currentSubject: string | null;
  elapsedMs: number;
  etaMs: number | null;
  failures: Array<{ subject: string; reason: string }>;
  message?: string;
}

export interface RunSummary {
  runId: string;
  status: 'done' | 'cancelled' | 'failed';
  computed: number;
  reused: number;
  failures: Array<{ subject: string; reason: string }>;
  outDir: string | null;
  /**
   * What the cohort check flagged but did not exclude a subject for, and problems with the study's
   * own tables (e.g. an unreadable node table), so that no run reads its input wrongly in silence.
   */
  findings?: QcFinding[];
  /** Subjects the cohort check excluded before analysis, with the reason. */
  excluded?: Array<{ subject: string; reason: string }>;
  /** Subjects analysed in this run (computed + reused). */
  analysed?: number;
  /** Peak resident memory of the process during the run. */
  peakRssBytes?: number;
  cacheDir?: string;
  cacheBytes?: number;
  /** Files written to outDir. */
  files?: string[];
  elapsedMs?: number;
}

/** Provenance carried by every result and export. */
export interface Provenance {
  tool: 'loopwise';
  version: string;
  engineVersion: string;
  createdAt: string;
  settings: AnalysisSettings;
  stats?: StatsSettings;
  /** Subject id → SHA-256 of the matrix bytes as read. */
  inputHashes: Record<string, string>;
  /** The cohort folder the subjects were read from. */
  cohortRoot?: string;
  /** The grid every curve and curve-derived feature is sampled on (set once the features are computed). */
  grid?: number[];
  /**
   * 'fixed': the grid's range was given (settings.gridRange), so a subject's features do not depend on
   * the other subjects; 'cohort': the range is the cohort's filtration range, so features are
   * comparable only within this run.
   */
  gridSource?: 'fixed' | 'cohort';
  /** Present when the matrices were correlated from region time series: the estimator used. */
  correlation?: 'pearson' | 'ledoit-wolf';
  /** Each subject's input file (relative to cohortRoot) with the SHA-256 of the file's bytes. */
  inputFiles?: Array<{
    subject: string;
    file: string;
    sha256: string | null;
    variable?: string;
    stackIndex?: number;
  }>;
  counts?: { subjects: number; analysed: number; failed: number; excluded: number };
}

/**
 * One run of this service session as listRuns reports it: enough for a client that was not there
 * when it started (a reloaded page, a second window) to reattach to it or reopen it.
 */
export interface RunInfo {
  runId: string;
  status: 'running' | 'done' | 'cancelled' | 'failed';
  /** When the run was started (ISO 8601). */
  startedAt: string;
  /** What the run was asked to do. */
  request: {
    cohort: OpenCohortRequest;
    settings: AnalysisSettings;
    stats: StatsSettings;
    outDir: string | null;
  };
  /** The run's latest progress event (null before its first). */
  progress: ProgressEvent | null;
  /** While tables of the run are being exported: the export's latest progress event; else null. */
  exporting: ProgressEvent | null;
}

// ---------- Results and the service's methods ----------

/** A rectangular table as written to TSV/CSV: column names and rows (null = missing, written as NA). */
export interface Table {
  columns: string[];
  rows: Array<Array<string | number | null>>;
}

/** A persistence diagram as JSON: [birth, death] pairs, death null when the class never dies. */
export type DiagramJson = Array<[number, number | null]>;

export interface CurveBand {
  group: string;
  /** e.g. 'betti0', 'betti1', 'euler', 'landscape1-1'. */
  curve: string;
  grid: number[];
  mean: number[];
  lower: number[];
  upper: number[];
}

/** A cell of a result table: a number, a text, or missing (written as NA in files). */
export type Cell = string | number | null;

/**
 * One row of stats.tsv, keyed by the file's own column names (`STATS_COLUMNS` in
 * engine/features/columns.ts; the compiler checks the two agree). The app names them for people
 * (p_fwer: "corrected p (FWER)") but reads them only under these names.
 */
export interface StatsRow {
  /** `features`, `nodes:MEASURE` or `curve:NAME`. */
  family: string;
  feature: string;
  /** The node's label (its 0-based index when the cohort has no node table) or the curve's grid value; null for a scalar feature. */
  node_or_point: string | number | null;
  contrast: string;
  test: string;
  statistic: number | null;
  df_num: number | null;
  df: number | null;
  p_parametric: number | null;
  p_uncorrected: number | null;
  p_fwer: number | null;
  q_fdr: number | null;
  /** adjusted_d, d_z, partial_r or partial_eta_squared. */
  effect_kind: string;
  effect_size: number | null;
  effect_low: number | null;
  effect_high: number | null;
  partial_r: number | null;
  partial_eta_squared: number | null;
  n_per_group: string;
  n_blocks: number | null;
  scheme: string;
  permutation_mode: string;
  permutations: number | null;
  seed: number | null;
}

/** One row of diagram-tests.tsv, keyed by its column names (`DIAGRAM_TEST_COLUMNS`). */
export interface DiagramTestRow {
  family: string;
  metric: string;
  test: string;
  statistic: number | null;
  df_num: number | null;
  df: number | null;
  p: number | null;
  n_per_group: string;
  permutation_mode: string;
  permutations: number | null;
  seed: number | null;
  warning: string | null;
  scheme: string;
  effect: string | null;
}

type Same<A, B> = [A] extends [B] ? ([B] extends [A] ? true : false) : false;
type Holds<T extends true> = T;
/** Compile-time checks: the typed rows have exactly the files' columns. */
export type RowsMatchColumns = [
  Holds<Same<keyof StatsRow, (typeof STATS_COLUMNS)[number]>>,
  Holds<Same<keyof DiagramTestRow, (typeof DIAGRAM_TEST_COLUMNS)[number]>>,
];

/** A group's mean-matrix filtration (Fisher-z mean of its scans' correlations), as group-intervals.tsv and group-nodes.tsv hold it. */
export interface GroupFiltration {
  group: string;
  /** Scans averaged into the mean matrix. */
  scans: number;
  /** Regions of the mean matrix as read. */
  nodeCount: number;
  /** The filtration value the complex was built up to. */
  threshold: number | null;
  diagrams: DiagramJson[];
  /** H1 cycle representatives, aligned with diagrams[1] (empty without representatives). */
  representatives: CycleJson[];
  /** Node measure name → one value per region (null: dropped region). */
  nodeScores: Record<string, number[]>;
}

/** An H1 cycle: its interval, its regions (0-based, file order) and its edges [i, j]. */
export interface CycleJson {
  birth: number;
  death: number | null;
  nodes: number[];
  edges: Array<[number, number]>;
}

export interface CohortResults {
  runId: string;
  provenance: Provenance;
  /** The diagram distance of the whole-diagram tests and of every comparison, e.g. 'wasserstein-2'. */
  diagramMetric?: string;
  /** Each group's mean-matrix filtration (empty without a grouping column). */
  groupFiltrations?: GroupFiltration[];
  /** The cohort grid of the curves. */
  grid?: number[];
  /** One row per scan: participant_id (and session), the participants table's columns, then every scalar feature. */
  features: Table;
  /**
   * The scalar feature columns of `features`, in order (everything after the scan and participants
   * columns): whatever feature families the run wrote, so new families flow through unchanged.
   */
  featureNames: string[];
  /** The node measures of the run (nodes.tsv's `measure` values), in output order; [] when none. */
  nodeMeasures: string[];
  /** The column the design splits scans by (group curves, Regions' values per group), or null. */
  groupColumn: string | null;
  groupCurves: CurveBand[];
  groupDiagrams: Array<{ group: string; diagrams: DiagramJson[] }>;
  /**
   * The tests of the scalar features (stats.tsv rows of family `features`), when statistics were run.
   * The node and curve families are reached through `regionEffects` and `tablePage`.
   */
  featureTests: StatsRow[] | null;
  /** stats.tsv's families and their row counts, when statistics were run. */
  statsFamilies: Array<{ family: string; rows: number }> | null;
  /** Rows of diagram-tests.tsv, when statistics were run. */
  diagramTests: DiagramTestRow[] | null;
  /** A 2-D map of subjects from diagram distances. */
  embedding: Array<{
    subject: string;
    group: string | null;
    x: number;
    y: number;
    method: 'mds' | 'umap';
  }> | null;
}

export interface SubjectResult {
  id: string;
  group: string | null;
  n: number;
  /** The subject's matrix as read, row-major, for the heatmap. */
  matrix: number[];
  diagrams: DiagramJson[];
  representatives: Array<{
    birth: number;
    death: number | null;
    edges: Array<[number, number]>;
    nodes: number[];
  }>;
  /** Node measure name → one value per region (0-based index; null where undefined), as in nodes.tsv. */
  nodeScores: Record<string, Array<number | null>>;
}

/**
 * One region's result for a node measure: the stats.tsv row of the tested model (when the run
 * tested it) under stats.tsv's column names, plus the region's identity and its mean.
 */
export interface RegionEffect extends Pick<
  StatsRow,
  'statistic' | 'p_uncorrected' | 'p_fwer' | 'q_fdr' | 'effect_size' | 'effect_low' | 'effect_high'
> {
  /** 0-based index in file order (nodes.tsv's `node`). */
  node: number;
  /** 1-based number shown in the app (node + 1). */
  number: number;
  /** The node table's label, else `region NUMBER`. */
  label: string;
  network: string | null;
  /** Mean of the measure over the analysed scans (descriptive), null when undefined. */
  mean: number | null;
  /** The run tested this region (it has a stats.tsv row). */
  tested: boolean;
  /** p_fwer < alpha. */
  significant: boolean;
}

export interface NetworkEffect {
  network: string;
  regions: number;
  tested: number;
  /** Mean and largest |effect_size| of the tested regions. */
  mean_effect: number | null;
  max_abs_effect: number | null;
  significant: number;
}

/** Every region's effect for one node measure, ranked. */
export interface RegionEffects {
  runId: string;
  measure: string;
  /** stats.tsv's family of the measure (`nodes:MEASURE`). */
  family: string;
  /** The tested contrast or term and its test, null when the run tested no region for it. */
  contrast: string | null;
  test: string | null;
  /** The effect size's kind (stats.tsv's `effect_kind`), null when untested. */
  effect_kind: string | null;
  /** The significance level the `significant` flags use (on p_fwer). */
  alpha: number;
  /**
   * Every region, ranked: tested regions by |effect_size| (largest first), then the others by
   * |mean|; ties by index.
   */
  regions: RegionEffect[];
  tested: number;
  significant: number;
  /** Per network of the node table (null without networks). */
  networks: NetworkEffect[] | null;
}

/** One region's values per scan for a node measure, for the click on a region. */
export interface RegionValues {
  runId: string;
  measure: string;
  node: number;
  number: number;
  label: string;
  network: string | null;
  /** The column `group` holds (the design's grouping column), or null. */
  groupColumn: string | null;
  /** Session labels in natural order, or null in a cohort without sessions. */
  sessions: string[] | null;
  values: Array<{
    /** The scan's key (SubjectEntry.id). */
    subject: string;
    participant: string;
    session: string | null;
    group: string | null;
    value: number | null;
  }>;
}

/** The result tables a page can be asked of (the files of the same names). */
export const RESULT_TABLES = ['features', 'stats', 'diagram-tests', 'nodes'] as const;
export type ResultTableName = (typeof RESULT_TABLES)[number];

export interface TablePageRequest {
  table: ResultTableName;
  /** First row (0-based) of the page, after filtering and sorting. */
  offset: number;
  /** Rows per page, 1 … 5000. */
  limit: number;
  /** Sort by a column (numbers numerically, texts naturally; missing values last). Default: file order. */
  sort?: { column: string; descending: boolean } | null;
  /** Keep rows with a cell containing this text (case-insensitive). */
  filter?: string | null;
  /** Keep rows whose cell in each named column equals the value (e.g. { family: 'features' }). */
  equals?: Record<string, string | number> | null;
}

export interface TablePage extends Table {
  table: ResultTableName;
  offset: number;
  /** Rows matching the filter (the page holds at most `limit` of them). */
  total: number;
  /** Rows of the whole table. */
  all: number;
}

// ---------- Comparisons ----------

/** One side of a comparison: a scan of the run, or a group's mean-matrix filtration. */
export type ComparisonSide = { kind: 'scan'; id: string } | { kind: 'group'; group: string };

/** One side's filtration as a comparison shows it. */
export interface FiltrationSide {
  side: ComparisonSide;
  /** The scan id, or "GROUP: mean of K scans". */
  label: string;
  /** The scan's group (grouping column), or the group itself; null without a grouping column. */
  group: string | null;
  diagrams: DiagramJson[];
  representatives: CycleJson[];
  /** Node measure name → one value per region (null/NaN: dropped region). */
  nodeScores: Record<string, number[]>;
  /** Curve name ('betti0', 'betti1', 'euler') → values on the run's grid; euler only where the distances are at hand. */
  curves: Record<string, number[]>;
}

/** Where a scan lies among a group's scans for one scalar feature (a position in this cohort, not a clinical norm). */
export interface FeaturePosition {
  feature: string;
  value: number;
  groupMean: number;
  groupScans: number;
  /** Percentile rank within the group's scans, ties counted half (0–100). */
  percentile: number | null;
}

/** One region's node measure on both sides, ranked by |b − a| within the measure (rank 1 = largest). */
export interface NodeDifferenceRow {
  measure: string;
  rank: number;
  /** 0-based region index in file order. */
  node: number;
  /** The node table's label, else "region i+1". */
  label: string;
  network: string | null;
  a: number | null;
  b: number | null;
  difference: number | null;
}

export interface Comparison {
  runId: string;
  a: FiltrationSide;
  b: FiltrationSide;
  /** The run's curve grid. */
  grid: number[];
  /** The diagram distance used (the whole-diagram tests' own), e.g. 'wasserstein-2', 'sliced-wasserstein-50'. */
  metric: string;
  /** Distance between the two sides' diagrams per dimension (essential classes dropped). */
  distances: Array<{ dimension: number; distance: number }>;
  /** For each H1 cycle of a: the cycle of b sharing most regions (Jaccard overlap; 1 = same regions). */
  cycleMatches: Array<{ a: number; b: number | null; overlap: number }>;
  nodeDifferences: NodeDifferenceRow[];
  /** With a scan on one side and a group on the other: the scan's position in that group, per scalar feature. */
  positions: FeaturePosition[] | null;
}

export interface OpenCohortRequest {
  dir: string;
  participants?: string;
  nodes?: string;
  /** For .mat files: the variable that holds the matrix (needed when a file has several). */
  variable?: string;
  /** The files hold region time series (T × N), correlated per subject when loaded. */
  timeSeries?: boolean;
  /** With timeSeries: how the series become a correlation matrix (default 'pearson'; 'ledoit-wolf' shrinks the covariance). */
  correlation?: 'pearson' | 'ledoit-wolf';
  /** Participants-table column naming each subject's file (relative to dir). Default: a column called matrix_file, file, filename or path. */
  fileColumn?: string;
  /** Only files whose name contains this text are matrices (e.g. '_connectome'). */
  match?: string;
  /** Overrides of the detected covariate kinds, column name → kind. */
  columnKinds?: Record<string, 'numeric' | 'categorical'>;
}

export interface StartRunRequest {
  cohort: OpenCohortRequest;
  settings: AnalysisSettings;
  stats: StatsSettings;
  /** Where tables are written; null keeps results in the service only. */
  outDir: string | null;
  /** Replace Loopwise's tables in an outDir that already holds files (other files are never touched). */
  force?: boolean;
  /** The filtration cache; default outDir/.loopwise-cache, or the service's own folder when outDir is null. */
  cacheDir?: string | null;
  /** Compute only share `index` (1-based) of `count`: subjects whose position ≡ index − 1 (mod count). */
  shard?: { index: number; count: number } | null;
  /** Worker threads; default the number of available cores. */
  workers?: number;
  tableFormat?: 'tsv' | 'csv';
}

/**
 * What every door calls. The service implements it in the main process; the Electron preload
 * and the browser client expose the same methods to the renderer.
 */
export interface LoopwiseApi {
  openCohort(req: OpenCohortRequest): Promise<CohortReport>;
  defaultSettings(): Promise<{ settings: AnalysisSettings; stats: StatsSettings }>;
  startRun(req: StartRunRequest): Promise<{ runId: string }>;
  cancelRun(runId: string): Promise<void>;
  /** Every run of this service session, oldest first, with its state and latest progress. */
  listRuns(): Promise<RunInfo[]>;
  /** Registers a listener for progress events; returns a function that unregisters it. */
  onProgress(listener: (e: ProgressEvent) => void): () => void;
  runSummary(runId: string): Promise<RunSummary | null>;
  cohortResults(runId: string): Promise<CohortResults | null>;
  subjectResult(runId: string, subjectId: string): Promise<SubjectResult | null>;
  /** Every region's effect for a node measure, ranked (null: no such run or measure, or not finished). */
  regionEffects(runId: string, measure: string): Promise<RegionEffects | null>;
  /** One region's values per scan, with group and session (node: 0-based index). */
  regionValues(runId: string, measure: string, node: number): Promise<RegionValues | null>;
  /** A page of a result table, filtered and sorted by the service. */
  tablePage(runId: string, req: TablePageRequest): Promise<TablePage | null>;
  /** Two filtrations of a finished run side by side: scans or groups' mean matrices. */
  compare(runId: string, a: ComparisonSide, b: ComparisonSide): Promise<Comparison>;
  /**
   * Writes the tables of a finished run to outDir; refuses to overwrite existing files unless
   * overwrite. Progress travels as events of phase 'export' with the run's id, never as the run's
   * own phases; one export of a run at a time.
   */
  exportRun(runId: string, outDir: string, overwrite: boolean): Promise<{ files: string[] }>;
}
