// A reader that stops early (`loopwise validate … | head -1`) closes the pipe; the command must end
// quietly, exit 0, with no EPIPE stack trace (what filters commonly do: common practice).
import { spawn } from 'node:child_process';
import { EventEmitter } from 'node:events';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { endQuietlyOnClosedPipe } from '../../electron/cli.ts';

const ROOT = join(import.meta.dirname, '..', '..');
const BIN = join(ROOT, 'bin', 'loopwise.js');
const FIX = join(ROOT, 'test', 'fixtures', 'io');

const epipe = (): NodeJS.ErrnoException => Object.assign(new Error('write EPIPE'), { code: 'EPIPE' });

/** Runs the CLI with its stdout closed by the reader before anything is written. */
function runClosed(
  args: string[],
  env: Record<string, string> = {},
): Promise<{ code: number | null; err: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [BIN, ...args], {
      cwd: ROOT,
      stdio: ['ignore', 'pipe', 'pipe'],
      env: { ...process.env, ...env },
    });
    child.stdout.destroy();
    let err = '';
    child.stderr.on('data', (d: Buffer) => (err += d.toString()));
    child.on('error', reject);
    child.on('close', (code) => resolve({ code, err }));
  });
}

describe('a closed standard output', () => {
  it('ends a printing command with exit 0, and lets analyze and merge go on', () => {
    for (const command of ['diagram', 'validate', undefined, 'nonsense']) {
      const out = new EventEmitter();
      const err = new EventEmitter();
      const exits: number[] = [];
      endQuietlyOnClosedPipe(command, { out, err }, (c) => exits.push(c));
      out.emit('error', epipe());
      expect(exits).toEqual([0]);
    }
    for (const command of ['analyze', 'merge']) {
      const out = new EventEmitter();
      const err = new EventEmitter();
      const exits: number[] = [];
      endQuietlyOnClosedPipe(command, { out, err }, (c) => exits.push(c));
      out.emit('error', epipe());
      err.emit('error', epipe());
      expect(exits).toEqual([]);
    }
  });

  it('still throws other write errors', () => {
    const out = new EventEmitter();
    endQuietlyOnClosedPipe('diagram', { out, err: new EventEmitter() }, () => undefined);
    expect(() => out.emit('error', Object.assign(new Error('disk full'), { code: 'ENOSPC' }))).toThrow(
      /disk full/,
    );
  });

  it('validate | head: exit 0, no stack trace', async () => {
    const r = await runClosed(['validate', join(FIX, 'malformed')]);
    expect(r.err).not.toMatch(/EPIPE|Error|at /);
    expect(r.code).toBe(0);
  });

  it('the same when run from the TypeScript sources', async () => {
    const r = await runClosed(['validate', join(FIX, 'malformed')], { LOOPWISE_FROM_SOURCE: '1' });
    expect(r.err).not.toMatch(/EPIPE|Error|at /);
    expect(r.code).toBe(0);
  });

  it('diagram | head -c 100: exit 0, no stack trace', async () => {
    const r = await runClosed(['diagram', join(FIX, 'malformed', 'sub-01_conn.csv')]);
    expect(r.err).not.toMatch(/EPIPE|Error|at /);
    expect(r.code).toBe(0);
  });
});
