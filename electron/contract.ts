/**
 * The options contract every door shares: each option's JSON field, CLI flag, allowed values,
 * default and check. The CLI, the browser API (web-client.ts / web.ts), Electron IPC (main.ts)
 * and the renderer all import these lists and validators; none declares its own.
 *
 * A validator returns a list of problems `{ field, option, message }` (empty when the value can
 * be used); each door reports them its own way: the CLI exits 2 with one stderr line naming the
 * option, HTTP answers 400 with the problems, IPC rejects, the renderer shows the message under
 * the field. Browser-safe: no node:* imports (the renderer bundles this module).
 */
import type { AnalysisSettings, ColumnInfo, OpenCohortRequest, StatsSettings } from './api.ts';
import { FormulaError, expandFormula, parseTerm, sameTerm, termName } from './engine/stats/formula.ts';
import { DEFAULT_TRANSFORM, TRANSFORMS_FOR } from './engine/transform.ts';
import type { InputKind, TransformName } from './engine/transform.ts';

// ---------- Vocabularies ----------

export const INPUT_KINDS: readonly InputKind[] = ['correlation', 'weight', 'distance'];
export const TRANSFORM_NAMES: readonly TransformName[] = [
  'one-minus',
  'one-minus-abs',
  'sqrt',
  'inverse',
  'neg-log',
  'identity',
];
/** Which transforms apply to which input, and the default of each (the engine's own lists). */
export { DEFAULT_TRANSFORM, TRANSFORMS_FOR };
/** How each transform is written for people. */
export const TRANSFORM_LABELS: Record<TransformName, string> = {
  'one-minus': '1 − r',
  'one-minus-abs': '1 − |r|',
  sqrt: '√(2(1 − r))',
  inverse: '1 / w',
  'neg-log': '−log(w / max w)',
  identity: 'as given',
};
/** How each input kind is written for people. */
export const INPUT_LABELS: Record<InputKind, string> = {
  correlation: 'correlation',
  weight: 'weight (larger = stronger)',
  distance: 'distance',
};
export const CAP_KINDS = ['none', 'distance', 'density'] as const;
export type CapKind = (typeof CAP_KINDS)[number];
export const CAP_LABELS: Record<CapKind, string> = {
  none: 'none (full filtration)',
  distance: 'at a distance',
  density: 'at an edge density',
};
export const MAX_DIMS = [1, 2] as const;
export const MAX_DIM_LABELS: Record<(typeof MAX_DIMS)[number], string> = { 1: 'H0, H1', 2: 'H0, H1, H2' };
/** How region time series become a correlation matrix (engine/correlation.ts). */
export const CORRELATION_ESTIMATORS = ['pearson', 'ledoit-wolf'] as const;
export type CorrelationEstimator = (typeof CORRELATION_ESTIMATORS)[number];
export const COLUMN_KINDS = ['numeric', 'categorical'] as const;
export const TABLE_FORMATS = ['tsv', 'csv'] as const;
/**
 * How the written tables spell a missing value: NA, which R's read.delim/read.csv and
 * pandas.read_csv read as missing by default, so numeric columns stay numeric. (Inputs may still
 * write BIDS's n/a.) Infinite values are written inf / -inf, which both read as ±Inf.
 */
export const MISSING_VALUE = 'NA';
/** The spellings of a missing value read back from tables (ours and BIDS's). */
export const MISSING_SPELLINGS: readonly string[] = ['NA', 'n/a', ''];

/** Limits of the numeric options. */
export const LIMITS = {
  gridPoints: { min: 2, max: 10_000 },
  landscapeLevels: { min: 0, max: 100 },
  permutations: { min: 0, max: 1_000_000 },
  seed: { min: 0, max: 2 ** 32 - 1 },
  regionIndex: { max: 1_000_000 },
  stackIndex: { max: 1_000_000 },
  /** Longest column name, level, variable or match text. */
  name: 256,
  /** Longest model formula. */
  formula: 4096,
} as const;

// ---------- The options, by field ----------

export interface OptionInfo {
  /** The JSON field (dotted path in a StartRunRequest). */
  field: string;
  /** The CLI flag, or null where the CLI spells it otherwise (see `help`). */
  option: string | null;
  /** Allowed values, in words. */
  values: string;
  /** The default, in words. */
  default: string;
  help: string;
}

