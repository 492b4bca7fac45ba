/**
 * An output folder owned through a manifest. `.loopwise-manifest.json` lists every file Loopwise
 * wrote there, the state of the run (running, failed, complete) and the settings it was run with.
 * Loopwise writes, replaces and removes only the files listed there: a file of the same name that
 * it did not write is never touched (the run is refused, naming it). A file is listed *before* it
 * is written, so a run killed at any moment leaves a manifest that covers every file it made.
 *
 * A lock file (`.loopwise-lock`: process id, host, start time) keeps a second run out while one
 * is writing; a lock whose process is gone (same host) is taken over.
 *
 * Rules when a run opens a folder:
 *   - the folder must not be, lie inside, or hold an input of the run (refused);
 *   - an empty or new folder is taken;
 *   - an unfinished run (running or failed) with the same settings is resumed;
 *   - an unfinished run with other settings, or a finished run, is replaced only with `force`;
 *   - files Loopwise did not write are left alone; with no manifest they are refused unless `force`;
 *   - once the run ends, tables of an earlier run that this run did not write again are removed.
 */
import { lstat, mkdir, open, readFile, readdir, rm } from 'node:fs/promises';
import { hostname } from 'node:os';
import { join } from 'node:path';
import { asWriteError, isAlive, openAtomicWriter, removeStaleTemps, writeFileAtomic } from './atomic.ts';
import type { AtomicWriter } from './atomic.ts';
import { outputOverlapsInputs } from './confine.ts';

export const MANIFEST = '.loopwise-manifest.json';
export const LOCK = '.loopwise-lock';
/** The marker of earlier versions (status and files, no settings): read as a manifest. */
export const LEGACY_MARKER = '.loopwise-run.json';

/** A refusal to use an output folder: the user can resolve it (another folder, --force, wait). */
export class OutDirError extends Error {
  /** Which rule refused, where a client can offer a way out (e.g. the app's "replace" choice). */
  readonly code: OutDirErrorCode | null;
  constructor(message: string, code: OutDirErrorCode | null = null) {
    super(message);
    this.name = 'OutDirError';
    this.code = code;
  }
}

/**
 * 'finished-run': the folder holds a finished run's tables (force replaces them); 'foreign-files':
 * files Loopwise did not write (force writes beside them); 'unfinished-run': an unfinished run with
 * other settings (force replaces it). Other refusals (a clash with a user's file, a live lock, a
 * cohort's folder) have no code: force does not resolve them.
 */
export type OutDirErrorCode = 'finished-run' | 'foreign-files' | 'unfinished-run';

export type RunDescription = Record<string, unknown>;

export interface Manifest {
  format: 1;
  tool: 'loopwise';
  status: 'running' | 'failed' | 'complete';
  /** What the run was asked to do (cohort, settings, statistics, table format); null from older versions. */
  run: RunDescription | null;
  /** Files Loopwise wrote (or was writing) in the folder, by name. */
  files: string[];
}

interface LockInfo {
  pid: number;
  host: string;
  startedAt: string;
}

const HOST = hostname();

async function readJson<T>(file: string): Promise<T | null> {
  try {
    return JSON.parse(await readFile(file, 'utf8')) as T;
  } catch {
    return null;
  }
}

export async function readManifest(dir: string): Promise<Manifest | null> {
  const m = await readJson<Manifest>(join(dir, MANIFEST));
  if (m && Array.isArray(m.files)) return m;
  const legacy = await readJson<{ status: 'running' | 'complete'; files: string[] }>(
    join(dir, LEGACY_MARKER),
  );
  if (legacy && Array.isArray(legacy.files))
    return { format: 1, tool: 'loopwise', status: legacy.status, run: null, files: legacy.files };
  return null;
}

/** The settings that differ between two runs, as 'name: old → new' (empty when they agree). */
export function describeDifferences(old: RunDescription, now: RunDescription): string[] {
  const out: string[] = [];
  for (const key of [...new Set([...Object.keys(old), ...Object.keys(now)])].sort()) {
    const a = JSON.stringify(old[key] ?? null);
    const b = JSON.stringify(now[key] ?? null);
    if (a !== b) out.push(`${key}: ${a} → ${b}`);
  }
  return out;
}

