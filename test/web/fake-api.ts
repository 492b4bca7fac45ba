/**
 * A small stand-in for the service, for the doors' tests only (never shipped): a ten-subject,
 * sixteen-region cohort whose diagrams come from the real engine on seeded random correlation
 * matrices, so the shapes the renderer sees are the contract's real shapes.
 */
import type {
  AnalysisSettings,
  CohortReport,
  CohortResults,
  ComparisonSide,
  CurveBand,
  FiltrationSide,
  LoopwiseApi,
  ProgressEvent,
  RunSummary,
  StartRunRequest,
  StatsSettings,
  SubjectResult,
} from '../../electron/api.ts';
import { defaultStatsSettings } from '../../electron/contract.ts';
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
  const runs = new Map<string, { req: StartRunRequest; cancelled: boolean }>();

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

  const results = (runId: string): CohortResults => {
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
    return {
      runId,
      provenance: {
        tool: 'loopwise',
        version: '0.1.0',
        engineVersion: 'fake',
        createdAt: '2026-01-01T00:00:00.000Z',
        settings: runs.get(runId)?.req.settings ?? defaults.settings,
        inputHashes: Object.fromEntries(subs.map((s) => [s.id, 'ab'.repeat(32)])),
      },
      features: {
        columns: ['subject', 'group', 'age', 'h1_count', 'h1_total_persistence'],
        rows: subs.map((s, k) => [s.id, s.group, 20 + k * 3, s.diagrams[1].length, total(s)]),
      },
      nodeScores: {
        columns: ['subject', 'node', 'label', 'network', 'measure', 'value'],
        rows: subs.flatMap((s) =>
          Object.entries(s.nodeScores).flatMap(([measure, values]) =>
            values.map((v, node) => [s.id, node, `R${node + 1}`, NETWORKS[node % 4], measure, v]),
          ),
        ),
      },
      groupCurves: curves,
      groupDiagrams: [],
      stats: {
        columns: ['feature', 'test', 'statistic', 'effect', 'p', 'p_fdr'],
        rows: [
          ['h1_count', 'permutation t', 1.2, 0.8, 0.21, 0.3],
          ['h1_total_persistence', 'permutation t', 2.9, 1.9, 0.004, 0.02],
        ],
      },
      diagramTests: {
        columns: ['dimension', 'distance', 'statistic', 'p'],
        rows: [[1, 'wasserstein-2', 0.31, 0.04]],
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
      runs.set(runId, { req, cancelled: false });
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
      return runs.has(runId) ? results(runId) : null;
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
          nodeScores: r.nodeScores,
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
        const e = new Error(`${outDir} already holds results; choose another folder or allow replacing`);
        e.name = 'OutDirError';
        throw e;
      }
      return { files: [`${outDir}/features.tsv`] };
    },
  };
  return api;
}