/** Every option of the doors: README's tables and the CLI help follow this list. */
export const OPTIONS: readonly OptionInfo[] = [
  // Cohort and readers
  {
    field: 'cohort.participants',
    option: '--participants',
    values: 'a file',
    default: 'COHORT_DIR/participants.tsv',
    help: 'participants table',
  },
  {
    field: 'cohort.nodes',
    option: '--nodes',
    values: 'a file',
    default: 'COHORT_DIR/nodes.tsv if present',
    help: 'node table: label, network, x, y, z',
  },
  {
    field: 'cohort.timeSeries',
    option: '--time-series',
    values: 'flag',
    default: 'off',
    help: 'the files hold region time series (time points × regions)',
  },
  {
    field: 'cohort.correlation',
    option: '--correlation',
    values: CORRELATION_ESTIMATORS.join('|'),
    default: 'pearson',
    help: 'how time series become a correlation matrix (with --time-series)',
  },
  {
    field: 'cohort.variable',
    option: '--variable',
    values: 'a name',
    default: 'the file’s only matrix',
    help: 'the variable to read from .mat files',
  },
  {
    field: 'cohort.fileColumn',
    option: '--file-column',
    values: 'a column',
    default: 'matrix_file, file, filename or path',
    help: 'participants column naming each subject’s file',
  },
  {
    field: 'cohort.match',
    option: '--match',
    values: 'text',
    default: 'every matrix file',
    help: 'only files whose name contains TEXT are matrices',
  },
  {
    field: 'cohort.columnKinds',
    option: '--numeric / --categorical',
    values: 'columns',
    default: 'detected',
    help: 'read these participants columns as numbers / categories',
  },
  // Analysis settings
  {
    field: 'settings.input',
    option: '--input',
    values: INPUT_KINDS.join('|'),
    default: 'correlation',
    help: 'what the matrices hold',
  },
  {
    field: 'settings.transform',
    option: '--transform',
    values: TRANSFORM_NAMES.join('|'),
    default: 'the input’s first',
    help: 'how values become distances',
  },
  {
    field: 'settings.maxDim',
    option: '--max-dim',
    values: '1|2',
    default: '1',
    help: 'highest homology dimension',
  },
  {
    field: 'settings.cap',
    option: '--cap-distance / --cap-density',
    values: 'distance > 0 / fraction in (0, 1]',
    default: 'none',
    help: 'where the filtration stops',
  },
  {
    field: 'settings.representatives',
    option: '--no-representatives',
    values: 'flag',
    default: 'on',
    help: 'H1 cycle representatives',
  },
  {
    field: 'settings.dropRegions',
    option: '--drop-regions',
    values: '0-based indices',
    default: 'none',
    help: 'regions left out of every subject',
  },
  {
    field: 'settings.gridRange',
    option: '--grid-range',
    values: 'LO,HI with LO < HI',
    default: 'the cohort’s filtration range',
    help: 'fixed range of the curves’ grid',
  },
  {
    field: 'settings.gridPoints',
    option: '--grid-points',
    values: `integer in [${LIMITS.gridPoints.min}, ${LIMITS.gridPoints.max}]`,
    default: '100',
    help: 'points of the curves’ grid',
  },
  {
    field: 'settings.persistenceFloor',
    option: '--floor',
    values: 'number ≥ 0',
    default: '0',
    help: 'intervals shorter than this are noise in the above-floor features',
  },
  {
    field: 'settings.landscapeLevels',
    option: '--landscape-levels',
    values: `integer in [0, ${LIMITS.landscapeLevels.max}]`,
    default: '3',
    help: 'persistence landscape levels',
  },
  // Statistics
  {
    field: 'stats.groupColumn',
    option: '--group',
    values: 'a column',
    default: 'none',
    help: 'categorical effect (shorthand for --effect with the column categorical)',
  },
  {
    field: 'stats.effect',
    option: '--effect',
    values: 'a column',
    default: 'none',
    help: 'effect of interest: categorical (t or F) or numeric (slope)',
  },
  {
    field: 'stats.model',
    option: '--model',
    values: 'a formula',
    default: 'none',
    help: "Wilkinson–Rogers formula, e.g. 'group*session + age'",
  },
  {
    field: 'stats.test',
    option: '--test',
    values: 'a term',
    default: 'none',
    help: "the model term tested, e.g. 'group:session'",
  },
  {
    field: 'stats.reference',
    option: '--reference',
    values: 'a level',
    default: 'first level',
    help: 'reference level of the categorical effect',
  },
  {
    field: 'stats.blocks',
    option: '--blocks',
    values: 'a column',
    default: 'none',
    help: 'exchangeability blocks, e.g. participant_id',
  },
  {
    field: 'stats.covariates',
    option: '--covariates',
    values: 'columns',
    default: 'none',
    help: 'nuisance columns adjusted for',
  },
  {
    field: 'stats.permutations',
    option: '--permutations',
    values: `integer in [0, ${LIMITS.permutations.max}]`,
    default: '5000',
    help: 'permutations of the tests',
  },
  {
    field: 'stats.seed',
    option: '--seed',
    values: `integer in [0, ${LIMITS.seed.max}]`,
    default: '1',
    help: 'seed of the permutations',
  },
];