function list(names: string[]): string {
  return names.slice(0, 5).join(', ') + (names.length > 5 ? `, … (${names.length} in all)` : '');
}

/** Takes the folder's lock, or throws OutDirError naming the live owner. */
async function takeLock(dir: string, name: string): Promise<LockInfo> {
  const file = join(dir, name);
  const mine: LockInfo = { pid: process.pid, host: HOST, startedAt: new Date().toISOString() };
  for (let attempt = 0; attempt < 3; attempt++) {
    try {
      const h = await open(file, 'wx');
      try {
        await h.writeFile(JSON.stringify(mine));
      } finally {
        await h.close();
      }
      return mine;
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
    }
    const owner = await readJson<LockInfo>(file);
    // An unreadable lock is one whose writer died between creating and filling it.
    const gone =
      owner === null ||
      (owner.host === HOST &&
        owner.pid !== process.pid &&
        Number.isInteger(owner.pid) &&
        !isAlive(owner.pid));
    if (!gone) {
      const who =
        owner.pid === process.pid && owner.host === HOST
          ? 'another run of this Loopwise session'
          : `process ${owner.pid} on ${owner.host}, started ${owner.startedAt}`;
      throw new OutDirError(
        `${dir} is in use by another Loopwise run (${who}); wait for it to finish or choose another ` +
          `output folder (if that process is gone, delete ${file})`,
      );
    }
    await rm(file, { force: true });
  }
  throw new OutDirError(`${dir}: could not take the lock ${file}`);
}

async function dropLock(dir: string, name: string, mine: LockInfo): Promise<void> {
  const file = join(dir, name);
  const owner = await readJson<LockInfo>(file);
  if (owner && owner.pid === mine.pid && owner.host === mine.host && owner.startedAt === mine.startedAt)
    await rm(file, { force: true });
}

export interface OpenOutputOptions {
  /** Replace a finished run, or an unfinished one with other settings. */
  force: boolean;
  /** What the run is asked to do: a folder holding an unfinished run is resumed only when this matches. */
  run: RunDescription;
  /** The run's inputs (cohort folder, participants and node tables): the folder may not overlap them. */
  inputs: string[];
  /** File names the run is known to write: refused up front when a file Loopwise did not write holds one. */
  names: string[];
  /** The lock's file name (shards of one cohort share a folder, each with its own lock). */
  lock?: string;
  /** Shards write only into their hidden folder: no manifest, no checks of visible files. */
  shard?: boolean;
}

export class OutputFolder {
  readonly dir: string;
  private readonly owned: Set<string>;
  private readonly written = new Set<string>();
  private readonly run: RunDescription;
  private readonly lockName: string;
  private lock: LockInfo | null;
  private readonly shard: boolean;

  private constructor(
    dir: string,
    owned: string[],
    run: RunDescription,
    lockName: string,
    lock: LockInfo,
    shard: boolean,
  ) {
    this.dir = dir;
    this.owned = new Set(owned);
    this.run = run;
    this.lockName = lockName;
    this.lock = lock;
    this.shard = shard;
  }

  /** Checks the folder against the rules above, takes its lock and records the run as running. */
  static async open(dir: string, opts: OpenOutputOptions): Promise<OutputFolder> {
    const overlap = outputOverlapsInputs(dir, opts.inputs);
    if (overlap)
      throw new OutDirError(
        `${overlap}; Loopwise never writes into a cohort's files: choose an output folder outside it`,
      );
    const lockName = opts.lock ?? LOCK;
    let lock: LockInfo;
    try {
      await mkdir(dir, { recursive: true });
      lock = await takeLock(dir, lockName);
    } catch (e) {
      // A folder that cannot be made or written (read-only, no permission, full) says so by name.
      throw asWriteError(e, join(dir, lockName));
    }
    try {
      await removeStaleTemps(dir);
      if (opts.shard) return new OutputFolder(dir, [], opts.run, lockName, lock, true);
      const owned = await OutputFolder.admit(dir, opts);
      const folder = new OutputFolder(dir, owned, opts.run, lockName, lock, false);
      await folder.saveManifest('running');
      await rm(join(dir, LEGACY_MARKER), { force: true });
      return folder;
    } catch (e) {
      await dropLock(dir, lockName, lock);
      throw e;
    }
  }

