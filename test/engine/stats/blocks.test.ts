// Exchangeability blocks: the restricted permutation p-values against brute-force enumeration
// written independently here (the literal Freedman–Lane algorithm over every permutation of the
// set; Freedman & Lane 1983; Winkler et al. 2014 NeuroImage 92 and 2015 NeuroImage 123), the
// design's guard rails, and the distance-based regression (McArdle & Anderson 2001) against
// PERMANOVA and against the univariate test it generalises.
import { describe, expect, it } from 'vitest';
import type { CovariateValue } from '../../../electron/api.ts';
import { createRng } from '../../../electron/engine/random.ts';
import { buildDesign, DesignError } from '../../../electron/engine/stats/design.ts';
import { distanceRegression, permanova } from '../../../electron/engine/stats/diagram-tests.ts';
import { expandFormula, parseTerm } from '../../../electron/engine/stats/formula.ts';
import { fitGlm } from '../../../electron/engine/stats/glm.ts';
import { permutationTest } from '../../../electron/engine/stats/permutation.ts';
import { forEachBlockPermutation } from '../../../electron/engine/stats/relabel.ts';

const rng = createRng(99);
const normal = () => {
  const u = Math.max(rng.next(), 1e-12);
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rng.next());
};

/** Every permutation of 0..k-1 (Heap-free recursive listing, for small k). */
function permutations(k: number): number[][] {
  if (k === 0) return [[]];
  return permutations(k - 1).flatMap((p) =>
    Array.from({ length: k }, (_, i) => [...p.slice(0, i), k - 1, ...p.slice(i)]),
  );
}

/** OLS t (1 column tested) of column `tested` in [columns], by normal equations solved with Gaussian elimination. */
function olsT(columns: number[][], tested: number, y: number[]): number {
  const p = columns.length;
  const n = y.length;
  const a = columns.map((ci) => [
    ...columns.map((cj) => ci.reduce((s, v, i) => s + v * cj[i], 0)),
    ci.reduce((s, v, i) => s + v * y[i], 0),
  ]);
  // Invert XᵀX alongside.
  const inv = columns.map((_, i) => columns.map((__, j) => (i === j ? 1 : 0)));
  for (let c = 0; c < p; c++) {
    let piv = c;
    for (let r = c + 1; r < p; r++) if (Math.abs(a[r][c]) > Math.abs(a[piv][c])) piv = r;
    [a[c], a[piv]] = [a[piv], a[c]];
    [inv[c], inv[piv]] = [inv[piv], inv[c]];
    const d = a[c][c];
    for (let j = 0; j <= p; j++) a[c][j] /= d;
    for (let j = 0; j < p; j++) inv[c][j] /= d;
    for (let r = 0; r < p; r++) {
      if (r === c) continue;
      const f = a[r][c];
      for (let j = 0; j <= p; j++) a[r][j] -= f * a[c][j];
      for (let j = 0; j < p; j++) inv[r][j] -= f * inv[c][j];
    }
  }
  const beta = a.map((row) => row[p]);
  let rss = 0;
  for (let i = 0; i < n; i++) {
    let fit = 0;
    for (let k = 0; k < p; k++) fit += beta[k] * columns[k][i];
    rss += (y[i] - fit) ** 2;
  }
  return beta[tested] / Math.sqrt((rss / (n - p)) * inv[tested][tested]);
}

/** Nuisance fit and residuals of y on the columns given. */
function nuisanceFit(columns: number[][], y: number[]): { fitted: number[]; resid: number[] } {
  const p = columns.length;
  const a = columns.map((ci) => [
    ...columns.map((cj) => ci.reduce((s, v, i) => s + v * cj[i], 0)),
    ci.reduce((s, v, i) => s + v * y[i], 0),
  ]);
  for (let c = 0; c < p; c++) {
    const d = a[c][c];
    for (let j = 0; j <= p; j++) a[c][j] /= d;
    for (let r = 0; r < p; r++) {
      if (r === c) continue;
      const f = a[r][c];
      for (let j = 0; j <= p; j++) a[r][j] -= f * a[c][j];
    }
  }
  const beta = a.map((row) => row[p]);
  const fitted = y.map((_, i) => columns.reduce((s, c, k) => s + beta[k] * c[i], 0));
  return { fitted, resid: y.map((v, i) => v - fitted[i]) };
}