// ---------- Problems ----------

/** One reason an option's value cannot be used. */
export interface Problem {
  /** The JSON field, e.g. 'settings.cap', 'stats.seed', 'cohort.correlation'. */
  field: string;
  /** The CLI flag, e.g. '--cap-distance'. */
  option: string;
  /** What is wrong, worded for any door (it does not repeat the option's name). */
  message: string;
}

/** A request the contract refuses. Doors map it to exit 2, HTTP 400 or an IPC rejection. */
export class ContractError extends Error {
  readonly problems: Problem[];
  constructor(problems: Problem[]) {
    super(problems.map((p) => problemText(p)).join('; '));
    this.name = 'ContractError';
    this.problems = problems;
  }
}

/**
 * A problem as one line, by its CLI option ("--seed: must be an integer in [0, 4294967295], got -1")
 * or by its JSON field with the option beside it ("stats.seed (--seed): must be …").
 */
export function problemText(p: Problem, by: 'option' | 'field' = 'option'): string {
  return by === 'option' || p.field === p.option
    ? `${p.option}: ${p.message}`
    : `${p.field} (${p.option}): ${p.message}`;
}

/** Throws a ContractError when there are problems. */
export function assertNoProblems(problems: Problem[]): void {
  if (problems.length > 0) throw new ContractError(problems);
}

/** The option (CLI flag) of a field. */
export function optionOf(field: string): string {
  const o = OPTIONS.find((x) => x.field === field);
  return o?.option ?? field;
}

type Obj = Record<string, unknown>;
const isObj = (v: unknown): v is Obj => typeof v === 'object' && v !== null && !Array.isArray(v);
const show = (v: unknown): string => (typeof v === 'string' ? `'${v}'` : (JSON.stringify(v) ?? String(v)));

class Collector {
  readonly list: Problem[] = [];
  add(field: string, message: string, option = optionOf(field)): void {
    this.list.push({ field, option, message });
  }
  /** An integer in [min, max]. */
  integer(field: string, v: unknown, min: number, max: number, option?: string): boolean {
    if (typeof v === 'number' && Number.isInteger(v) && v >= min && v <= max) return true;
    this.add(field, `must be an integer in [${min}, ${max}], got ${show(v)}`, option);
    return false;
  }
  finite(field: string, v: unknown, check: (x: number) => boolean, what: string, option?: string): boolean {
    if (typeof v === 'number' && Number.isFinite(v) && check(v)) return true;
    this.add(field, `must be ${what}, got ${show(v)}`, option);
    return false;
  }
  choice(field: string, v: unknown, allowed: readonly unknown[], option?: string): boolean {
    if (allowed.includes(v)) return true;
    this.add(field, `must be one of ${allowed.join(', ')}, got ${show(v)}`, option);
    return false;
  }
  bool(field: string, v: unknown): boolean {
    if (typeof v === 'boolean') return true;
    this.add(field, `must be true or false, got ${show(v)}`);
    return false;
  }
  /** A non-empty name without NUL or control characters. */
  name(field: string, v: unknown, max: number = LIMITS.name, option?: string): boolean {
    // eslint-disable-next-line no-control-regex
    if (typeof v === 'string' && v.trim() !== '' && v.length <= max && !/[\u0000-\u001f]/.test(v))
      return true;
    this.add(field, `must be a non-empty name of at most ${max} characters, got ${show(v)}`, option);
    return false;
  }
  /** null/undefined or a name. */
  optName(field: string, v: unknown, max?: number): void {
    if (v !== null && v !== undefined) this.name(field, v, max);
  }
}

// ---------- Analysis settings ----------

