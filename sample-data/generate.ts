/**
 * Writes the bundled demo cohorts, byte for byte the same on every run:
 *
 *   npx tsx sample-data/generate.ts [outDir] [--force]   (outDir defaults to sample-data/; --force replaces
 *                                                        files that exist with other content)
 *
 * rhythm-study/        an invented 8-week rhythm-training study as a BIDS tree with sessions: 24
 *                      participants (training 12, waitlist 12), each scanned before (ses-pre) and after
 *                      (ses-post) the 8 weeks; 60 regions in 6 networks, one sample correlation matrix per scan.
 * rhythm-study-messy/  a small cohort with deliberately broken files, for the quality-control view.
 *
 * Every matrix is the sample correlation of a latent-factor block model (electron/engine/generator).
 * A participant's own draws (block correlations, a personal bridging node) are shared by both of
 * their scans: a subject random effect. The training group carries a planted effect after training
 * only (a group × session interaction): four nodes each bridge to a second network, forming a ring
 * of cross-network coupling (see sample-data/README.md). Invented demo data.
 */
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createRng, shuffle, type Rng } from '../electron/engine/random.ts';
import {
  factorModel,
  gaussianSource,
  sampleCorrelation,
  withPlantedEffect,
  type BlockModelSpec,
  type Overlap,
} from '../electron/engine/generator/index.ts';
import type { SquareMatrix } from '../electron/engine/types.ts';

export const STUDY = 'rhythm-study';
export const MESSY = 'rhythm-study-messy';
const SEED = 20260508;
const TIME_POINTS = 240; // the quality-control cohort: 8 minutes at a 2-s repetition time
/** The main study: 8 minutes at a 0.8-s (multiband) repetition time. */
const STUDY_TIME_POINTS = 600;

interface Network {
  code: string;
  name: string;
  /** Super-module: 0 sensory, 1 association. */
  family: number;
  /** Made-up centroid of the right-hemisphere half (x > 0), in millimetres. */
  centre: [number, number, number];
}

export const NETWORKS: Network[] = [
  { code: 'VIS', name: 'visual', family: 0, centre: [22, -84, 4] },
  { code: 'SMN', name: 'somatomotor', family: 0, centre: [36, -22, 56] },
  { code: 'AUD', name: 'auditory', family: 0, centre: [52, -20, 8] },
  { code: 'DMN', name: 'default', family: 1, centre: [10, -50, 30] },
  { code: 'FPN', name: 'frontoparietal', family: 1, centre: [42, 28, 32] },
  { code: 'SAL', name: 'salience', family: 1, centre: [34, 16, 2] },
];
const PER_HEMISPHERE = 5;

export interface NodeRow {
  label: string;
  network: string;
  module: number;
  x: number;
  y: number;
  z: number;
}

/** 60 regions: per network 5 left then 5 right, labelled L_AUD_1 … R_AUD_5. */
export function nodeTable(): NodeRow[] {
  const rng = createRng(SEED ^ 0x5a5a);
  const jitter = (): number => Math.round((rng.next() * 2 - 1) * 9);
  const rows: NodeRow[] = [];
  NETWORKS.forEach((net, module) => {
    for (const side of ['L', 'R']) {
      for (let k = 1; k <= PER_HEMISPHERE; k++) {
        const sign = side === 'L' ? -1 : 1;
        rows.push({
          label: `${side}_${net.code}_${k}`,
          network: net.name,
          module,
          x: sign * Math.max(2, net.centre[0] + jitter()),
          y: net.centre[1] + jitter(),
          z: net.centre[2] + jitter(),
        });
      }
    }
  });
  return rows;
}

/** The planted ring: each node bridges to the next network, auditory → somatomotor → salience → frontoparietal → auditory. */
export const PLANTED: Array<{ label: string; target: string }> = [
  { label: 'L_AUD_2', target: 'somatomotor' },
  { label: 'R_SMN_3', target: 'salience' },
  { label: 'L_SAL_1', target: 'frontoparietal' },
  { label: 'R_FPN_4', target: 'auditory' },
];
export const PLANTED_GROUP = 'training';
/** Mean planted share π (module variance moved to the target network) in the training group. */
export const PLANTED_SHARE = 0.35;
/** The same in the quality-control cohort. */
const MESSY_SHARE = 0.3;

