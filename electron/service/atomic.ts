/**
 * Crash-safe file writes. A file is written under a hidden temporary name in its final folder,
 * flushed to disk (fsync), renamed over the final name (atomic on POSIX file systems within one
 * folder), and the folder is flushed so the rename itself survives a power cut. A reader, or a
 * run that resumes after SIGKILL, therefore sees either the old file, or the whole new one, never
 * part of one. Leftover temporaries from a killed run carry TEMP_MARK and are removed by
 * removeStaleTemps.
 */
import { randomBytes } from 'node:crypto';
import { createWriteStream } from 'node:fs';
import { open, readdir, rename, rm, stat } from 'node:fs/promises';
import { hostname } from 'node:os';
import { basename, dirname, join } from 'node:path';

/** Every temporary file name contains this; nothing the user would name a file. */
export const TEMP_MARK = '.loopwise-tmp-';

// Host and pid in the name let a later run tell a dead writer's leftovers from a live shard's
// work in progress (shards of one cohort may share the folder across the nodes of a cluster).
const HOST = hostname().replace(/[^A-Za-z0-9_-]/g, '_');

function tempPath(file: string): string {
  const tag = `${HOST}~${process.pid}~${randomBytes(4).toString('hex')}`;
  return join(dirname(file), `.${basename(file)}${TEMP_MARK}${tag}`);
}

function isAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/** Temporaries of another host are only taken as stale after this long. */
const FOREIGN_STALE_MS = 24 * 3600 * 1000;

async function fsyncDir(dir: string): Promise<void> {
  // Some file systems refuse to open a folder for fsync; the rename is still atomic there.
  try {
    const h = await open(dir, 'r');
    try {
      await h.sync();
    } finally {
      await h.close();
    }
  } catch {
    /* best effort */
  }
}

/** Writes `data` to `file` atomically (see the module comment). */
export async function writeFileAtomic(file: string, data: string | Uint8Array): Promise<void> {
  const tmp = tempPath(file);
  const h = await open(tmp, 'w');
  try {
    await h.writeFile(data);
    await h.sync();
  } catch (e) {
    await h.close();
    await rm(tmp, { force: true });
    throw e;
  }
  await h.close();
  await rename(tmp, file);
  await fsyncDir(dirname(file));
}

/** A text file written piece by piece (tables too large to build as one string), committed atomically by close(). */
export interface AtomicWriter {
  write(text: string): Promise<void>;
  /** Flushes, fsyncs and renames into place. */
  close(): Promise<void>;
  /** Removes the temporary file; the final name is untouched. */
  abort(): Promise<void>;
}

export function openAtomicWriter(file: string): AtomicWriter {
  const tmp = tempPath(file);
  const stream = createWriteStream(tmp, { flags: 'w' });
  let failure: Error | null = null;
  stream.on('error', (e) => (failure = e));
  const write = (text: string): Promise<void> =>
    new Promise((resolve, reject) => {
      if (failure) return reject(failure);
      if (stream.write(text)) resolve();
      else stream.once('drain', resolve);
    });
  return {
    write,
    async close() {
      await new Promise<void>((resolve, reject) => {
        stream.end((e?: Error | null) => (e ? reject(e) : resolve()));
      });
      if (failure) throw failure;
      const h = await open(tmp, 'r+');
      try {
        await h.sync();
      } finally {
        await h.close();
      }
      await rename(tmp, file);
      await fsyncDir(dirname(file));
    },
    async abort() {
      stream.destroy();
      await rm(tmp, { force: true });
    },
  };
}

/**
 * Removes temporaries left by dead writers in `dir` (not recursive): those of this host whose
 * process is gone, and those of other hosts older than a day. Returns how many.
 */
export async function removeStaleTemps(dir: string): Promise<number> {
  let names: string[];
  try {
    names = await readdir(dir);
  } catch {
    return 0;
  }
  let removed = 0;
  for (const name of names) {
    const at = name.indexOf(TEMP_MARK);
    if (at < 0) continue;
    const [host, pidText] = name.slice(at + TEMP_MARK.length).split('~');
    const pid = Number(pidText);
    let stale: boolean;
    if (host === HOST && Number.isInteger(pid)) stale = pid !== process.pid && !isAlive(pid);
    else {
      const info = await stat(join(dir, name)).catch(() => null);
      stale = info !== null && Date.now() - info.mtimeMs > FOREIGN_STALE_MS;
    }
    if (stale) {
      await rm(join(dir, name), { force: true });
      removed++;
    }
  }
  return removed;
}
