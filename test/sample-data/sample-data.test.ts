import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { MatrixError, toDistances } from '../../electron/engine/transform.ts';
import type { SquareMatrix } from '../../electron/engine/types.ts';
import { BASE, MESSY, PLANTED, PLANTED_GROUP, STUDY, writeSampleData } from '../../sample-data/generate.ts';
import { jacobiEigenvalues } from '../engine/generator/jacobi.ts';
import { h1Participation, meanOver } from '../engine/generator/participation.ts';

const SAMPLE = fileURLToPath(new URL('../../sample-data/', import.meta.url));
const reference = JSON.parse(
  readFileSync(new URL('./goldens/rhythm-study-reference.json', import.meta.url), 'utf8'),
) as {
  subjects: Array<{
    id: string;
    group: string;
    n: number;
    min_eigenvalue: number;
    max_asymmetry: number;
    max_diag_error: number;
    within: number;
    between: number;
    planted_target: number;
  }>;
};

function readTable(path: string): Array<Record<string, string>> {
  const [head, ...lines] = readFileSync(path, 'utf8').trimEnd().split('\n');
  const cols = head.split('\t');
  return lines.map((l) => Object.fromEntries(l.split('\t').map((v, k) => [cols[k], v])));
}

function readMatrix(path: string): SquareMatrix {
  const rows = readFileSync(path, 'utf8')
    .trimEnd()
    .split('\n')
    .map((l) => l.split('\t').map(Number));
  const n = rows.length;
  const values = new Float64Array(n * n);
  rows.forEach((r, i) => {
    expect(r.length, `${path} row ${i + 1}`).toBe(n);
    values.set(r, i * n);
  });
  return { n, values };
}

function filesUnder(dir: string, prefix = ''): string[] {
  return readdirSync(join(dir, prefix)).flatMap((name) => {
    const rel = prefix ? `${prefix}/${name}` : name;
    return statSync(join(dir, rel)).isDirectory() ? filesUnder(dir, rel) : [rel];
  });
}

const study = join(SAMPLE, STUDY);
const people = readTable(join(study, 'participants.tsv'));
const nodes = readTable(join(study, 'nodes.tsv'));
const matrices = people.map((p) => readMatrix(join(study, `${p.participant_id}_conn.tsv`)));
const network = nodes.map((r) => r.network);
const planted = PLANTED.map((p) => nodes.findIndex((r) => r.label === p.label));

describe('regeneration', () => {
  const tmp = mkdtempSync(join(tmpdir(), 'loopwise-sample-'));
  afterAll(() => rmSync(tmp, { recursive: true, force: true }));

  it('sample-data/generate.ts rewrites the committed cohorts byte for byte', () => {
    const written = writeSampleData(tmp).sort();
    const committed = [...filesUnder(SAMPLE, STUDY), ...filesUnder(SAMPLE, MESSY)].sort();
    expect(written).toEqual(committed);
    for (const rel of written) {
      expect(readFileSync(join(tmp, rel)).equals(readFileSync(join(SAMPLE, rel))), rel).toBe(true);
    }
  });

  it('refuses to replace a file with other content unless forced', () => {
    const other = mkdtempSync(join(tmpdir(), 'loopwise-sample-'));
    try {
      mkdirSync(join(other, STUDY));
      writeFileSync(join(other, STUDY, 'participants.tsv'), 'my own table\n');
      expect(() => writeSampleData(other)).toThrow(/participants\.tsv.*--force/);
      expect(readFileSync(join(other, STUDY, 'participants.tsv'), 'utf8')).toBe('my own table\n');
      writeSampleData(other, true);
      expect(
        readFileSync(join(other, STUDY, 'participants.tsv')).equals(
          readFileSync(join(study, 'participants.tsv')),
        ),
      ).toBe(true);
      // Identical files are no obstacle: a second run succeeds without force.
      expect(writeSampleData(other).length).toBeGreaterThan(50);
    } finally {
      rmSync(other, { recursive: true, force: true });
    }
  });

  it('keeps the bundled data within 2 MB', () => {
    const bytes = filesUnder(SAMPLE).reduce((s, rel) => s + statSync(join(SAMPLE, rel)).size, 0);
    expect(bytes).toBeLessThanOrEqual(2 * 1024 * 1024);
  });
});