/** Problems with analysis settings (any JSON value). */
export function validateAnalysisSettings(v: unknown): Problem[] {
  const c = new Collector();
  if (!isObj(v)) {
    c.add('settings', 'must be an object', 'settings');
    return c.list;
  }
  const inputOk = c.choice('settings.input', v.input, INPUT_KINDS);
  if (c.choice('settings.transform', v.transform, TRANSFORM_NAMES) && inputOk) {
    const allowed = TRANSFORMS_FOR[v.input as InputKind];
    if (!allowed.includes(v.transform as TransformName))
      c.add(
        'settings.transform',
        `${v.transform as string} does not apply to ${v.input as string} input (use ${allowed.join(', ')})`,
      );
  }
  c.choice('settings.maxDim', v.maxDim, MAX_DIMS);
  const cap = v.cap;
  if (!isObj(cap)) c.add('settings.cap', 'must be an object { kind, value }');
  else if (c.choice('settings.cap', cap.kind, CAP_KINDS, '--cap-distance')) {
    if (cap.kind === 'distance')
      c.finite('settings.cap', cap.value, (x) => x > 0, 'a distance > 0', '--cap-distance');
    if (cap.kind === 'density')
      c.finite('settings.cap', cap.value, (x) => x > 0 && x <= 1, 'a fraction in (0, 1]', '--cap-density');
  }
  c.bool('settings.representatives', v.representatives);
  c.finite('settings.persistenceFloor', v.persistenceFloor, (x) => x >= 0, 'a number ≥ 0');
  c.integer('settings.gridPoints', v.gridPoints, LIMITS.gridPoints.min, LIMITS.gridPoints.max);
  const range = v.gridRange;
  if (range !== null && range !== undefined) {
    if (
      !Array.isArray(range) ||
      range.length !== 2 ||
      !range.every((x) => typeof x === 'number' && Number.isFinite(x))
    )
      c.add('settings.gridRange', `must be two finite numbers LO,HI, got ${show(range)}`);
    else if (!((range[1] as number) > (range[0] as number)))
      c.add('settings.gridRange', `must have LO < HI, got ${range[0]},${range[1]}`);
  }
  c.integer(
    'settings.landscapeLevels',
    v.landscapeLevels,
    LIMITS.landscapeLevels.min,
    LIMITS.landscapeLevels.max,
  );
  if (!Array.isArray(v.dropRegions)) c.add('settings.dropRegions', 'must be a list of region indices');
  else
    for (const r of v.dropRegions)
      if (!(typeof r === 'number' && Number.isInteger(r) && r >= 0 && r <= LIMITS.regionIndex.max)) {
        c.add('settings.dropRegions', `must list 0-based region indices (integers ≥ 0), got ${show(r)}`);
        break;
      }
  return c.list;
}

// ---------- Statistics settings ----------

/** Whether the settings ask for statistics (a group, an effect or a model). */
export function statisticsRequested(s: Pick<StatsSettings, 'groupColumn' | 'effect' | 'model'>): boolean {
  return Boolean(s.groupColumn || s.effect || s.model);
}

/** The terms of a model formula, read by the statistics engine's own parser; null when it cannot be read. */
function modelTerms(formula: string): string[][] | null {
  try {
    return expandFormula(formula);
  } catch {
    return null;
  }
}

/** The column names a model formula mentions, in order of first appearance (none when it cannot be read). */
export function formulaColumns(formula: string): string[] {
  const names: string[] = [];
  for (const term of modelTerms(formula) ?? []) for (const v of term) if (!names.includes(v)) names.push(v);
  return names;
}