  /** Applies the rules; returns the files Loopwise owns in the folder. */
  private static async admit(dir: string, opts: OpenOutputOptions): Promise<string[]> {
    const visible = (await readdir(dir)).filter((n) => !n.startsWith('.')).sort();
    const manifest = await readManifest(dir);
    const owned = new Set(manifest?.files ?? []);
    const foreign = visible.filter((n) => !owned.has(n));
    const clashes = foreign.filter((n) => opts.names.includes(n));
    if (clashes.length > 0)
      throw new OutDirError(
        `${dir} holds ${list(clashes)}, which Loopwise did not write and will not overwrite; ` +
          `move ${clashes.length === 1 ? 'it' : 'them'} away or choose another output folder`,
      );
    if (!manifest) {
      if (visible.length > 0 && !opts.force)
        throw new OutDirError(
          `${dir} already holds files Loopwise did not write (${list(visible)}); choose an empty or ` +
            `new output folder, or give --force to write beside them (they are left alone)`,
          'foreign-files',
        );
      return [];
    }
    const ownedVisible = visible.filter((n) => owned.has(n));
    if (opts.force || ownedVisible.length === 0) return [...owned];
    if (manifest.status === 'complete')
      throw new OutDirError(
        `${dir} already holds files of a finished Loopwise run (${list(ownedVisible)}); give --force ` +
          `to replace them (files Loopwise did not write are left alone), or choose another output folder`,
        'finished-run',
      );
    const diff = manifest.run ? describeDifferences(manifest.run, opts.run) : [];
    if (diff.length > 0)
      throw new OutDirError(
        `${dir} holds an unfinished run with other settings (${diff.join('; ')}); run the same ` +
          `command as before to resume it, give --force to replace it, or choose another output folder`,
        'unfinished-run',
      );
    return [...owned];
  }

  private async saveManifest(status: Manifest['status'], files = [...this.owned]): Promise<void> {
    const m: Manifest = { format: 1, tool: 'loopwise', status, run: this.run, files: [...files].sort() };
    await writeFileAtomic(join(this.dir, MANIFEST), JSON.stringify(m, null, 2) + '\n');
  }

  /**
   * Declares that the run writes `name`: refused when a file of that name exists that Loopwise
   * did not write; otherwise listed in the manifest before any byte of it is written.
   */
  async claim(name: string): Promise<void> {
    if (this.shard) throw new Error(`a shard run writes no tables (${name})`);
    if (!this.owned.has(name)) {
      const exists = await lstat(join(this.dir, name)).then(
        () => true,
        () => false,
      );
      if (exists)
        throw new OutDirError(
          `${join(this.dir, name)} was not written by Loopwise and will not be overwritten; move it away or choose another output folder`,
        );
      this.owned.add(name);
      await this.saveManifest('running');
    }
    this.written.add(name);
  }

  async writeFile(name: string, data: string | Uint8Array): Promise<void> {
    await this.claim(name);
    await writeFileAtomic(join(this.dir, name), data);
  }

  async openWriter(name: string): Promise<AtomicWriter> {
    await this.claim(name);
    return openAtomicWriter(join(this.dir, name));
  }

  /** The files this run has written so far. */
  files(): string[] {
    return [...this.written];
  }

  /**
   * Ends the run's writing: removes the tables of earlier runs that this run did not write again,
   * and records the outcome ('complete', or 'failed' when a stage could not run: the next run
   * with the same settings resumes).
   */
  async finish(status: 'complete' | 'failed'): Promise<void> {
    if (this.shard) return;
    for (const name of this.owned) {
      if (this.written.has(name)) continue;
      const info = await lstat(join(this.dir, name)).catch(() => null);
      if (info?.isFile()) await rm(join(this.dir, name), { force: true });
    }
    await this.saveManifest(status, [...this.written]);
    this.owned.clear();
    for (const n of this.written) this.owned.add(n);
  }

  /** Lets the next run in. The manifest keeps whatever state the run left. */
  async release(): Promise<void> {
    if (!this.lock) return;
    const lock = this.lock;
    this.lock = null;
    await dropLock(this.dir, this.lockName, lock).catch(() => undefined);
  }
}
