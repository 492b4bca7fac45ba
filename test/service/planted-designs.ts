/**
 * Cohorts with a known answer for the study-design acceptance test, drawn from the seeded
 * latent-factor block model (electron/engine/generator): 36 regions in 6 modules of 6, nested in
 * two super-modules; every scan is the sample correlation of 600 time points of the model.
 *
 * - `writeSessionCohort`: a nested BIDS tree with sessions (`sub-XX/ses-pre|ses-post/func/…_relmat.tsv`,
 *   `sub-XX/sub-XX_sessions.tsv` with a per-scan `fd_mean`, `participants.tsv`, no node table).
 *   Each participant keeps their own block correlations and a personal bridging region in both
 *   scans (a subject random effect); with `planted`, the SESSION_REGIONS bridge to another module
 *   in every participant's ses-post scan only (a within-subject effect).
 * - `writeFlatCohort`: one matrix per participant (`sub-XX_conn.tsv`) with `age` and `sex`; with
 *   `planted`, the AGE_REGIONS bridge with a share 0.9 (age − 20) / 40 (ages 20–60) and the SEX_REGIONS bridge
 *   in every `M` participant (an effect of sex unrelated to age).
 *
 * A bridge moves part of a region's module variance onto the target module's factor
 * (block-model.ts, 'bridge'): its correlation with the target module rises and with its own
 * module falls. Within a participant this puts the region on more and longer H1 cycles
 * (`h1_weighted` grows from pre to post); across participants, whose H1 cycles vary a lot, the
 * clearer trace is that the region joins its own module later (`h0_birth_component_lifetime` grows
 * with the share).
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { createRng, type Rng } from '../../electron/engine/random.ts';
import {
  factorModel,
  gaussianSource,
  sampleCorrelation,
  withPlantedEffect,
  type BlockModelSpec,
  type Overlap,
} from '../../electron/engine/generator/index.ts';
import type { SquareMatrix } from '../../electron/engine/types.ts';

export const REGIONS = 36;
const PER_MODULE = 6;
const SUPER_OF = [0, 0, 0, 1, 1, 1];
const TIME_POINTS = 600;
const MODULES = Array.from({ length: REGIONS }, (_, i) => Math.floor(i / PER_MODULE));

/** Planted within-subject regions (0-based) and the module each bridges to at ses-post. */
export const SESSION_REGIONS = [2, 15, 27] as const;
const SESSION_TARGETS = [4, 3, 1];
/** Regions whose bridge share grows with age, and those bridging in male participants. */
export const AGE_REGIONS = [4, 20, 33] as const;
const AGE_TARGETS = [3, 0, 2];
export const SEX_REGIONS = [9, 26] as const;
const SEX_TARGETS = [5, 2];

const clamp = (x: number, lo: number, hi: number): number => Math.min(hi, Math.max(lo, x));

/** What a participant carries into every scan: block correlations and a personal bridge. */
interface Trait {
  within: number;
  nested: number;
  between: number;
  quirk: Overlap;
}

function trait(rng: Rng, avoid: readonly number[]): Trait {
  const gauss = gaussianSource(rng);
  const between = clamp(0.1 + 0.02 * gauss(), 0.03, 0.18);
  const nested = clamp(0.18 + 0.02 * gauss(), between, 0.28);
  const within = clamp(0.5 + 0.03 * gauss(), nested + 0.18, 0.66);
  const free = MODULES.map((_, i) => i).filter((i) => !avoid.includes(i));
  const node = free[rng.int(free.length)];
  const others = [0, 1, 2, 3, 4, 5].filter((m) => m !== MODULES[node]);
  return {
    within,
    nested,
    between,
    quirk: { node, module: others[rng.int(others.length)], share: 0.05 + 0.07 * rng.next() },
  };
}

/** One scan's spec: the trait with a small scan-to-scan jitter. */
function scanSpec(t: Trait, rng: Rng): BlockModelSpec {
  const gauss = gaussianSource(rng);
  const between = clamp(t.between + 0.01 * gauss(), 0.02, 0.2);
  const nested = clamp(t.nested + 0.01 * gauss(), between, 0.3);
  const within = clamp(t.within + 0.015 * gauss(), nested + 0.15, 0.7);
  return {
    modules: MODULES,
    within,
    between,
    nesting: { superOf: SUPER_OF, correlation: nested },
    overlaps: [t.quirk],
  };
}

function bridge(spec: BlockModelSpec, nodes: readonly number[], targets: number[], share: number) {
  if (share <= 0) return spec;
  return withPlantedEffect(spec, { kind: 'bridge', nodes: [...nodes], targets, share });
}

