/** The app's state: the door, the open cohort, the settings, the run and its results. */
import type {
  AnalysisSettings,
  CohortReport,
  CohortResults,
  OpenCohortRequest,
  ProgressEvent,
  RunInfo,
  RunSummary,
  StatsSettings,
  SubjectResult,
} from '../../../electron/api.ts';
import type { Problem } from '../../../electron/contract.ts';
import type { DoorInfo, LoopwiseDoor } from '../../../electron/web-client.ts';
import { mergeFailures } from './progress.ts';
import { proposedDesign } from './study.ts';

export type ViewName = 'study' | 'analysis' | 'groups' | 'regions' | 'subject' | 'compare' | 'export';

const VIEWS: readonly ViewName[] = ['study', 'analysis', 'groups', 'regions', 'subject', 'compare', 'export'];

/** The key under which a page keeps its choices for a reload (sessionStorage: this tab only). */
export const STORAGE_KEY = 'loopwise:session:1';

/** What a reload restores: the user's choices, never results (those come from the service). */
interface Saved {
  view: ViewName;
  cohortDir: string;
  cohortOpen: boolean;
  cohortOptions: Omit<OpenCohortRequest, 'dir'>;
  settings: AnalysisSettings | null;
  stats: StatsSettings | null;
  outDir: string;
  runId: string | null;
  subjectId: string | null;
  choices: Record<string, string>;
}

/** Output-folder refusals the user resolves by choosing to replace (the service's OutDirError codes). */
const REPLACEABLE = new Set(['finished-run', 'foreign-files', 'unfinished-run']);

/** An error's message without a door's wrapping ("method: … (HTTP 409)"). */
export function plainMessage(e: unknown): string {
  const text = e instanceof Error ? e.message : String(e);
  return text
    .replace(/^[a-zA-Z]+: /, '')
    .replace(/ \(HTTP \d{3}\)$/, '')
    .replace(/^Error invoking remote method '[^']+': (\w*Error: )?/, '');
}

export class Session {
  readonly door: LoopwiseDoor;
  view = $state<ViewName>('study');
  info = $state<DoorInfo | null>(null);
  error = $state<string | null>(null);
  busy = $state(false);

  cohortDir = $state('');
  /** The reader options the cohort is opened and analysed with (participants table, time series, …). */
  cohortOptions = $state<Omit<OpenCohortRequest, 'dir'>>({});
  /** Problems a door returned with its refusal (the contract's), shown under their fields. */
  problems = $state<Problem[]>([]);
  report = $state<CohortReport | null>(null);
  settings = $state<AnalysisSettings | null>(null);
  stats = $state<StatsSettings | null>(null);
  outDir = $state('');

  runId = $state<string | null>(null);
  progress = $state<ProgressEvent | null>(null);
  failures = $state<Array<{ subject: string; reason: string }>>([]);
  /** Subjects seen during the run: whether their filtration came from the cache. */
  seen = $state<Array<{ subject: string; cached: boolean }>>([]);
  summary = $state<RunSummary | null>(null);
  // Raw (not deeply reactive): results are replaced whole, never edited, and proxying every cell
  // of their tables made each read slow.
  results = $state.raw<CohortResults | null>(null);

  /** The Compare view's two sides, as 'scan:ID' or 'group:LEVEL' (kept across views). */
  compareA = $state('');
  compareB = $state('');

  subjectId = $state<string | null>(null);
  subject = $state.raw<SubjectResult | null>(null);

  /** Every run of the service session (listRuns), oldest first. */
  runs = $state<RunInfo[]>([]);
  /** false while the service does not answer (browser mode: the server stopped, the network dropped). */
  connected = $state(true);
  /** A one-line note for the user (e.g. where the previous run's results went). */
  notice = $state<string | null>(null);
  /** Choices made in the views (chosen curve, feature, measure, …), kept across views and reloads. */
  choices = $state<Record<string, string>>({});

