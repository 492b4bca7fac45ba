/**
 * The `loopwise analyze` and `merge` doors: exit codes (0 analysed, 1 none, 2 usage or refused
 * folder, 130 cancelled), Ctrl-C as cancel, the summary on stderr, and shards through the CLI.
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../electron/cli.ts';
import { outputs, writeCohort } from './support.ts';

const BIN = new URL('../../bin/loopwise.js', import.meta.url).pathname;

let root: string;
let cohort: string;

beforeAll(() => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-cli-'));
  cohort = join(root, 'cohort');
  writeCohort(cohort, { subjects: 6, n: 30, seed: 3, broken: [1] });
});
afterAll(() => rmSync(root, { recursive: true, force: true }));

async function cli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await main(args, { out: (t) => (out += t), err: (t) => (err += t) });
  return { code, out, err };
}

describe('loopwise analyze', () => {
  it('exits 2 on usage errors, naming the problem', async () => {
    expect((await cli(['analyze'])).err).toMatch(/no COHORT_DIR given/);
    const r = await cli(['analyze', cohort, '--out', join(root, 'x'), '--shard', '4/3']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--shard must be K\/M/);
    expect((await cli(['analyze', cohort, '--out', join(root, 'x'), '--transform', 'inverse'])).code).toBe(2);
    expect((await cli(['analyze', join(root, 'nowhere'), '--out', join(root, 'y')])).code).toBe(2);
  });

  it('analyses, summarises with reasons, refuses a used folder (2), and exits 1 when nothing is analysed', async () => {
    const out = join(root, 'out');
    const r = await cli(['analyze', cohort, '--out', out, '--workers', '2', '--csv']);
    expect(r.code, r.err).toBe(0);
    expect(r.err).toMatch(
      /finished: 5 analysed \(5 computed, 0 reused from the cache\), 0 failed, 1 excluded/,
    );
    expect(r.err).toMatch(/excluded sub-002: .*oops/);
    expect(r.err).toMatch(/cache +.*\.loopwise-cache \(\d/);
    expect(Object.keys(outputs(out))).toEqual(
      expect.arrayContaining(['intervals.csv', 'provenance.json', 'subjects.csv']),
    );

    const again = await cli(['analyze', cohort, '--out', out]);
    expect(again.code).toBe(2);
    expect(again.err).toMatch(/already holds files .*--force/);

    // A cohort whose every subject the check excludes: nothing analysed, exit 1.
    const only = join(root, 'only-bad');
    writeCohort(only, { subjects: 2, n: 12, seed: 4, broken: [0, 1] });
    const none = await cli(['analyze', only, '--out', join(root, 'none'), '--workers', '1']);
    expect(none.code).toBe(1);
    expect(none.err).toMatch(/0 analysed/);
  });

  it('runs shards and merges them through the CLI', async () => {
    const out = join(root, 'shards');
    for (const k of [1, 2]) {
      const r = await cli(['analyze', cohort, '--out', out, '--shard', `${k}/2`, '--workers', '1']);
      expect(r.code, r.err).toBe(0);
      expect(r.err).toMatch(new RegExp(`shard ${k}/2 done`));
    }
    // Statistics are chosen at the merge; the single run is given the same ones.
    const m = await cli(['merge', out, '--permutations', '99', '--seed', '3']);
    expect(m.code, m.err).toBe(0);
    const single = join(root, 'single');
    const one = await cli([
      'analyze',
      cohort,
      '--out',
      single,
      '--workers',
      '2',
      '--permutations',
      '99',
      '--seed',
      '3',
    ]);
    expect(one.code).toBe(0);
    expect(outputs(out)).toEqual(outputs(single));
    expect(JSON.parse(outputs(out)['provenance.json']).stats).toMatchObject({ permutations: 99, seed: 3 });
    expect((await cli(['merge', out])).code).toBe(2);
  });

  it('treats Ctrl-C (SIGINT) as cancel: says so, exits 130, writes no tables', async () => {
    const big = join(root, 'big');
    writeCohort(big, { subjects: 40, n: 60, seed: 8 });
    const out = join(root, 'interrupted');
    const child = spawn(process.execPath, [BIN, 'analyze', big, '--out', out, '--workers', '1'], {
      stdio: ['ignore', 'ignore', 'pipe'],
    });
    let err = '';
    let sent = false;
    child.stderr.setEncoding('utf8');
    child.stderr.on('data', (t: string) => {
      err += t;
      if (!sent && / [1-9]\d*\/40 subjects/.test(err)) {
        sent = true;
        child.kill('SIGINT');
      }
    });
    const code = await new Promise<number | null>((resolve) => child.on('close', (c) => resolve(c)));
    expect(code, err).toBe(130);
    expect(err).toMatch(/cancelling/);
    expect(err).toMatch(/cancelled; run the same command again to resume/);
    expect(existsSync(join(out, 'intervals.tsv'))).toBe(false);
  });
});
