/**
 * A small stand-in for the service, for the doors' tests only (never shipped): a ten-subject,
 * sixteen-region cohort whose diagrams come from the real engine on seeded random correlation
 * matrices, so the shapes the renderer sees are the contract's real shapes. Its results are the
 * service's own tables in the files' columns (features, nodes.tsv, stats.tsv of columns.ts), and
 * the results queries answer through the service's assembly (electron/service/results.ts), so the
 * renderer's tests see exactly what the doors send.
 */
import type {
  AnalysisSettings,
  CohortReport,
  ComparisonSide,
  CurveBand,
  FiltrationSide,
  LoopwiseApi,
  ProgressEvent,
  RunInfo,
  RunSummary,
  StartRunRequest,
  StatsSettings,
  SubjectResult,
  Table,
} from '../../electron/api.ts';
import type { StageOutput } from '../../electron/service/hooks.ts';
import { defaultStatsSettings } from '../../electron/contract.ts';
import {
  DIAGRAM_TEST_COLUMNS,
  NODE_TABLE_COLUMNS,
  STATS_COLUMNS,
} from '../../electron/engine/features/columns.ts';
import { tTwoSidedP } from '../../electron/engine/stats/special.ts';
import type { FiltrationCache } from '../../electron/service/cache.ts';
import {
  assembleCohortResults,
  assembleRegionEffects,
  assembleRegionValues,
  assembleTablePage,
  type RunView,
} from '../../electron/service/results.ts';
import { computePersistence } from '../../electron/engine/persistence.ts';
import { createRng } from '../../electron/engine/random.ts';
import {
  diagramDistances,
  matchCycles,
  rankedNodeDifferences,
  wholeDiagramMetric,
} from '../../electron/engine/stats/compare.ts';
import { metricName } from '../../electron/engine/stats/diagram-distance.ts';
import { toDistances } from '../../electron/engine/transform.ts';

const N = 16;
const NETWORKS = ['visual', 'default', 'motor', 'salience'];

export interface FakeApi extends LoopwiseApi {
  calls: Array<{ method: string; args: unknown[] }>;
  /** Emits one progress event to every listener (for SSE tests). */
  emit(e: ProgressEvent): void;
}

function matrixFor(seed: number): number[] {
  const rng = createRng(seed);
  const t = 40;
  const series: number[][] = [];
  for (let i = 0; i < N; i++) {
    const shared = createRng(1000 + (i % 4));
    series.push(Array.from({ length: t }, () => shared.next() + rng.next()));
  }
  const m = new Array<number>(N * N).fill(0);
  for (let i = 0; i < N; i++) {
    for (let j = 0; j < N; j++) {
      const a = series[i];
      const b = series[j];
      const ma = a.reduce((s, x) => s + x, 0) / t;
      const mb = b.reduce((s, x) => s + x, 0) / t;
      let sab = 0;
      let saa = 0;
      let sbb = 0;
      for (let k = 0; k < t; k++) {
        sab += (a[k] - ma) * (b[k] - mb);
        saa += (a[k] - ma) ** 2;
        sbb += (b[k] - mb) ** 2;
      }
      m[i * N + j] = i === j ? 1 : sab / Math.sqrt(saa * sbb);
    }
  }
  return m;
}

