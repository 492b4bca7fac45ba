/**
 * `loopwise analyze` as a careless user and a hostile machine meet it, run as a real child process
 * on a tiny generated cohort: a disk that fills up (a small tmpfs, at several fill levels), SIGKILL
 * at several stages, two runs into one folder, --force over a user's file and over an earlier
 * run's tables, and an output folder that is the cohort. After every fault the run must have ended
 * with a non-zero exit naming the cause, left no temporary behind, and the same command must then
 * finish with exactly the tables of an uninterrupted run (provenance's time stamp aside). Refusals
 * and the --force run, where no fault is injected, run the same command in this process.
 */
import { spawn, spawnSync } from 'node:child_process';
import {
  cpSync,
  existsSync,
  mkdirSync,
  mkdtempSync,
  readFileSync,
  rmSync,
  watch,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../electron/cli.ts';
import { listFiles, outputs, writeCohort } from './support.ts';

const BIN = new URL('../../bin/loopwise.js', import.meta.url).pathname;
const ARGS = ['--group', 'group', '--permutations', '99', '--workers', '1'];

let root: string;
let cohort: string;
let reference: Record<string, string>;

interface Outcome {
  code: number | null;
  signal: NodeJS.Signals | null;
  stderr: string;
}

/**
 * Runs `loopwise analyze COHORT --out OUT ARGS…`. `killWhen` sees the stderr so far and each file
 * event in OUT; when it answers true the child gets SIGKILL at once. A child still running after
 * `guardMs` is killed too and reported as hung (signal SIGKILL with `hung` in stderr).
 */
function analyze(
  out: string,
  extra: string[] = [],
  killWhen?: (stderr: string, file: string | null) => boolean,
  guardMs = 120_000,
  onSpawn?: (pid: number) => void,
): Promise<Outcome> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [BIN, 'analyze', cohort, '--out', out, ...ARGS, ...extra], {
      stdio: ['ignore', 'ignore', 'pipe'],
    });
    onSpawn?.(child.pid as number);
    let stderr = '';
    let killed = false;
    const kill = (): void => {
      if (killed) return;
      killed = true;
      child.kill('SIGKILL');
    };
    let watcher: ReturnType<typeof watch> | null = null;
    if (killWhen) {
      mkdirSync(out, { recursive: true });
      watcher = watch(out, (_event, name) => {
        if (name && killWhen(stderr, String(name))) kill();
      });
    }
    const guard = setTimeout(() => {
      stderr += '\n(hung: killed by the test)\n';
      kill();
    }, guardMs);
    child.stderr.setEncoding('utf8');
    child.stderr.on('data', (chunk: string) => {
      stderr += chunk;
      if (killWhen?.(stderr, null)) kill();
    });
    child.on('error', reject);
    child.on('close', (code, signal) => {
      clearTimeout(guard);
      watcher?.close();
      resolve({ code, signal, stderr });
    });
  });
}

/** The same command in this process (for refusals and quick runs; no fault is injected there). */
async function analyzeHere(out: string, extra: string[] = []): Promise<Outcome> {
  let stderr = '';
  const code = await main(['analyze', cohort, '--out', out, ...ARGS, ...extra], {
    out: () => undefined,
    err: (t) => (stderr += t),
  });
  return { code, signal: null, stderr };
}

function temporaries(dir: string): string[] {
  return existsSync(dir) ? listFiles(dir).filter((f) => f.includes('loopwise-tmp')) : [];
}

function manifestStatus(dir: string): string | null {
  const file = join(dir, '.loopwise-manifest.json');
  return existsSync(file) ? (JSON.parse(readFileSync(file, 'utf8')) as { status: string }).status : null;
}

beforeAll(async () => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-faults-'));
  cohort = join(root, 'cohort');
  writeCohort(cohort, { subjects: 6, n: 16, seed: 7 });
  const ref = join(root, 'reference');
  const r = await analyze(ref);
  expect(r.code, r.stderr).toBe(0);
  reference = outputs(ref);
  // Every table of the full job is there: the statistics too.
  expect(Object.keys(reference)).toEqual(
    expect.arrayContaining(['stats.tsv', 'diagram-tests.tsv', 'embedding.tsv']),
  );
}, 180_000);

afterAll(() => rmSync(root, { recursive: true, force: true }));