  exporting = $state(false);
  exportProgress = $state<ProgressEvent | null>(null);
  exported = $state<{ dir: string; files: string[] } | null>(null);
  /** The last export's refusal or failure; `replace` when choosing to replace resolves it. */
  exportProblem = $state<{ dir: string; message: string; replace: boolean } | null>(null);

  private readonly storage: Pick<Storage, 'getItem' | 'setItem'> | null;

  private lastReused = 0;
  /**
   * Events that arrive while a run is being started, before its id is known: the service starts
   * the run before it answers, so a run from the cache can be far along (or done) by then.
   */
  private early: ProgressEvent[] | null = null;

  constructor(door: LoopwiseDoor, storage: Pick<Storage, 'getItem' | 'setItem'> | null = null) {
    this.door = door;
    this.storage = storage;
    door.onProgress((e) => this.onProgress(e));
    door.onConnection?.((up) => {
      this.connected = up;
      // Back again: whatever ran meanwhile is picked up (a run that ended, new runs).
      if (up) void this.resync();
    });
  }

  /** The choice under `key` (e.g. 'groups.feature'), or `fallback`. */
  choice(key: string, fallback = ''): string {
    return this.choices[key] ?? fallback;
  }

  choose(key: string, value: string): void {
    this.choices = { ...this.choices, [key]: value };
  }

  private saved(): Saved | null {
    try {
      const text = this.storage?.getItem(STORAGE_KEY);
      const v = text ? (JSON.parse(text) as Saved) : null;
      return v && VIEWS.includes(v.view) ? v : null;
    } catch {
      return null;
    }
  }

  /** From now on, every change of a choice is kept for a reload of this tab. */
  private autosave(): void {
    if (!this.storage) return;
    const storage = this.storage;
    $effect.root(() => {
      $effect(() => {
        const v: Saved = {
          view: this.view,
          cohortDir: this.cohortDir,
          cohortOpen: this.report !== null,
          cohortOptions: $state.snapshot(this.cohortOptions) as Saved['cohortOptions'],
          settings: $state.snapshot(this.settings) as AnalysisSettings | null,
          stats: $state.snapshot(this.stats) as StatsSettings | null,
          outDir: this.outDir,
          runId: this.runId,
          subjectId: this.subjectId,
          choices: $state.snapshot(this.choices),
        };
        try {
          storage.setItem(STORAGE_KEY, JSON.stringify(v));
        } catch {
          /* storage full or refused: choices then last only as long as the page */
        }
      });
    });
  }

  private async attempt<T>(what: () => Promise<T>): Promise<T | undefined> {
    this.error = null;
    this.problems = [];
    this.busy = true;
    try {
      return await what();
    } catch (e) {
      this.error = e instanceof Error ? e.message : String(e);
      const problems = (e as { problems?: unknown }).problems;
      if (Array.isArray(problems)) this.problems = problems as Problem[];
      return undefined;
    } finally {
      this.busy = false;
    }
  }

  async init(): Promise<void> {
    const saved = this.saved();
    await this.attempt(async () => {
      this.info = await this.door.info();
      const d = await this.door.defaultSettings();
      this.settings = saved?.settings ?? d.settings;
      this.stats = saved?.stats ?? d.stats;
      this.cohortDir = saved?.cohortDir || this.info.startCohort || this.info.sampleCohort || '';
      this.cohortOptions = saved?.cohortOptions ?? {};
      this.outDir = saved?.outDir || this.info.defaultOutDir || '';
      this.choices = saved?.choices ?? {};
      this.runs = await this.door.listRuns();
    });
    // Reattach: the run this page showed, else a run still going on the service, else the cohort.
    const again = saved?.runId ? this.runs.find((r) => r.runId === saved.runId) : undefined;
    const going = this.runs.filter((r) => r.status === 'running').at(-1);
    if (again ?? going) {
      await this.openRun((again ?? going)!.runId, saved?.view ?? 'analysis');
      if (saved?.subjectId && this.results) await this.openSubject(saved.subjectId, false);
    } else if (saved?.cohortOpen && saved.cohortDir) {
      await this.openCohort(saved.cohortDir);
      if (this.report) this.view = saved.view === 'study' ? 'study' : 'analysis';
      // The restored design, not the one proposed for the cohort.
      if (saved.stats) this.stats = saved.stats;
    } else if (!saved && this.info?.startCohort) {
      // `npm start -- --cohort DIR`: the study named at start is open at once.
      await this.openCohort(this.info.startCohort);
    }
    this.autosave();
  }

