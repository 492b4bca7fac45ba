/**
 * Engine benchmark: Loopwise's persistence engine against the `ripser` binary (Debian 1.2.1) on
 * the same seeded correlation-derived distance matrices, runs interleaved (ripser, loopwise,
 * ripser, loopwise, …) so that drift in the machine's speed hits both alike.
 *
 * What is measured is CPU time (user + system), not wall time, so that other load on the machine
 * skews the figures less: ripser as a whole process (it reads the file, computes, prints; its start-up is
 * a few milliseconds), Loopwise as the engine call inside a warm Node process (a cohort runs on
 * warm worker threads; Node's own start-up is excluded). Peak memory: ripser's max RSS from
 * /usr/bin/time, Loopwise's from process.resourceUsage() (includes Node's own ~45 MB).
 *
 *   npx tsx test/bench/engine.ts [--quick]
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createRng } from '../../electron/engine/random.ts';

const quick = process.argv.includes('--quick');
const ROUNDS = quick ? 3 : 7;

/** 1 − r of a latent-factor time-series model (6 factors, T = 240), 6 significant digits. */
function correlationDistances(n: number, seed: number): Float64Array {
  const rng = createRng(seed);
  const T = 240;
  const factors = 6;
  const gauss = (): number => {
    const u = rng.next() || 1e-12;
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rng.next());
  };
  const F = Array.from({ length: factors }, () => Float64Array.from({ length: T }, gauss));
  const X = Array.from({ length: n }, (_, i) => {
    const x = Float64Array.from({ length: T }, (_, t) => 0.8 * F[i % factors][t] + gauss());
    let mean = 0;
    for (const v of x) mean += v / T;
    let ss = 0;
    for (let t = 0; t < T; t++) ss += (x[t] -= mean) ** 2;
    const s = Math.sqrt(ss);
    for (let t = 0; t < T; t++) x[t] /= s;
    return x;
  });
  const out = new Float64Array((n * (n - 1)) / 2);
  let k = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < i; j++) {
      let c = 0;
      for (let t = 0; t < T; t++) c += X[i][t] * X[j][t];
      out[k++] = Number((1 - c).toPrecision(6));
    }
  }
  return out;
}

function writeLowerDistance(file: string, n: number, v: Float64Array): void {
  const lines: string[] = [];
  let k = 0;
  for (let i = 0; i < n; i++) {
    const row: number[] = [];
    for (let j = 0; j < i; j++) row.push(v[k++]);
    lines.push(row.join(','));
  }
  writeFileSync(file, lines.join('\n') + '\n');
}

const median = (a: number[]): number => {
  const s = [...a].sort((x, y) => x - y);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

/** ripser's CPU time per run; short runs are repeated inside one timing so /usr/bin/time's 10 ms resolution does not matter. */
function timeRipser(file: string, dim: number, repeat: number): { ms: number; rssKb: number } {
  const loop = `for i in $(seq ${repeat}); do ripser --dim ${dim} '${file}' >/dev/null || exit 1; done`;
  const r = spawnSync('/usr/bin/time', ['-f', '%U %S %M', 'sh', '-c', loop], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`ripser failed: ${r.stderr}`);
  const last = r.stderr.trim().split('\n').pop()!.split(' ');
  return { ms: ((Number(last[0]) + Number(last[1])) * 1000) / repeat, rssKb: Number(last[2]) };
}

function timeLoopwise(
  file: string,
  dim: number,
  reps: boolean,
): { ms: number; coldMs: number; rssKb: number } {
  const child = join(import.meta.dirname, 'engine-child.ts');
  const r = spawnSync(
    process.execPath,
    ['--import', 'tsx', child, file, String(dim), '1', reps ? 'reps' : 'plain'],
    {
      encoding: 'utf8',
    },
  );
  if (r.status !== 0) throw new Error(`loopwise child failed: ${r.stderr}`);
  const out = JSON.parse(r.stdout) as { coldMs: number; ms: number[]; maxRssKb: number };
  return { ms: median(out.ms), coldMs: out.coldMs, rssKb: out.maxRssKb };
}

const cases: Array<[number, 1 | 2]> = quick
  ? [
      [100, 1],
      [400, 1],
      [100, 2],
    ]
  : [
      [100, 1],
      [200, 1],
      [300, 1],
      [400, 1],
      [1000, 1],
      [100, 2],
      [200, 2],
    ];

const dir = mkdtempSync(join(tmpdir(), 'loopwise-bench-'));
console.log(`engine vs ripser, ${ROUNDS} interleaved rounds, medians of CPU ms; ratio = loopwise / ripser`);
console.log('loopwise: warm engine (a cohort worker); cold: first call in a fresh process');
console.log('N     dim  ripser   loopwise  ratio   +reps    ratio   cold  ratio   rss ripser/loopwise (MB)');
for (const [n, dim] of cases) {
  const file = join(dir, `corr-${n}.ldm`);
  writeLowerDistance(file, n, correlationDistances(n, 1000 + n));
  const rip: number[] = [];
  const lw: number[] = [];
  const lwr: number[] = [];
  const cold: number[] = [];
  let rssR = 0;
  let rssL = 0;
  const probe = timeRipser(file, dim, 1).ms;
  const repeat = probe < 200 ? Math.min(50, Math.ceil(400 / Math.max(probe, 5))) : 1;
  for (let r = 0; r < ROUNDS; r++) {
    const a = timeRipser(file, dim, repeat);
    const b = timeLoopwise(file, dim, false);
    const c = timeLoopwise(file, dim, true);
    rip.push(a.ms);
    lw.push(b.ms);
    lwr.push(c.ms);
    cold.push(b.coldMs);
    rssR = Math.max(rssR, a.rssKb);
    rssL = Math.max(rssL, c.rssKb);
  }
  const [mr, ml, mlr, mc] = [median(rip), median(lw), median(lwr), median(cold)];
  console.log(
    `${String(n).padEnd(6)}${String(dim).padEnd(5)}${mr.toFixed(0).padStart(6)}   ${ml.toFixed(0).padStart(8)}  ${(ml / mr).toFixed(2).padStart(5)}  ${mlr.toFixed(0).padStart(7)}  ${(mlr / mr).toFixed(2).padStart(5)}  ${mc.toFixed(0).padStart(5)}  ${(mc / mr).toFixed(2).padStart(5)}   ${(rssR / 1024).toFixed(0)}/${(rssL / 1024).toFixed(0)}`,
  );
}
