/**
 * The atomic writers on a file system that runs out of space (a small tmpfs; skipped where it
 * cannot be mounted): a failed write ends the writer with an error naming the folder and ENOSPC —
 * it must not wait for a 'drain' that never comes — and leaves neither the final file nor a
 * temporary behind.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { WriteError, openAtomicWriter, writeFileAtomic } from '../../electron/service/atomic.ts';

let dir: string;
let mounted = false;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'loopwise-atomic-'));
  if (process.platform === 'linux' && process.getuid?.() === 0)
    mounted = spawnSync('mount', ['-t', 'tmpfs', '-o', 'size=256k', 'tmpfs', dir]).status === 0;
});
afterAll(() => {
  if (mounted) spawnSync('umount', [dir]);
  rmSync(dir, { recursive: true, force: true });
});

it('a streamed table that does not fit fails with ENOSPC instead of waiting forever, and leaves nothing', async (ctx) => {
  if (!mounted) return ctx.skip();
  const writer = openAtomicWriter(join(dir, 'big.tsv'));
  const line = 'x'.repeat(63) + '\n';
  let error: unknown = null;
  try {
    // Far more than the 256 KiB the disk holds, in pieces larger than the stream's buffer, so
    // that every write waits for 'drain'.
    for (let i = 0; i < 64; i++) await writer.write(line.repeat(1024));
    await writer.close();
  } catch (e) {
    error = e;
  }
  expect(error).toBeInstanceOf(WriteError);
  expect((error as WriteError).code).toBe('ENOSPC');
  expect((error as Error).message).toContain(`into ${dir}: the disk is full (ENOSPC)`);
  expect(readdirSync(dir)).toEqual([]);
});

it('a whole file that does not fit fails with ENOSPC, keeps the old file, and leaves no temporary', async (ctx) => {
  if (!mounted) return ctx.skip();
  writeFileSync(join(dir, 'table.tsv'), 'old\n');
  await expect(writeFileAtomic(join(dir, 'table.tsv'), Buffer.alloc(1 << 20))).rejects.toThrow(
    /cannot write table\.tsv into .*: the disk is full \(ENOSPC\)/,
  );
  expect(readdirSync(dir)).toEqual(['table.tsv']);
  rmSync(join(dir, 'table.tsv'));
});