  /** The service's runs, again. */
  async refreshRuns(): Promise<void> {
    try {
      this.runs = await this.door.listRuns();
    } catch (e) {
      this.error = plainMessage(e);
    }
  }

  /** After a disconnection: the runs again, and the shown run's end if it ended meanwhile. */
  private async resync(): Promise<void> {
    await this.refreshRuns();
    const mine = this.runs.find((r) => r.runId === this.runId);
    if (mine && mine.progress && (!this.progress || mine.progress.elapsedMs >= this.progress.elapsedMs))
      this.progress = mine.progress;
    if (mine && mine.status !== 'running' && !this.summary) await this.finish(mine.runId);
  }

  /**
   * Shows a run of this service session: one still running (its progress, as a reload finds it)
   * or an earlier one (its results). Its cohort, reader options and settings become the form's.
   */
  async openRun(runId: string, view: ViewName = 'analysis'): Promise<void> {
    const info = this.runs.find((r) => r.runId === runId);
    if (!info) return;
    await this.attempt(async () => {
      const { dir, ...options } = info.request.cohort;
      if (
        !this.report ||
        this.cohortDir !== dir ||
        JSON.stringify(options) !== JSON.stringify($state.snapshot(this.cohortOptions))
      ) {
        this.report = await this.door.openCohort(info.request.cohort);
      }
      this.cohortDir = dir;
      this.cohortOptions = options;
      this.settings = info.request.settings;
      this.stats = info.request.stats;
      this.runId = runId;
      this.progress = info.progress;
      this.failures = info.progress?.failures ?? [];
      this.seen = [];
      this.summary = null;
      this.results = null;
      this.subject = null;
      this.subjectId = null;
      this.compareA = '';
      this.compareB = '';
      this.exported = null;
      this.exportProblem = null;
      // A note about another run no longer applies once this one is shown.
      this.notice = null;
    });
    if (this.runId !== runId) return;
    if (info.status !== 'running') await this.finish(runId);
    this.view = view !== 'study' && view !== 'analysis' && !this.results ? 'analysis' : view;
  }

  async openCohort(dir: string): Promise<void> {
    await this.attempt(async () => {
      const report = await this.door.openCohort({ dir, ...$state.snapshot(this.cohortOptions) });
      this.cohortDir = dir;
      this.report = report;
      if (this.results && this.runId)
        this.notice = `The results of ${this.runId} stay listed under Runs in Analysis.`;
      this.results = null;
      this.summary = null;
      this.runId = null;
      this.progress = null;
      this.subject = null;
      this.subjectId = null;
      this.compareA = '';
      this.compareB = '';
      // The design in use where it fits this cohort, else one that does (sessions: group × session, blocks).
      if (this.stats) this.stats = proposedDesign(report, $state.snapshot(this.stats) as StatsSettings);
    });
  }

  async pickFolder(purpose: 'cohort' | 'output'): Promise<void> {
    if (!this.door.pickFolder) return;
    const picked = await this.attempt(() => this.door.pickFolder!(purpose));
    if (!picked) return;
    if (purpose === 'cohort') await this.openCohort(picked);
    else this.outDir = picked;
  }

