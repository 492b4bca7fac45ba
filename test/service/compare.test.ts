/**
 * Comparisons a finished run answers (two scans, a scan against its group's mean-matrix
 * filtration, two groups), checked against the run's own files and the engine: the distance is
 * the engine's diagramDistance on the two diagrams (itself checked against GUDHI and scipy in
 * test/engine/stats), a group's diagram is group-intervals.tsv, the scan's node scores are its rows
 * of nodes.tsv, and a percentile is the share of the group's features.tsv values (ties half).
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Comparison } from '../../electron/api.ts';
import { diagramDistance, finiteDiagram } from '../../electron/engine/stats/diagram-distance.ts';
import { createLoopwiseService } from '../../electron/service/service.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../../electron/service/settings.ts';
import { writeCohort } from './support.ts';

let root: string;
let outDir: string;
let runId: string;
const service = createLoopwiseService();

beforeAll(async () => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-compare-'));
  const cohort = join(root, 'cohort');
  writeCohort(cohort, { subjects: 12, n: 30, seed: 5 });
  outDir = join(root, 'out');
  ({ runId } = await service.startRun({
    cohort: { dir: cohort },
    settings: defaultAnalysisSettings(),
    stats: { ...defaultStatsSettings(), groupColumn: 'group', permutations: 99 },
    outDir,
    workers: 2,
  }));
  const summary = await service.waitForRun(runId);
  expect(summary.status).toBe('done');
}, 120_000);
afterAll(async () => {
  await service.close();
  rmSync(root, { recursive: true, force: true });
});

const tsv = (name: string) =>
  readFileSync(join(outDir, name), 'utf8')
    .trim()
    .split('\n')
    .map((l) => l.split('\t'));

describe('comparisons of a finished run', () => {
  it('two scans: the run’s own diagram distance per dimension, cycles matched, regions ranked', async () => {
    const results = await service.cohortResults(runId);
    const c: Comparison = await service.compare(
      runId,
      { kind: 'scan', id: 'sub-001' },
      { kind: 'scan', id: 'sub-002' },
    );
    // 12 scans: the whole-diagram tests use exact W2, and say so in diagram-tests.tsv.
    expect(c.metric).toBe('wasserstein-2');
    expect(results?.diagramMetric).toBe('wasserstein-2');
    expect(
      tsv('diagram-tests.tsv')
        .slice(1)
        .every((r) => r.includes('wasserstein-2')),
    ).toBe(true);
    const a = await service.subjectResult(runId, 'sub-001');
    const b = await service.subjectResult(runId, 'sub-002');
    expect(c.distances.map((d) => d.dimension)).toEqual([0, 1]);
    c.distances.forEach(({ dimension, distance }) => {
      const want = diagramDistance(
        finiteDiagram(a!.diagrams[dimension]),
        finiteDiagram(b!.diagrams[dimension]),
        { kind: 'wasserstein', p: 2 },
      );
      expect(distance).toBe(want);
    });
    expect(c.a.diagrams).toEqual(a!.diagrams);
    // Each scan's node scores are its rows of nodes.tsv.
    const nodes = tsv('nodes.tsv');
    const col = (name: string) => nodes[0].indexOf(name);
    const mine = nodes.filter((r) => r[0] === 'sub-002' && r[col('measure')] === 'h0_join_value');
    expect(mine).toHaveLength(30);
    mine.forEach((r) =>
      expect(c.b.nodeScores['h0_join_value'][Number(r[col('node')])]).toBeCloseTo(
        Number(r[col('value')]),
        12,
      ),
    );
    // Ranked by |b − a| within each measure, 30 regions each, labelled 1-based without a node table.
    const join = c.nodeDifferences.filter((d) => d.measure === 'h0_join_value');
    expect(join).toHaveLength(30);
    for (let k = 1; k < join.length; k++)
      expect(Math.abs(join[k - 1].difference ?? 0)).toBeGreaterThanOrEqual(Math.abs(join[k].difference ?? 0));
    expect(join.find((d) => d.node === 0)?.label).toBe('region 1');
    // A cycle matched with overlap 1 runs through exactly the same regions.
    expect(c.cycleMatches).toHaveLength(c.a.representatives.length);
    for (const m of c.cycleMatches.filter((x) => x.overlap === 1))
      expect([...c.b.representatives[m.b!].nodes].sort()).toEqual([...c.a.representatives[m.a].nodes].sort());
    // Curves on the run's grid, Euler included (the scans' matrices are at hand).
    expect(c.grid).toEqual(results?.grid);
    expect(Object.keys(c.a.curves).sort()).toEqual(['betti0', 'betti1', 'euler']);
    const curves = tsv('curves.tsv');
    const betti1 = curves.filter((r) => r[0] === 'sub-001' && r[1] === 'betti1').map((r) => Number(r[4]));
    expect(c.a.curves['betti1']).toEqual(betti1);
    const euler = curves.filter((r) => r[0] === 'sub-001' && r[1] === 'euler').map((r) => Number(r[4]));
    expect(c.a.curves['euler']).toEqual(euler);
    expect(c.positions).toBeNull();
  });

  it('a scan against its group’s mean: the group diagram is group-intervals.tsv; percentiles from features.tsv', async () => {
    const c = await service.compare(
      runId,
      { kind: 'scan', id: 'sub-003' },
      { kind: 'group', group: 'control' },
    );
    expect(c.a.group).toBe('control');
    expect(c.b.label).toBe('control: mean of 6 scans');
    const rows = tsv('group-intervals.tsv').filter((r) => r[0] === 'control');
    for (const d of [0, 1]) {
      const want = rows
        .filter((r) => r[1] === String(d))
        .map((r) => [Number(r[2]), r[3] === 'inf' ? null : Number(r[3])]);
      expect(c.b.diagrams[d].map(([x, y]) => [x, y === null ? null : Number(y)])).toEqual(
        want.map(([x, y]) => [expect.closeTo(x as number, 12), y === null ? null : expect.closeTo(y, 12)]),
      );
    }
    // Cycles of the group filtration carry their regions as group-intervals.tsv lists them.
    const h1 = rows.filter((r) => r[1] === '1');
    expect(c.b.representatives.map((r) => r.nodes.join(' '))).toEqual(h1.map((r) => r[4]));
    // Percentile ranks within the 6 control scans of features.tsv.
    const features = tsv('features.tsv');
    const f = features[0].indexOf('h1_count');
    const g = features[0].indexOf('group');
    const values = features
      .slice(1)
      .filter((r) => r[g] === 'control')
      .map((r) => Number(r[f]));
    const x = Number(features.find((r) => r[0] === 'sub-003')![f]);
    const below = values.filter((v) => v < x).length;
    const equal = values.filter((v) => v === x).length;
    const pos = c.positions!.find((p) => p.feature === 'h1_count')!;
    expect(pos.value).toBe(x);
    expect(pos.groupScans).toBe(6);
    expect(pos.percentile).toBeCloseTo((100 * (below + equal / 2)) / 6, 12);
    expect(c.positions!.some((p) => p.feature === 'age')).toBe(false);
  });

  it('two groups’ mean-matrix filtrations, and clear errors for what the run does not hold', async () => {
    const c = await service.compare(
      runId,
      { kind: 'group', group: 'control' },
      { kind: 'group', group: 'patient' },
    );
    expect(c.distances).toHaveLength(2);
    expect(c.distances.every((d) => d.distance > 0)).toBe(true);
    expect(Object.keys(c.a.curves)).toContain('euler');
    await expect(
      service.compare(runId, { kind: 'scan', id: 'sub-999' }, { kind: 'group', group: 'control' }),
    ).rejects.toThrow(/no scan "sub-999"/);
    await expect(
      service.compare(runId, { kind: 'scan', id: 'sub-001' }, { kind: 'group', group: 'x' }),
    ).rejects.toThrow(/no group-level filtration for group "x" \(groups: control, patient\)/);
    await expect(
      service.compare('run-404', { kind: 'scan', id: 'sub-001' }, { kind: 'scan', id: 'sub-002' }),
    ).rejects.toThrow(/no run run-404/);
  });
});
