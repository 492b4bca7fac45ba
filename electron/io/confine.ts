/**
 * Confinement of a cohort to the folders the user chose: a file the cohort refers to (through a
 * symlink, a participants-table file column, a sessions or node table) is read only when its real
 * path — symlinks and '..' resolved — lies inside the cohort folder or an allowed root. A refused
 * file is never opened, so nothing of its contents can reach a message.
 */
import { realpath } from 'node:fs/promises';
import { isAbsolute, relative, resolve } from 'node:path';
import type { QcFinding } from '../api.ts';

export type Place = 'inside' | 'outside' | 'missing';

export interface Confinement {
  /** The real paths of the cohort folder and the allowed roots that exist. */
  roots: string[];
  /** Where a file's real path lies; 'missing' when it does not resolve (absent, broken link). */
  place(file: string): Promise<Place>;
}

/** True when `file` is `root` or lies below it (both real, absolute paths). */
export function within(root: string, file: string): boolean {
  const r = relative(root, file);
  return r === '' || (!r.startsWith('..') && !isAbsolute(r));
}

export async function confinement(root: string, allowedRoots: string[] = []): Promise<Confinement> {
  const roots: string[] = [];
  for (const r of [root, ...allowedRoots]) {
    try {
      roots.push(await realpath(resolve(r)));
    } catch {
      // A root that does not exist allows nothing.
    }
  }
  const memo = new Map<string, Promise<Place>>();
  const place = (file: string): Promise<Place> => {
    let p = memo.get(file);
    if (!p) {
      p = realpath(file).then(
        (real) => (roots.some((r) => within(r, real)) ? 'inside' : 'outside'),
        () => 'missing' as const,
      );
      memo.set(file, p);
    }
    return p;
  };
  return { roots, place };
}

/** The finding for a refused file: names the file as the cohort refers to it, never its target or contents. */
export function outsideFinding(
  file: string,
  subject: string | null,
  what: string,
  code = 'outside-folder',
): QcFinding {
  return {
    severity: 'error',
    code,
    file,
    subject,
    message: `${what} ${file} is outside the chosen folders (the cohort folder and any allowed roots); it is not read`,
  };
}
