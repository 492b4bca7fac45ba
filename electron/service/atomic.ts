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

/** Whether a process of this host with that id is running (EPERM: it runs under another user). */
export function isAlive(pid: number): boolean {
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

/** Error codes that mean the folder cannot take the write (as opposed to a bug or a bad argument). */
const WRITE_CAUSES: Record<string, string> = {
  ENOSPC: 'the disk is full',
  EDQUOT: 'the disk quota is exceeded',
  EROFS: 'the file system is read-only',
  EACCES: 'permission denied',
  EPERM: 'operation not permitted',
  EFBIG: 'the file is too large for the file system',
  EIO: 'an input/output error of the device',
};

/**
 * A write that failed because of the folder (full disk, read-only, no permission): the message
 * names the folder, the file and the cause; `code` keeps the system's error code.
 */
export class WriteError extends Error {
  readonly code: string;
  readonly dir: string;
  constructor(file: string, code: string, detail: string) {
    super(`cannot write ${basename(file)} into ${dirname(file)}: ${detail} (${code})`);
    this.name = 'WriteError';
    this.code = code;
    this.dir = dirname(file);
  }
}

/** `e` as a WriteError naming `file` when its code says the folder refused the write; else `e` unchanged. */
export function asWriteError(e: unknown, file: string): unknown {
  if (e instanceof WriteError) return e;
  const code = (e as NodeJS.ErrnoException | null)?.code;
  return code && code in WRITE_CAUSES ? new WriteError(file, code, WRITE_CAUSES[code]) : e;
}

/** Writes `data` to `file` atomically (see the module comment); on any failure the temporary is removed. */
export async function writeFileAtomic(file: string, data: string | Uint8Array): Promise<void> {
  const tmp = tempPath(file);
  let h;
  try {
    h = await open(tmp, 'w');
  } catch (e) {
    throw asWriteError(e, file);
  }
  try {
    await h.writeFile(data);
    await h.sync();
    await h.close();
    await rename(tmp, file);
  } catch (e) {
    await h.close().catch(() => undefined);
    await rm(tmp, { force: true }).catch(() => undefined);
    throw asWriteError(e, file);
  }
  await fsyncDir(dirname(file));
}

/** A text file written piece by piece (tables too large to build as one string), committed atomically by close(). */
export interface AtomicWriter {
  /** Resolves once the text is accepted; rejects (and removes the temporary) when the write fails. */
  write(text: string): Promise<void>;
  /** Flushes, fsyncs and renames into place; on failure removes the temporary. */
  close(): Promise<void>;
  /** Removes the temporary file; the final name is untouched. */
  abort(): Promise<void>;
}

export function openAtomicWriter(file: string): AtomicWriter {
  const tmp = tempPath(file);
  const stream = createWriteStream(tmp, { flags: 'w' });
  let failure: unknown = null;
  // The stream reports a failed write (e.g. ENOSPC) only as an 'error' event, and then never
  // emits 'drain': whoever waits must listen for both, or it waits forever.
  stream.on('error', (e) => (failure ??= asWriteError(e, file)));
  const removeTemp = async (): Promise<void> => {
    stream.destroy();
    await rm(tmp, { force: true }).catch(() => undefined);
  };
  const failWith = async (e: unknown): Promise<never> => {
    failure ??= asWriteError(e, file);
    await removeTemp();
    throw failure;
  };
  /** Resolves on `ok`, rejects on 'error' or on a close without `ok`. */
  const until = (ok: 'drain' | 'finish'): Promise<void> =>
    new Promise<void>((resolve, reject) => {
      const done = (e?: unknown): void => {
        stream.off(ok, onOk);
        stream.off('error', onError);
        stream.off('close', onClose);
        if (e === undefined) resolve();
        else reject(e);
      };
      const onOk = (): void => done();
      const onError = (e: Error): void => done(e);
      const onClose = (): void => done(failure ?? new Error(`${tmp} was closed before it was written`));
      stream.on(ok, onOk);
      stream.on('error', onError);
      stream.on('close', onClose);
    });
  return {
    async write(text) {
      if (failure) return failWith(failure);
      if (stream.destroyed) return failWith(new Error(`${file}: the writer is closed`));
      if (stream.write(text)) return;
      try {
        await until('drain');
      } catch (e) {
        await failWith(e);
      }
    },
    async close() {
      if (failure) return failWith(failure);
      try {
        const finished = until('finish');
        stream.end();
        await finished;
        if (failure) throw failure;
        const h = await open(tmp, 'r+');
        try {
          await h.sync();
        } finally {
          await h.close();
        }
        await rename(tmp, file);
      } catch (e) {
        await failWith(e);
      }
      await fsyncDir(dirname(file));
    },
    abort: removeTemp,
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