describe('the rhythm-study cohort', () => {
  it('has 40 participants in two groups of 20, BIDS-style columns, and a 60-region node table in 6 networks', () => {
    expect(Object.keys(people[0])).toEqual(['participant_id', 'group', 'age', 'sex', 'fd_mean']);
    expect(people.map((p) => p.participant_id)).toEqual(
      Array.from({ length: 40 }, (_, i) => `sub-${String(i + 1).padStart(2, '0')}`),
    );
    expect(people.filter((p) => p.group === 'training')).toHaveLength(20);
    expect(people.filter((p) => p.group === 'waitlist')).toHaveLength(20);
    expect(Object.keys(nodes[0])).toEqual(['label', 'network', 'x', 'y', 'z']);
    expect(nodes).toHaveLength(60);
    expect(new Set(network).size).toBe(6);
    for (const r of nodes) {
      // Left labels sit at x < 0, right at x > 0; coordinates inside a brain-sized box (mm).
      expect(Math.sign(Number(r.x))).toBe(r.label.startsWith('L_') ? -1 : 1);
      for (const c of [r.x, r.y, r.z]) expect(Math.abs(Number(c))).toBeLessThanOrEqual(100);
    }
    expect(planted.every((i) => i >= 0)).toBe(true);
  });

  it('holds valid correlation matrices: symmetric, unit diagonal, PSD (Jacobi here; numpy eigvalsh in the golden)', () => {
    expect(reference.subjects.map((s) => s.id)).toEqual(people.map((p) => p.participant_id));
    matrices.forEach((m, k) => {
      const ref = reference.subjects[k];
      expect(m.n).toBe(60);
      for (let i = 0; i < m.n; i++) {
        expect(m.values[i * m.n + i]).toBe(1);
        for (let j = 0; j < i; j++) expect(m.values[i * m.n + j]).toBe(m.values[j * m.n + i]);
      }
      const smallest = jacobiEigenvalues(m.values, m.n)[0];
      // numpy 1.24.2 eigvalsh (test/sample-data/make_sample_reference.py).
      expect(Math.abs(smallest - ref.min_eigenvalue), ref.id).toBeLessThan(1e-10);
      expect(smallest).toBeGreaterThanOrEqual(-1e-10);
      expect(ref.max_asymmetry).toBe(0);
      expect(ref.max_diag_error).toBe(0);
      // Every matrix parses as a correlation matrix in the engine.
      expect(() => toDistances(m, { input: 'correlation' })).not.toThrow();
    });
  });

  it('recovers the block structure: within-network r exceeds between-network r by about the set separation', () => {
    let within = 0;
    let between = 0;
    matrices.forEach((m, k) => {
      let sw = 0;
      let nw = 0;
      let sb = 0;
      let nb = 0;
      for (let i = 0; i < 60; i++) {
        for (let j = 0; j < 60; j++) {
          if (i === j) continue;
          if (network[i] === network[j]) {
            sw += m.values[i * 60 + j];
            nw++;
          } else {
            sb += m.values[i * 60 + j];
            nb++;
          }
        }
      }
      // Same means from numpy (golden), to rounding.
      expect(sw / nw).toBeCloseTo(reference.subjects[k].within, 10);
      expect(sb / nb).toBeCloseTo(reference.subjects[k].between, 10);
      expect(sw / nw - sb / nb).toBeGreaterThan(0.25);
      within += sw / nw / matrices.length;
      between += sb / nb / matrices.length;
    });
    // Between-network pairs: 2 of 5 other networks share a super-module (r = nested), 3 do not (r = between),
    // plus a little motion-driven global coupling; within-network pairs are a little below `within` because
    // the overlapping and planted nodes give up some module variance.
    const expectedBetween = 0.4 * BASE.nested + 0.6 * BASE.between;
    expect(Math.abs(within - BASE.within)).toBeLessThan(0.03);
    expect(Math.abs(between - expectedBetween)).toBeLessThan(0.03);
  });

  it('raises the planted nodes’ correlation with their target networks in the training group only', () => {
    const byGroup = (g: string): number[] =>
      reference.subjects.filter((s) => s.group === g).map((s) => s.planted_target);
    const mean = (a: number[]): number => a.reduce((x, y) => x + y, 0) / a.length;
    const diff = mean(byGroup(PLANTED_GROUP)) - mean(byGroup('waitlist'));
    // Expected (w − c)√share = (0.5 − 0.18)·√0.3 ≈ 0.175 (numpy means of the committed matrices).
    expect(diff).toBeGreaterThan(0.1);
    expect(diff).toBeLessThan(0.25);
    // And recomputed here from the files.
    matrices.forEach((m, k) => {
      let s = 0;
      PLANTED.forEach((p, q) => {
        let t = 0;
        let c = 0;
        network.forEach((net, j) => {
          if (net === p.target) {
            t += m.values[planted[q] * 60 + j];
            c++;
          }
        });
        s += t / c;
      });
      expect(s / PLANTED.length).toBeCloseTo(reference.subjects[k].planted_target, 10);
    });
  });

  it('makes the planted nodes take part in more and longer H1 cycles in the training group, and lead the group difference', () => {
    const count: Record<string, Float64Array> = {
      training: new Float64Array(60),
      waitlist: new Float64Array(60),
    };
    const persistence: Record<string, Float64Array> = {
      training: new Float64Array(60),
      waitlist: new Float64Array(60),
    };
    matrices.forEach((m, k) => {
      const g = people[k].group;
      const p = h1Participation(m);
      for (let i = 0; i < 60; i++) {
        count[g][i] += p.count[i] / 20;
        persistence[g][i] += p.persistence[i] / 20;
      }
    });
    expect(meanOver(count.training, planted)).toBeGreaterThan(meanOver(count.waitlist, planted));
    expect(meanOver(persistence.training, planted)).toBeGreaterThan(
      2 * meanOver(persistence.waitlist, planted),
    );
    // The demo's promise: ranked by the training − waitlist difference in persistence-weighted
    // participation, the four planted nodes come first.
    const order = Array.from({ length: 60 }, (_, i) => i).sort(
      (a, b) =>
        persistence.training[b] -
        persistence.waitlist[b] -
        (persistence.training[a] - persistence.waitlist[a]),
    );
    expect(order.slice(0, 4).sort((a, b) => a - b)).toEqual([...planted].sort((a, b) => a - b));
  });
});