/** Problems with statistics settings (any JSON value), before the cohort's columns are known. */
export function validateStatsSettings(v: unknown): Problem[] {
  const c = new Collector();
  if (!isObj(v)) {
    c.add('stats', 'must be an object', 'stats');
    return c.list;
  }
  for (const f of ['groupColumn', 'effect', 'test', 'reference', 'blocks'] as const)
    c.optName(`stats.${f}`, v[f]);
  if (v.model !== null && v.model !== undefined) {
    if (typeof v.model !== 'string' || v.model.length > LIMITS.formula)
      c.add('stats.model', `must be a formula of at most ${LIMITS.formula} characters, got ${show(v.model)}`);
    else if (v.model.trim() === '')
      c.add('stats.model', "is empty: give a formula such as 'group*session + age'");
  }
  let terms: string[][] | null = null;
  if (typeof v.model === 'string' && v.model.trim() !== '' && v.model.length <= LIMITS.formula) {
    try {
      terms = expandFormula(v.model);
    } catch (e) {
      // The engine's parser: the message names the token at fault.
      c.add('stats.model', e instanceof FormulaError ? e.message : String(e));
    }
  }
  const designs = (['groupColumn', 'effect', 'model'] as const).filter((f) => typeof v[f] === 'string');
  if (designs.length > 1)
    c.add(
      `stats.${designs[1]}`,
      `give one of --group, --effect, --model, not ${designs.map((f) => optionOf(`stats.${f}`)).join(' and ')}`,
    );
  if (typeof v.test === 'string' && typeof v.model !== 'string')
    c.add('stats.test', 'applies only with --model');
  if (typeof v.test === 'string' && v.test.trim() !== '' && terms) {
    let term: string[] | null = null;
    try {
      term = parseTerm(v.test);
    } catch (e) {
      c.add('stats.test', e instanceof FormulaError ? e.message : String(e));
    }
    if (term && !terms.some((t) => sameTerm(t, term)))
      c.add(
        'stats.test',
        `'${v.test}' is not a term of the model '${v.model as string}' (its terms: ${terms.map(termName).join(', ')})`,
      );
  }
  if (typeof v.reference === 'string' && designs.length === 0)
    c.add('stats.reference', 'applies only with --group, --effect or --model');
  if (typeof v.blocks === 'string' && designs.length === 0)
    c.add('stats.blocks', 'applies only with --group, --effect or --model');
  if (!Array.isArray(v.covariates)) c.add('stats.covariates', 'must be a list of column names');
  else {
    for (const x of v.covariates) c.name('stats.covariates', x);
    const seen = new Set<unknown>();
    for (const x of v.covariates) {
      if (seen.has(x)) c.add('stats.covariates', `names ${show(x)} twice`);
      seen.add(x);
    }
    for (const f of ['groupColumn', 'effect'] as const)
      if (typeof v[f] === 'string' && v.covariates.includes(v[f]))
        c.add('stats.covariates', `holds ${show(v[f])}, the effect itself (${optionOf(`stats.${f}`)})`);
  }
  c.integer('stats.permutations', v.permutations, LIMITS.permutations.min, LIMITS.permutations.max);
  c.integer('stats.seed', v.seed, LIMITS.seed.min, LIMITS.seed.max);
  return c.list;
}

/**
 * Problems with the columns the statistics name, once the cohort is open: each must be a column
 * of the participants table (or participant_id / session), and a reference level must be a level
 * of the categorical effect. Run before any filtration, by the service's startRun, so every door
 * refuses an unknown column the same way.
 */
export function validateStatsColumns(s: StatsSettings, columns: ColumnInfo[]): Problem[] {
  const c = new Collector();
  const names = columns.map((x) => x.name);
  const available = names.length > 0 ? names.join(', ') : 'none (no participants table was read)';
  const known = (field: string, name: string, option?: string): boolean => {
    if (names.includes(name)) return true;
    c.add(field, `no column '${name}' in the participants table; available: ${available}`, option);
    return false;
  };
  if (s.groupColumn) known('stats.groupColumn', s.groupColumn);
  if (s.effect) known('stats.effect', s.effect);
  if (s.blocks) known('stats.blocks', s.blocks);
  for (const cov of s.covariates) known('stats.covariates', cov);
  if (s.model) for (const name of formulaColumns(s.model)) known('stats.model', name);
  const effectColumn = s.groupColumn ?? s.effect;
  if (s.reference && effectColumn) {
    const col = columns.find((x) => x.name === effectColumn);
    if (col && col.kind === 'categorical' && !(col.levels ?? []).includes(s.reference))
      c.add(
        'stats.reference',
        `'${s.reference}' is not a level of ${effectColumn}; its levels: ${(col.levels ?? []).join(', ')}`,
      );
    if (col && col.kind === 'numeric' && s.effect && !s.groupColumn)
      c.add(
        'stats.reference',
        `${effectColumn} is numeric: a reference level applies to a categorical effect`,
      );
  }
  return c.list;
}

// ---------- Cohort and reader options ----------

