/**
 * The results queries of the service (api.ts: cohortResults, subjectResult, regionEffects,
 * regionValues, tablePage) on real runs, checked against the tables the same run wrote to disk,
 * read and reduced by pandas (Debian /usr/bin/python3, python3-pandas; skipped when absent):
 * every region present and ranked as stats.tsv says, means equal to pandas' groupby mean of
 * nodes.tsv, a region's values per scan equal to nodes.tsv's rows, a subject's node scores equal
 * to its nodes.tsv rows, and table pages equal to pandas' filter + stable sort + slice.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { LoopwiseApi, StartRunRequest } from '../../electron/api.ts';
import { createLoopwiseService } from '../../electron/service/service.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../../electron/service/settings.ts';
import { writeCohort } from './support.ts';

const PYTHON = '/usr/bin/python3';
const hasPandas = existsSync(PYTHON) && spawnSync(PYTHON, ['-c', 'import pandas']).status === 0;
const N = 20;
const SUBJECTS = 14;

let root: string;
const service = createLoopwiseService({ workers: 2 });

function python(script: string, input: unknown): unknown {
  const r = spawnSync(PYTHON, ['-c', script], { input: JSON.stringify(input), encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`python3 failed: ${r.stderr}`);
  return JSON.parse(r.stdout);
}

async function run(cohort: string, out: string): Promise<string> {
  const req: StartRunRequest = {
    cohort: { dir: cohort },
    settings: defaultAnalysisSettings(),
    stats: { ...defaultStatsSettings(), groupColumn: 'group', permutations: 99, seed: 7 },
    outDir: out,
  };
  const { runId } = await service.startRun(req);
  const summary = await service.waitForRun(runId);
  expect(summary.status).toBe('done');
  return runId;
}

let plain: { runId: string; out: string };
let labelled: { runId: string; out: string };

beforeAll(async () => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-queries-'));
  // Our seeded generator (support.ts); the first cohort has no node table.
  writeCohort(join(root, 'plain'), { subjects: SUBJECTS, n: N, seed: 21 });
  plain = { out: join(root, 'out-plain'), runId: '' };
  plain.runId = await run(join(root, 'plain'), plain.out);
  // The same kind of cohort with a node table: labels and two networks.
  writeCohort(join(root, 'labelled'), { subjects: SUBJECTS, n: N, seed: 22 });
  writeFileSync(
    join(root, 'labelled', 'nodes.tsv'),
    [
      'label\tnetwork',
      ...Array.from({ length: N }, (_, i) => `R_${i}\t${i < N / 2 ? 'visual' : 'motor'}`),
    ].join('\n') + '\n',
  );
  labelled = { out: join(root, 'out-labelled'), runId: '' };
  labelled.runId = await run(join(root, 'labelled'), labelled.out);
}, 240_000);

afterAll(async () => {
  await service.close();
  rmSync(root, { recursive: true, force: true });
});

describe('results queries', () => {
  it('answers cohortResults without the long tables, naming the node measures and features it has', async () => {
    const r = (await service.cohortResults(plain.runId))!;
    expect(r).not.toHaveProperty('nodeScores');
    expect(r).not.toHaveProperty('stats');
    expect(r.nodeMeasures).toContain('h1_weighted');
    expect(r.featureNames[0]).toBe('h0_count');
    expect(r.features.columns.slice(r.features.columns.length - r.featureNames.length)).toEqual(
      r.featureNames,
    );
    expect(r.groupColumn).toBe('group');
    expect(r.featureTests!.every((t) => t.family === 'features')).toBe(true);
    expect(r.statsFamilies!.map((f) => f.family)).toContain('nodes:h1_weighted');
    // The typed rows carry the file's columns and nothing else.
    expect(Object.keys(r.featureTests![0])).toEqual([
      'family',
      'feature',
      'node_or_point',
      'contrast',
      'test',
      'statistic',
      'df_num',
      'df',
      'p_parametric',
      'p_uncorrected',
      'p_fwer',
      'q_fdr',
      'effect_kind',
      'effect_size',
      'effect_low',
      'effect_high',
      'partial_r',
      'partial_eta_squared',
      'n_per_group',
      'n_blocks',
      'scheme',
      'permutation_mode',
      'permutations',
      'seed',
    ]);
  });

  it.skipIf(!hasPandas)(
    'ranks every region by |effect_size| of stats.tsv, with means equal to pandas’ groupby of nodes.tsv',
    async () => {
      for (const { runId, out } of [plain, labelled]) {
        const e = (await service.regionEffects(runId, 'h1_weighted'))!;
        expect(e.regions).toHaveLength(N);
        expect(new Set(e.regions.map((r) => r.node)).size).toBe(N);
        const expected = python(
          `
import json, sys, pandas as pd
a = json.load(sys.stdin)
nodes = pd.read_csv(a['nodes'], float_precision='round_trip', sep='\\t')
m = nodes[nodes.measure == 'h1_weighted'].groupby('node')['value'].mean()
st = pd.read_csv(a['stats'], sep='\\t', keep_default_na=False, na_values=['NA'], dtype={'node_or_point': str})
st = st[st.family == 'nodes:h1_weighted']
print(json.dumps({'mean': {int(k): float(v) for k, v in m.items()},
                  'rows': [[str(r.node_or_point), None if pd.isna(r.effect_size) else float(r.effect_size), float(r.p_fwer)] for r in st.itertuples()]}))
`,
          { nodes: join(out, 'nodes.tsv'), stats: join(out, 'stats.tsv') },
        ) as { mean: Record<number, number>; rows: Array<[string, number | null, number]> };
        for (const r of e.regions) expect(r.mean).toBeCloseTo(expected.mean[r.node], 12);
        // Each tested region carries its stats.tsv row (matched by label, or by 0-based index without a node table).
        expect(e.tested).toBe(expected.rows.length);
        for (const [nodeOrPoint, size, p] of expected.rows) {
          const r = e.regions.find(
            (x) => (runId === plain.runId ? String(x.node) : x.label) === nodeOrPoint,
          )!;
          expect(r.tested).toBe(true);
          expect(r.effect_size).toBeCloseTo(size!, 12);
          expect(r.p_fwer).toBeCloseTo(p, 12);
          expect(r.significant).toBe(p < 0.05);
        }
        const tested = e.regions.filter((r) => r.tested).map((r) => Math.abs(r.effect_size ?? -1));
        expect(tested).toEqual([...tested].sort((x, y) => y - x));
        // Tested regions first, then the untested ones.
        expect(e.regions.map((r) => r.tested)).toEqual(e.regions.map((_, k) => k < e.tested));
      }
    },
  );

  it('names regions 1-based "region k" without a node table, and by label with one', async () => {
    const plainEffects = (await service.regionEffects(plain.runId, 'h1_weighted'))!;
    for (const r of plainEffects.regions) {
      expect(r.number).toBe(r.node + 1);
      expect(r.label).toBe(`region ${r.node + 1}`);
    }
    expect(plainEffects.networks).toBeNull();
    const named = (await service.regionEffects(labelled.runId, 'h1_weighted'))!;
    for (const r of named.regions)
      expect([r.label, r.network]).toEqual([`R_${r.node}`, r.node < N / 2 ? 'visual' : 'motor']);
    expect(named.networks!.map((n) => [n.network, n.regions]).sort()).toEqual([
      ['motor', N / 2],
      ['visual', N / 2],
    ]);
    expect(await service.regionEffects(plain.runId, 'no_such_measure')).toBeNull();
  });

  it.skipIf(!hasPandas)(
    'gives one region’s values per scan and a subject’s node scores as nodes.tsv holds them',
    async () => {
      const node = 7;
      const v = (await service.regionValues(plain.runId, 'h0_join_value', node))!;
      const fromFile = python(
        `
import json, sys, pandas as pd
a = json.load(sys.stdin)
nodes = pd.read_csv(a['nodes'], float_precision='round_trip', sep='\\t', keep_default_na=False, na_values=['NA'])
parts = pd.read_csv(a['participants'], sep='\\t')
sel = nodes[(nodes.measure == 'h0_join_value') & (nodes.node == a['node'])].merge(parts, on='participant_id')
print(json.dumps([[r.participant_id, r.group, None if pd.isna(r.value) else float(r.value)] for r in sel.itertuples()]))
`,
        { nodes: join(plain.out, 'nodes.tsv'), participants: join(root, 'plain', 'participants.tsv'), node },
      ) as Array<[string, string, number | null]>;
      expect(v.values.map((x) => [x.subject, x.group, x.value])).toEqual(fromFile);
      expect([v.number, v.label, v.groupColumn]).toEqual([8, 'region 8', 'group']);
      expect(await service.regionValues(plain.runId, 'h0_join_value', N)).toBeNull();

      const s = (await service.subjectResult(plain.runId, 'sub-003'))!;
      const own = python(
        `
import json, sys, pandas as pd
a = json.load(sys.stdin)
nodes = pd.read_csv(a['nodes'], float_precision='round_trip', sep='\\t', keep_default_na=False, na_values=['NA'])
mine = nodes[nodes.participant_id == 'sub-003']
print(json.dumps({m: [None if pd.isna(v) else float(v) for v in g.sort_values('node')['value']] for m, g in mine.groupby('measure', sort=False)}))
`,
        { nodes: join(plain.out, 'nodes.tsv') },
      ) as Record<string, Array<number | null>>;
      expect(Object.keys(s.nodeScores).sort()).toEqual(Object.keys(own).sort());
      for (const m of Object.keys(own)) expect(s.nodeScores[m]).toEqual(own[m]);
    },
  );

  it.skipIf(!hasPandas)(
    'pages a table filtered and sorted as pandas does (stable, missing values last)',
    async () => {
      const api: LoopwiseApi = service;
      const page = (await api.tablePage(plain.runId, {
        table: 'stats',
        offset: 5,
        limit: 12,
        equals: { family: 'nodes:h1_weighted' },
        sort: { column: 'p_uncorrected', descending: false },
      }))!;
      const byPandas = python(
        `
import json, sys, pandas as pd
a = json.load(sys.stdin)
st = pd.read_csv(a['stats'], sep='\\t', keep_default_na=False, na_values=['NA'], dtype={'node_or_point': str})
sel = st[st.family == 'nodes:h1_weighted'].sort_values('p_uncorrected', kind='stable', na_position='last')
print(json.dumps({'total': len(sel), 'nodes': list(sel['node_or_point'].iloc[5:17])}))
`,
        { stats: join(plain.out, 'stats.tsv') },
      ) as { total: number; nodes: string[] };
      expect(page.total).toBe(byPandas.total);
      const nodeAt = page.columns.indexOf('node_or_point');
      expect(page.rows.map((r) => String(r[nodeAt]))).toEqual(byPandas.nodes);

      const filtered = (await api.tablePage(plain.runId, {
        table: 'nodes',
        offset: 0,
        limit: 5000,
        filter: 'SUB-002',
        sort: { column: 'value', descending: true },
      }))!;
      const rows = python(
        `
import json, sys, pandas as pd
a = json.load(sys.stdin)
n = pd.read_csv(a['nodes'], float_precision='round_trip', sep='\\t', keep_default_na=False, na_values=['NA'])
sel = n[n.participant_id.str.lower().str.contains('sub-002')].sort_values('value', ascending=False, kind='stable', na_position='last')
print(json.dumps({'total': len(sel), 'first': [[r.node, r.measure] for r in sel.head(30).itertuples()]}))
`,
        { nodes: join(plain.out, 'nodes.tsv') },
      ) as { total: number; first: Array<[number, string]> };
      expect(filtered.total).toBe(rows.total);
      const [nodeCol, measureCol] = ['node', 'measure'].map((c) => filtered.columns.indexOf(c));
      // Equal values keep file order in both (stable sorts).
      expect(filtered.rows.slice(0, 30).map((r) => [r[nodeCol], r[measureCol]])).toEqual(rows.first);
      await expect(
        api.tablePage(plain.runId, {
          table: 'stats',
          offset: 0,
          limit: 5,
          sort: { column: 'nope', descending: false },
        }),
      ).rejects.toThrow(/no column nope/);
    },
  );
});
