/**
 * The on-disk filtration cache: one JSON file per (matrix, filtration settings, ENGINE_VERSION),
 * at <cache>/filtrations/<key[0..2]>/<key>.json, each committed atomically. It doubles as the
 * run's commit log: a run killed at any moment resumes by reusing every entry present.
 * The folder is the user's to inspect and delete; README.txt inside says so.
 */
import { mkdir, readdir, stat } from 'node:fs/promises';
import { join } from 'node:path';
import { cachePath } from '../shared/cache-key.ts';
import { readCachedFiltration } from '../shared/filtration-record.ts';
import type { CachedFiltration } from '../shared/filtration-record.ts';
import { removeStaleTemps, writeFileAtomic } from './atomic.ts';

export { CACHE_FORMAT } from '../shared/filtration-record.ts';
export type { CachedFiltration } from '../shared/filtration-record.ts';

const README = `This folder holds Loopwise's cached filtrations: one file per subject matrix and
filtration setting. A run reuses them instead of recomputing, and an interrupted run resumes
from them. It is safe to delete this folder; the next run recomputes what it needs.
`;

export class FiltrationCache {
  readonly dir: string;
  constructor(dir: string) {
    this.dir = dir;
  }

  private pathOf(key: string): string {
    return cachePath(this.dir, key);
  }

  /** Creates the folder; removes temporaries of dead writers. */
  async init(): Promise<void> {
    await mkdir(join(this.dir, 'filtrations'), { recursive: true });
    await removeStaleTemps(this.dir);
    const readme = join(this.dir, 'README.txt');
    await stat(readme).catch(() => writeFileAtomic(readme, README));
    for (const sub of await readdir(join(this.dir, 'filtrations'))) {
      await removeStaleTemps(join(this.dir, 'filtrations', sub));
    }
  }

  /** The entry, or null when absent or unreadable (then it is simply recomputed). */
  async get(key: string): Promise<CachedFiltration | null> {
    return readCachedFiltration(this.pathOf(key), key);
  }

  async put(entry: CachedFiltration): Promise<void> {
    const file = this.pathOf(entry.key);
    await mkdir(join(this.dir, 'filtrations', entry.key.slice(0, 2)), { recursive: true });
    await writeFileAtomic(file, JSON.stringify(entry));
  }

  /** Total bytes and entries on disk. */
  async size(): Promise<{ bytes: number; entries: number }> {
    let bytes = 0;
    let entries = 0;
    const walk = async (d: string): Promise<void> => {
      for (const e of await readdir(d, { withFileTypes: true }).catch(() => [])) {
        const p = join(d, e.name);
        if (e.isDirectory()) await walk(p);
        else {
          bytes += (await stat(p)).size;
          if (e.name.endsWith('.json')) entries++;
        }
      }
    };
    await walk(this.dir);
    return { bytes, entries };
  }
}
