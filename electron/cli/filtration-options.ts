/**
 * The CLI's reading of the options every command shares, from text to the contract's types:
 * filtration (--input, --transform, --max-dim, --cap-distance, --cap-density), the curves' grid
 * (--grid-range, --grid-points, --floor, --landscape-levels), the cohort readers (--participants,
 * --nodes, --time-series, --correlation, --variable, --file-column, --match, --numeric,
 * --categorical) and statistics (--group, --effect, --model, --test, --reference, --blocks,
 * --covariates, --permutations, --seed). Text that is not a number is refused here; every value
 * is then checked by the contract (electron/contract.ts), the same check every door runs.
 */
import { resolve } from 'node:path';
import type { AnalysisSettings, OpenCohortRequest, StatsSettings } from '../api.ts';
import {
  DEFAULT_TRANSFORM,
  INPUT_KINDS,
  defaultAnalysisSettings,
  TRANSFORMS_FOR,
  problemText,
  validateAnalysisSettings,
  validateCohortRequest,
  validateStatsSettings,
} from '../contract.ts';
import type { Problem } from '../contract.ts';
import type { InputKind, TransformName } from '../engine/transform.ts';
import type { CapSetting } from '../engine/types.ts';
import { UsageError } from './args.ts';
import type { ParsedArgs } from './args.ts';

export const FILTRATION_VALUE_OPTIONS = ['input', 'transform', 'max-dim', 'cap-distance', 'cap-density'];
export const GRID_OPTIONS = ['grid-range', 'grid-points', 'floor', 'landscape-levels'];
/** Reader options that take a value (--time-series is a flag). */
export const READER_OPTIONS = [
  'participants',
  'nodes',
  'correlation',
  'variable',
  'file-column',
  'match',
  'numeric',
  'categorical',
];
export const READER_FLAGS = ['time-series'];
export const STATS_OPTIONS = [
  'group',
  'effect',
  'model',
  'test',
  'reference',
  'blocks',
  'covariates',
  'permutations',
  'seed',
];

/** Refuses problems the contract found, as one usage line naming each option. */
export function refuseProblems(problems: Problem[]): void {
  if (problems.length > 0) throw new UsageError(problems.map((p) => problemText(p)).join('; '));
}

/** The number an option's text spells, or undefined when the option is absent. */
export function numberText(p: ParsedArgs, name: string): number | undefined {
  const s = p.values.get(name);
  if (s === undefined) return undefined;
  const x = Number(s);
  if (s.trim() === '' || !Number.isFinite(x)) throw new UsageError(`--${name}: must be a number, got '${s}'`);
  return x;
}

/** A comma-separated list (blanks dropped), or undefined when the option is absent. */
export function listText(p: ParsedArgs, name: string): string[] | undefined {
  const s = p.values.get(name);
  if (s === undefined) return undefined;
  return s
    .split(',')
    .map((t) => t.trim())
    .filter((t) => t !== '');
}

export interface FiltrationOptions {
  input: InputKind;
  transform: TransformName;
  maxDim: 1 | 2;
  cap: CapSetting;
}

/** --input, --transform, --max-dim, --cap-distance, --cap-density, checked by the contract. */
export function filtrationOptions(p: ParsedArgs): FiltrationOptions {
  const inputText = p.values.get('input') ?? 'correlation';
  const transformText = p.values.get('transform');
  const maxDim = numberText(p, 'max-dim') ?? 1;
  const capDistance = numberText(p, 'cap-distance');
  const capDensity = numberText(p, 'cap-density');
  if (capDistance !== undefined && capDensity !== undefined)
    throw new UsageError('give --cap-distance or --cap-density, not both');
  const input = inputText as InputKind;
  const known = (INPUT_KINDS as readonly string[]).includes(inputText);
  const transform = (transformText ?? (known ? DEFAULT_TRANSFORM[input] : 'one-minus')) as TransformName;
  const cap: CapSetting =
    capDistance !== undefined
      ? { kind: 'distance', value: capDistance }
      : capDensity !== undefined
        ? { kind: 'density', value: capDensity }
        : { kind: 'none' };
  const out = { input, transform, maxDim: maxDim as 1 | 2, cap };
  const problems = validateAnalysisSettings({ ...defaultAnalysisSettings(), ...out }).filter((x) =>
    ['settings.input', 'settings.transform', 'settings.maxDim', 'settings.cap'].includes(x.field),
  );
  // The transform/input clash in the words the flags use.
  const clash = problems.find(
    (x) => x.field === 'settings.transform' && x.message.includes('does not apply'),
  );
  if (clash && known)
    throw new UsageError(
      `--transform ${transform} does not apply to --input ${input} (use ${TRANSFORMS_FOR[input].join(', ')})`,
    );
  refuseProblems(problems);
  return out;
}

