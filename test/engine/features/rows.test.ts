/**
 * The per-subject feature row and the tables built from it. Values are checked against the GUDHI
 * goldens (entropy, landscape norms, Euler integral) on the golden grid, and against the
 * component functions for the Betti areas.
 */
import { describe, expect, it } from 'vitest';
import type { NodeInfo } from '../../../electron/api.ts';
import {
  FEATURE_COLUMNS,
  NODE_MEASURES,
  featureColumnNames,
} from '../../../electron/engine/features/columns.ts';
import {
  featureTable,
  networkScoreTable,
  nodeScoreTable,
  subjectFeatureRow,
  subjectNodeScores,
} from '../../../electron/engine/features/rows.ts';
import { computePersistence } from '../../../electron/engine/persistence.ts';
import { curves, distancesOf } from './goldens.ts';

const settings = (maxDim: 1 | 2) => ({ maxDim, persistenceFloor: 0.05, landscapeLevels: 3 });

describe('feature column names', () => {
  it('every documented pattern expands, with no duplicates', () => {
    const names = featureColumnNames(2, 3);
    expect(new Set(names).size).toBe(names.length);
    expect(names).toContain('h2_entropy_finite');
    expect(names).toContain('landscape1_3_l2');
    expect(names.at(-1)).toBe('euler_area');
    // one per-dim pattern without {k}: 3 dims; two with {k}: 3 dims × 3 levels; one global
    const perDim = FEATURE_COLUMNS.filter(
      (c) => c.pattern.includes('{d}') && !c.pattern.includes('{k}'),
    ).length;
    expect(names.length).toBe(3 * perDim + 2 * 3 * 3 + 1);
    for (const c of [...FEATURE_COLUMNS, ...NODE_MEASURES]) expect(c.description.length).toBeGreaterThan(10);
  });
});

for (const c of curves.cases) {
  describe(`feature row of ${c.name}`, () => {
    const d = distancesOf(c);
    const r = computePersistence(d, { maxDim: c.maxDim, representatives: true });
    const row = subjectFeatureRow(r, c.grid, settings(c.maxDim), d);

    it('has exactly the documented columns', () => {
      expect(Object.keys(row)).toEqual(featureColumnNames(c.maxDim, 3));
    });

    it('entropy, landscape norms and the Euler integral agree with GUDHI / NumPy', () => {
      for (const dg of c.dims) {
        const e = row[`h${dg.dim}_entropy_finite`];
        if (dg.entropy === null) expect(e).toBeNull();
        else expect(e).toBeCloseTo(dg.entropy, 10);
        for (let k = 1; k <= 3; k++) {
          expect(row[`landscape${dg.dim}_${k}_l1`]).toBeCloseTo(dg.landscape_l1[k - 1], 9);
          expect(row[`landscape${dg.dim}_${k}_l2`]).toBeCloseTo(dg.landscape_l2[k - 1], 9);
        }
        expect(row[`h${dg.dim}_count`]).toBe(dg.stats.count);
        expect(row[`h${dg.dim}_count_essential`]).toBe(dg.stats.count_essential);
      }
      expect(row['euler_area']).toBeCloseTo(c.eulerArea, 9);
    });
  });
}