/** A tmpfs of `bytes`, or null when this machine will not mount one (not root, no tmpfs): the test is then skipped. */
function mountTmpfs(dir: string, bytes: number): boolean {
  mkdirSync(dir, { recursive: true });
  const r = spawnSync('mount', ['-t', 'tmpfs', '-o', `size=${bytes}`, 'tmpfs', dir], { encoding: 'utf8' });
  return r.status === 0;
}

const canMount = (() => {
  if (process.platform !== 'linux' || process.getuid?.() !== 0) return false;
  const probe = mkdtempSync(join(tmpdir(), 'loopwise-mount-probe-'));
  const ok = mountTmpfs(probe, 1 << 20);
  if (ok) spawnSync('umount', [probe]);
  rmSync(probe, { recursive: true, force: true });
  return ok;
})();

describe('a disk that fills up', () => {
  it.skipIf(!canMount)(
    'ends each run with exit 1 naming the folder and ENOSPC, leaves no temporary, and resumes once space is freed',
    async () => {
      const disk = join(root, 'disk');
      const size = 1 << 20;
      expect(mountTmpfs(disk, size)).toBe(true);
      try {
        const out = join(disk, 'out');
        const ballast = join(disk, 'ballast');
        // Free space in KiB: too little for the cache, then for the later tables, then for the statistics.
        const levels = [8, 120, 360, 560];
        const failedAt: string[] = [];
        for (const free of levels) {
          writeFileSync(ballast, Buffer.alloc(size - free * 1024));
          const r = await analyze(out);
          expect(r.stderr).not.toMatch(/hung/);
          expect(r.code, r.stderr).toBe(1);
          expect(r.stderr).toMatch(new RegExp(`into ${disk}/out[^:]*: the disk is full \\(ENOSPC\\)`));
          failedAt.push(/cannot write (\S+)/.exec(r.stderr)?.[1] ?? '');
          expect(temporaries(disk), `temporaries after ${free} KiB`).toEqual([]);
          // Not complete: the same command takes it up again.
          expect(manifestStatus(out)).not.toBe('complete');
          rmSync(ballast);
        }
        // The levels reached different points of the run (the cache, then tables further along).
        expect(new Set(failedAt).size).toBeGreaterThan(2);
        const r = await analyze(out);
        expect(r.code, r.stderr).toBe(0);
        expect(r.stderr).toMatch(/reused from the cache/);
        expect(outputs(out)).toEqual(reference);
        expect(manifestStatus(out)).toBe('complete');
        expect(temporaries(disk)).toEqual([]);
      } finally {
        spawnSync('umount', [disk]);
      }
    },
    300_000,
  );
});

describe('a read-only file system', () => {
  it.skipIf(!canMount)(
    'refuses with exit 1 naming the folder and EROFS, and the same command runs once it is writable',
    async () => {
      const disk = join(root, 'readonly');
      expect(mountTmpfs(disk, 4 << 20)).toBe(true);
      try {
        const out = join(disk, 'out');
        mkdirSync(out);
        expect(spawnSync('mount', ['-o', 'remount,ro', disk]).status).toBe(0);
        const r = await analyze(out);
        expect(r.code, r.stderr).toBe(1);
        expect(r.stderr).toContain(`into ${out}: the file system is read-only (EROFS)`);
        expect(spawnSync('mount', ['-o', 'remount,rw', disk]).status).toBe(0);
        const again = await analyze(out);
        expect(again.code, again.stderr).toBe(0);
        expect(outputs(out)).toEqual(reference);
      } finally {
        spawnSync('umount', [disk]);
      }
    },
    120_000,
  );
});

