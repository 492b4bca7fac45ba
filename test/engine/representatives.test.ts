/**
 * H1 cycle representatives, checked from their definition rather than against a stored answer:
 * a representative of [b, d) is a mod-2 cycle of edges present at b, containing an edge of
 * distance b (the edge that creates the class), that is not a boundary of the triangles of
 * diameter < d but is one of the triangles of diameter ≤ d (Edelsbrunner & Harer, Computational
 * Topology, 2010, ch. VII; the boundary-matrix reduction view of Cohen-Steiner, Edelsbrunner &
 * Morozov 2006). On small cases the representatives alive at each filtration value must also form
 * a basis of H1 there: independent modulo boundaries and as many as β1 = dim Z1 − rank B1.
 * The diagrams themselves are checked against ripser 1.2.1 / GUDHI 3.7.1 in persistence.golden.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { computePersistence } from '../../electron/engine/persistence.ts';
import { pairIndex } from '../../electron/engine/transform.ts';
import type { DistanceMatrix, PersistenceResult } from '../../electron/engine/types.ts';
import { distancesOf, loadGoldens } from './support/diagrams.ts';
import { Gf2Span, chainOfEdges, triangleBoundary } from './support/gf2.ts';
import { quantileCap, randomCase } from './support/random-matrices.ts';
import type { MatrixKind } from './support/random-matrices.ts';

const dist = (d: DistanceMatrix, i: number, j: number): number => d.values[pairIndex(i, j)];

/** Shape checks valid at any size. */
function checkStructure(d: DistanceMatrix, r: PersistenceResult, label: string): void {
  const reps = r.representatives;
  expect(reps, label).toBeDefined();
  if (!reps) return;
  expect(reps.length, `${label}: one representative per H1 interval`).toBe(r.diagrams[1].length);
  reps.forEach((rep, k) => {
    const at = `${label}, H1 interval ${k} [${rep.birth}, ${rep.death})`;
    expect([rep.birth, rep.death], `${at}: aligned with diagrams[1]`).toEqual([
      r.diagrams[1][k].birth,
      r.diagrams[1][k].death,
    ]);
    expect(rep.edges.length, `${at}: non-empty`).toBeGreaterThanOrEqual(3);
    const seen = new Set<number>();
    const degree = new Map<number, number>();
    let latest = -Infinity;
    for (const [i, j] of rep.edges) {
      expect(i > j && j >= 0 && i < d.n, `${at}: edge [${i}, ${j}] is [i, j] with n > i > j ≥ 0`).toBe(true);
      const e = pairIndex(i, j);
      expect(seen.has(e), `${at}: edge [${i}, ${j}] listed twice`).toBe(false);
      seen.add(e);
      degree.set(i, (degree.get(i) ?? 0) + 1);
      degree.set(j, (degree.get(j) ?? 0) + 1);
      const x = dist(d, i, j);
      expect(x, `${at}: edge [${i}, ${j}] distance ≤ birth`).toBeLessThanOrEqual(rep.birth);
      latest = Math.max(latest, x);
    }
    expect(latest, `${at}: its latest edge has distance = birth`).toBe(rep.birth);
    for (const [v, deg] of degree) expect(deg % 2, `${at}: node ${v} has odd degree ${deg}`).toBe(0);
    expect(rep.nodes, `${at}: nodes = endpoints of its edges`).toEqual(
      [...degree.keys()].sort((a, b) => a - b),
    );
  });
}