/** The block model everyone shares; a subject varies it slightly (see subjectSpec). */
export const BASE = { within: 0.5, nested: 0.18, between: 0.1 };

export interface Participant {
  id: string;
  group: 'training' | 'waitlist';
  age: number;
  sex: 'F' | 'M';
  fd_mean: number | null;
}

function participants(count: number, rng: Rng): Participant[] {
  const gauss = gaussianSource(rng);
  const groups: Array<Participant['group']> = [];
  for (let i = 0; i < count; i++) groups.push(i < count / 2 ? 'training' : 'waitlist');
  shuffle(groups, rng);
  return groups.map((group, i) => ({
    id: `sub-${String(i + 1).padStart(2, '0')}`,
    group,
    age: 19 + rng.int(17),
    sex: rng.next() < 0.5 ? 'F' : 'M',
    fd_mean: Math.round((0.07 + 0.05 * Math.abs(gauss())) * 1000) / 1000,
  }));
}

/** A subject's model: jittered block correlations, motion (fd) adding a little global coupling, and the planted effect in the training group. */
export function subjectSpec(p: Participant, nodes: NodeRow[], rng: Rng): BlockModelSpec {
  const gauss = gaussianSource(rng);
  const clamp = (x: number, lo: number, hi: number): number => Math.min(hi, Math.max(lo, x));
  const motion = 0.6 * ((p.fd_mean ?? 0.1) - 0.1);
  const between = clamp(BASE.between + 0.02 * gauss() + motion, 0.02, 0.2);
  const nested = clamp(BASE.nested + 0.02 * gauss() + motion, between, 0.3);
  const within = clamp(BASE.within + 0.03 * gauss(), nested + 0.15, 0.7);
  let spec: BlockModelSpec = {
    modules: nodes.map((r) => r.module),
    within,
    between,
    nesting: { superOf: NETWORKS.map((n) => n.family), correlation: nested },
    // An overlapping module in everyone: a default-network node shares a fifth of its module variance with frontoparietal.
    overlaps: [{ node: indexOf(nodes, 'R_DMN_2'), module: moduleOf('frontoparietal'), share: 0.2 }],
  };
  if (p.group === PLANTED_GROUP) {
    spec = withPlantedEffect(spec, {
      kind: 'bridge',
      nodes: PLANTED.map((q) => indexOf(nodes, q.label)),
      targets: PLANTED.map((q) => moduleOf(q.target)),
      share: clamp(MESSY_SHARE + 0.05 * gauss(), 0.15, 0.45),
    });
  }
  return spec;
}

function indexOf(nodes: NodeRow[], label: string): number {
  const i = nodes.findIndex((r) => r.label === label);
  if (i < 0) throw new Error(`no node labelled ${label}`);
  return i;
}

function moduleOf(network: string): number {
  const m = NETWORKS.findIndex((n) => n.name === network);
  if (m < 0) throw new Error(`no network named ${network}`);
  return m;
}

/** The two scans of everyone, in this order: before and after the 8 weeks. */
export const SESSIONS = ['pre', 'post'] as const;
export type Session = (typeof SESSIONS)[number];
/** Participants in the main study (half per arm). */
export const STUDY_SIZE = 24;

/** What a participant keeps across sessions: the subject random effect. */
export interface Trait {
  within: number;
  nested: number;
  between: number;
  /** Planted share after training (training arm only; drawn for everyone, used by the trained). */
  share: number;
  /** A personal bridge: one region that also loads on another network, in both scans. */
  quirk: Overlap;
}

export interface Person {
  id: string;
  group: 'training' | 'waitlist';
  age: number;
  sex: 'F' | 'M';
  trait: Trait;
}

export interface Scan {
  person: Person;
  session: Session;
  fd_mean: number;
  matrix: SquareMatrix;
}