describe('SIGKILL', () => {
  it('at several stages: each kill leaves a folder the same command resumes, to the uninterrupted tables', async () => {
    const out = join(root, 'killed');
    const subjectsDone = (stderr: string): number =>
      Math.max(0, ...[...stderr.matchAll(/: (\d+)\/\d+ subjects/g)].map((m) => Number(m[1])));
    // After two subjects are cached; as the curves (a later stage's table) are being written; as
    // the statistics are.
    const points: Array<(stderr: string, file: string | null) => boolean> = [
      (stderr) => subjectsDone(stderr) >= 2,
      (_s, file) => file !== null && file.startsWith('.curves.tsv.loopwise-tmp'),
      (_s, file) => file !== null && file.startsWith('.stats.tsv.loopwise-tmp'),
    ];
    let killed = 0;
    for (const point of points) {
      const r = await analyze(out, [], point);
      if (r.signal === 'SIGKILL') killed++;
      else expect(r.code, r.stderr).toBe(0);
      expect(r.stderr).not.toMatch(/hung/);
      if (manifestStatus(out) === 'complete') break;
    }
    expect(killed).toBeGreaterThanOrEqual(2);
    if (manifestStatus(out) !== 'complete') {
      const r = await analyze(out);
      expect(r.code, r.stderr).toBe(0);
    }
    expect(outputs(out)).toEqual(reference);
    expect(temporaries(out)).toEqual([]);
    expect(existsSync(join(out, '.loopwise-lock'))).toBe(false);
  }, 300_000);
});

describe('the output folder', () => {
  it('refuses a second run into a folder in use, naming the running process', async () => {
    const out = join(root, 'busy');
    let firstPid = 0;
    let second: Promise<Outcome> | null = null;
    // Once the first run reports progress it holds the folder's lock: it is stopped (SIGSTOP)
    // while a second run tries the same folder, then let go.
    const first = analyze(
      out,
      [],
      (stderr) => {
        if (!second && /0\/\d+ subjects/.test(stderr)) {
          process.kill(firstPid, 'SIGSTOP');
          second = analyze(out).finally(() => process.kill(firstPid, 'SIGCONT'));
        }
        return false;
      },
      120_000,
      (pid) => (firstPid = pid),
    );
    const a = await first;
    expect(second).not.toBeNull();
    const b = await (second as unknown as Promise<Outcome>);
    expect(a.code, a.stderr).toBe(0);
    expect(b.code, b.stderr).toBe(2);
    expect(b.stderr).toMatch(new RegExp(`in use by another Loopwise run \\(process ${firstPid} on `));
    expect(outputs(out)).toEqual(reference);
  }, 180_000);

  it('refuses to write into the cohort, inside it, or over a file the user made, even with --force', async () => {
    const before = listFiles(cohort).map((f) => [f, readFileSync(join(cohort, f), 'utf8')]);
    for (const out of [cohort, join(cohort, 'results')]) {
      const r = await analyzeHere(out, ['--force']);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toMatch(/the run's input|inside the run's input/);
    }
    const mine = join(root, 'mine');
    mkdirSync(mine);
    writeFileSync(join(mine, 'stats.tsv'), 'my own table\n');
    const r = await analyzeHere(mine, ['--force']);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr).toMatch(/stats\.tsv, which Loopwise did not write/);
    expect(readFileSync(join(mine, 'stats.tsv'), 'utf8')).toBe('my own table\n');
    expect(listFiles(cohort).map((f) => [f, readFileSync(join(cohort, f), 'utf8')])).toEqual(before);
  }, 120_000);

  it('with --force removes the tables of the earlier run that the new one does not write, keeps the user’s files, and takes over a dead run’s lock', async () => {
    const out = join(root, 'stale');
    cpSync(join(root, 'reference'), out, { recursive: true });
    writeFileSync(join(out, 'notes.txt'), 'mine');
    // A lock left by a process that is gone.
    const dead = spawnSync(process.execPath, ['-e', 'process.stdout.write(String(process.pid))'], {
      encoding: 'utf8',
    });
    writeFileSync(
      join(out, '.loopwise-lock'),
      JSON.stringify({ pid: Number(dead.stdout), host: (await import('node:os')).hostname(), startedAt: '' }),
    );
    const refused = await analyzeHere(out, ['--csv']);
    expect(refused.code).toBe(2);
    expect(refused.stderr).toMatch(/already holds files .*--force/);
    const r = await analyzeHere(out, ['--csv', '--force']);
    expect(r.code, r.stderr).toBe(0);
    const names = Object.keys(outputs(out)).sort();
    expect(names.filter((n) => n.endsWith('.tsv'))).toEqual([]);
    expect(names).toEqual(
      [...Object.keys(reference).map((n) => n.replace(/\.tsv$/, '.csv')), 'notes.txt'].sort(),
    );
    expect(readFileSync(join(out, 'notes.txt'), 'utf8')).toBe('mine');
  }, 120_000);
});