  async startRun(): Promise<void> {
    if (!this.report || !this.settings || !this.stats) return;
    // The previous run is not thrown away: it stays on the service, listed and reopenable.
    const previous = this.results ? this.runId : null;
    this.failures = [];
    this.seen = [];
    this.summary = null;
    this.results = null;
    this.progress = null;
    this.lastReused = 0;
    const req = {
      cohort: {
        dir: this.cohortDir,
        ...($state.snapshot(this.cohortOptions) as Omit<OpenCohortRequest, 'dir'>),
      },
      settings: $state.snapshot(this.settings) as AnalysisSettings,
      stats: $state.snapshot(this.stats) as StatsSettings,
      outDir: null,
    };
    this.runId = null;
    this.early = [];
    const started = await this.attempt(() => this.door.startRun(req));
    const early = this.early;
    this.early = null;
    if (!started) return;
    this.runId = started.runId;
    this.subject = null;
    this.subjectId = null;
    this.compareA = '';
    this.compareB = '';
    this.exported = null;
    this.exportProblem = null;
    this.notice = previous
      ? `${started.runId} started. The results of ${previous} stay listed under Runs; open them there at any time.`
      : null;
    for (const e of early) if (e.runId === started.runId) this.onProgress(e);
    await this.refreshRuns();
  }

  async cancelRun(): Promise<void> {
    if (this.runId) await this.attempt(() => this.door.cancelRun(this.runId!));
  }

  private onProgress(e: ProgressEvent): void {
    if (this.early) {
      this.early.push(e);
      return;
    }
    // An export's progress is the export's: the run it exports stays as it ended.
    if (e.phase === 'export') {
      if (e.runId === this.runId && this.exporting) this.exportProgress = e;
      return;
    }
    const listed = this.runs.findIndex((r) => r.runId === e.runId);
    if (listed >= 0) {
      const ended = e.phase === 'done' || e.phase === 'cancelled' || e.phase === 'failed';
      this.runs[listed] = {
        ...this.runs[listed],
        status: ended ? (e.phase as RunInfo['status']) : 'running',
        progress: e,
      };
    }
    if (this.runId !== null && e.runId !== this.runId) return;
    this.progress = e;
    this.failures = mergeFailures(this.failures, e.failures);
    if (e.currentSubject && !this.seen.some((s) => s.subject === e.currentSubject)) {
      this.seen = [...this.seen, { subject: e.currentSubject, cached: e.reused > this.lastReused }];
    }
    this.lastReused = e.reused;
    if (e.phase === 'done' || e.phase === 'cancelled' || e.phase === 'failed') void this.finish(e.runId);
  }

  private async finish(runId: string): Promise<void> {
    await this.attempt(async () => {
      this.summary = await this.door.runSummary(runId);
      if (this.summary) this.failures = mergeFailures(this.failures, this.summary.failures);
      // A failed run may still hold what its earlier stages made (e.g. features without statistics).
      if (this.summary && this.summary.status !== 'cancelled')
        this.results = await this.door.cohortResults(runId);
    });
    await this.refreshRuns();
  }

  /**
   * Writes the shown run's tables to `dir`. One export at a time; its progress is exportProgress.
   * A folder that holds earlier files is not written unless the user chose to replace them.
   */
  async exportRun(dir: string, replace: boolean): Promise<void> {
    if (!this.runId || this.exporting) return;
    const runId = this.runId;
    this.exporting = true;
    this.exportProgress = null;
    this.exported = null;
    this.exportProblem = null;
    try {
      const r = await this.door.exportRun(runId, dir, replace);
      this.exported = { dir, files: r.files };
    } catch (e) {
      // The HTTP door sends the refusal's code as a field; Electron's IPC at the message's end.
      const tagged = / \[(finished-run|foreign-files|unfinished-run)\]$/.exec(plainMessage(e));
      const given = (e as { code?: unknown }).code;
      const code = typeof given === 'string' ? given : (tagged?.[1] ?? null);
      const message = tagged ? plainMessage(e).slice(0, tagged.index) : plainMessage(e);
      const replaceable = code !== null && REPLACEABLE.has(code);
      this.exportProblem = { dir, message, replace: replaceable && !replace };
    } finally {
      this.exporting = false;
      this.exportProgress = null;
    }
  }

  async openSubject(id: string, show = true): Promise<void> {
    if (!this.runId) return;
    this.subjectId = id;
    if (show) this.view = 'subject';
    const r = await this.attempt(() => this.door.subjectResult(this.runId!, id));
    this.subject = r ?? null;
    if (r === null) this.error = `No result for ${id}: it was excluded or failed in this run.`;
  }
}
