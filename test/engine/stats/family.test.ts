// A family through to stats.tsv rows, diagram tests to diagram-tests.tsv rows, and a map to embedding entries.
import { describe, expect, it } from 'vitest';
import { createRng } from '../../../electron/engine/random.ts';
import { buildDesign } from '../../../electron/engine/stats/design.ts';
import { diagramDistanceMatrix } from '../../../electron/engine/stats/diagram-distance.ts';
import { permanova } from '../../../electron/engine/stats/diagram-tests.ts';
import { testFamily, type FeatureFamily } from '../../../electron/engine/stats/family.ts';
import { bhQValues } from '../../../electron/engine/stats/multiple.ts';
import { classicalMds } from '../../../electron/engine/stats/embedding.ts';
import {
  diagramTestsTable,
  DIAGRAM_TEST_COLUMNS,
  embeddingEntries,
  statsTable,
  STATS_COLUMNS,
} from '../../../electron/engine/stats/tables.ts';

const rng = createRng(12);
const n = 18;
const subjects = Array.from({ length: n }, (_, i) => ({
  id: `sub-${i}`,
  covariates: { dx: i % 3 === 0 ? 'patient' : i % 3 === 1 ? 'control' : 'sibling', age: 20 + ((i * 7) % 30) },
}));
// The family lists subjects in another order than the participants table.
const order = [...subjects.map((s) => s.id)].reverse();
const family: FeatureFamily = {
  name: 'betti1-curve',
  subjects: order,
  features: Array.from({ length: 6 }, (_, j) => ({
    feature: 'betti1',
    nodeOrPoint: j * 0.1,
    values: order.map(
      (id) => (subjects.find((s) => s.id === id)!.covariates.dx === 'patient' ? j : 0) + rng.next(),
    ),
  })),
};

describe('testFamily and stats.tsv', () => {
  const design = buildDesign(subjects, {
    groupColumn: 'dx',
    covariates: ['age'],
    contrasts: [{ kind: 'pair', a: 'patient', b: 'control' }, { kind: 'all-levels' }],
  });
  const results = design.contrasts.map((c) =>
    testFamily(design, c, family, { seed: 3, permutations: 499, bootstrap: 300 }),
  );
  const { table, warnings } = statsTable(results);

  it('one row per feature and contrast, with family, contrast, df, seed and permutation count', () => {
    expect(table.columns).toEqual(STATS_COLUMNS);
    expect(table.rows).toHaveLength(12);
    const col = (name: string) => table.columns.indexOf(name);
    for (const row of table.rows) {
      expect(row[col('family')]).toBe('betti1-curve');
      expect(row[col('seed')]).toBe(3);
      expect(row[col('permutations')]).toBe(499);
      expect(row[col('permutation_mode')]).toBe('random');
      expect(row[col('scheme')]).toBe('freedman-lane');
      expect(row[col('df')]).toBe(n - 4);
    }
    expect(table.rows[0][col('contrast')]).toBe('patient - control');
    expect(table.rows[0][col('test')]).toBe('t');
    expect(table.rows[0][col('n_per_group')]).toBe('patient:6 control:6');
    expect(table.rows[6][col('test')]).toBe('F');
    expect(table.rows[6][col('df_num')]).toBe(2);
    expect(table.rows[6][col('effect_kind')]).toBe('partial_eta_squared');
    expect(table.rows[6][col('effect_low')]).toBeNull();
    expect(table.rows[6][col('n_per_group')]).toBe('control:6 patient:6 sibling:6');
    expect(warnings).toEqual([]);
  });

  it('q is BH over the family; d is the age-adjusted difference over the residual SD, aligned by id', () => {
    const p = results[0].permutation.pUncorrected;
    expect(Array.from(results[0].qFdr)).toEqual(Array.from(bhQValues(p)));
    const col = (name: string) => table.columns.indexOf(name);
    expect(table.rows[0][col('effect_kind')]).toBe('adjusted_d');
    family.features.forEach((f, j) => {
      // Least squares by hand on the design rows: β̂ from the coefficients fitGlm reports, residuals from them.
      const y = design.ids.map((id) => f.values[order.indexOf(id)] as number);
      const beta = results[0].glm.beta[j];
      let rss = 0;
      y.forEach((v, i) => {
        let fit = 0;
        design.columns.forEach((c, k) => (fit += beta[k] * c[i]));
        rss += (v - fit) ** 2;
      });
      const mse = rss / (y.length - design.columns.length);
      // patient − control: the patient dummy's coefficient.
      const k = design.columnNames.indexOf('dx[patient]');
      expect(table.rows[j][col('effect_size')]).toBeCloseTo(beta[k] / Math.sqrt(mse), 10);
      const t = table.rows[j][col('statistic')] as number;
      expect(table.rows[j][col('partial_r')]).toBeCloseTo(t / Math.sqrt(t * t + n - 4), 12);
      expect(table.rows[j][col('partial_eta_squared')]).toBeCloseTo((t * t) / (t * t + n - 4), 12);
      const lo = table.rows[j][col('effect_low')] as number;
      const hi = table.rows[j][col('effect_high')] as number;
      expect(lo).toBeLessThan(hi);
    });
    // Feature 0 has no group effect by construction, feature 5 a large one.
    expect(results[0].permutation.pFwer[5]).toBeLessThan(0.01);
  });

  it('a subject of the design missing from the family is a clear error', () => {
    const partial = { ...family, subjects: family.subjects.slice(1), features: [] };
    expect(() => testFamily(design, design.contrasts[0], partial, { seed: 1 })).toThrow(
      /family 'betti1-curve' has no values for subject 'sub-17'/,
    );
  });
});

