/**
 * The speed targets of the project, each as whole processes side by side with its reference run,
 * interleaved round by round so drift in the machine's speed hits both alike:
 *
 *   loopwise analyze, 100 subjects × N = 300 (no --group)   vs ripser --dim 1 over the same 100
 *                                                              distance files, one process each
 *   the same with --group and 5000 permutations             vs the same ripser loop
 *   loopwise diagram, one N = 400 file                      vs ripser --dim 1 on it
 *   loopwise diagram, one N = 1000 file (and peak memory)   vs ripser --dim 1 on it
 *   loopwise --version                                      vs node -e 0
 *   (--large) loopwise analyze, 1000 subjects × N = 400 with --group and a covariate: time and memory
 *
 * Subjects are correlation matrices of our seeded generator (test/service/support.ts: a block
 * model of time series, T = 2N), written with 17 significant digits; ripser (Debian 1.2.1) gets
 * the distances 1 − r that Loopwise's default transform computes, as lower-triangular files.
 * The compiled command is used (dist-node, built first). Each analyze run starts with an empty
 * cache. Figures are medians of wall time and CPU time (user + system, all threads) from
 * /usr/bin/time, and the largest peak resident memory; nothing is asserted. A ratio above 1 means
 * Loopwise took longer. The last lines are the table of targets, as the README shows it.
 *
 *   npx tsx test/bench/targets.ts [--quick] [--large] [--subjects K]
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, tmpdir, totalmem } from 'node:os';
import { join } from 'node:path';
import { correlationMatrix, subjectId } from '../service/support.ts';

const args = process.argv.slice(2);
const quick = args.includes('--quick');
const large = args.includes('--large');
const opt = (name: string, fallback: number): number => {
  const i = args.indexOf(name);
  return i >= 0 ? Number(args[i + 1]) : fallback;
};
const ROUNDS = quick ? 1 : 3;
const SUBJECTS = opt('--subjects', 100);
const repo = join(import.meta.dirname, '..', '..');
const bin = join(repo, 'bin', 'loopwise.js');
const node = process.execPath;

interface Run {
  wallS: number;
  cpuS: number;
  rssMiB: number;
}

function time(cmd: string[]): Run {
  const r = spawnSync('/usr/bin/time', ['-f', '%e %U %S %M', ...cmd], {
    encoding: 'utf8',
    maxBuffer: 1 << 28,
  });
  if (r.status !== 0) throw new Error(`${cmd.join(' ')} failed (${r.status}): ${r.stderr.slice(-2000)}`);
  const [e, u, s, m] = r.stderr.trim().split('\n').pop()!.split(' ').map(Number);
  return { wallS: e, cpuS: u + s, rssMiB: m / 1024 };
}

const median = (a: number[]): number => {
  const s = [...a].sort((x, y) => x - y);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

/** A cohort folder for Loopwise and the same subjects' distances 1 − r for ripser. */
function writeCohortPair(dir: string, subjects: number, n: number, seed: number): string[] {
  const cohort = join(dir, 'cohort');
  const dist = join(dir, 'dist');
  mkdirSync(cohort, { recursive: true });
  mkdirSync(dist, { recursive: true });
  const lines = ['participant_id\tgroup\tage'];
  const files: string[] = [];
  for (let s = 0; s < subjects; s++) {
    const id = subjectId(s);
    const m = correlationMatrix(n, 2 * n, seed * 100_003 + s);
    const square: string[] = [];
    const lower: string[] = [];
    for (let i = 0; i < n; i++) {
      const row = m.subarray(i * n, (i + 1) * n);
      square.push(Array.from(row, (v) => v.toPrecision(17)).join(','));
      lower.push(Array.from(row.subarray(0, i), (v) => String(1 - v)).join(','));
    }
    writeFileSync(join(cohort, `${id}_conn.csv`), square.join('\n') + '\n');
    const f = join(dist, `${id}.ldm`);
    writeFileSync(f, lower.join('\n') + '\n');
    files.push(f);
    lines.push(`${id}\t${s % 2 === 0 ? 'control' : 'patient'}\t${20 + ((s * 7) % 40)}`);
  }
  writeFileSync(join(cohort, 'participants.tsv'), lines.join('\n') + '\n');
  return files;
}

/** One square distance file (for `loopwise diagram --input distance`) and its lower triangle (for ripser). */
function writeDistancePair(dir: string, n: number, seed: number): { square: string; lower: string } {
  const m = correlationMatrix(n, 2 * n, seed);
  const square: string[] = [];
  const lower: string[] = [];
  for (let i = 0; i < n; i++) {
    const row = Array.from(m.subarray(i * n, (i + 1) * n), (v, j) => (i === j ? 0 : 1 - v));
    square.push(row.map(String).join(','));
    lower.push(row.slice(0, i).map(String).join(','));
  }
  const s = join(dir, `d${n}.csv`);
  const l = join(dir, `d${n}.ldm`);
  writeFileSync(s, square.join('\n') + '\n');
  writeFileSync(l, lower.join('\n') + '\n');
  return { square: s, lower: l };
}

const build = spawnSync(node, [join(repo, 'bin', 'build-node.js')], { stdio: 'inherit' });
if (build.status !== 0) throw new Error('bin/build-node.js failed');

