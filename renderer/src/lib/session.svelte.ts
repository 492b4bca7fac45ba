/** The app's state: the door, the open cohort, the settings, the run and its results. */
import type {
  AnalysisSettings,
  CohortReport,
  CohortResults,
  OpenCohortRequest,
  ProgressEvent,
  RunSummary,
  StatsSettings,
  SubjectResult,
} from '../../../electron/api.ts';
import type { Problem } from '../../../electron/contract.ts';
import type { DoorInfo, LoopwiseDoor } from '../../../electron/web-client.ts';
import { mergeFailures } from './progress.ts';
import { proposedDesign } from './study.ts';

export type ViewName = 'study' | 'analysis' | 'groups' | 'regions' | 'subject' | 'compare' | 'export';

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

  private lastReused = 0;
  /**
   * Events that arrive while a run is being started, before its id is known: the service starts
   * the run before it answers, so a run from the cache can be far along (or done) by then.
   */
  private early: ProgressEvent[] | null = null;

  constructor(door: LoopwiseDoor) {
    this.door = door;
    door.onProgress((e) => this.onProgress(e));
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
    await this.attempt(async () => {
      this.info = await this.door.info();
      const d = await this.door.defaultSettings();
      this.settings = d.settings;
      this.stats = d.stats;
      this.cohortDir = this.info.sampleCohort ?? '';
      this.outDir = this.info.defaultOutDir ?? '';
    });
  }

  async openCohort(dir: string): Promise<void> {
    await this.attempt(async () => {
      const report = await this.door.openCohort({ dir, ...$state.snapshot(this.cohortOptions) });
      this.cohortDir = dir;
      this.report = report;
      this.results = null;
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
    for (const e of early) if (e.runId === started.runId) this.onProgress(e);
  }

  async cancelRun(): Promise<void> {
    if (this.runId) await this.attempt(() => this.door.cancelRun(this.runId!));
  }

  private onProgress(e: ProgressEvent): void {
    if (this.early) {
      this.early.push(e);
      return;
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
  }

  async openSubject(id: string): Promise<void> {
    if (!this.runId) return;
    this.subjectId = id;
    this.view = 'subject';
    const r = await this.attempt(() => this.door.subjectResult(this.runId!, id));
    this.subject = r ?? null;
    if (r === null) this.error = `No result for ${id}: it was excluded or failed in this run.`;
  }
}