/** Literal Freedman–Lane: p = #{|t*| ≥ |t|} / N over the row maps given (row i receives residual of map[i]). */
function literalFreedmanLane(columns: number[][], tested: number, y: number[], maps: number[][]): number {
  const nuisance = columns.filter((_, k) => k !== tested);
  const { fitted, resid } = nuisanceFit(nuisance, y);
  const t0 = Math.abs(olsT(columns, tested, y));
  let count = 0;
  for (const m of maps) {
    const ys = fitted.map((f, i) => f + resid[m[i]]);
    if (Math.abs(olsT(columns, tested, ys)) >= t0 - 1e-10 * Math.max(1, t0)) count++;
  }
  return count / maps.length;
}

const row = (participant_id: string, covariates: Record<string, CovariateValue>) => ({
  id: `${participant_id}_ses-${covariates.session}`,
  covariates: { participant_id, ...covariates },
});

describe('within-block permutation (paired design)', () => {
  const m = 8;
  const rows = Array.from({ length: m }, (_, i) => [
    row(`sub-${i}`, { session: 'pre', y: 0 }),
    row(`sub-${i}`, { session: 'post', y: 0 }),
  ]).flat();
  const y = rows.map((_, i) => (i % 2 ? 0.6 : 0) + Math.floor(i / 2) * 0.3 + normal());
  const d = buildDesign(rows, {
    effect: 'session',
    reference: 'pre',
    blocks: 'participant_id',
    covariates: [],
  });

  it('is the sign flip of the within-block differences: p equals the exact sign-flip enumeration of the paired t', () => {
    const res = permutationTest(d.columns, d.contrasts[0], [y], {
      seed: 1,
      permutations: 1000,
      exchangeability: d.exchangeability,
      invariantColumns: d.blockColumns,
    });
    expect(res.run.mode).toBe('exact');
    expect(res.run.visited).toBe(2 ** m);
    expect(res.scheme).toBe('freedman-lane-within-blocks');
    const diff = Array.from({ length: m }, (_, b) => y[2 * b + 1] - y[2 * b]);
    const oneSampleT = (x: number[]) => {
      const mean = x.reduce((a, b) => a + b, 0) / x.length;
      const sd = Math.sqrt(x.reduce((a, b) => a + (b - mean) ** 2, 0) / (x.length - 1));
      return mean / (sd / Math.sqrt(x.length));
    };
    const t0 = Math.abs(oneSampleT(diff));
    expect(Math.abs(res.statistic[0])).toBeCloseTo(t0, 10);
    let count = 0;
    for (let mask = 0; mask < 2 ** m; mask++) {
      const t = Math.abs(oneSampleT(diff.map((v, b) => (mask & (1 << b) ? -v : v))));
      if (t >= t0 - 1e-10 * t0) count++;
    }
    expect(res.pUncorrected[0]).toBeCloseTo(count / 2 ** m, 12);
  });
});