export interface Study {
  nodes: NodeRow[];
  people: Person[];
  /** Participant by participant, sessions in SESSIONS order. */
  scans: Scan[];
}

const clamp = (x: number, lo: number, hi: number): number => Math.min(hi, Math.max(lo, x));

/** The participants of the longitudinal study and their traits (everything a participant carries into both scans). */
function people(count: number, nodes: NodeRow[], rng: Rng, seed: number): Person[] {
  const groups: Array<Person['group']> = [];
  for (let i = 0; i < count; i++) groups.push(i < count / 2 ? 'training' : 'waitlist');
  shuffle(groups, rng);
  // Regions that may carry a personal bridge: not the planted four, not the everyone-overlap.
  const free = nodes
    .map((r, i) => ({ r, i }))
    .filter(({ r }) => !PLANTED.some((q) => q.label === r.label) && r.label !== 'R_DMN_2');
  return groups.map((group, k) => {
    const own = createRng(seed + 2000 + k);
    const gauss = gaussianSource(own);
    const between = clamp(BASE.between + 0.02 * gauss(), 0.03, 0.18);
    const nested = clamp(BASE.nested + 0.02 * gauss(), between, 0.28);
    const within = clamp(BASE.within + 0.03 * gauss(), nested + 0.18, 0.66);
    const node = free[own.int(free.length)];
    const others = NETWORKS.map((_, m) => m).filter((m) => m !== node.r.module);
    return {
      id: `sub-${String(k + 1).padStart(2, '0')}`,
      group,
      age: 19 + rng.int(17),
      sex: rng.next() < 0.5 ? 'F' : 'M',
      trait: {
        within,
        nested,
        between,
        share: clamp(PLANTED_SHARE + 0.05 * gauss(), 0.2, 0.5),
        quirk: { node: node.i, module: others[own.int(others.length)], share: 0.05 + 0.07 * own.next() },
      },
    };
  });
}

/**
 * One scan's model: the participant's block correlations with a smaller session jitter, head
 * motion (fd) adding a little global coupling, the overlaps everyone and this participant have,
 * and — in the training arm after training only — the planted bridges.
 */
export function scanSpec(
  p: Person,
  session: Session,
  fd: number,
  nodes: NodeRow[],
  rng: Rng,
): BlockModelSpec {
  const gauss = gaussianSource(rng);
  const motion = 0.6 * (fd - 0.1);
  const between = clamp(p.trait.between + 0.01 * gauss() + motion, 0.02, 0.2);
  const nested = clamp(p.trait.nested + 0.01 * gauss() + motion, between, 0.3);
  const within = clamp(p.trait.within + 0.015 * gauss(), nested + 0.15, 0.7);
  let spec: BlockModelSpec = {
    modules: nodes.map((r) => r.module),
    within,
    between,
    nesting: { superOf: NETWORKS.map((n) => n.family), correlation: nested },
    // In everyone: a default-network node shares a fifth of its module variance with frontoparietal.
    overlaps: [
      { node: indexOf(nodes, 'R_DMN_2'), module: moduleOf('frontoparietal'), share: 0.2 },
      p.trait.quirk,
    ],
  };
  if (p.group === PLANTED_GROUP && session === 'post') {
    spec = withPlantedEffect(spec, {
      kind: 'bridge',
      nodes: PLANTED.map((q) => indexOf(nodes, q.label)),
      targets: PLANTED.map((q) => moduleOf(q.target)),
      share: p.trait.share,
    });
  }
  return spec;
}

/** The main demo study, in memory. Each scan's draws come from its own seed, so one scan can be regenerated alone. */
export function buildStudy(count = STUDY_SIZE, seed = SEED): Study {
  const nodes = nodeTable();
  const rng = createRng(seed);
  const persons = people(count, nodes, rng, seed);
  const scans: Scan[] = [];
  persons.forEach((person, k) => {
    SESSIONS.forEach((session, s) => {
      const own = createRng(seed + 3000 + 2 * k + s);
      const fd = Math.round((0.07 + 0.05 * Math.abs(gaussianSource(own)())) * 1000) / 1000;
      const matrix = sampleCorrelation(
        factorModel(scanSpec(person, session, fd, nodes, own)),
        STUDY_TIME_POINTS,
        own,
      );
      scans.push({ person, session, fd_mean: fd, matrix });
    });
  });
  return { nodes, people: persons, scans };
}

