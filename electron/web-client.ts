/**
 * The doors' shared protocol: what the renderer may call beyond LoopwiseApi, how each call's
 * arguments are checked before they reach the service (Electron IPC and loopback HTTP check alike),
 * and the browser's HTTP + server-sent-events client. Browser-safe: no node:* imports here.
 */
import type {
  AnalysisSettings,
  CohortReport,
  CohortResults,
  LoopwiseApi,
  OpenCohortRequest,
  ProgressEvent,
  RunSummary,
  StartRunRequest,
  StatsSettings,
  SubjectResult,
} from './api.ts';

/** What a door tells the renderer about itself. */
export interface DoorInfo {
  mode: 'electron' | 'web';
  version: string;
  /** The bundled demo cohort, when it is present. */
  sampleCohort: string | null;
  /** Where exports go unless the user picks another folder. */
  defaultOutDir: string | null;
  /** Browser mode: the only folders the server will touch. Electron: the folders picked so far. */
  roots: string[];
}

/** LoopwiseApi plus what only a door can do. */
export interface LoopwiseDoor extends LoopwiseApi {
  info(): Promise<DoorInfo>;
  /** A native folder picker; present only in the Electron app. Resolves null when cancelled. */
  pickFolder?(purpose: 'cohort' | 'output'): Promise<string | null>;
}

/** The request/response methods every door forwards (onProgress travels separately). */
export const API_METHODS = [
  'openCohort',
  'defaultSettings',
  'startRun',
  'cancelRun',
  'runSummary',
  'cohortResults',
  'subjectResult',
  'exportRun',
] as const;
export type ApiMethod = (typeof API_METHODS)[number];

export function isApiMethod(name: string): name is ApiMethod {
  return (API_METHODS as readonly string[]).includes(name);
}

/** A call whose arguments do not have the contract's shape; doors answer it with 400. */
export class BadRequest extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'BadRequest';
  }
}

type Obj = Record<string, unknown>;