describe('whole-block permutation (between-subject group, two sessions each)', () => {
  const groups = ['a', 'b', 'a', 'b', 'b', 'a'];
  const rows = groups.flatMap((g, i) => [
    row(`sub-${i}`, { group: g, session: 'pre' }),
    row(`sub-${i}`, { group: g, session: 'post' }),
  ]);
  const subjectEffect = groups.map(() => normal());
  const y = rows.map(
    (_, i) => subjectEffect[i >> 1] + (i % 2) * 0.8 + (groups[i >> 1] === 'b' ? 0.5 : 0) + 0.4 * normal(),
  );

  it('equals the literal Freedman–Lane over all 6! whole-block permutations, session as covariate', () => {
    const d = buildDesign(rows, { groupColumn: 'group', blocks: 'participant_id', covariates: ['session'] });
    expect(d.exchangeability?.scheme).toBe('whole-blocks');
    expect(d.blockColumns).toEqual([]);
    const res = permutationTest(d.columns, d.contrasts[0], [y], {
      seed: 1,
      permutations: 1000,
      exchangeability: d.exchangeability,
    });
    expect(res.run.mode).toBe('exact');
    expect(res.run.visited).toBe(720);
    // Rows are (block, session) in input order: row 2b + k; blocks exchange as wholes, session kept.
    const order = d.exchangeability!.members;
    const maps = permutations(6).map((perm) => {
      const map = new Array<number>(12);
      perm.forEach((src, b) => order[b].forEach((r, k) => (map[r] = order[src][k])));
      return map;
    });
    const cols = d.columns.map((c) => Array.from(c));
    expect(res.pUncorrected[0]).toBeCloseTo(literalFreedmanLane(cols, 1, y, maps), 12);
  });

  it('equals the 20 relabellings of the subjects without covariates (label permutation of whole blocks)', () => {
    const d = buildDesign(rows, { groupColumn: 'group', blocks: 'participant_id', covariates: [] });
    const res = permutationTest(d.columns, d.contrasts[0], [y], {
      seed: 1,
      permutations: 1000,
      exchangeability: d.exchangeability,
    });
    const t0 = Math.abs(res.statistic[0]);
    let count = 0;
    let total = 0;
    for (let mask = 0; mask < 64; mask++) {
      const bits = [0, 1, 2, 3, 4, 5].filter((b) => mask & (1 << b));
      if (bits.length !== 3) continue;
      total++;
      const x = rows.map((_, i) => (bits.includes(i >> 1) ? 1 : 0));
      if (Math.abs(olsT([rows.map(() => 1), x], 1, y)) >= t0 - 1e-10 * t0) count++;
    }
    expect(total).toBe(20);
    expect(res.pUncorrected[0]).toBeCloseTo(count / total, 12);
  });

  it('refuses whole-block permutation when no two blocks share size and structure, naming them', () => {
    const uneven = [
      row('sub-0', { group: 'a', session: 'pre' }),
      row('sub-1', { group: 'b', session: 'pre' }),
      row('sub-1', { group: 'b', session: 'post' }),
      row('sub-2', { group: 'a', session: 'pre' }),
      row('sub-2', { group: 'a', session: 'post' }),
      row('sub-2', { group: 'a', session: 'mid' }),
    ];
    expect(() =>
      buildDesign(uneven, { groupColumn: 'group', blocks: 'participant_id', covariates: [] }),
    ).toThrow(
      /constant within the blocks of 'participant_id'.*no two blocks have the same size and structure \('sub-0' has 1 row\(s\), 'sub-1' has 2\)/,
    );
  });

  it('refuses repeated participants without blocks, unless forced (calibration only)', () => {
    expect(() => buildDesign(rows, { groupColumn: 'group', covariates: [] })).toThrow(
      "participant 'sub-0' has 2 rows (sessions): declare the exchangeability blocks with --blocks participant_id",
    );
    const forced = buildDesign(rows, {
      groupColumn: 'group',
      covariates: [],
      allowRepeatedParticipants: true,
    });
    expect(forced.exchangeability).toBeNull();
  });
});

describe('within- and whole-block permutation (group × session interaction)', () => {
  const groups = ['a', 'b', 'b', 'a'];
  const rows = groups.flatMap((g, i) => [
    row(`sub-${i}`, { group: g, session: 'post' }),
    row(`sub-${i}`, { group: g, session: 'pre' }),
  ]);
  const y = rows.map((_, i) => i * 0.1 + normal());
  const d = buildDesign(rows, {
    model: 'group*session',
    test: 'group:session',
    blocks: 'participant_id',
    covariates: [],
  });

  it('absorbs the between-block main effect into the block intercepts and combines both shuffles', () => {
    expect(d.exchangeability?.scheme).toBe('within-and-whole-blocks');
    expect(d.columnNames).toEqual([
      '(intercept)',
      'session[pre]',
      'group[b]:session[pre]',
      'participant_id[sub-1]',
      'participant_id[sub-2]',
      'participant_id[sub-3]',
    ]);
    expect(d.notes[0]).toMatch(/'group' is constant within the blocks of 'participant_id'/);
  });

  it('equals the literal Freedman–Lane over all 4!·2⁴ = 384 permutations of the set', () => {
    const res = permutationTest(d.columns, d.contrasts[0], [y], {
      seed: 1,
      permutations: 1000,
      exchangeability: d.exchangeability,
      invariantColumns: d.blockColumns,
    });
    expect(res.run.mode).toBe('exact');
    expect(res.run.visited).toBe(384);
    expect(res.scheme).toBe('freedman-lane-within-and-whole-blocks');
    const members = d.exchangeability!.members;
    const maps: number[][] = [];
    for (const perm of permutations(4)) {
      for (let flips = 0; flips < 16; flips++) {
        const map = new Array<number>(8);
        perm.forEach((src, b) =>
          members[b].forEach((r, k) => (map[r] = members[src][flips & (1 << src) ? 1 - k : k])),
        );
        maps.push(map);
      }
    }
    expect(new Set(maps.map((m) => m.join(','))).size).toBe(384);
    const cols = d.columns.map((c) => Array.from(c));
    expect(res.pUncorrected[0]).toBeCloseTo(literalFreedmanLane(cols, 2, y, maps), 12);
  });
});

