/**
 * Small synthetic cohorts for the service tests, made by our own seeded generator: each subject's
 * matrix is the Pearson correlation of T random region time series with a shared component, written
 * as CSV with 17 significant digits, plus a BIDS-style participants.tsv.
 */
import { mkdirSync, readFileSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import { createRng } from '../../electron/engine/random.ts';

export interface CohortSpec {
  subjects: number;
  n: number;
  seed: number;
  /** Time points per series (default 2n). */
  t?: number;
  /** Subject indices whose file is corrupted (a non-numeric cell). */
  broken?: number[];
}

export function correlationMatrix(n: number, t: number, seed: number): Float64Array {
  const rng = createRng(seed);
  const gauss = (): number => {
    const u = 1 - rng.next();
    const v = rng.next();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  };
  const shared = Array.from({ length: t }, gauss);
  const x: number[][] = [];
  for (let i = 0; i < n; i++) {
    const w = 0.3 + 0.5 * rng.next();
    x.push(Array.from({ length: t }, (_, k) => w * shared[k] + gauss()));
  }
  for (const row of x) {
    const mean = row.reduce((a, b) => a + b, 0) / t;
    let ss = 0;
    for (let k = 0; k < t; k++) {
      row[k] -= mean;
      ss += row[k] * row[k];
    }
    const s = Math.sqrt(ss);
    for (let k = 0; k < t; k++) row[k] /= s;
  }
  const m = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    m[i * n + i] = 1;
    for (let j = 0; j < i; j++) {
      let c = 0;
      for (let k = 0; k < t; k++) c += x[i][k] * x[j][k];
      m[i * n + j] = c;
      m[j * n + i] = c;
    }
  }
  return m;
}

export function subjectId(i: number): string {
  return `sub-${String(i + 1).padStart(3, '0')}`;
}

/** Writes the cohort into `dir`; returns the subject ids in order. */
export function writeCohort(dir: string, spec: CohortSpec): string[] {
  mkdirSync(dir, { recursive: true });
  const ids: string[] = [];
  const lines = ['participant_id\tgroup\tage'];
  for (let s = 0; s < spec.subjects; s++) {
    const id = subjectId(s);
    ids.push(id);
    const m = correlationMatrix(spec.n, spec.t ?? 2 * spec.n, spec.seed * 100_003 + s);
    const rows: string[] = [];
    for (let i = 0; i < spec.n; i++) {
      const cells = Array.from(m.subarray(i * spec.n, (i + 1) * spec.n), (v) => v.toPrecision(17));
      if (spec.broken?.includes(s) && i === 2) cells[1] = 'oops';
      rows.push(cells.join(','));
    }
    writeFileSync(join(dir, `${id}_conn.csv`), rows.join('\n') + '\n');
    lines.push(`${id}\t${s % 2 === 0 ? 'control' : 'patient'}\t${20 + ((s * 7) % 40)}`);
  }
  writeFileSync(join(dir, 'participants.tsv'), lines.join('\n') + '\n');
  return ids;
}

/** Every file under `dir` (relative paths), including hidden ones. */
export function listFiles(dir: string): string[] {
  const out: string[] = [];
  const walk = (d: string): void => {
    for (const name of readdirSync(d)) {
      const p = join(d, name);
      if (statSync(p).isDirectory()) walk(p);
      else out.push(relative(dir, p));
    }
  };
  walk(dir);
  return out.sort();
}

/** The visible outputs of a run folder, name → content (provenance with createdAt blanked). */
export function outputs(dir: string): Record<string, string> {
  const out: Record<string, string> = {};
  for (const name of readdirSync(dir).sort()) {
    if (name.startsWith('.')) continue;
    let text = readFileSync(join(dir, name), 'utf8');
    if (name === 'provenance.json') text = text.replace(/"createdAt": "[^"]*"/, '"createdAt": ""');
    // The report says when it was written (the run's createdAt), in one element.
    if (name === 'report.html') text = text.replace(/<time datetime="[^"]*">[^<]*<\/time>/, '<time></time>');
    out[name] = text;
  }
  return out;
}