export function createFakeApi(opts: { root?: string } = {}): FakeApi {
  const root = opts.root ?? '/data/cohort';
  const calls: FakeApi['calls'] = [];
  const listeners = new Set<(e: ProgressEvent) => void>();
  const ids = Array.from({ length: 10 }, (_, i) => `sub-${String(i + 1).padStart(2, '0')}`);
  const groupOf = (i: number) => (i % 2 === 0 ? 'control' : 'patient');
  const runs = new Map<
    string,
    {
      req: StartRunRequest;
      cancelled: boolean;
      output?: StageOutput;
      startedAt: string;
      last: ProgressEvent | null;
    }
  >();

  const report = (): CohortReport => ({
    root,
    n: N,
    subjects: ids.map((id, i) => ({
      id,
      participant: id,
      session: null,
      source: { file: `${root}/${id}.tsv` },
      covariates: { group: groupOf(i), age: 20 + i * 3, sex: i % 3 === 0 ? 'F' : 'M' },
      usable: id !== 'sub-10',
    })),
    columns: [
      { name: 'group', kind: 'categorical', levels: ['control', 'patient'], missing: 0 },
      { name: 'age', kind: 'numeric', missing: 0 },
      { name: 'sex', kind: 'categorical', levels: ['F', 'M'], missing: 0 },
    ],
    nodes: Array.from({ length: N }, (_, i) => ({
      index: i,
      label: `R${i + 1}`,
      network: NETWORKS[i % 4],
      x: Math.cos(i) * 60,
      y: Math.sin(i) * 80,
      z: (i % 5) * 10,
    })),
    findings: [
      {
        severity: 'error',
        code: 'not-square',
        file: 'sub-10.tsv',
        subject: 'sub-10',
        message: 'sub-10.tsv: 16 rows but 15 columns',
      },
      {
        severity: 'warning',
        code: 'asymmetric',
        file: 'sub-03.tsv',
        subject: 'sub-03',
        message: 'sub-03.tsv: not symmetric at [2, 5] (0.41 vs 0.40); symmetrised',
        where: [2, 5],
      },
    ],
    deadRegions: [],
    sessions: null,
  });

  const subject = (id: string): SubjectResult | null => {
    const i = ids.indexOf(id);
    if (i < 0 || id === 'sub-10') return null;
    const matrix = matrixFor(i + 1);
    const result = computePersistence(
      toDistances({ n: N, values: Float64Array.from(matrix) }, { input: 'correlation' }),
      { maxDim: 1, representatives: true },
    );
    const degree = Array.from({ length: N }, (_, a) =>
      matrix.slice(a * N, a * N + N).reduce((s, x, b) => s + (a === b ? 0 : Math.abs(x)), 0),
    );
    const participation = new Array<number>(N).fill(0);
    for (const r of result.representatives ?? []) for (const v of r.nodes) participation[v]++;
    return {
      id,
      group: groupOf(i),
      n: N,
      matrix,
      diagrams: result.diagrams.map((d) =>
        d.map((iv) => [iv.birth, Number.isFinite(iv.death) ? iv.death : null] as [number, number | null]),
      ),
      representatives: (result.representatives ?? []).map((r) => ({
        birth: r.birth,
        death: Number.isFinite(r.death) ? r.death : null,
        edges: r.edges,
        nodes: r.nodes,
      })),
      nodeScores: { strength: degree, participation },
    };
  };

  /**
   * The stages' output for a run: features, the long node table (nodes.tsv's columns), group curves
   * and stats.tsv rows (STATS_COLUMNS) for the scalar features and every node of both measures.
   * The node tests are point-biserial correlations with the group (= partial r of the group without
   * covariates, a textbook identity), t = r √((n−2)/(1−r²)), two-sided p, and Bonferroni as the FWER
   * correction: a stand-in of the right shape, not the service's permutation test.
   */
  const stageOutput = (): StageOutput => {
    const subs = ids.slice(0, 9).map((id) => subject(id) as SubjectResult);
    const grid = Array.from({ length: 21 }, (_, k) => k * 0.1);
    const betti = (d: number[][], t: number) => d.filter(([b, e]) => b <= t && (e === null || t < e)).length;
    const curves: CurveBand[] = [];
    for (const group of ['control', 'patient']) {
      const mine = subs.filter((s) => s.group === group);
      for (const [curve, f] of [
        ['betti0', (s: SubjectResult, t: number) => betti(s.diagrams[0] as number[][], t)],
        ['betti1', (s: SubjectResult, t: number) => betti(s.diagrams[1] as number[][], t)],
        [
          'euler',
          (s: SubjectResult, t: number) =>
            betti(s.diagrams[0] as number[][], t) - betti(s.diagrams[1] as number[][], t),
        ],
      ] as const) {
        const mean = grid.map((t) => mine.reduce((a, s) => a + f(s, t), 0) / mine.length);
        curves.push({
          group,
          curve,
          grid,
          mean,
          lower: mean.map((m) => m * 0.9),
          upper: mean.map((m) => m * 1.1),
        });
      }
    }
    const total = (s: SubjectResult) => s.diagrams[1].reduce((a, [b, e]) => a + ((e ?? b) - b), 0);
    const isPatient = subs.map((s) => (s.group === 'patient' ? 1 : 0));
    const test = (family: string, feature: string, node: string | null, values: number[]) => {
      const n = values.length;
      const mx = values.reduce((a, v) => a + v, 0) / n;
      const mg = isPatient.reduce((a: number, v) => a + v, 0) / n;
      let sxy = 0;
      let sxx = 0;
      let syy = 0;
      values.forEach((v, i) => {
        sxy += (v - mx) * (isPatient[i] - mg);
        sxx += (v - mx) ** 2;
        syy += (isPatient[i] - mg) ** 2;
      });
      const r = sxx > 0 ? sxy / Math.sqrt(sxx * syy) : 0;
      const t = r * Math.sqrt((n - 2) / Math.max(1e-12, 1 - r * r));
      const p = tTwoSidedP(t, n - 2);
      const row: Record<(typeof STATS_COLUMNS)[number], string | number | null> = {
        family,
        feature,
        node_or_point: node,
        contrast: 'patient - control',
        test: 't',
        statistic: t,
        df_num: 1,
        df: n - 2,
        p_parametric: p,
        p_uncorrected: p,
        p_fwer: p,
        q_fdr: p,
        effect_kind: 'partial_r',
        effect_size: r,
        effect_low: null,
        effect_high: null,
        partial_r: r,
        partial_eta_squared: r * r,
        n_per_group: 'control:5 patient:4',
        n_blocks: null,
        scheme: 'freedman-lane',
        permutation_mode: 'random',
        permutations: 999,
        seed: 42,
      };
      return row;
    };
    const nodeRows: Table['rows'] = [];
    for (const s of subs)
      for (const [measure, values] of Object.entries(s.nodeScores))
        values.forEach((v, node) =>
          nodeRows.push([s.id, node, `R${node + 1}`, NETWORKS[node % 4], measure, v]),
        );
    const statRows: Array<ReturnType<typeof test>> = [
      test(
        'features',
        'h1_count',
        null,
        subs.map((s) => s.diagrams[1].length),
      ),
      test('features', 'h1_total_persistence', null, subs.map(total)),
    ];
    for (const measure of ['strength', 'participation']) {
      const family = statRows.length;
      for (let node = 0; node < N; node++)
        statRows.push(
          test(
            `nodes:${measure}`,
            measure,
            `R${node + 1}`,
            subs.map((s) => s.nodeScores[measure][node] as number),
          ),
        );
      // Bonferroni over the family's nodes (a valid FWER bound).
      for (const row of statRows.slice(family)) row.p_fwer = Math.min(1, (row.p_uncorrected as number) * N);
    }
    return {
      grid,
      features: {
        columns: ['participant_id', 'group', 'age', 'h1_count', 'h1_total_persistence'],
        rows: subs.map((s, k) => [s.id, s.group, 20 + k * 3, s.diagrams[1].length, total(s)]),
      },
      nodeScores: { columns: ['participant_id', ...NODE_TABLE_COLUMNS], rows: nodeRows },
      groupCurves: curves,
      groupDiagrams: [],
      stats: { columns: [...STATS_COLUMNS], rows: statRows.map((r) => STATS_COLUMNS.map((c) => r[c])) },
      diagramTests: {
        columns: [...DIAGRAM_TEST_COLUMNS],
        rows: [
          [
            'H1',
            'wasserstein-2',
            'joint-loss',
            0.31,
            null,
            null,
            0.04,
            'control:5 patient:4',
            'random',
            999,
            42,
            null,
            'freedman-lane',
            'group',
          ],
        ],
      },
      embedding: subs.map((s, k) => ({
        subject: s.id,
        group: s.group,
        x: Math.cos(k),
        y: Math.sin(k) + (s.group === 'patient' ? 1 : 0),
        method: 'mds' as const,
      })),
    };
  };

  /** A finished run as the service's result assembly sees it. */
  const runView = (runId: string): RunView | null => {
    const run = runs.get(runId);
    if (!run) return null;
    const rep = report();
    return {
      runId,
      status: run.cancelled ? 'cancelled' : 'done',
      run: {
        cohortRoot: root,
        settings: run.req.settings,
        stats: run.req.stats,
        records: rep.subjects.map((s, index) => ({
          id: s.id,
          participant: s.participant,
          session: null,
          index,
          status: s.usable ? 'analysed' : 'excluded',
          reason: s.usable ? null : 'not square',
          key: s.usable ? s.id : null,
          matrixSha256: null,
          file: `${s.id}.tsv`,
          fileSha256: null,
        })),
      },
      provenance: {
        tool: 'loopwise',
        version: '0.1.0',
        engineVersion: 'fake',
        createdAt: '2026-01-01T00:00:00.000Z',
        settings: run.req.settings,
        inputHashes: Object.fromEntries(ids.slice(0, 9).map((id) => [id, 'ab'.repeat(32)])),
      },
      results: (run.output ??= stageOutput()),
      report: rep,
      // Only assembleSubjectResult reads the cache; the stand-in answers subjects itself.
      cache: null as unknown as FiltrationCache,
      source: null,
    };
  };

  const defaults: { settings: AnalysisSettings; stats: StatsSettings } = {
    settings: {
      input: 'correlation',
      transform: 'one-minus',
      maxDim: 1,
      cap: { kind: 'none' },
      representatives: true,
      persistenceFloor: 0.01,
      gridPoints: 100,
      gridRange: null,
      landscapeLevels: 3,
      dropRegions: [],
    },
    stats: { ...defaultStatsSettings(), groupColumn: 'group', permutations: 1000 },
  };

  const emit = (e: ProgressEvent) => {
    const run = runs.get(e.runId);
    if (run && e.phase !== 'export') run.last = e;
    for (const l of listeners) l(e);
  };

  const api: FakeApi = {
    calls,
    emit,
    async openCohort(req) {
      calls.push({ method: 'openCohort', args: [req] });
      return report();
    },
    async defaultSettings() {
      calls.push({ method: 'defaultSettings', args: [] });
      return structuredClone(defaults);
    },
    async startRun(req) {
      calls.push({ method: 'startRun', args: [req] });
      const runId = `run-${runs.size + 1}`;
      runs.set(runId, { req, cancelled: false, startedAt: new Date(0).toISOString(), last: null });
      const total = 9;
      let done = 0;
      const tick = () => {
        const run = runs.get(runId);
        if (!run || run.cancelled) return;
        done++;
        const base = { runId, total, reused: 0, elapsedMs: done * 20, failures: [] };
        if (done <= total) {
          emit({
            ...base,
            phase: 'filtrations',
            done,
            currentSubject: ids[done - 1],
            etaMs: (total - done) * 20,
            failures: [{ subject: 'sub-10', reason: 'not square' }],
          });
          setTimeout(tick, 20);
        } else {
          emit({ ...base, phase: 'done', done: total, currentSubject: null, etaMs: 0 });
        }
      };
      setTimeout(tick, 20);
      return { runId };
    },
    async cancelRun(runId) {
      calls.push({ method: 'cancelRun', args: [runId] });
      const run = runs.get(runId);
      if (run && !run.cancelled) {
        run.cancelled = true;
        emit({
          runId,
          phase: 'cancelled',
          done: 0,
          total: 9,
          reused: 0,
          currentSubject: null,
          elapsedMs: 0,
          etaMs: null,
          failures: [],
        });
      }
    },
    onProgress(listener) {
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
    async listRuns(): Promise<RunInfo[]> {
      calls.push({ method: 'listRuns', args: [] });
      return [...runs].map(([runId, r]) => ({
        runId,
        status: r.cancelled
          ? 'cancelled'
          : r.last?.phase === 'done' || r.last?.phase === 'failed'
            ? r.last.phase
            : 'running',
        startedAt: r.startedAt,
        request: { cohort: r.req.cohort, settings: r.req.settings, stats: r.req.stats, outDir: r.req.outDir },
        progress: r.last,
        exporting: null,
      }));
    },
    async runSummary(runId): Promise<RunSummary | null> {
      calls.push({ method: 'runSummary', args: [runId] });
      if (!runs.has(runId)) return null;
      return {
        runId,
        status: runs.get(runId)!.cancelled ? 'cancelled' : 'done',
        computed: 9,
        reused: 0,
        failures: [{ subject: 'sub-10', reason: 'not square' }],
        outDir: null,
      };
    },
    async cohortResults(runId) {
      calls.push({ method: 'cohortResults', args: [runId] });
      const view = runView(runId);
      return view ? assembleCohortResults(view) : null;
    },
    async regionEffects(runId, measure) {
      calls.push({ method: 'regionEffects', args: [runId, measure] });
      const view = runView(runId);
      return view ? assembleRegionEffects(view, measure) : null;
    },
    async regionValues(runId, measure, node) {
      calls.push({ method: 'regionValues', args: [runId, measure, node] });
      const view = runView(runId);
      return view ? assembleRegionValues(view, measure, node) : null;
    },
    async tablePage(runId, req) {
      calls.push({ method: 'tablePage', args: [runId, req] });
      const view = runView(runId);
      return view ? assembleTablePage(view, req) : null;
    },
    async subjectResult(runId, subjectId) {
      calls.push({ method: 'subjectResult', args: [runId, subjectId] });
      return runs.has(runId) ? subject(subjectId) : null;
    },
    async compare(runId, a, b) {
      calls.push({ method: 'compare', args: [runId, a, b] });
      // Scans only (the stand-in keeps no group filtrations), through the engine's own comparison functions.
      const side = (x: ComparisonSide): FiltrationSide => {
        const r = x.kind === 'scan' ? subject(x.id) : null;
        if (!runs.has(runId) || !r) {
          const e = new Error(`no ${x.kind} ${x.kind === 'scan' ? x.id : x.group} in run ${runId}`);
          e.name = 'ComparisonError';
          throw e;
        }
        return {
          side: x,
          label: r.id,
          group: r.group,
          diagrams: r.diagrams,
          representatives: r.representatives,
          nodeScores: Object.fromEntries(
            Object.entries(r.nodeScores).map(([m, v]) => [m, v.map((x) => x ?? NaN)]),
          ),
          curves: {},
        };
      };
      const [left, right] = [side(a), side(b)];
      const metric = wholeDiagramMetric(9);
      return {
        runId,
        a: left,
        b: right,
        grid: [],
        metric: metricName(metric),
        distances: diagramDistances(left.diagrams, right.diagrams, metric).map((distance, dimension) => ({
          dimension,
          distance,
        })),
        cycleMatches: matchCycles(left.representatives, right.representatives),
        nodeDifferences: Object.keys(left.nodeScores).flatMap((measure) =>
          rankedNodeDifferences(left.nodeScores[measure], right.nodeScores[measure]).map((d, k) => ({
            measure,
            rank: k + 1,
            node: d.node,
            label: `R${d.node + 1}`,
            network: NETWORKS[d.node % 4],
            a: d.a,
            b: d.b,
            difference: d.difference,
          })),
        ),
        positions: null,
      };
    },
    async exportRun(runId, outDir, overwrite) {
      calls.push({ method: 'exportRun', args: [runId, outDir, overwrite] });
      if (runId === 'run-failed') {
        // As the service's RunStateError: a run that did not finish has nothing to export.
        const e = new Error(`run ${runId} failed (statistics): nothing to export`);
        e.name = 'RunStateError';
        throw e;
      }
      if (outDir.endsWith('taken') && !overwrite) {
        // As the service's OutDirError, with the rule's code the app offers its way out by.
        const e = Object.assign(
          new Error(`${outDir} already holds results; choose another folder or allow replacing`),
          { code: 'finished-run' },
        );
        e.name = 'OutDirError';
        throw e;
      }
      return { files: [`${outDir}/features.tsv`] };
    },
  };
  return api;
}