describe('the rhythm-study-messy cohort', () => {
  const messy = join(SAMPLE, MESSY);
  const listed = readTable(join(messy, 'participants.tsv'));
  const file = (id: string): string => join(messy, `${id}_conn.tsv`);

  it('has the planted problems, one per subject', () => {
    expect(listed.map((p) => p.participant_id)).toEqual(Array.from({ length: 8 }, (_, i) => `sub-0${i + 1}`));
    expect(listed[2].fd_mean).toBe('n/a');
    for (const id of ['sub-01', 'sub-02', 'sub-03', 'sub-09']) {
      expect(() => toDistances(readMatrix(file(id)), { input: 'correlation' }), id).not.toThrow();
    }
    // sub-04: asymmetric at row 5, column 12.
    const asym = readMatrix(file('sub-04'));
    expect(() => toDistances(asym, { input: 'correlation' })).toThrow(MatrixError);
    expect(() => toDistances(asym, { input: 'correlation' })).toThrow(/row 12, column 5/);
    // sub-05: region 17 is NaN in its whole row and column, and nowhere else.
    const dead = readMatrix(file('sub-05'));
    for (let i = 0; i < 60; i++) {
      for (let j = 0; j < 60; j++) {
        expect(Number.isNaN(dead.values[i * 60 + j])).toBe(i === 16 || j === 16);
      }
    }
    // sub-06: 58 × 58.
    expect(readMatrix(file('sub-06')).n).toBe(58);
    // sub-07: listed, no file.
    expect(readdirSync(messy)).not.toContain('sub-07_conn.tsv');
    // sub-08: binary, not text.
    const bytes = readFileSync(file('sub-08'));
    expect([...bytes.subarray(0, 2)]).toEqual([0x1f, 0x8b]);
    expect(() => new TextDecoder('utf-8', { fatal: true }).decode(bytes)).toThrow();
    // sub-09: a file with no participants row.
    expect(listed.map((p) => p.participant_id)).not.toContain('sub-09');
  });
});