describe('forEachBlockPermutation', () => {
  it('visits each element of the product group once in exact mode, and draws reproducibly otherwise', () => {
    const ex = {
      scheme: 'within-and-whole-blocks' as const,
      members: [
        [0, 1],
        [2, 3],
        [4, 5, 6],
      ],
      classes: [0, 0, 1],
    };
    const seen = new Set<string>();
    const run = forEachBlockPermutation(ex, 7, 100, 1, (s) => seen.add(Array.from(s).join(',')));
    // 2! (two blocks of class 0) × 2! × 2! × 3! within.
    expect(run).toMatchObject({ mode: 'exact', visited: 48, distinct: 48 });
    expect(seen.size).toBe(48);
    for (const s of seen) {
      const m = s.split(',').map(Number);
      expect(m.slice(4).sort()).toEqual([4, 5, 6]);
      expect(new Set(m).size).toBe(7);
    }
    const a: string[] = [];
    const b: string[] = [];
    forEachBlockPermutation(ex, 7, 20, 5, (s) => a.push(s.join(',')));
    forEachBlockPermutation(ex, 7, 20, 5, (s) => b.push(s.join(',')));
    expect(a).toEqual(b);
  });
});

describe('distance-based regression', () => {
  const n = 12;
  const points = Array.from({ length: n }, () => [normal(), normal(), normal()]);
  const dist = (u: number[], v: number[]) => Math.hypot(...u.map((x, k) => x - v[k]));
  const matrix = {
    n,
    values: Float64Array.from({ length: n * n }, (_, k) => dist(points[Math.floor(k / n)], points[k % n])),
  };
  const labels = ['a', 'b', 'c', 'a', 'b', 'c', 'a', 'b', 'c', 'a', 'b', 'c'];
  const subjects = labels.map((g, i) => ({ id: `s${i}`, covariates: { g, age: 20 + i * 3 + (i % 4) } }));

  it('without covariates or blocks is PERMANOVA: same pseudo-F and p (random and exact)', () => {
    const d = buildDesign(subjects, { groupColumn: 'g', covariates: [] });
    for (const permutations of [199, 400000]) {
      const a = distanceRegression(matrix, d.columns, d.contrasts[0], { seed: 3, permutations });
      const b = permanova(matrix, d.group, { seed: 3, permutations });
      expect(a.test).toBe('permanova');
      expect(a.statistic).toBeCloseTo(b.statistic, 10);
      expect(a.p).toBe(b.p);
      expect(a.run).toEqual(b.run);
    }
  });

  it('on Euclidean distances of one variable is the partial F of the term, and shares its permutation p', () => {
    const y = points.map((p) => p[0]);
    const one = {
      n,
      values: Float64Array.from({ length: n * n }, (_, k) => Math.abs(y[Math.floor(k / n)] - y[k % n])),
    };
    const d = buildDesign(subjects, { groupColumn: 'g', covariates: ['age'] });
    const f = fitGlm(d.columns, d.contrasts[0], [y]).statistic[0];
    const reg = distanceRegression(one, d.columns, d.contrasts[0], { seed: 8, permutations: 299 });
    expect(reg.test).toBe('distance-regression');
    expect(reg.scheme).toBe('freedman-lane');
    expect(reg.statistic).toBeCloseTo(f, 9);
    const uni = permutationTest(d.columns, d.contrasts[0], [y], { seed: 8, permutations: 299 });
    expect(reg.p).toBe(uni.pUncorrected[0]);
  });
});