describe('tables', () => {
  const c = curves.cases[0];
  const d = distancesOf(c);
  const r = computePersistence(d, { maxDim: 1, representatives: true });

  it('featureTable: subject first, nulls for undefined values, one row per subject', () => {
    const row = subjectFeatureRow(r, c.grid, settings(1)); // no distances → euler_area null
    const t = featureTable([
      { subject: 'sub-01', features: row },
      { subject: 'sub-02', features: row },
    ]);
    expect(t.columns[0]).toBe('subject');
    expect(t.columns.slice(1)).toEqual(featureColumnNames(1, 3));
    expect(t.rows.length).toBe(2);
    expect(t.rows[0][0]).toBe('sub-01');
    expect(t.rows[0][t.columns.indexOf('euler_area')]).toBeNull();
    for (const v of t.rows[0].slice(1)) expect(v === null || Number.isFinite(v)).toBe(true);
  });

  it('node scores: every documented measure, and h1_weighted_norm sums to the mean cycle length', () => {
    const scores = subjectNodeScores(r, { persistenceFloor: 0.05 });
    expect(Object.keys(scores)).toEqual(NODE_MEASURES.map((m) => m.pattern));
    // Σ_v h1_weighted(v) = Σ_c l_c |nodes(c)|, so Σ_v norm = (Σ_c l_c |c|) / Σ_c l_c.
    const reps = r.representatives!;
    const total = reps.reduce((s, x) => s + (x.death - x.birth), 0);
    const weightedSize = reps.reduce((s, x) => s + (x.death - x.birth) * x.nodes.length, 0);
    const sumNorm = scores['h1_weighted_norm'].reduce((s, x) => s + x, 0);
    expect(sumNorm).toBeCloseTo(weightedSize / total, 12);
    const above = reps.filter((x) => x.death - x.birth >= 0.05).length;
    expect(Math.max(...scores['h1_cycle_count_above_floor'])).toBeLessThanOrEqual(above);
    const noReps = subjectNodeScores(computePersistence(d, { maxDim: 1 }), { persistenceFloor: 0 });
    expect(Object.keys(noReps)).toEqual(['h0_join_value', 'h0_birth_component_lifetime']);
  });

  it('node-score table (long form) and network means', () => {
    const nodes: NodeInfo[] = Array.from({ length: 3 }, (_, i) => ({
      index: i,
      label: `R${i}`,
      network: i < 2 ? 'DMN' : null,
      x: null,
      y: null,
      z: null,
    }));
    const entries = [{ subject: 's1', scores: { h0_join_value: [0, 1, NaN] } }];
    const t = nodeScoreTable(entries, nodes);
    expect(t.columns).toEqual(['subject', 'node', 'label', 'network', 'measure', 'value']);
    expect(t.rows).toEqual([
      ['s1', 0, 'R0', 'DMN', 'h0_join_value', 0],
      ['s1', 1, 'R1', 'DMN', 'h0_join_value', 1],
      ['s1', 2, 'R2', null, 'h0_join_value', null],
    ]);
    expect(nodeScoreTable(entries, null).rows[0]).toEqual(['s1', 0, null, null, 'h0_join_value', 0]);
    expect(networkScoreTable(entries, nodes).rows).toEqual([['s1', 'DMN', 'h0_join_value', 0.5, 2]]);
    expect(networkScoreTable(entries, null).rows).toEqual([]);
  });

  it('a capped subject: essential classes are counted apart and clipped at the cap for node weights', () => {
    // correlation case: H1 [0.803, 0.869) and [0.830, 0.912) outlive a cap at 0.85, and two H0
    // merges (0.853, 0.893) come after it (golden diagrams).
    const cc = curves.cases.find((x) => x.name === 'correlation-1-minus-r')!;
    const dc = distancesOf(cc);
    const cap = 0.85;
    const rc = computePersistence(dc, {
      maxDim: 1,
      cap: { kind: 'distance', value: cap },
      representatives: true,
    });
    const essential = rc.diagrams[1].filter((iv) => iv.death === Infinity).length;
    expect(essential).toBeGreaterThan(0); // the cap leaves loops open: the case this test is about
    const row = subjectFeatureRow(rc, cc.grid, settings(1), dc);
    expect(row['h1_count_essential']).toBe(essential);
    expect(row['h1_count_finite']).toBe(rc.diagrams[1].length - essential);
    expect(row['h0_count_essential']).toBeGreaterThan(1); // three components at the cap
    const scores = subjectNodeScores(rc, { persistenceFloor: 0 });
    const total = rc.representatives!.reduce((s, x) => s + (Math.min(x.death, cap) - x.birth), 0);
    const weightedSize = rc.representatives!.reduce(
      (s, x) => s + (Math.min(x.death, cap) - x.birth) * x.nodes.length,
      0,
    );
    expect(scores['h1_weighted'].every(Number.isFinite)).toBe(true);
    expect(scores['h1_weighted'].reduce((a, b) => a + b, 0)).toBeCloseTo(weightedSize, 12);
    expect(scores['h1_weighted_norm'].reduce((a, b) => a + b, 0)).toBeCloseTo(weightedSize / total, 12);
    // nodes outside the largest component at the cap have no join value
    expect(scores['h0_join_value'].some(Number.isNaN)).toBe(true);
  });
});
