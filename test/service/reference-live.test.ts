/**
 * The cohort tables against tools outside the project, run live:
 *   - intervals.tsv of every subject equals the barcode that the `ripser` binary (1.2.1, U. Bauer)
 *     computes from the same 1 − r distances, recomputed here from the CSV files independently of
 *     Loopwise's readers; ripser prints values in float32 with 6 significant digits, so values are
 *     compared to 1e-5 (relative);
 *   - provenance.json's file hashes equal coreutils' `sha256sum` of the input files.
 * Skipped where the tools are missing (CI installs ripser).
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { createLoopwiseService } from '../../electron/service/service.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../../electron/service/settings.ts';
import { writeCohort } from './support.ts';

const hasRipser = ['/usr/bin/ripser', '/usr/local/bin/ripser'].some((p) => existsSync(p));
const hasSha = existsSync('/usr/bin/sha256sum');

let root: string;
let cohort: string;
let ids: string[];
let out: string;

beforeAll(async () => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-ref-'));
  cohort = join(root, 'cohort');
  out = join(root, 'out');
  ids = writeCohort(cohort, { subjects: 4, n: 34, seed: 29 });
  const service = createLoopwiseService();
  const { runId } = await service.startRun({
    cohort: { dir: cohort },
    settings: { ...defaultAnalysisSettings(), representatives: false },
    stats: defaultStatsSettings(),
    outDir: out,
    workers: 2,
  });
  const summary = await service.waitForRun(runId);
  await service.close();
  expect(summary.analysed).toBe(4);
});
afterAll(() => rmSync(root, { recursive: true, force: true }));

type Bar = [number, number];

function ripserBarcode(csv: string): Bar[][] {
  const rows = readFileSync(csv, 'utf8')
    .trim()
    .split('\n')
    .map((l) => l.split(',').map(Number));
  const lines: string[] = [];
  for (let i = 1; i < rows.length; i++) {
    const cells: string[] = [];
    for (let j = 0; j < i; j++) cells.push(String(1 - (rows[i][j] + rows[j][i]) / 2));
    lines.push(cells.join(','));
  }
  const text = execFileSync('ripser', ['--format', 'lower-distance', '--dim', '1'], {
    input: lines.join('\n') + '\n',
    encoding: 'utf8',
  });
  const bars: Bar[][] = [[], []];
  let dim = -1;
  for (const line of text.split('\n')) {
    const head = /persistence intervals in dim (\d+)/.exec(line);
    if (head) dim = Number(head[1]);
    const m = /^\s*\[([^,]+),([^)]*)\)/.exec(line);
    if (m && dim >= 0) bars[dim].push([Number(m[1]), m[2].trim() === '' ? Infinity : Number(m[2])]);
  }
  return bars;
}

function sorted(bars: Bar[]): Bar[] {
  return [...bars].sort((a, b) => a[0] - b[0] || a[1] - b[1]);
}

function close(a: number, b: number): boolean {
  return a === b || Math.abs(a - b) <= 1e-5 * Math.max(1, Math.abs(a));
}

it.skipIf(!hasRipser)('intervals.tsv equals ripser 1.2.1 on every subject', () => {
  const rows = readFileSync(join(out, 'intervals.tsv'), 'utf8').trim().split('\n').slice(1);
  for (const id of ids) {
    const ours: Bar[][] = [[], []];
    for (const r of rows) {
      const [pid, dim, birth, death] = r.split('\t');
      if (pid === id) ours[Number(dim)].push([Number(birth), death === 'inf' ? Infinity : Number(death)]);
    }
    const theirs = ripserBarcode(join(cohort, `${id}_conn.csv`));
    for (const d of [0, 1]) {
      const a = sorted(ours[d]);
      const b = sorted(theirs[d]);
      expect(a.length, `${id} H${d} count`).toBe(b.length);
      expect(a.length).toBeGreaterThan(0);
      a.forEach(([birth, death], k) => {
        expect(close(birth, b[k][0]), `${id} H${d} #${k} birth ${birth} vs ${b[k][0]}`).toBe(true);
        expect(close(death, b[k][1]), `${id} H${d} #${k} death ${death} vs ${b[k][1]}`).toBe(true);
      });
    }
  }
});

it.skipIf(!hasSha)('provenance.json records the SHA-256 of every input file as sha256sum computes it', () => {
  const prov = JSON.parse(readFileSync(join(out, 'provenance.json'), 'utf8'));
  expect(prov.inputFiles).toHaveLength(ids.length);
  for (const f of prov.inputFiles as Array<{ file: string; sha256: string }>) {
    const line = execFileSync('sha256sum', [join(cohort, f.file)], { encoding: 'utf8' });
    expect(f.sha256).toBe(line.split(' ')[0]);
  }
});
