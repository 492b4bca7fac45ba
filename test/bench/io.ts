/**
 * Reader benchmarks (not a test): `npx tsx test/bench/io.ts [--subjects 500] [--runs 7]`.
 *
 *   1. a 1000 × 1000 delimited matrix (17 significant digits, comma; 6 decimals, tab) read by
 *      readMatrixFile: median wall time over the runs, and the peak RSS of a process that does only that;
 *   2. openCohort over cohorts of 200 × 200 tab-separated matrices (100, 250 and the full count):
 *      wall time and peak RSS, each in a fresh process, so that memory growing with the number of
 *      subjects would show (openCohort keeps sources, not values).
 * Everything is written to a temporary folder and removed afterwards.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, statSync, writeFileSync, createWriteStream } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createRng } from '../../electron/engine/random.ts';
import { openCohort } from '../../electron/io/cohort.ts';
import { readMatrixFile } from '../../electron/io/read-matrix.ts';

const self = fileURLToPath(import.meta.url);
const argv = process.argv.slice(2);
const opt = (name: string, dflt: number): number => {
  const k = argv.indexOf(`--${name}`);
  return k >= 0 ? Number(argv[k + 1]) : dflt;
};
const mb = (bytes: number): string => `${(bytes / 1048576).toFixed(1)} MB`;
const peakRss = (): number => process.resourceUsage().maxRSS * 1024;

/** A symmetric matrix with unit diagonal and entries in (−1, 1), as text rows. */
async function writeMatrix(
  file: string,
  n: number,
  seed: number,
  sep: string,
  digits: number,
): Promise<void> {
  const rng = createRng(seed);
  const m = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    m[i * n + i] = 1;
    for (let j = 0; j < i; j++) m[i * n + j] = m[j * n + i] = rng.next() * 1.8 - 0.9;
  }
  const out = createWriteStream(file);
  for (let i = 0; i < n; i++) {
    const row: string[] = [];
    for (let j = 0; j < n; j++) row.push(digits >= 17 ? String(m[i * n + j]) : m[i * n + j].toFixed(digits));
    if (!out.write(row.join(sep) + '\n')) await new Promise<void>((r) => out.once('drain', () => r()));
  }
  await new Promise<void>((r, e) => out.end((err?: Error | null) => (err ? e(err) : r())));
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)];
}

async function phaseRead(file: string, runs: number): Promise<void> {
  const times: number[] = [];
  let n = 0;
  for (let r = 0; r < runs; r++) {
    const t0 = performance.now();
    n = (await readMatrixFile(file)).n;
    times.push(performance.now() - t0);
  }
  console.log(JSON.stringify({ n, medianMs: median(times), minMs: Math.min(...times), peakRss: peakRss() }));
}

async function phaseCohort(dir: string, participants: string): Promise<void> {
  const base = process.memoryUsage().rss;
  const t0 = performance.now();
  const report = await openCohort({ dir, participants });
  const ms = performance.now() - t0;
  console.log(
    JSON.stringify({
      subjects: report.subjects.length,
      usable: report.subjects.filter((s) => s.usable).length,
      ms,
      rssBefore: base,
      peakRss: peakRss(),
      reportBytes: JSON.stringify(report).length,
    }),
  );
}

function child(args: string[]): Record<string, number> {
  const r = spawnSync(process.execPath, [...process.execArgv, self, ...args], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`benchmark child failed: ${r.stderr}`);
  return JSON.parse(r.stdout.trim().split('\n').pop()!) as Record<string, number>;
}

async function mainBench(): Promise<void> {
  const runs = opt('runs', 7);
  const subjects = opt('subjects', 500);
  const root = mkdtempSync(join(tmpdir(), 'loopwise-bench-io-'));
  try {
    console.log(`node ${process.version}; temporary files in ${root}\n`);
    console.log('1000 × 1000 delimited matrix, readMatrixFile');
    for (const [name, sep, digits] of [
      ['full-precision.csv', ',', 17],
      ['six-decimals.tsv', '\t', 6],
    ] as const) {
      const file = join(root, name);
      await writeMatrix(file, 1000, 7, sep, digits);
      const r = child(['--phase', 'read', file, String(runs)]);
      console.log(
        `  ${name.padEnd(20)} ${mb(statSync(file).size).padStart(9)}  median ${r.medianMs.toFixed(0)} ms (min ${r.minMs.toFixed(0)}) over ${runs} runs, peak RSS ${mb(r.peakRss)}`,
      );
    }

    console.log(`\ncohorts of 200 × 200 matrices (tab, 6 decimals), openCohort`);
    const dir = join(root, 'cohort');
    mkdirSync(dir);
    for (let s = 1; s <= subjects; s++)
      await writeMatrix(join(dir, `sub-${String(s).padStart(4, '0')}_conn.tsv`), 200, 1000 + s, '\t', 6);
    const dataBytes = 200 * 200 * 8;
    for (const count of [...new Set([100, 250, subjects])].filter((c) => c <= subjects)) {
      const participants = join(root, `participants-${count}.tsv`);
      const ids = Array.from({ length: count }, (_, k) => `sub-${String(k + 1).padStart(4, '0')}`);
      writeFileSync(participants, ['participant_id', ...ids].join('\n') + '\n');
      const r = child(['--phase', 'cohort', dir, participants]);
      console.log(
        `  ${String(count).padStart(4)} subjects: ${(r.ms / 1000).toFixed(2)} s, peak RSS ${mb(r.peakRss)} (${mb(r.rssBefore)} before opening; all values as doubles would be ${mb(count * dataBytes)}), report ${mb(r.reportBytes)} as JSON, ${r.usable} usable`,
      );
    }
  } finally {
    rmSync(root, { recursive: true, force: true });
  }
}

if (argv[0] === '--phase' && argv[1] === 'read') await phaseRead(argv[2], Number(argv[3]));
else if (argv[0] === '--phase' && argv[1] === 'cohort') await phaseCohort(argv[2], argv[3]);
else await mainBench();