function isObj(v: unknown): v is Obj {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function str(v: unknown, what: string, maxLength = 4096): string {
  if (typeof v !== 'string' || v.length === 0 || v.length > maxLength || v.includes('\0')) {
    throw new BadRequest(`${what} must be a non-empty string`);
  }
  return v;
}

function optStr(v: unknown, what: string): string | undefined {
  return v === undefined || v === null ? undefined : str(v, what);
}

function num(v: unknown, what: string, min: number, max: number, integer = false): number {
  if (
    typeof v !== 'number' ||
    !Number.isFinite(v) ||
    v < min ||
    v > max ||
    (integer && !Number.isInteger(v))
  ) {
    throw new BadRequest(`${what} must be ${integer ? 'an integer' : 'a number'} in [${min}, ${max}]`);
  }
  return v;
}

function oneOf<T extends string>(v: unknown, what: string, allowed: readonly T[]): T {
  if (typeof v !== 'string' || !(allowed as readonly string[]).includes(v)) {
    throw new BadRequest(`${what} must be one of ${allowed.join(', ')}`);
  }
  return v as T;
}

function bool(v: unknown, what: string): boolean {
  if (typeof v !== 'boolean') throw new BadRequest(`${what} must be true or false`);
  return v;
}

function arity(args: unknown[], n: number, method: string): void {
  if (args.length !== n) throw new BadRequest(`${method} takes ${n} argument${n === 1 ? '' : 's'}`);
}

export function checkOpenCohort(v: unknown): OpenCohortRequest {
  if (!isObj(v)) throw new BadRequest('the cohort request must be an object');
  const req: OpenCohortRequest = { dir: str(v.dir, 'cohort.dir') };
  const participants = optStr(v.participants, 'cohort.participants');
  const nodes = optStr(v.nodes, 'cohort.nodes');
  // Tables named relative to the cohort folder are made absolute here, so the path the door checks
  // is the path the service reads (whatever folder the service resolves relative names against).
  const absolute = (p: string) => p.startsWith('/') || /^[A-Za-z]:[\\/]/.test(p) || p.startsWith('\\\\');
  const within = (p: string) => (absolute(p) ? p : `${req.dir.replace(/[\\/]+$/, '')}/${p}`);
  if (participants !== undefined) req.participants = within(participants);
  if (nodes !== undefined) req.nodes = within(nodes);
  const variable = optStr(v.variable, 'cohort.variable');
  const fileColumn = optStr(v.fileColumn, 'cohort.fileColumn');
  const match = optStr(v.match, 'cohort.match');
  if (variable !== undefined) req.variable = variable;
  if (fileColumn !== undefined) req.fileColumn = fileColumn;
  if (match !== undefined) req.match = match;
  if (v.timeSeries !== undefined && v.timeSeries !== null)
    req.timeSeries = bool(v.timeSeries, 'cohort.timeSeries');
  if (v.columnKinds !== undefined && v.columnKinds !== null) {
    if (!isObj(v.columnKinds)) throw new BadRequest('cohort.columnKinds must be an object');
    const kinds: Record<string, 'numeric' | 'categorical'> = {};
    for (const [k, kind] of Object.entries(v.columnKinds)) {
      kinds[str(k, 'cohort.columnKinds key', 256)] = oneOf(kind, `cohort.columnKinds.${k}`, [
        'numeric',
        'categorical',
      ] as const);
    }
    req.columnKinds = kinds;
  }
  return req;
}

export function checkSettings(v: unknown): AnalysisSettings {
  if (!isObj(v)) throw new BadRequest('settings must be an object');
  const cap = v.cap;
  if (!isObj(cap)) throw new BadRequest('settings.cap must be an object');
  const capKind = oneOf(cap.kind, 'settings.cap.kind', ['none', 'distance', 'density'] as const);
  const range = v.gridRange;
  let gridRange: [number, number] | null = null;
  if (range !== null && range !== undefined) {
    if (!Array.isArray(range) || range.length !== 2)
      throw new BadRequest('settings.gridRange must be [lo, hi]');
    const lo = num(range[0], 'settings.gridRange[0]', -1e12, 1e12);
    const hi = num(range[1], 'settings.gridRange[1]', -1e12, 1e12);
    if (!(hi > lo)) throw new BadRequest('settings.gridRange must have hi > lo');
    gridRange = [lo, hi];
  }
  if (!Array.isArray(v.dropRegions)) throw new BadRequest('settings.dropRegions must be an array');
  return {
    input: oneOf(v.input, 'settings.input', ['correlation', 'weight', 'distance'] as const),
    transform: oneOf(v.transform, 'settings.transform', [
      'one-minus',
      'one-minus-abs',
      'sqrt',
      'inverse',
      'neg-log',
      'identity',
    ] as const),
    maxDim: num(v.maxDim, 'settings.maxDim', 1, 2, true) as 1 | 2,
    cap:
      capKind === 'none'
        ? { kind: 'none' }
        : capKind === 'distance'
          ? { kind: 'distance', value: num(cap.value, 'settings.cap.value', 0, 1e12) }
          : { kind: 'density', value: num(cap.value, 'settings.cap.value', 0, 1) },
    representatives: bool(v.representatives, 'settings.representatives'),
    persistenceFloor: num(v.persistenceFloor, 'settings.persistenceFloor', 0, 1e12),
    gridPoints: num(v.gridPoints, 'settings.gridPoints', 2, 10_000, true),
    gridRange,
    landscapeLevels: num(v.landscapeLevels, 'settings.landscapeLevels', 0, 100, true),
    dropRegions: v.dropRegions.map((r, i) => num(r, `settings.dropRegions[${i}]`, 0, 1e6, true)),
  };
}

/** An optional string setting: absent or null → null. */
function nullableStr(v: unknown, name: string): string | null {
  return v === undefined || v === null ? null : str(v, name, 1024);
}

export function checkStats(v: unknown): StatsSettings {
  if (!isObj(v)) throw new BadRequest('stats must be an object');
  if (!Array.isArray(v.covariates)) throw new BadRequest('stats.covariates must be an array');
  return {
    groupColumn: v.groupColumn === null ? null : str(v.groupColumn, 'stats.groupColumn', 256),
    effect: nullableStr(v.effect, 'stats.effect'),
    model: nullableStr(v.model, 'stats.model'),
    test: nullableStr(v.test, 'stats.test'),
    reference: nullableStr(v.reference, 'stats.reference'),
    blocks: nullableStr(v.blocks, 'stats.blocks'),
    covariates: v.covariates.map((c, i) => str(c, `stats.covariates[${i}]`, 256)),
    permutations: num(v.permutations, 'stats.permutations', 0, 1_000_000, true),
    seed: num(v.seed, 'stats.seed', 0, 2 ** 32 - 1, true),
  };
}

function checkStartRun(v: unknown): StartRunRequest {
  if (!isObj(v)) throw new BadRequest('the run request must be an object');
  return {
    cohort: checkOpenCohort(v.cohort),
    settings: checkSettings(v.settings),
    stats: checkStats(v.stats),
    outDir: v.outDir === null || v.outDir === undefined ? null : str(v.outDir, 'outDir'),
    // Never taken from a door: cacheDir (a path the service writes), shard and workers (CLI matters).
    ...(v.force === undefined ? {} : { force: bool(v.force, 'force') }),
    ...(v.tableFormat === undefined
      ? {}
      : { tableFormat: oneOf(v.tableFormat, 'tableFormat', ['tsv', 'csv'] as const) }),
  };
}

/** A checked call: the arguments rebuilt from scratch (no stray fields) and every path they name. */
export interface CheckedCall {
  args: unknown[];
  paths: string[];
}

/**
 * Checks one call's arguments against the contract. Throws BadRequest naming the first bad field.
 * The returned `paths` are what the door must confine to the folders the user named.
 */
export function checkCall(method: ApiMethod, args: unknown[]): CheckedCall {
  const id = (v: unknown, what: string) => str(v, what, 256);
  switch (method) {
    case 'openCohort': {
      arity(args, 1, method);
      const req = checkOpenCohort(args[0]);
      return { args: [req], paths: cohortPaths(req) };
    }
    case 'defaultSettings':
      arity(args, 0, method);
      return { args: [], paths: [] };
    case 'startRun': {
      arity(args, 1, method);
      const req = checkStartRun(args[0]);
      return { args: [req], paths: [...cohortPaths(req.cohort), ...(req.outDir ? [req.outDir] : [])] };
    }
    case 'cancelRun':
    case 'runSummary':
    case 'cohortResults':
      arity(args, 1, method);
      return { args: [id(args[0], 'runId')], paths: [] };
    case 'subjectResult':
      arity(args, 2, method);
      return { args: [id(args[0], 'runId'), id(args[1], 'subjectId')], paths: [] };
    case 'exportRun': {
      arity(args, 3, method);
      const outDir = str(args[1], 'outDir');
      return { args: [id(args[0], 'runId'), outDir, bool(args[2], 'overwrite')], paths: [outDir] };
    }
  }
}

function cohortPaths(req: OpenCohortRequest): string[] {
  return [req.dir, ...(req.participants ? [req.participants] : []), ...(req.nodes ? [req.nodes] : [])];
}

// ---------- The browser client ----------

/**
 * The token's header. The page itself needs no token: its first load traded the token for an
 * HttpOnly cookie its requests carry. Other clients (scripts, tests) send this header.
 */
export const TOKEN_HEADER = 'x-loopwise-token';

interface EventSourceLike {
  onmessage: ((e: { data: string }) => void) | null;
  close(): void;
}

export interface HttpClientOptions {
  /** e.g. 'http://127.0.0.1:5123' or '' for the page's own origin. */
  base: string;
  /** Sent as a header when given; the page leaves it out and relies on its cookie. */
  token?: string | null;
  fetch?: typeof fetch;
  /** Opens the event stream (default the browser's EventSource, which sends the cookie). */
  eventSource?: (url: string, headers: Record<string, string>) => EventSourceLike;
}

/** The LoopwiseDoor over loopback HTTP: POST /api/<method> with a JSON array of arguments; progress by SSE. */
export function createHttpClient(opts: HttpClientOptions): LoopwiseDoor {
  const doFetch = opts.fetch ?? ((input: RequestInfo | URL, init?: RequestInit) => fetch(input, init));
  const tokenHeaders: Record<string, string> = opts.token ? { [TOKEN_HEADER]: opts.token } : {};
  const call = async <T>(method: string, args: unknown[]): Promise<T> => {
    const res = await doFetch(`${opts.base}/api/${method}`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', ...tokenHeaders },
      body: JSON.stringify(args),
    });
    const text = await res.text();
    if (!res.ok) {
      let message = text;
      try {
        const body: unknown = JSON.parse(text);
        if (isObj(body) && typeof body.error === 'string') message = body.error;
      } catch {
        // not JSON: keep the text as it came
      }
      throw new Error(`${method}: ${message || res.statusText} (HTTP ${res.status})`);
    }
    return (text === '' ? undefined : JSON.parse(text)) as T;
  };

  const listeners = new Set<(e: ProgressEvent) => void>();
  let source: EventSourceLike | null = null;
  const openSource = () => {
    const url = `${opts.base}/api/events`;
    source = opts.eventSource
      ? opts.eventSource(url, tokenHeaders)
      : (new EventSource(url) as unknown as EventSourceLike);
    source.onmessage = (e) => {
      const event = JSON.parse(e.data) as ProgressEvent;
      for (const l of listeners) l(event);
    };
  };

  return {
    info: () => call<DoorInfo>('info', []),
    openCohort: (req) => call<CohortReport>('openCohort', [req]),
    defaultSettings: () => call<{ settings: AnalysisSettings; stats: StatsSettings }>('defaultSettings', []),
    startRun: (req) => call<{ runId: string }>('startRun', [req]),
    cancelRun: (runId) => call<void>('cancelRun', [runId]),
    runSummary: (runId) => call<RunSummary | null>('runSummary', [runId]),
    cohortResults: (runId) => call<CohortResults | null>('cohortResults', [runId]),
    subjectResult: (runId, subjectId) => call<SubjectResult | null>('subjectResult', [runId, subjectId]),
    exportRun: (runId, outDir, overwrite) =>
      call<{ files: string[] }>('exportRun', [runId, outDir, overwrite]),
    onProgress(listener) {
      listeners.add(listener);
      if (!source) openSource();
      return () => {
        listeners.delete(listener);
        if (listeners.size === 0 && source) {
          source.close();
          source = null;
        }
      };
    },
  };
}