/** Where a scan's matrix lives in the BIDS tree, relative to the study folder. */
export function scanPath(id: string, session: Session): string {
  return `${id}/ses-${session}/func/${id}_ses-${session}_task-rest_desc-corr_relmat.tsv`;
}

/** Six significant digits, without trailing zeros. */
export function formatValue(x: number): string {
  if (Number.isNaN(x)) return 'NaN';
  return String(Number(x.toPrecision(6)));
}

export function matrixTsv(m: SquareMatrix): string {
  const lines: string[] = [];
  for (let i = 0; i < m.n; i++) {
    const row: string[] = [];
    for (let j = 0; j < m.n; j++) row.push(formatValue(m.values[i * m.n + j]));
    lines.push(row.join('\t'));
  }
  return lines.join('\n') + '\n';
}

function studyParticipantsTsv(persons: Person[]): string {
  const lines = ['participant_id\tgroup\tage\tsex'];
  for (const p of persons) lines.push([p.id, p.group, p.age, p.sex].join('\t'));
  return lines.join('\n') + '\n';
}

function sessionsTsv(scans: Scan[]): string {
  const lines = ['session_id\tfd_mean'];
  for (const s of scans) lines.push([`ses-${s.session}`, s.fd_mean.toFixed(3)].join('\t'));
  return lines.join('\n') + '\n';
}

const DATASET_DESCRIPTION =
  JSON.stringify(
    {
      Name: 'rhythm-study (invented demo data)',
      BIDSVersion: '1.9.0',
      DatasetType: 'derivative',
      GeneratedBy: [{ Name: 'loopwise sample-data/generate.ts' }],
    },
    null,
    2,
  ) + '\n';

function participantsTsv(people: Participant[]): string {
  const lines = ['participant_id\tgroup\tage\tsex\tfd_mean'];
  for (const p of people) {
    lines.push([p.id, p.group, p.age, p.sex, p.fd_mean === null ? 'n/a' : p.fd_mean.toFixed(3)].join('\t'));
  }
  return lines.join('\n') + '\n';
}

function nodesTsv(nodes: NodeRow[]): string {
  const lines = ['label\tnetwork\tx\ty\tz'];
  for (const r of nodes) lines.push([r.label, r.network, r.x, r.y, r.z].join('\t'));
  return lines.join('\n') + '\n';
}

/** A copy of an n × n matrix without the listed rows and columns. */
function dropRegions(m: SquareMatrix, drop: number[]): SquareMatrix {
  const keep: number[] = [];
  for (let i = 0; i < m.n; i++) if (!drop.includes(i)) keep.push(i);
  const n = keep.length;
  const values = new Float64Array(n * n);
  keep.forEach((i, a) => keep.forEach((j, b) => (values[a * n + b] = m.values[i * m.n + j])));
  return { n, values };
}

/**
 * The messy companion: eight listed participants and nine matrix files, each problem planted on purpose
 * (sample-data/README.md lists them). The clean subjects come from the same model as the main study.
 */