describe('diagram-tests.tsv', () => {
  it('rows carry metric, test, p, permutations, seed and the few-relabellings warning', () => {
    const diagrams = Array.from({ length: 4 }, (_, i) => [
      [0, 1 + i] as [number, number],
      [0.2, 0.5] as [number, number],
    ]);
    const d = diagramDistanceMatrix(diagrams, { kind: 'wasserstein', p: 2 });
    const res = permanova(d, Int32Array.of(0, 0, 1, 1), { seed: 4, permutations: 100 });
    const table = diagramTestsTable([
      {
        family: 'H1',
        metric: 'wasserstein-2',
        result: res,
        groupSizes: [
          { level: 'a', n: 2 },
          { level: 'b', n: 2 },
        ],
      },
    ]);
    expect(table.columns).toEqual(DIAGRAM_TEST_COLUMNS);
    expect(table.rows[0].slice(0, 3)).toEqual(['H1', 'wasserstein-2', 'permanova']);
    expect(table.rows[0][table.columns.indexOf('scheme')]).toBe('label-permutation');
    const col = (name: string) => table.columns.indexOf(name);
    expect(table.rows[0][col('permutations')]).toBe(6);
    expect(table.rows[0][col('permutation_mode')]).toBe('exact');
    expect(table.rows[0][col('seed')]).toBe(4);
    expect(table.rows[0][col('warning')]).toMatch(/smallest attainable p is 0\.167/);
  });
});

describe('embedding entries', () => {
  it('pair subjects, groups and MDS coordinates', () => {
    const d = { n: 3, values: Float64Array.of(0, 3, 4, 3, 0, 5, 4, 5, 0) };
    const emb = classicalMds(d);
    const rows = embeddingEntries(['a', 'b', 'c'], ['x', null, 'y'], emb);
    expect(rows[1]).toEqual({
      subject: 'b',
      group: null,
      x: emb.coordinates[1][0],
      y: emb.coordinates[1][1],
      method: 'mds',
    });
    // A 3-4-5 triangle is Euclidean in the plane: MDS recovers its side lengths.
    const dist = (i: number, j: number) => Math.hypot(rows[i].x - rows[j].x, rows[i].y - rows[j].y);
    expect(dist(0, 1)).toBeCloseTo(3, 10);
    expect(dist(0, 2)).toBeCloseTo(4, 10);
    expect(dist(1, 2)).toBeCloseTo(5, 10);
    expect(() => embeddingEntries(['a'], ['x'], emb)).toThrow(/3 points for 1 subjects/);
  });
});
