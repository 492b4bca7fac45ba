/** The `loopwise diagram` door: JSON lines, settings echo, specific errors, exit codes. */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main } from '../../electron/cli.ts';

const dir = mkdtempSync(join(tmpdir(), 'loopwise-diagram-'));
const square = join(dir, 'square.tsv');
writeFileSync(square, '0\t1\t2\t1\n1\t0\t1\t2\n2\t1\t0\t1\n1\t2\t1\t0\n');
const corr = join(dir, 'corr.csv');
writeFileSync(corr, '1,0.9,0.1\n0.9,1,0.2\n0.1,0.2,1\n');
const broken = join(dir, 'broken.csv');
writeFileSync(broken, '1,0.9\n0.8,1\n');

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await main(args, { out: (t) => (out += t), err: (t) => (err += t) });
  return { code, out, err };
}

describe('loopwise diagram', () => {
  it('prints one JSON object per file and line, with settings and representatives', async () => {
    const r = await run(['diagram', square, corr, '--input', 'distance', '--representatives']);
    // corr.csv is not a distance matrix of the square's kind but is a valid one (non-negative, symmetric).
    expect(r.code).toBe(0);
    const lines = r.out
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    expect(lines.map((l) => l.file)).toEqual([square, corr]);
    expect(lines[0].diagrams['1']).toEqual([[1, 2]]);
    expect(lines[0].diagrams['0']).toContainEqual([0, null]);
    expect(lines[0].representatives['1'][0]).toEqual({
      birth: 1,
      death: 2,
      edges: [
        [1, 0],
        [2, 1],
        [3, 0],
        [3, 2],
      ],
      nodes: [0, 1, 2, 3],
    });
    expect(lines[0].settings).toMatchObject({
      input: 'distance',
      transform: 'identity',
      maxDim: 1,
      cap: { kind: 'none' },
      threshold: 2,
      thresholdSource: 'enclosing-radius',
      n: 4,
    });
  });

  it('applies the correlation transform by default', async () => {
    const r = await run(['diagram', corr]);
    const j = JSON.parse(r.out);
    // 1 − r: edges 0.1 (0–1), 0.8 (1–2), 0.9 (0–2): H0 deaths at 0.1 and 0.8.
    expect(j.diagrams['0'].map((p: [number, number | null]) => p[1])).toEqual([
      0.09999999999999998,
      0.8,
      null,
    ]);
  });

  it('reports a bad file by name, still computes the others, and exits 2', async () => {
    const r = await run(['diagram', broken, square, '--input', 'distance']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(new RegExp(`${broken.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}: not symmetric`));
    expect(r.out.trim().split('\n')).toHaveLength(1);
    expect(JSON.parse(r.out).file).toBe(square);
  });

  it('refuses bad options with exit 2 and a specific message', async () => {
    expect((await run(['diagram'])).err).toMatch(/no FILE given/);
    expect((await run(['diagram', square, '--max-dim', '3'])).err).toMatch(
      /--max-dim: must be one of 1, 2, got 3/,
    );
    expect((await run(['diagram', square, '--cap-density', '1.5'])).code).toBe(2);
    expect((await run(['diagram', square, '--cap-density', '0.5', '--cap-distance', '1'])).err).toMatch(
      /not both/,
    );
    expect((await run(['diagram', square, '--input', 'weight', '--transform', 'sqrt'])).err).toMatch(
      /--transform sqrt does not apply to --input weight/,
    );
    expect((await run(['diagram', square, '--bogus'])).err).toMatch(/unknown option --bogus/);
    expect((await run(['nonsense'])).code).toBe(2);
  });

  it('runs as the installed `loopwise` command', () => {
    const r = spawnSync(
      process.execPath,
      ['bin/loopwise.js', 'diagram', square, '--input', 'distance', '--max-dim', '2'],
      {
        encoding: 'utf8',
      },
    );
    expect(r.status).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.diagrams['2']).toEqual([]);
    expect(j.settings.maxDim).toBe(2);
  });
});