export function buildMessy(): Map<string, string | Uint8Array> {
  const nodes = nodeTable();
  const people = participants(9, createRng(SEED + 7));
  const files = new Map<string, string | Uint8Array>();
  const matrix = (k: number): SquareMatrix => {
    const rng = createRng(SEED + 5000 + k);
    return sampleCorrelation(factorModel(subjectSpec(people[k], nodes, rng)), TIME_POINTS, rng);
  };
  const listed = people.slice(0, 8);
  listed[2] = { ...listed[2], fd_mean: null }; // a missing covariate value
  files.set('participants.tsv', participantsTsv(listed));
  files.set('nodes.tsv', nodesTsv(nodes));
  for (const k of [0, 1, 2]) files.set(`${people[k].id}_conn.tsv`, matrixTsv(matrix(k)));

  // sub-04: asymmetric — one cell disagrees with its mirror image.
  const asym = matrix(3);
  asym.values[4 * asym.n + 11] += 0.25;
  files.set(`${people[3].id}_conn.tsv`, matrixTsv(asym));

  // sub-05: a dead region — row and column 17 (R_SMN_2) are NaN.
  const dead = matrix(4);
  for (let j = 0; j < dead.n; j++) {
    dead.values[16 * dead.n + j] = NaN;
    dead.values[j * dead.n + 16] = NaN;
  }
  files.set(`${people[4].id}_conn.tsv`, matrixTsv(dead));

  // sub-06: wrong size — two regions missing (58 × 58).
  files.set(`${people[5].id}_conn.tsv`, matrixTsv(dropRegions(matrix(5), [58, 59])));

  // sub-07: listed in participants.tsv, but no matrix file.

  // sub-08: unreadable — binary bytes, not a table of numbers.
  const rng = createRng(SEED + 8);
  const junk = new Uint8Array(600);
  for (let b = 0; b < junk.length; b++) junk[b] = rng.int(256);
  junk.set([0x1f, 0x8b, 0x08, 0x00], 0); // looks like the start of a gzip stream that never finishes
  files.set(`${people[7].id}_conn.tsv`, junk);

  // sub-09: a good matrix whose subject is missing from participants.tsv.
  files.set(`${people[8].id}_conn.tsv`, matrixTsv(matrix(8)));
  return files;
}

/** Every file of both cohorts, path relative to the sample-data folder → content. */
export function sampleFiles(): Map<string, string | Uint8Array> {
  const files = new Map<string, string | Uint8Array>();
  const study = buildStudy();
  files.set(`${STUDY}/dataset_description.json`, DATASET_DESCRIPTION);
  files.set(`${STUDY}/participants.tsv`, studyParticipantsTsv(study.people));
  files.set(`${STUDY}/nodes.tsv`, nodesTsv(study.nodes));
  for (const p of study.people) {
    const mine = study.scans.filter((s) => s.person === p);
    files.set(`${STUDY}/${p.id}/${p.id}_sessions.tsv`, sessionsTsv(mine));
    for (const s of mine) files.set(`${STUDY}/${scanPath(p.id, s.session)}`, matrixTsv(s.matrix));
  }
  for (const [name, content] of buildMessy()) files.set(`${MESSY}/${name}`, content);
  return files;
}

/**
 * Writes every sample file under outDir (only these files; nothing else there is touched). A file that
 * exists with other content is someone's work or an older generation: refused unless `force`.
 */
export function writeSampleData(outDir: string, force = false): string[] {
  const files = sampleFiles();
  const differing = [...files].filter(([rel, content]) => {
    const path = join(outDir, rel);
    return existsSync(path) && !readFileSync(path).equals(Buffer.from(content));
  });
  if (differing.length > 0 && !force) {
    const names = differing.map(([rel]) => rel);
    throw new Error(
      `${outDir}: ${names.length} file(s) exist with other content (${names.slice(0, 3).join(', ')}` +
        `${names.length > 3 ? ', …' : ''}); rerun with --force to replace them`,
    );
  }
  const written: string[] = [];
  for (const [rel, content] of files) {
    const path = join(outDir, rel);
    mkdirSync(join(path, '..'), { recursive: true });
    writeFileSync(path, content);
    written.push(rel);
  }
  return written;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const args = process.argv.slice(2);
  const force = args.includes('--force');
  const outDir = args.find((a) => a !== '--force') ?? join(fileURLToPath(import.meta.url), '..');
  try {
    const written = writeSampleData(outDir, force);
    console.log(`wrote ${written.length} files under ${outDir}`);
  } catch (e) {
    console.error(`sample-data/generate.ts: ${e instanceof Error ? e.message : String(e)}`);
    process.exit(1);
  }
}