const dir = mkdtempSync(join(tmpdir(), 'loopwise-targets-'));
try {
  console.log(`writing ${SUBJECTS} subjects × N = 300 …`);
  const ldms = writeCohortPair(join(dir, 'c300'), SUBJECTS, 300, 11);
  const d400 = writeDistancePair(dir, 400, 400);
  const d1000 = writeDistancePair(dir, 1000, 1000);
  const ripserLoop = [
    'sh',
    '-c',
    'for f in "$@"; do ripser --dim 1 "$f" > /dev/null || exit 1; done',
    'sh',
    ...ldms,
  ];
  let outs = 0;
  const analyze = (extra: string[]) => (): Run => {
    const out = join(dir, `out-${outs++}`);
    const r = time([node, bin, 'analyze', join(dir, 'c300', 'cohort'), '--out', out, ...extra]);
    rmSync(out, { recursive: true, force: true });
    return r;
  };

  interface Pair {
    what: string;
    target: string;
    reference: string;
    a: () => Run;
    b: () => Run;
  }
  const pairs: Pair[] = [
    {
      what: `analyze, ${SUBJECTS} × N = 300`,
      target: '≤ 1.0×',
      reference: 'ripser loop',
      a: analyze([]),
      b: () => time(ripserLoop),
    },
    {
      what: `analyze --group, 5000 permutations, ${SUBJECTS} × N = 300`,
      target: '≤ 1.5×',
      reference: 'ripser loop',
      a: analyze(['--group', 'group', '--permutations', '5000']),
      b: () => time(ripserLoop),
    },
    {
      what: 'diagram, N = 400',
      target: '≤ 4×',
      reference: 'ripser',
      a: () => time([node, bin, 'diagram', d400.square, '--input', 'distance']),
      b: () => time(['ripser', '--dim', '1', d400.lower]),
    },
    {
      what: 'diagram, N = 1000',
      target: '≤ 1.5×; ≤ 100 MiB',
      reference: 'ripser',
      a: () => time([node, bin, 'diagram', d1000.square, '--input', 'distance']),
      b: () => time(['ripser', '--dim', '1', d1000.lower]),
    },
    {
      what: '--version',
      target: '≤ 2×',
      reference: 'node -e 0',
      a: () => time([node, bin, '--version']),
      b: () => time([node, '-e', '0']),
    },
  ];
  const results = pairs.map(() => ({ a: [] as Run[], b: [] as Run[] }));
  for (let r = 0; r < ROUNDS; r++) {
    pairs.forEach((p, i) => {
      results[i].a.push(p.a());
      results[i].b.push(p.b());
      const last = results[i];
      console.log(
        `round ${r + 1}: ${p.what}: ${last.a.at(-1)!.wallS.toFixed(2)} s vs ${p.reference} ${last.b.at(-1)!.wallS.toFixed(2)} s`,
      );
    });
  }

  const cpuModel = cpus()[0]?.model.trim() ?? 'unknown CPU';
  console.log(
    `\nmachine: ${cpus().length} × ${cpuModel}, ${(totalmem() / 1024 ** 3).toFixed(1)} GiB, Node ${process.version}; ` +
      `${ROUNDS} interleaved round(s), medians; whole processes (/usr/bin/time)`,
  );
  console.log('\n| run | Loopwise | reference | ratio (wall) | ratio (CPU) | target |');
  console.log('|---|---|---|---|---|---|');
  pairs.forEach((p, i) => {
    const aw = median(results[i].a.map((x) => x.wallS));
    const ac = median(results[i].a.map((x) => x.cpuS));
    const bw = median(results[i].b.map((x) => x.wallS));
    const bc = median(results[i].b.map((x) => x.cpuS));
    const am = Math.max(...results[i].a.map((x) => x.rssMiB));
    const bm = Math.max(...results[i].b.map((x) => x.rssMiB));
    const fmt = (s: number): string => (s < 1 ? `${(s * 1000).toFixed(0)} ms` : `${s.toFixed(2)} s`);
    console.log(
      `| ${p.what} | ${fmt(aw)} (CPU ${fmt(ac)}), ${am.toFixed(0)} MiB | ${p.reference}: ${fmt(bw)} (CPU ${fmt(bc)}), ${bm.toFixed(0)} MiB | ` +
        `${(aw / bw).toFixed(2)}× | ${(ac / bc).toFixed(2)}× | ${p.target} |`,
    );
  });

  if (large) {
    console.log('\nwriting 1000 subjects × N = 400 …');
    writeCohortPair(join(dir, 'c400'), 1000, 400, 13);
    rmSync(join(dir, 'c400', 'dist'), { recursive: true, force: true });
    const r = time([
      node,
      bin,
      'analyze',
      join(dir, 'c400', 'cohort'),
      '--out',
      join(dir, 'out-large'),
      '--group',
      'group',
      '--covariates',
      'age',
    ]);
    console.log(
      `| analyze --group --covariates age, 1000 × N = 400 | ${(r.wallS / 60).toFixed(1)} min (CPU ${(r.cpuS / 60).toFixed(1)} min), ${r.rssMiB.toFixed(0)} MiB | | | | < 10 min |`,
    );
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
