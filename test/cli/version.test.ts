/** `loopwise --version`, spawned as a user runs it: the compiled build when fresh, and the sources. */
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ENGINE_VERSION } from '../../electron/engine/version.ts';

const repo = join(import.meta.dirname, '..', '..');
const bin = join(repo, 'bin', 'loopwise.js');
// The version as package.json states it, read here without the CLI's code.
const pkgVersion = (JSON.parse(readFileSync(join(repo, 'package.json'), 'utf8')) as { version: string })
  .version;

function loopwise(
  args: string[],
  env: Record<string, string> = {},
): { code: number | null; out: string; err: string } {
  const r = spawnSync(process.execPath, [bin, ...args], {
    cwd: repo,
    encoding: 'utf8',
    env: { ...process.env, ...env },
  });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

describe('loopwise --version', () => {
  it('prints the package and engine versions and exits 0', () => {
    const r = loopwise(['--version']);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).toBe(`loopwise ${pkgVersion} (engine ${ENGINE_VERSION})\n`);
    expect(r.out).toMatch(/^loopwise \d+\.\d+\.\d+ \(engine \S+\)\n$/);
  });

  it('says the same when run from the TypeScript sources', () => {
    const r = loopwise(['--version'], { LOOPWISE_FROM_SOURCE: '1' });
    expect(r.code).toBe(0);
    expect(r.out).toBe(`loopwise ${pkgVersion} (engine ${ENGINE_VERSION})\n`);
  });

  it('is listed in --help', () => {
    const r = loopwise(['--help']);
    expect(r.code).toBe(0);
    expect(r.out).toContain("'loopwise --version'");
  });
});