/** Problems with a cohort request (any JSON value). */
export function validateCohortRequest(v: unknown): Problem[] {
  const c = new Collector();
  if (!isObj(v)) {
    c.add('cohort', 'must be an object', 'COHORT_DIR');
    return c.list;
  }
  c.name('cohort.dir', v.dir, 4096, 'COHORT_DIR');
  for (const f of ['participants', 'nodes'] as const)
    if (v[f] !== undefined && v[f] !== null) c.name(`cohort.${f}`, v[f], 4096);
  for (const f of ['variable', 'fileColumn', 'match'] as const) c.optName(`cohort.${f}`, v[f]);
  if (v.timeSeries !== undefined && v.timeSeries !== null) c.bool('cohort.timeSeries', v.timeSeries);
  if (v.correlation !== undefined && v.correlation !== null) {
    if (c.choice('cohort.correlation', v.correlation, CORRELATION_ESTIMATORS) && v.timeSeries !== true)
      c.add('cohort.correlation', 'applies only to time series (--time-series)');
  }
  if (v.columnKinds !== undefined && v.columnKinds !== null) {
    if (!isObj(v.columnKinds)) c.add('cohort.columnKinds', 'must map column names to numeric or categorical');
    else
      for (const [k, kind] of Object.entries(v.columnKinds)) {
        c.name('cohort.columnKinds', k);
        c.choice(
          'cohort.columnKinds',
          kind,
          COLUMN_KINDS,
          kind === 'numeric' ? '--numeric' : '--categorical',
        );
      }
  }
  return c.list;
}

/** Problems with the matrix picked from a file (`loopwise diagram --variable/--stack-index`). */
export function validateMatrixPick(v: { variable?: unknown; stackIndex?: unknown }): Problem[] {
  const c = new Collector();
  if (v.variable !== undefined) c.name('variable', v.variable, LIMITS.name, '--variable');
  if (v.stackIndex !== undefined)
    c.integer('stackIndex', v.stackIndex, 0, LIMITS.stackIndex.max, '--stack-index');
  return c.list;
}

// ---------- Scan keys ----------

/** The unique row key of a scan: the participant alone without sessions, else `${participant}_ses-${session}`. */
export function scanId(participant: string, session: string | null): string {
  return session === null ? participant : `${participant}_ses-${session}`;
}

/**
 * The column a design splits scans by (group curves, group filtrations, values per group): the
 * group column, a categorical effect, or with a model the first categorical column of the tested
 * term that is not the blocks column (group for group:session). Null when there is none.
 *
 *   designGroupColumn({ model: 'group*session', test: 'group:session', … }, (c) => c !== 'age') → 'group'
 */
export function designGroupColumn(
  st: Pick<StatsSettings, 'groupColumn' | 'effect' | 'model' | 'test' | 'blocks'> | null,
  categorical: (column: string) => boolean,
): string | null {
  if (!st) return null;
  if (st.groupColumn) return st.groupColumn;
  if (st.effect) return categorical(st.effect) ? st.effect : null;
  if (!st.model || !st.test) return null;
  let term: string[];
  try {
    term = parseTerm(st.test);
  } catch {
    return null;
  }
  return term.find((c) => c !== st.blocks && categorical(c)) ?? null;
}

// ---------- Defaults ----------

export function defaultAnalysisSettings(): AnalysisSettings {
  return {
    input: 'correlation',
    transform: DEFAULT_TRANSFORM.correlation,
    maxDim: 1,
    cap: { kind: 'none' },
    representatives: true,
    persistenceFloor: 0,
    gridPoints: 100,
    gridRange: null,
    landscapeLevels: 3,
    dropRegions: [],
  };
}

export function defaultStatsSettings(): StatsSettings {
  return {
    groupColumn: null,
    effect: null,
    model: null,
    test: null,
    reference: null,
    blocks: null,
    covariates: [],
    permutations: 5000,
    seed: 1,
  };
}

/** Problems with a whole run request's settings (cohort, analysis, statistics). */
export function validateRunRequest(v: { cohort: unknown; settings: unknown; stats: unknown }): Problem[] {
  return [
    ...validateCohortRequest(v.cohort),
    ...validateAnalysisSettings(v.settings),
    ...validateStatsSettings(v.stats),
  ];
}

/** Problems of one field (the renderer shows them under it). */
export function problemsOf(problems: Problem[], field: string): string[] {
  return problems.filter((p) => p.field === field || p.field.startsWith(field + '.')).map((p) => p.message);
}

/** The OpenCohortRequest fields the contract knows (for doors that rebuild requests field by field). */
export type CohortFields = keyof OpenCohortRequest;
