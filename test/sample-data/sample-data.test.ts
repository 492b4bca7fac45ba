import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { MatrixError, toDistances } from '../../electron/engine/transform.ts';
import type { SquareMatrix } from '../../electron/engine/types.ts';
import {
  BASE,
  MESSY,
  PLANTED,
  PLANTED_GROUP,
  SESSIONS,
  STUDY,
  scanPath,
  writeSampleData,
} from '../../sample-data/generate.ts';
import { jacobiEigenvalues } from '../engine/generator/jacobi.ts';
import { h1Participation, meanOver } from '../engine/generator/participation.ts';

const SAMPLE = fileURLToPath(new URL('../../sample-data/', import.meta.url));
const reference = JSON.parse(
  readFileSync(new URL('./goldens/rhythm-study-reference.json', import.meta.url), 'utf8'),
) as {
  mixed: Record<
    'planted_target' | 'within',
    {
      interaction: number;
      interaction_p: number;
      group_at_pre: number;
      group_at_pre_p: number;
      participant_variance: number;
      residual_variance: number;
    }
  >;
  subjects: Array<{
    id: string;
    session: string;
    group: string;
    fd_mean: number;
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
/** Every scan: participant by participant, sessions in order (pre, post), as the golden lists them. */
const scans = people.flatMap((p) =>
  SESSIONS.map((session) => ({
    id: p.participant_id,
    group: p.group,
    session,
    matrix: readMatrix(join(study, scanPath(p.participant_id, session))),
  })),
);
const matrices = scans.map((s) => s.matrix);
const network = nodes.map((r) => r.network);
const planted = PLANTED.map((p) => nodes.findIndex((r) => r.label === p.label));
const mean = (a: number[]): number => a.reduce((x, y) => x + y, 0) / a.length;

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
  it('is a BIDS tree: 24 participants in two arms of 12, each scanned before and after, a 60-region node table in 6 networks', () => {
    expect(Object.keys(people[0])).toEqual(['participant_id', 'group', 'age', 'sex']);
    expect(people.map((p) => p.participant_id)).toEqual(
      Array.from({ length: 24 }, (_, i) => `sub-${String(i + 1).padStart(2, '0')}`),
    );
    expect(people.filter((p) => p.group === 'training')).toHaveLength(12);
    expect(people.filter((p) => p.group === 'waitlist')).toHaveLength(12);
    const files = filesUnder(study).sort();
    expect(files).toHaveLength(3 + 24 * 3);
    for (const p of people) {
      const id = p.participant_id;
      expect(files).toContain(`${id}/${id}_sessions.tsv`);
      for (const ses of SESSIONS)
        expect(files).toContain(`${id}/ses-${ses}/func/${id}_ses-${ses}_task-rest_desc-corr_relmat.tsv`);
      const rows = readTable(join(study, id, `${id}_sessions.tsv`));
      expect(rows.map((r) => r.session_id)).toEqual(['ses-pre', 'ses-post']);
      for (const r of rows) expect(Number(r.fd_mean)).toBeGreaterThan(0.05);
    }
    expect(JSON.parse(readFileSync(join(study, 'dataset_description.json'), 'utf8')).BIDSVersion).toBe(
      '1.9.0',
    );
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
    expect(reference.subjects.map((s) => `${s.id}_ses-${s.session}`)).toEqual(
      scans.map((s) => `${s.id}_ses-${s.session}`),
    );
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

  /** Mean r of the planted nodes with the networks they bridge to, recomputed from a scan's file. */
  const plantedTarget = (m: SquareMatrix): number => {
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
    return s / PLANTED.length;
  };
  const cell = (values: number[], group: string, session: string): number =>
    mean(values.filter((_, k) => scans[k].group === group && scans[k].session === session));

  it('raises the planted nodes’ correlation with their target networks in the training arm after training only (group × session)', () => {
    const values = matrices.map(plantedTarget);
    values.forEach((v, k) => expect(v).toBeCloseTo(reference.subjects[k].planted_target, 10));
    const change = (g: string): number => cell(values, g, 'post') - cell(values, g, 'pre');
    const interaction = change(PLANTED_GROUP) - change('waitlist');
    // Expected (w − c)√share = (0.5 − 0.18)·√0.35 ≈ 0.19.
    expect(interaction).toBeGreaterThan(0.12);
    expect(interaction).toBeLessThan(0.25);
    // A balanced design: the mixed model's interaction is the difference of differences of the cell
    // means (statsmodels 0.13.5 MixedLM, test/sample-data/make_sample_reference.py).
    const mixed = reference.mixed.planted_target;
    expect(interaction).toBeCloseTo(mixed.interaction, 6);
    expect(mixed.interaction_p).toBeLessThan(1e-6);
    // Before training the arms do not differ.
    expect(Math.abs(cell(values, PLANTED_GROUP, 'pre') - cell(values, 'waitlist', 'pre'))).toBeLessThan(0.02);
    expect(mixed.group_at_pre_p).toBeGreaterThan(0.05);
    expect(Math.abs(change('waitlist'))).toBeLessThan(0.02);
  });

  it('makes scans of one participant alike: a subject random effect', () => {
    // Intraclass correlation of the mean within-network r (statsmodels MixedLM variance components).
    const { participant_variance: u, residual_variance: e } = reference.mixed.within;
    expect(u / (u + e)).toBeGreaterThan(0.5);
    // And recomputed here: pre and post values of the participants correlate (Pearson, common practice).
    const within = matrices.map((m) => {
      let s = 0;
      let c = 0;
      for (let i = 0; i < 60; i++)
        for (let j = 0; j < 60; j++)
          if (i !== j && network[i] === network[j]) {
            s += m.values[i * 60 + j];
            c++;
          }
      return s / c;
    });
    within.forEach((v, k) => expect(v).toBeCloseTo(reference.subjects[k].within, 10));
    const pre = within.filter((_, k) => scans[k].session === 'pre');
    const post = within.filter((_, k) => scans[k].session === 'post');
    const mp = mean(pre);
    const mq = mean(post);
    let sxy = 0;
    let sxx = 0;
    let syy = 0;
    pre.forEach((x, i) => {
      sxy += (x - mp) * (post[i] - mq);
      sxx += (x - mp) ** 2;
      syy += (post[i] - mq) ** 2;
    });
    expect(sxy / Math.sqrt(sxx * syy)).toBeGreaterThan(0.5);
  });

  it('makes the planted nodes take part in longer H1 cycles after training, and lead the training − waitlist difference then', () => {
    const persistence = new Map<string, Float64Array>();
    matrices.forEach((m, k) => {
      const key = `${scans[k].group}|${scans[k].session}`;
      if (!persistence.has(key)) persistence.set(key, new Float64Array(60));
      const p = h1Participation(m);
      for (let i = 0; i < 60; i++) persistence.get(key)![i] += p.persistence[i] / 12;
    });
    const at = (g: string, s: string): Float64Array => persistence.get(`${g}|${s}`)!;
    expect(meanOver(at(PLANTED_GROUP, 'post'), planted)).toBeGreaterThan(
      2 * meanOver(at(PLANTED_GROUP, 'pre'), planted),
    );
    const rank = (diff: (i: number) => number): number[] =>
      Array.from({ length: 60 }, (_, i) => i).sort((a, b) => diff(b) - diff(a));
    // The demo's promise: after training, ranked by the training − waitlist difference in
    // persistence-weighted participation, the four planted nodes come first.
    const post = rank((i) => at(PLANTED_GROUP, 'post')[i] - at('waitlist', 'post')[i]);
    expect(post.slice(0, 4).sort((a, b) => a - b)).toEqual([...planted].sort((a, b) => a - b));
    // Ranked by the interaction (change in training − change in waitlist) they are among the first eight
    // (the cycles also pass through nodes of the networks they bridge to).
    const interaction = rank(
      (i) =>
        at(PLANTED_GROUP, 'post')[i] -
        at(PLANTED_GROUP, 'pre')[i] -
        (at('waitlist', 'post')[i] - at('waitlist', 'pre')[i]),
    );
    for (const i of planted) expect(interaction.indexOf(i)).toBeLessThan(8);
    // Before training nothing sets them apart.
    const pre = rank((i) => at(PLANTED_GROUP, 'pre')[i] - at('waitlist', 'pre')[i]);
    expect(planted.filter((i) => pre.indexOf(i) < 4).length).toBeLessThan(2);
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
