/**
 * The compiled command line (bin/build-node.js): when the launcher trusts a build, and that a
 * build runs on plain Node, outside the repository, with its worker threads, computing exactly
 * what the TypeScript sources compute.
 */
import { spawnSync } from 'node:child_process';
import {
  existsSync,
  mkdirSync,
  mkdtempSync,
  readFileSync,
  readdirSync,
  rmSync,
  utimesSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRng } from '../../electron/engine/random.ts';
import { STAMP_FILE, buildNode, isBuildFresh, sourceStamp } from '../../bin/build-node.js';

const repo = join(import.meta.dirname, '..', '..');
const tmp = mkdtempSync(join(tmpdir(), 'loopwise-build-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('the build stamp', () => {
  const root = join(tmp, 'tree');
  const out = join(root, 'out');
  const write = (path: string, text: string): void => {
    mkdirSync(join(root, path, '..'), { recursive: true });
    writeFileSync(join(root, path), text);
  };
  const stamp = (): void => {
    mkdirSync(out, { recursive: true });
    writeFileSync(join(out, STAMP_FILE), JSON.stringify(sourceStamp(root)));
  };

  beforeAll(() => {
    write('package.json', '{}');
    write('bin/build-node.js', '');
    write('electron/cli.ts', 'export {};');
    write('electron/engine/features/deep.ts', 'export {};');
  });

  it('is fresh right after a build and stale without one', () => {
    expect(isBuildFresh(root, out)).toBe(false);
    stamp();
    expect(isBuildFresh(root, out)).toBe(true);
  });

  it('goes stale when a source at any depth changes, appears or disappears', () => {
    stamp();
    const later = new Date(Date.now() + 5000);
    utimesSync(join(root, 'electron/engine/features/deep.ts'), later, later);
    expect(isBuildFresh(root, out)).toBe(false);
    stamp();
    write('electron/engine/new.ts', 'export {};');
    expect(isBuildFresh(root, out)).toBe(false);
    stamp();
    rmSync(join(root, 'electron/engine/new.ts'));
    expect(isBuildFresh(root, out)).toBe(false);
    stamp();
    write('package.json', '{ "version": "9.9.9" }');
    expect(isBuildFresh(root, out)).toBe(false);
  });
});

/** A small cohort of random correlation matrices (Gram matrices of random unit vectors). */
function writeCohort(dir: string): void {
  mkdirSync(dir, { recursive: true });
  const rng = createRng(11);
  const n = 12;
  const T = 20;
  const rows = ['participant_id\tgroup\tage'];
  for (let s = 1; s <= 6; s++) {
    const id = `sub-0${s}`;
    rows.push(`${id}\t${s % 2 ? 'a' : 'b'}\t${20 + s}`);
    const x = Array.from({ length: n }, () => {
      const v = Array.from({ length: T }, () => rng.next() - 0.5);
      const norm = Math.hypot(...v);
      return v.map((a) => a / norm);
    });
    const lines = x.map((a) =>
      x.map((b) => (a === b ? 1 : a.reduce((acc, ai, t) => acc + ai * b[t], 0)).toFixed(6)).join('\t'),
    );
    writeFileSync(join(dir, `${id}_conn.tsv`), lines.join('\n') + '\n');
  }
  writeFileSync(join(dir, 'participants.tsv'), rows.join('\n') + '\n');
}

describe('a compiled build', () => {
  // Built outside the repository: nothing can be resolved from its node_modules or loaded through tsx.
  const out = join(tmp, 'dist-node');
  const cohort = join(tmp, 'cohort');
  // A launcher of its own beside the build (as bin/loopwise.js is beside dist-node/), run by plain Node.
  const launcher = join(tmp, 'run-compiled.mjs');
  const compiled = (args: string[]): { code: number | null; out: string; err: string } => {
    const r = spawnSync(process.execPath, [launcher, ...args], { cwd: tmp, encoding: 'utf8' });
    return { code: r.status, out: r.stdout, err: r.stderr };
  };
  const source = (args: string[]): { code: number | null; out: string; err: string } => {
    const r = spawnSync(process.execPath, [join(repo, 'bin', 'loopwise.js'), ...args], {
      cwd: tmp,
      encoding: 'utf8',
      env: { ...process.env, LOOPWISE_FROM_SOURCE: '1' },
    });
    return { code: r.status, out: r.stdout, err: r.stderr };
  };

  beforeAll(async () => {
    await buildNode(repo, out);
    writeFileSync(
      launcher,
      `const { main } = await import('./dist-node/cli.js');\nprocess.exitCode = await main(process.argv.slice(2));\n`,
    );
    writeCohort(cohort);
  }, 120_000);

  it('holds JavaScript only, the worker beside the chunks, and a stamp of the sources', () => {
    const files = readdirSync(out);
    expect(files).toContain('cli.js');
    expect(files).toContain('filtration-worker.js');
    expect(files).toContain('statistics-worker.js');
    expect(files.filter((f) => f.endsWith('.ts'))).toEqual([]);
    expect(readFileSync(join(out, STAMP_FILE), 'utf8')).toBe(JSON.stringify(sourceStamp(repo)));
  });

  it('prints the same diagrams as the sources', () => {
    const args = [
      'diagram',
      join(cohort, 'sub-01_conn.tsv'),
      join(cohort, 'sub-02_conn.tsv'),
      '--representatives',
    ];
    const a = compiled(args);
    const b = source(args);
    expect(a.err).toBe('');
    expect(a.code).toBe(0);
    expect(b.code).toBe(0);
    expect(a.out.trim().split('\n')).toHaveLength(2);
    expect(a.out).toBe(b.out);
  });

  it('analyses a cohort on its compiled worker threads, writing the same tables as the sources', () => {
    const args = (dir: string): string[] => [
      'analyze',
      cohort,
      '--out',
      dir,
      '--workers',
      '2',
      '--group',
      'group',
      '--permutations',
      '99',
    ];
    const a = compiled(args(join(tmp, 'res-compiled')));
    expect(a.err).toContain('finished: 6 analysed (6 computed, 0 reused from the cache), 0 failed');
    expect(a.code).toBe(0);
    const b = source(args(join(tmp, 'res-source')));
    expect(b.code).toBe(0);
    for (const table of [
      'intervals.tsv',
      'features.tsv',
      'nodes.tsv',
      'stats.tsv',
      'diagram-tests.tsv',
      'subjects.tsv',
    ]) {
      const t = readFileSync(join(tmp, 'res-compiled', table), 'utf8');
      expect(t, table).toBe(readFileSync(join(tmp, 'res-source', table), 'utf8'));
    }
    const subjects = readFileSync(join(tmp, 'res-compiled', 'subjects.tsv'), 'utf8');
    expect(subjects.match(/\tanalysed/g)).toHaveLength(6);
    expect(existsSync(join(tmp, 'res-compiled', 'provenance.json'))).toBe(true);
  });
});