describe('model formulas', () => {
  it('expands * into main effects and interactions, dedupes, orders by degree', () => {
    expect(expandFormula('group*session + age')).toEqual([
      ['group'],
      ['session'],
      ['age'],
      ['group', 'session'],
    ]);
    expect(expandFormula('a*b*c')).toEqual([
      ['a'],
      ['b'],
      ['c'],
      ['a', 'b'],
      ['a', 'c'],
      ['b', 'c'],
      ['a', 'b', 'c'],
    ]);
    expect(expandFormula('a:b + b:a + a')).toEqual([['a'], ['a', 'b']]);
    expect(expandFormula('a*b:c')).toEqual([['a'], ['b', 'c'], ['a', 'b', 'c']]);
    expect(parseTerm('session:group')).toEqual(['session', 'group']);
  });

  it('names the bad token, the missing term and the unknown column', () => {
    expect(() => expandFormula('a + (b*c)')).toThrow(/unsupported token '\(b'/);
    expect(() => expandFormula('a + ')).toThrow(/ends with '\+'/);
    expect(() => expandFormula('a * * b')).toThrow(/unexpected '\*'/);
    const s = [0, 1, 2, 3, 4, 5].map((i) => ({ id: `s${i}`, covariates: { a: i % 2 ? 'x' : 'y', b: i } }));
    expect(() => buildDesign(s, { model: 'a*b', test: 'a:c', covariates: [] })).toThrow(
      /tested term 'a:c' is not a term of the model 'a\*b' \(terms: a, b, a:b\)/,
    );
    expect(() => buildDesign(s, { model: 'a*b', covariates: [] })).toThrow(
      /name the one to test with --test/,
    );
    expect(() => buildDesign(s, { model: 'a + z', test: 'a', covariates: [] })).toThrow(/unknown column 'z'/);
    expect(() => buildDesign(s, { effect: 'a', reference: 'q', covariates: [] })).toThrow(
      /reference level 'q' is not a level of the tested 'a'/,
    );
    expect(() => buildDesign(s, { effect: 'a', model: 'a', covariates: [] })).toThrow(DesignError);
  });
});

describe('adjusted d with block intercepts (more than two scans per block)', () => {
  it('equals the contrast estimate over √(residual mean square) of the full design with block dummies', async () => {
    const { testFamily } = await import('../../../electron/engine/stats/family.ts');
    const rows = Array.from({ length: 6 }, (_, p) =>
      ['pre', 'pre', 'post', 'post'].map((session, k) => ({
        id: `sub-${p}_run-${k}`,
        covariates: { participant_id: `sub-${p}`, session, motion: normal() },
      })),
    ).flat();
    const y = rows.map((r, i) => (r.covariates.session === 'post' ? 0.7 : 0) + Math.floor(i / 4) + normal());
    const d = buildDesign(rows, {
      effect: 'session',
      reference: 'pre',
      blocks: 'participant_id',
      covariates: ['motion'],
    });
    expect(d.paired).toBe(false);
    expect(d.blockColumns).toHaveLength(5);
    const res = testFamily(
      d,
      d.contrasts[0],
      {
        name: 'f',
        subjects: rows.map((r) => r.id),
        features: [{ feature: 'y', nodeOrPoint: null, values: y }],
      },
      { seed: 2, permutations: 99, bootstrap: 300 },
    );
    const fit = fitGlm(d.columns, d.contrasts[0], [y]);
    let rss = 0;
    y.forEach((v, i) => {
      let f = 0;
      d.columns.forEach((c, k) => (f += fit.beta[0][k] * c[i]));
      rss += (v - f) ** 2;
    });
    const expected = fit.estimate[0] / Math.sqrt(rss / fit.df2);
    expect(res.effect.kind).toBe('adjusted-d');
    if (res.effect.kind !== 'adjusted-d') return;
    expect(res.effect.sizes.value[0]).toBeCloseTo(expected, 10);
    expect(res.effect.sizes.low[0]).toBeLessThan(expected);
    expect(res.effect.sizes.high[0]).toBeGreaterThan(expected);
  });
});