function matrixTsv(m: SquareMatrix): string {
  const lines: string[] = [];
  for (let i = 0; i < m.n; i++) {
    const row: string[] = [];
    for (let j = 0; j < m.n; j++) row.push(String(Number(m.values[i * m.n + j].toPrecision(8))));
    lines.push(row.join('\t'));
  }
  return lines.join('\n') + '\n';
}

function write(path: string, text: string): void {
  mkdirSync(join(path, '..'), { recursive: true });
  writeFileSync(path, text);
}

const id = (k: number): string => `sub-${String(k + 1).padStart(2, '0')}`;

/** A BIDS tree with sessions pre and post; returns the participant ids. */
export function writeSessionCohort(
  dir: string,
  opts: { participants: number; seed: number; planted: boolean },
): string[] {
  const rng = createRng(opts.seed);
  const ids: string[] = [];
  const rows = ['participant_id\tage\tsex'];
  for (let k = 0; k < opts.participants; k++) {
    const sub = id(k);
    ids.push(sub);
    const own = createRng(opts.seed * 1000 + k);
    const t = trait(own, SESSION_REGIONS);
    const share = clamp(0.45 + 0.05 * gaussianSource(own)(), 0.3, 0.6);
    rows.push(`${sub}\t${20 + rng.int(30)}\t${rng.next() < 0.5 ? 'F' : 'M'}`);
    const sessions = ['session_id\tfd_mean'];
    for (const [s, ses] of (['pre', 'post'] as const).entries()) {
      const scan = createRng(opts.seed * 1000 + 500 + 2 * k + s);
      let spec = scanSpec(t, scan);
      if (opts.planted && ses === 'post') spec = bridge(spec, SESSION_REGIONS, SESSION_TARGETS, share);
      const m = sampleCorrelation(factorModel(spec), TIME_POINTS, scan);
      write(
        join(dir, sub, `ses-${ses}`, 'func', `${sub}_ses-${ses}_task-rest_desc-corr_relmat.tsv`),
        matrixTsv(m),
      );
      sessions.push(`ses-${ses}\t${(0.07 + 0.05 * scan.next()).toFixed(3)}`);
    }
    write(join(dir, sub, `${sub}_sessions.tsv`), sessions.join('\n') + '\n');
  }
  write(join(dir, 'participants.tsv'), rows.join('\n') + '\n');
  write(
    join(dir, 'dataset_description.json'),
    JSON.stringify({
      Name: 'planted session effect (synthetic)',
      BIDSVersion: '1.9.0',
      DatasetType: 'derivative',
    }) + '\n',
  );
  return ids;
}

export interface FlatParticipant {
  id: string;
  age: number;
  sex: 'F' | 'M';
}

/** One matrix per participant; ages spread evenly over 20–60 and sex alternating within age order, so the two are nearly uncorrelated. */
export function writeFlatCohort(
  dir: string,
  opts: { participants: number; seed: number; planted: boolean },
): FlatParticipant[] {
  const rng = createRng(opts.seed);
  const people: FlatParticipant[] = [];
  for (let k = 0; k < opts.participants; k++) {
    const age = Math.round(20 + (40 * k) / (opts.participants - 1));
    people.push({ id: '', age, sex: k % 4 === 0 || k % 4 === 3 ? 'F' : 'M' });
  }
  // Shuffle the order of the rows (ids) so file order says nothing about age.
  for (let i = people.length - 1; i > 0; i--) {
    const j = rng.int(i + 1);
    [people[i], people[j]] = [people[j], people[i]];
  }
  const rows = ['participant_id\tage\tsex'];
  people.forEach((p, k) => {
    p.id = id(k);
    rows.push(`${p.id}\t${p.age}\t${p.sex}`);
    const own = createRng(opts.seed * 1000 + k);
    let spec = scanSpec(trait(own, [...AGE_REGIONS, ...SEX_REGIONS]), own);
    if (opts.planted) {
      spec = bridge(spec, AGE_REGIONS, AGE_TARGETS, (0.9 * (p.age - 20)) / 40);
      if (p.sex === 'M') spec = bridge(spec, SEX_REGIONS, SEX_TARGETS, 0.8);
    }
    write(join(dir, `${p.id}_conn.tsv`), matrixTsv(sampleCorrelation(factorModel(spec), TIME_POINTS, own)));
  });
  write(join(dir, 'participants.tsv'), rows.join('\n') + '\n');
  return people;
}