/** --grid-range LO,HI, --grid-points K, --floor X, --landscape-levels L: only those given. */
export function gridOptions(p: ParsedArgs): Partial<AnalysisSettings> {
  const out: Partial<AnalysisSettings> = {};
  const range = p.values.get('grid-range');
  if (range !== undefined) {
    const parts = range.split(',').map((t) => t.trim());
    const nums = parts.map(Number);
    if (parts.length !== 2 || parts.some((t) => t === '') || !nums.every(Number.isFinite))
      throw new UsageError(`--grid-range: must be two numbers LO,HI, got '${range}'`);
    out.gridRange = [nums[0], nums[1]];
  }
  const points = numberText(p, 'grid-points');
  if (points !== undefined) out.gridPoints = points;
  const floor = numberText(p, 'floor');
  if (floor !== undefined) out.persistenceFloor = floor;
  const levels = numberText(p, 'landscape-levels');
  if (levels !== undefined) out.landscapeLevels = levels;
  return out;
}

/** The reader options given, as OpenCohortRequest fields (paths resolved against the working folder). */
export function readerOptions(p: ParsedArgs): Omit<OpenCohortRequest, 'dir'> {
  const out: Omit<OpenCohortRequest, 'dir'> = {};
  // Paths on the command line are relative to where the command runs, not to COHORT_DIR.
  const participants = p.values.get('participants');
  if (participants !== undefined) out.participants = resolve(participants);
  const nodes = p.values.get('nodes');
  if (nodes !== undefined) out.nodes = resolve(nodes);
  if (p.flags.has('time-series')) out.timeSeries = true;
  const correlation = p.values.get('correlation');
  if (correlation !== undefined) out.correlation = correlation as OpenCohortRequest['correlation'];
  const variable = p.values.get('variable');
  if (variable !== undefined) out.variable = variable;
  const fileColumn = p.values.get('file-column');
  if (fileColumn !== undefined) out.fileColumn = fileColumn;
  const match = p.values.get('match');
  if (match !== undefined) out.match = match;
  const kinds: Record<string, 'numeric' | 'categorical'> = {};
  for (const kind of ['numeric', 'categorical'] as const) {
    for (const name of listText(p, kind) ?? []) {
      if (kinds[name])
        throw new UsageError(`--${kind}: column '${name}' given as both numeric and categorical`);
      kinds[name] = kind;
    }
  }
  if (Object.keys(kinds).length > 0) out.columnKinds = kinds;
  return out;
}

/** The cohort request of COHORT_DIR and the reader options, checked by the contract. */
export function cohortRequest(p: ParsedArgs, dir: string): OpenCohortRequest {
  const req: OpenCohortRequest = { dir, ...readerOptions(p) };
  refuseProblems(validateCohortRequest(req));
  return req;
}

/** The statistics options given; absent ones are left out (merge keeps the shards' own). */
export function statsOptions(p: ParsedArgs): Partial<StatsSettings> {
  const out: Partial<StatsSettings> = {};
  const strings = [
    ['group', 'groupColumn'],
    ['effect', 'effect'],
    ['model', 'model'],
    ['test', 'test'],
    ['reference', 'reference'],
    ['blocks', 'blocks'],
  ] as const;
  for (const [flag, field] of strings) {
    const v = p.values.get(flag);
    if (v !== undefined) out[field] = v;
  }
  const covariates = listText(p, 'covariates');
  if (covariates !== undefined) out.covariates = covariates;
  const permutations = numberText(p, 'permutations');
  if (permutations !== undefined) out.permutations = permutations;
  const seed = numberText(p, 'seed');
  if (seed !== undefined) out.seed = seed;
  return out;
}

/** Whole statistics settings: the defaults with the options given, checked by the contract. */
export function checkedStats(defaults: StatsSettings, given: Partial<StatsSettings>): StatsSettings {
  const stats = { ...defaults, ...given };
  refuseProblems(validateStatsSettings(stats));
  return stats;
}