/** Rank checks over GF(2); affordable for n ≲ 16. */
function checkHomology(d: DistanceMatrix, r: PersistenceResult, label: string): void {
  const { n } = d;
  const reps = r.representatives ?? [];
  const triangles: Array<{ diam: number; a: number; b: number; c: number }> = [];
  for (let c = 2; c < n; c++)
    for (let b = 1; b < c; b++)
      for (let a = 0; a < b; a++) {
        const diam = Math.max(dist(d, a, b), dist(d, a, c), dist(d, b, c));
        if (diam <= r.threshold) triangles.push({ diam, a, b, c });
      }
  triangles.sort((x, y) => x.diam - y.diam);
  const boundaries = (keep: (diam: number) => boolean): Gf2Span => {
    const s = new Gf2Span();
    for (const t of triangles) if (keep(t.diam)) s.add(triangleBoundary(n, t.a, t.b, t.c));
    return s;
  };

  reps.forEach((rep, k) => {
    const at = `${label}, H1 interval ${k} [${rep.birth}, ${rep.death})`;
    const z = chainOfEdges(n, rep.edges);
    if (rep.death === Infinity) {
      expect(
        boundaries(() => true).contains(z),
        `${at}: essential, yet a boundary in the capped complex`,
      ).toBe(false);
      return;
    }
    expect(boundaries((x) => x < rep.death).contains(z), `${at}: already a boundary before death`).toBe(
      false,
    );
    expect(boundaries((x) => x <= rep.death).contains(z), `${at}: not a boundary at death`).toBe(true);
  });

  // At every filtration value t, the representatives alive at t form a basis of H1(K_t).
  const values = [...new Set(Array.from(d.values).filter((x) => x <= r.threshold))].sort((a, b) => a - b);
  for (const t of values) {
    const span = boundaries((x) => x <= t);
    const rankB = span.rank;
    let edges = 0;
    const parent = Array.from({ length: n }, (_, i) => i);
    const find = (x: number): number => (parent[x] === x ? x : (parent[x] = find(parent[x])));
    let components = n;
    for (let i = 1; i < n; i++)
      for (let j = 0; j < i; j++)
        if (dist(d, i, j) <= t) {
          edges++;
          const a = find(i);
          const b = find(j);
          if (a !== b) {
            parent[a] = b;
            components--;
          }
        }
    const betti1 = edges - (n - components) - rankB;
    const alive = reps.filter((rep) => rep.birth <= t && t < rep.death);
    expect(alive.length, `${label}: β1 at ${t}`).toBe(betti1);
    for (const rep of alive) {
      expect(
        span.add(chainOfEdges(n, rep.edges)),
        `${label}: representatives alive at ${t} are dependent`,
      ).toBe(true);
    }
  }
}

const goldens = loadGoldens().filter((g) => g.n <= 60);

describe('H1 representatives on the reference cases (diagrams from ripser 1.2.1 / GUDHI 3.7.1)', () => {
  for (const g of goldens) {
    it(`${g.name} (n = ${g.n}${g.threshold === null ? '' : `, cap ${g.threshold}`})`, () => {
      const d = distancesOf(g);
      const r = computePersistence(d, {
        maxDim: 1,
        cap: g.threshold === null ? { kind: 'none' } : { kind: 'distance', value: g.threshold },
        representatives: true,
      });
      checkStructure(d, r, g.name);
      if (g.n <= 16) checkHomology(d, r, g.name);
    });
  }
});

describe('H1 representatives on small random matrices (rank checks over GF(2))', () => {
  const kinds: MatrixKind[] = ['euclidean', 'nonmetric', 'ties', 'correlation'];
  for (const kind of kinds) {
    for (const capped of [false, true]) {
      it(`${kind}, ${capped ? 'capped' : 'no cap'}: 12 matrices, n = 5 … 15`, () => {
        let intervals = 0;
        for (let t = 0; t < 12; t++) {
          const seed = 9000 + 100 * kinds.indexOf(kind) + (capped ? 50 : 0) + t;
          const c = randomCase(kind, 5 + (t % 11), seed);
          const d: DistanceMatrix = { n: c.n, values: c.values };
          const cap = capped ? Number(quantileCap(c, 0.3 + 0.04 * t)) : null;
          const r = computePersistence(d, {
            maxDim: 1,
            cap: cap === null ? { kind: 'none' } : { kind: 'distance', value: cap },
            representatives: true,
          });
          const label = `${kind} n = ${c.n} seed ${seed}${cap === null ? '' : ` cap ${cap}`}`;
          checkStructure(d, r, label);
          checkHomology(d, r, label);
          intervals += r.diagrams[1].length;
        }
        // The family is meant to exercise the checks: it must contain H1 classes.
        expect(intervals).toBeGreaterThan(0);
      });
    }
  }

  it('essential classes under a cap are cycles of edges ≤ birth that never become boundaries', () => {
    // Four nodes on a square (sides 1, diagonals 2) capped at 1.5: the loop never fills in.
    const d: DistanceMatrix = { n: 4, values: Float64Array.from([1, 2, 1, 1, 2, 1]) };
    const r = computePersistence(d, {
      maxDim: 1,
      cap: { kind: 'distance', value: 1.5 },
      representatives: true,
    });
    expect(r.diagrams[1]).toEqual([{ birth: 1, death: Infinity }]);
    checkStructure(d, r, 'square capped at 1.5');
    checkHomology(d, r, 'square capped at 1.5');
    expect(r.representatives?.[0].edges).toHaveLength(4);
  });
});