describe('design under blocks', () => {
  const rows = Array.from({ length: 6 }, (_, p) =>
    ['pre', 'post'].map((session) => ({
      id: `sub-${p}_ses-${session}`,
      covariates: {
        participant_id: p === 5 && session === 'post' ? null : `sub-${p}`,
        session,
        age: 20 + 3 * p,
        group: p % 2 ? 'b' : 'a',
        motion: (p * 7 + (session === 'pre' ? 1 : 4)) % 5,
      },
    })),
  ).flat();

  it('leaves out rows without a block, absorbs between-block covariates, and picks the scheme per effect', () => {
    const w = buildDesign(rows, {
      effect: 'session',
      reference: 'pre',
      blocks: 'participant_id',
      covariates: ['age', 'motion'],
    });
    expect(w.excluded).toEqual([{ id: 'sub-5_ses-post', reason: "missing 'participant_id'" }]);
    expect(w.exchangeability?.scheme).toBe('within-blocks');
    expect(w.columnNames.slice(0, 3)).toEqual(['(intercept)', 'session[post]', 'motion']);
    expect(w.columnNames).not.toContain('age');
    expect(w.notes).toEqual([
      "'age' is constant within the blocks of 'participant_id' and absorbed by the block intercepts",
    ]);
    // sub-5 keeps one row: a block of one, fitted exactly by its intercept.
    expect(w.paired).toBe(true);
    const numeric = buildDesign(rows, { effect: 'age', blocks: 'participant_id', covariates: [] });
    expect(numeric.exchangeability?.scheme).toBe('whole-blocks');
    expect(numeric.effect.kind).toBe('numeric');
    expect(numeric.notes[0]).toMatch(
      /1 block\(s\) of 'participant_id' have a size or structure no other block shares/,
    );
  });

  it('distance regression under within-block permutation matches the per-feature test on 1-D Euclidean distances', () => {
    const d = buildDesign(rows, {
      effect: 'session',
      reference: 'pre',
      blocks: 'participant_id',
      covariates: ['motion'],
    });
    const y = d.ids.map((_, i) => Math.sin(3.7 * i) + (i % 2) * 0.5);
    const n = y.length;
    const one = {
      n,
      values: Float64Array.from({ length: n * n }, (_, k) => Math.abs(y[Math.floor(k / n)] - y[k % n])),
    };
    const opts = {
      seed: 4,
      permutations: 999,
      exchangeability: d.exchangeability,
      invariantColumns: d.blockColumns,
    };
    const reg = distanceRegression(one, d.columns, d.contrasts[0], opts);
    const uni = permutationTest(d.columns, d.contrasts[0], [y], opts);
    expect(reg.scheme).toBe('freedman-lane-within-blocks');
    expect(reg.run.mode).toBe('exact');
    expect(reg.statistic).toBeCloseTo(uni.statistic[0] ** 2, 9);
    expect(reg.p).toBe(uni.pUncorrected[0]);
  });
});

describe('whole-block structure', () => {
  it('is set by categorical within-block columns (session), not by numeric ones (motion)', () => {
    const rows = Array.from({ length: 6 }, (_, p) =>
      ['pre', 'post'].map((session, k) => ({
        id: `sub-${p}_ses-${session}`,
        covariates: { participant_id: `sub-${p}`, session, group: p % 2 ? 'b' : 'a', motion: p + k / 10 },
      })),
    ).flat();
    const d = buildDesign(rows, {
      groupColumn: 'group',
      blocks: 'participant_id',
      covariates: ['session', 'motion'],
    });
    expect(d.exchangeability?.scheme).toBe('whole-blocks');
    expect(new Set(d.exchangeability!.classes).size).toBe(1);
    // Rows of every block in session order (post before pre), so that row k of a block meets row k of another.
    for (const m of d.exchangeability!.members)
      expect(m.map((i) => rows[i].covariates.session)).toEqual(['post', 'pre']);
  });
});

describe('marginality', () => {
  it('notes an interaction without its lower-order terms', () => {
    const s = [0, 1, 2, 3, 4, 5, 6, 7].map((i) => ({
      id: `s${i}`,
      covariates: { a: i % 2 ? 'x' : 'y', b: i % 4 < 2 ? 'u' : 'v', c: i * 1.5 },
    }));
    const d = buildDesign(s, { model: 'a + a:b', test: 'a:b', covariates: [] });
    expect(d.notes).toEqual([
      "model term 'a:b' lacks its lower-order term(s) 'b': its columns are products of treatment-coded columns and its test is not the usual interaction test",
    ]);
    expect(buildDesign(s, { model: 'a*b', test: 'a:b', covariates: [] }).notes).toEqual([]);
  });
});
