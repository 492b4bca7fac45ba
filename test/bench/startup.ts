/**
 * Start-up benchmark: whole `loopwise` processes as a user runs them, against a bare Node start
 * (`node -e 0`) and, for one diagram, against the `ripser` binary (Debian 1.2.1) as a whole process
 * on the same N = 400 matrix. Runs are interleaved so drift in the machine's speed hits all alike.
 * Figures are medians of wall time and of CPU time (user + system) from /usr/bin/time, and the
 * largest peak resident memory; nothing is asserted.
 *
 * `compiled` is `node bin/loopwise.js` running dist-node/ (built first, as `npm run sample` does);
 * `sources` is the same with LOOPWISE_FROM_SOURCE=1 (TypeScript through tsx's loader).
 *
 *   npx tsx test/bench/startup.ts [--quick]
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createRng } from '../../electron/engine/random.ts';

const quick = process.argv.includes('--quick');
const ROUNDS = quick ? 3 : 7;
const repo = join(import.meta.dirname, '..', '..');
const bin = join(repo, 'bin', 'loopwise.js');

/** Distances 1 − r of a latent-factor time-series model (6 factors, T = 240), 6 significant digits. */
function correlationDistances(n: number, seed: number): number[][] {
  const rng = createRng(seed);
  const T = 240;
  const gauss = (): number =>
    Math.sqrt(-2 * Math.log(rng.next() || 1e-12)) * Math.cos(2 * Math.PI * rng.next());
  const F = Array.from({ length: 6 }, () => Array.from({ length: T }, gauss));
  const X = Array.from({ length: n }, (_, i) => {
    const x = F[i % 6].map((f) => 0.8 * f + gauss());
    const mean = x.reduce((a, b) => a + b, 0) / T;
    const c = x.map((v) => v - mean);
    const s = Math.hypot(...c);
    return c.map((v) => v / s);
  });
  return X.map((a, i) =>
    X.map((b, j) => (i === j ? 0 : Number((1 - a.reduce((acc, v, t) => acc + v * b[t], 0)).toPrecision(6)))),
  );
}

interface Run {
  wallMs: number;
  cpuMs: number;
  rssKb: number;
}

function time(cmd: string[], env: Record<string, string> = {}): Run {
  const r = spawnSync('/usr/bin/time', ['-f', '%e %U %S %M', ...cmd], {
    encoding: 'utf8',
    env: { ...process.env, ...env },
    maxBuffer: 1 << 28,
  });
  if (r.status !== 0) throw new Error(`${cmd.join(' ')} failed: ${r.stderr}`);
  const [e, u, s, m] = r.stderr.trim().split('\n').pop()!.split(' ').map(Number);
  return { wallMs: e * 1000, cpuMs: (u + s) * 1000, rssKb: m };
}

const median = (a: number[]): number => {
  const s = [...a].sort((x, y) => x - y);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

const build = spawnSync(process.execPath, [join(repo, 'bin', 'build-node.js')], { stdio: 'inherit' });
if (build.status !== 0) throw new Error('bin/build-node.js failed');

const dir = mkdtempSync(join(tmpdir(), 'loopwise-startup-'));
const D = correlationDistances(400, 1400);
const square = join(dir, 'd400.csv');
const lower = join(dir, 'd400.ldm');
writeFileSync(square, D.map((row) => row.join(',')).join('\n') + '\n');
writeFileSync(lower, D.map((row, i) => row.slice(0, i).join(',')).join('\n') + '\n');
const node = process.execPath;
const diagram = ['diagram', square, '--input', 'distance'];
const SRC = { LOOPWISE_FROM_SOURCE: '1' };

const cases: Array<[string, () => Run]> = [
  ['node -e 0', () => time([node, '-e', '0'])],
  ['loopwise --version (compiled)', () => time([node, bin, '--version'])],
  ['loopwise --help (compiled)', () => time([node, bin, '--help'])],
  ['loopwise --version (sources)', () => time([node, bin, '--version'], SRC)],
  ['loopwise --help (sources)', () => time([node, bin, '--help'], SRC)],
  ['ripser --dim 1, N = 400', () => time(['ripser', '--dim', '1', lower])],
  ['loopwise diagram, N = 400 (compiled)', () => time([node, bin, ...diagram])],
  ['loopwise diagram, N = 400 (sources)', () => time([node, bin, ...diagram], SRC)],
];
const runs = cases.map(() => [] as Run[]);
for (let r = 0; r < ROUNDS; r++) cases.forEach(([, run], i) => runs[i].push(run()));
rmSync(dir, { recursive: true, force: true });

const base = (i: number, key: 'wallMs' | 'cpuMs'): number => median(runs[i].map((x) => x[key]));
console.log(`whole processes, ${ROUNDS} interleaved rounds, medians; ratios to node -e 0 and to ripser`);
console.log(
  'what                                    wall ms  cpu ms  /node(wall)  /ripser(wall)  /ripser(cpu)  peak MiB',
);
cases.forEach(([what], i) => {
  const w = base(i, 'wallMs');
  const c = base(i, 'cpuMs');
  const isDiagram = what.includes('N = 400');
  console.log(
    `${what.padEnd(38)}${w.toFixed(0).padStart(8)}${c.toFixed(0).padStart(8)}${(w / base(0, 'wallMs')).toFixed(2).padStart(13)}` +
      `${isDiagram ? (w / base(5, 'wallMs')).toFixed(2).padStart(15) : ''.padStart(15)}` +
      `${isDiagram ? (c / base(5, 'cpuMs')).toFixed(2).padStart(14) : ''.padStart(14)}` +
      `${(Math.max(...runs[i].map((x) => x.rssKb)) / 1024).toFixed(0).padStart(10)}`,
  );
});
