/**
 * The doors' shared protocol: what the renderer may call beyond LoopwiseApi, how each call's
 * arguments are checked before they reach the service (Electron IPC and loopback HTTP check alike),
 * and the browser's HTTP + server-sent-events client. Browser-safe: no node:* imports here.
 */
import type {
  AnalysisSettings,
  CohortReport,
  CohortResults,
  Comparison,
  ComparisonSide,
  LoopwiseApi,
  OpenCohortRequest,
  ProgressEvent,
  RunInfo,
  RegionEffects,
  RegionValues,
  RunSummary,
  StartRunRequest,
  StatsSettings,
  SubjectResult,
  TablePage,
  TablePageRequest,
} from './api.ts';
import { RESULT_TABLES } from './api.ts';
import {
  TABLE_FORMATS,
  problemText,
  validateAnalysisSettings,
  validateCohortRequest,
  validateRunRequest,
  validateStatsSettings,
} from './contract.ts';
import type { Problem } from './contract.ts';

/** What a door tells the renderer about itself. */
export interface DoorInfo {
  mode: 'electron' | 'web';
  version: string;
  /** The bundled demo cohort, when it is present. */
  sampleCohort: string | null;
  /** The study named at start (`npm start -- --cohort DIR`): the app opens it at once. */
  startCohort?: string | null;
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
  /**
   * Browser mode: tells when the service stops answering (false: the server stopped or the network
   * dropped) and when it answers again (true). Returns a function that unregisters the listener.
   */
  onConnection?(listener: (connected: boolean) => void): () => void;
}

/** The request/response methods every door forwards (onProgress travels separately). */
export const API_METHODS = [
  'openCohort',
  'defaultSettings',
  'startRun',
  'cancelRun',
  'listRuns',
  'runSummary',
  'cohortResults',
  'subjectResult',
  'regionEffects',
  'regionValues',
  'tablePage',
  'compare',
  'exportRun',
] as const;
export type ApiMethod = (typeof API_METHODS)[number];

export function isApiMethod(name: string): name is ApiMethod {
  return (API_METHODS as readonly string[]).includes(name);
}

