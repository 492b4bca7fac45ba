/**
 * Crash safety of `loopwise analyze`, run as a real child process and killed with SIGKILL at
 * seeded random points (while subjects are being computed and while the tables are written):
 * after every kill each visible output parses and no temporary file passes for an output; the
 * run restarted with the same command resumes from the cache and finally writes exactly the
 * tables of an uninterrupted run.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { createRng } from '../../electron/engine/random.ts';
import { listFiles, outputs, writeCohort } from './support.ts';

const BIN = new URL('../../bin/loopwise.js', import.meta.url).pathname;
const SUBJECTS = 20;

let root: string;
let cohort: string;

beforeAll(() => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-kill-'));
  cohort = join(root, 'cohort');
  writeCohort(cohort, { subjects: SUBJECTS, n: 60, seed: 5 });
});
afterAll(() => rmSync(root, { recursive: true, force: true }));

interface Outcome {
  code: number | null;
  signal: NodeJS.Signals | null;
  stderr: string;
}

/**
 * Runs the CLI; when `killAt` is given, sends SIGKILL `delayMs` after the stderr progress line
 * reporting `killAt` finished subjects (or at exit if it never comes).
 */
function analyze(out: string, killAt?: { done: number; delayMs: number }): Promise<Outcome> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [BIN, 'analyze', cohort, '--out', out, '--workers', '2'], {
      stdio: ['ignore', 'ignore', 'pipe'],
    });
    let stderr = '';
    let armed = killAt !== undefined;
    child.stderr.setEncoding('utf8');
    child.stderr.on('data', (chunk: string) => {
      stderr += chunk;
      if (!armed || !killAt) return;
      const done = [...stderr.matchAll(/: (\d+)\/\d+ subjects/g)].map((m) => Number(m[1]));
      if (done.some((d) => d >= killAt.done)) {
        armed = false;
        setTimeout(() => child.kill('SIGKILL'), killAt.delayMs);
      }
    });
    child.on('error', reject);
    child.on('close', (code, signal) => resolve({ code, signal, stderr }));
  });
}

/** Everything a user could see in `out` must be whole: tables parse, JSON parses, cache entries parse. */
function checkWhole(out: string): void {
  for (const name of readdirSync(out)) {
    if (name.startsWith('.')) continue;
    const text = readFileSync(join(out, name), 'utf8');
    if (name.endsWith('.json')) {
      expect(() => JSON.parse(text), name).not.toThrow();
    } else if (name === 'report.html') {
      // Written whole or not at all (atomic): a complete document.
      expect(text.trimEnd().endsWith('</html>'), name).toBe(true);
    } else {
      expect(name).toMatch(/^[a-z0-9-]+\.tsv$/);
      expect(text.endsWith('\n'), `${name} ends with a full line`).toBe(true);
      const lines = text.trimEnd().split('\n');
      const width = lines[0].split('\t').length;
      for (const l of lines) expect(l.split('\t').length, `${name}: ${l}`).toBe(width);
    }
  }
  for (const f of listFiles(out)) {
    if (f.endsWith('.json')) expect(() => JSON.parse(readFileSync(join(out, f), 'utf8')), f).not.toThrow();
  }
}

it('survives SIGKILL at random points and resumes to the uninterrupted result', async () => {
  const reference = join(root, 'reference');
  const clean = await analyze(reference);
  expect(clean.code, clean.stderr).toBe(0);

  const out = join(root, 'killed');
  const rng = createRng(20261202);
  // Three kills while subjects are computed, one just as the last subject finishes (the tables
  // are being written then); each with a random delay of up to 40 ms past the progress line.
  const points = [
    { done: 1 + rng.int(5), delayMs: rng.int(40) },
    { done: 6 + rng.int(5), delayMs: rng.int(40) },
    { done: 11 + rng.int(8), delayMs: rng.int(40) },
    { done: SUBJECTS, delayMs: rng.int(40) },
  ];
  let killed = 0;
  let reusedSeen = 0;
  for (const point of points) {
    const r = await analyze(out, point);
    checkWhole(out);
    if (r.signal === 'SIGKILL') killed++;
    else {
      // The run outran the kill and finished: nothing left to interrupt.
      expect(r.code, r.stderr).toBe(0);
      break;
    }
    // Progress lines say '(reused N' as soon as a restart takes subjects from the cache.
    for (const m of r.stderr.matchAll(/\(reused (\d+)/g)) reusedSeen = Math.max(reusedSeen, Number(m[1]));
  }
  expect(killed).toBeGreaterThanOrEqual(3);

  // A kill that landed after the tables and the folder's completion mark leaves nothing to resume
  // (a re-run would then be refused as a finished folder, rightly).
  const complete =
    JSON.parse(readFileSync(join(out, '.loopwise-manifest.json'), 'utf8')).status === 'complete';
  const last = killed === points.length && !complete ? await analyze(out) : null;
  if (last) expect(last.code, last.stderr).toBe(0);
  const reused = Number(/(\d+) reused from the cache/.exec(last?.stderr ?? '')?.[1] ?? 0);
  // The restarts reused what the killed runs had committed.
  expect(Math.max(reused, reusedSeen)).toBeGreaterThan(0);
  checkWhole(out);
  expect(listFiles(out).filter((f) => f.includes('loopwise-tmp'))).toEqual([]);
  expect(outputs(out)).toEqual(outputs(reference));
});