/** A call whose arguments do not have the contract's shape; doors answer it with 400 (and the problems). */
export class BadRequest extends Error {
  readonly problems: Problem[];
  constructor(message: string, problems: Problem[] = []) {
    super(message);
    this.name = 'BadRequest';
    this.problems = problems;
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

function bool(v: unknown, what: string): boolean {
  if (typeof v !== 'boolean') throw new BadRequest(`${what} must be true or false`);
  return v;
}

function arity(args: unknown[], n: number, method: string): void {
  if (args.length !== n) throw new BadRequest(`${method} takes ${n} argument${n === 1 ? '' : 's'}`);
}

/** Throws BadRequest carrying the contract's problems, when there are any. */
function refuse(problems: Problem[]): void {
  if (problems.length > 0)
    throw new BadRequest(problems.map((p) => problemText(p, 'field')).join('; '), problems);
}

/** Copies only the named fields that are present (not undefined) from v. */
function pick(v: Obj, fields: readonly string[]): Obj {
  const out: Obj = {};
  for (const f of fields) if (v[f] !== undefined) out[f] = v[f];
  return out;
}

export function checkOpenCohort(v: unknown): OpenCohortRequest {
  refuse(validateCohortRequest(v));
  const o = v as Obj;
  // Absent or null optional fields are left out; the contract has checked the others.
  const given = pick(o, [
    'participants',
    'nodes',
    'variable',
    'fileColumn',
    'match',
    'timeSeries',
    'correlation',
    'columnKinds',
  ]);
  for (const [k, x] of Object.entries(given)) if (x === null) delete given[k];
  const req = { dir: o.dir as string, ...given } as OpenCohortRequest;
  // Tables named relative to the cohort folder are made absolute here, so the path the door checks
  // is the path the service reads (whatever folder the service resolves relative names against).
  const absolute = (p: string) => p.startsWith('/') || /^[A-Za-z]:[\\/]/.test(p) || p.startsWith('\\\\');
  const within = (p: string) => (absolute(p) ? p : `${req.dir.replace(/[\\/]+$/, '')}/${p}`);
  if (req.participants !== undefined) req.participants = within(req.participants);
  if (req.nodes !== undefined) req.nodes = within(req.nodes);
  if (req.columnKinds) req.columnKinds = { ...req.columnKinds };
  return req;
}

export function checkSettings(v: unknown): AnalysisSettings {
  refuse(validateAnalysisSettings(v));
  const o = v as Obj;
  const cap = o.cap as AnalysisSettings['cap'];
  return {
    input: o.input as AnalysisSettings['input'],
    transform: o.transform as AnalysisSettings['transform'],
    maxDim: o.maxDim as 1 | 2,
    cap: cap.kind === 'none' ? { kind: 'none' } : { kind: cap.kind, value: cap.value },
    representatives: o.representatives as boolean,
    persistenceFloor: o.persistenceFloor as number,
    gridPoints: o.gridPoints as number,
    gridRange: Array.isArray(o.gridRange) ? [o.gridRange[0] as number, o.gridRange[1] as number] : null,
    landscapeLevels: o.landscapeLevels as number,
    dropRegions: [...(o.dropRegions as number[])],
  };
}

export function checkStats(v: unknown): StatsSettings {
  refuse(validateStatsSettings(v));
  const o = v as Obj;
  const orNull = (x: unknown): string | null => (typeof x === 'string' ? x : null);
  return {
    groupColumn: orNull(o.groupColumn),
    effect: orNull(o.effect),
    model: orNull(o.model),
    test: orNull(o.test),
    reference: orNull(o.reference),
    blocks: orNull(o.blocks),
    covariates: [...(o.covariates as string[])],
    permutations: o.permutations as number,
    seed: o.seed as number,
  };
}

function checkStartRun(v: unknown): StartRunRequest {
  if (!isObj(v)) throw new BadRequest('the run request must be an object');
  // Every problem of the three parts at once, so a form can show them all.
  refuse(validateRunRequest({ cohort: v.cohort, settings: v.settings, stats: v.stats }));
  return {
    cohort: checkOpenCohort(v.cohort),
    settings: checkSettings(v.settings),
    stats: checkStats(v.stats),
    outDir: v.outDir === null || v.outDir === undefined ? null : str(v.outDir, 'outDir'),
    // Never taken from a door: cacheDir (a path the service writes), shard and workers (CLI matters).
    ...(v.force === undefined ? {} : { force: bool(v.force, 'force') }),
    ...(v.tableFormat === undefined ? {} : { tableFormat: tableFormat(v.tableFormat) }),
  };
}

function tableFormat(v: unknown): 'tsv' | 'csv' {
  if (v !== 'tsv' && v !== 'csv')
    throw new BadRequest(`tableFormat must be one of ${TABLE_FORMATS.join(', ')}`);
  return v;
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
    case 'listRuns':
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
    case 'regionEffects':
      arity(args, 2, method);
      return { args: [id(args[0], 'runId'), str(args[1], 'measure', 256)], paths: [] };
    case 'regionValues':
      arity(args, 3, method);
      return {
        args: [id(args[0], 'runId'), str(args[1], 'measure', 256), int(args[2], 'node', 0, 1e7)],
        paths: [],
      };
    case 'tablePage':
      arity(args, 2, method);
      return { args: [id(args[0], 'runId'), checkTablePage(args[1])], paths: [] };
    case 'compare':
      arity(args, 3, method);
      return {
        args: [id(args[0], 'runId'), comparisonSide(args[1], 'a'), comparisonSide(args[2], 'b')],
        paths: [],
      };
    case 'exportRun': {
      arity(args, 3, method);
      const outDir = str(args[1], 'outDir');
      return { args: [id(args[0], 'runId'), outDir, bool(args[2], 'overwrite')], paths: [outDir] };
    }
  }
}

function int(v: unknown, what: string, min: number, max: number): number {
  if (typeof v !== 'number' || !Number.isInteger(v) || v < min || v > max)
    throw new BadRequest(`${what} must be an integer in [${min}, ${max}]`);
  return v;
}

/** A table page request rebuilt from its checked fields. */
export function checkTablePage(v: unknown): TablePageRequest {
  if (!isObj(v)) throw new BadRequest('the page request must be an object');
  if (!(RESULT_TABLES as readonly unknown[]).includes(v.table))
    throw new BadRequest(`table must be one of ${RESULT_TABLES.join(', ')}`);
  const req: TablePageRequest = {
    table: v.table as TablePageRequest['table'],
    offset: int(v.offset, 'offset', 0, 1e9),
    limit: int(v.limit, 'limit', 1, 5000),
  };
  if (v.sort !== undefined && v.sort !== null) {
    if (!isObj(v.sort)) throw new BadRequest('sort must be { column, descending }');
    req.sort = {
      column: str(v.sort.column, 'sort.column', 256),
      descending: bool(v.sort.descending, 'sort.descending'),
    };
  }
  if (v.filter !== undefined && v.filter !== null && v.filter !== '')
    req.filter = str(v.filter, 'filter', 256);
  if (v.equals !== undefined && v.equals !== null) {
    if (!isObj(v.equals)) throw new BadRequest('equals must be an object of column → value');
    const equals: Record<string, string | number> = {};
    for (const [k, x] of Object.entries(v.equals)) {
      if (typeof x !== 'string' && !(typeof x === 'number' && Number.isFinite(x)))
        throw new BadRequest(`equals.${k} must be a text or a number`);
      equals[str(k, 'equals column', 256)] = x;
    }
    req.equals = equals;
  }
  return req;
}

/** A comparison side rebuilt from scratch: {kind: 'scan', id} or {kind: 'group', group}. */
function comparisonSide(v: unknown, what: string): ComparisonSide {
  if (!isObj(v))
    throw new BadRequest(`${what} must be {"kind": "scan", "id": …} or {"kind": "group", "group": …}`);
  if (v.kind === 'scan') return { kind: 'scan', id: str(v.id, `${what}.id`, 256) };
  if (v.kind === 'group') return { kind: 'group', group: str(v.group, `${what}.group`, 256) };
  throw new BadRequest(`${what}.kind must be "scan" or "group"`);
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
  onerror?: ((e: unknown) => void) | null;
  onopen?: ((e: unknown) => void) | null;
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
  const connection = new Set<(connected: boolean) => void>();
  let connected = true;
  const setConnected = (up: boolean) => {
    if (up === connected) return;
    connected = up;
    for (const l of connection) l(up);
  };
  const call = async <T>(method: string, args: unknown[]): Promise<T> => {
    let res: Response;
    try {
      res = await doFetch(`${opts.base}/api/${method}`, {
        method: 'POST',
        headers: { 'content-type': 'application/json', ...tokenHeaders },
        body: JSON.stringify(args),
      });
    } catch (e) {
      // No answer at all (the server stopped, the network dropped): not the call's fault.
      setConnected(false);
      throw Object.assign(
        new Error(`${method}: the Loopwise service does not answer (${(e as Error).message})`),
        {
          disconnected: true,
        },
      );
    }
    setConnected(true);
    const text = await res.text();
    if (!res.ok) {
      let message = text;
      let problems: Problem[] = [];
      let code: string | null = null;
      try {
        const body: unknown = JSON.parse(text);
        if (isObj(body) && typeof body.error === 'string') message = body.error;
        if (isObj(body) && Array.isArray(body.problems)) problems = body.problems as Problem[];
        if (isObj(body) && typeof body.code === 'string') code = body.code;
      } catch {
        // not JSON: keep the text as it came
      }
      const error = new Error(`${method}: ${message || res.statusText} (HTTP ${res.status})`);
      // The contract's problems, so the renderer can show each under its field; the refusal's
      // code (e.g. an output folder's), so it can offer the way out; the status, to tell a
      // conflict from a fault.
      throw Object.assign(error, { problems, code, status: res.status });
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
    // The browser retries a dropped stream on its own; each failure and each reopening is told.
    source.onerror = () => setConnected(false);
    source.onopen = () => setConnected(true);
  };

  return {
    info: () => call<DoorInfo>('info', []),
    openCohort: (req) => call<CohortReport>('openCohort', [req]),
    defaultSettings: () => call<{ settings: AnalysisSettings; stats: StatsSettings }>('defaultSettings', []),
    startRun: (req) => call<{ runId: string }>('startRun', [req]),
    cancelRun: (runId) => call<void>('cancelRun', [runId]),
    listRuns: () => call<RunInfo[]>('listRuns', []),
    runSummary: (runId) => call<RunSummary | null>('runSummary', [runId]),
    cohortResults: (runId) => call<CohortResults | null>('cohortResults', [runId]),
    subjectResult: (runId, subjectId) => call<SubjectResult | null>('subjectResult', [runId, subjectId]),
    regionEffects: (runId, measure) => call<RegionEffects | null>('regionEffects', [runId, measure]),
    regionValues: (runId, measure, node) => call<RegionValues | null>('regionValues', [runId, measure, node]),
    tablePage: (runId, req) => call<TablePage | null>('tablePage', [runId, req]),
    compare: (runId, a, b) => call<Comparison>('compare', [runId, a, b]),
    exportRun: (runId, outDir, overwrite) =>
      call<{ files: string[] }>('exportRun', [runId, outDir, overwrite]),
    onConnection(listener) {
      connection.add(listener);
      return () => connection.delete(listener);
    },
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
