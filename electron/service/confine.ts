/**
 * Where a door may read and write. Paths are compared after resolving '..' and symbolic links
 * (a folder that does not exist yet is resolved through its nearest existing ancestor), so neither
 * a '..' nor a link leads outside. Read roots (cohort folders, the bundled sample) are never
 * written; an output folder must lie inside a write root and must neither be, nor lie inside, nor
 * hold a cohort the session opened.
 */
import { existsSync, realpathSync } from 'node:fs';
import { dirname, isAbsolute, join, relative, resolve, sep } from 'node:path';

/** The real path of p, or of its nearest existing ancestor joined with the rest (for folders not yet made). */
export function realPathOf(p: string): string {
  let head = resolve(p);
  const tail: string[] = [];
  while (!existsSync(head)) {
    const up = dirname(head);
    if (up === head) break;
    tail.unshift(head.slice(up.length).replace(/^[\\/]+/, ''));
    head = up;
  }
  const real = existsSync(head) ? realpathSync(head) : head;
  return tail.length ? join(real, ...tail) : real;
}

/** True when the real path `inner` is `outer` or lies inside it (both already real). */
export function within(inner: string, outer: string): boolean {
  const rel = relative(outer, inner);
  return rel === '' || (rel !== '..' && !rel.startsWith('..' + sep) && !isAbsolute(rel));
}

/** True when p (after resolving symlinks and '..') is one of the roots or inside one. */
export function insideRoots(p: string, realRoots: string[]): boolean {
  if (!isAbsolute(p)) return false;
  const real = realPathOf(p);
  return realRoots.some((root) => within(real, root));
}

/**
 * Why an output folder may not receive a run's files, or null when it may: it is one of the
 * run's inputs (the cohort folder, a participants or node table), lies inside one, or holds one.
 */
export function outputOverlapsInputs(outDir: string, inputs: string[]): string | null {
  const out = realPathOf(outDir);
  for (const input of inputs) {
    const real = realPathOf(input);
    if (out === real) return `${outDir} is the run's input ${input}`;
    if (within(out, real)) return `${outDir} lies inside the run's input ${input}`;
    if (within(real, out)) return `${outDir} holds the run's input ${input}`;
  }
  return null;
}

export interface DoorRoots {
  /** Folders the door may read (cohorts, the sample). */
  read: string[];
  /** Folders the door may write into (the results folder, output folders the user picked). */
  write: string[];
  /** Cohort folders (the sample, those opened in this session): never written, whatever the roots say. */
  cohorts: string[];
}

/** The paths a checked call reads and those it writes (the output folder of startRun and exportRun). */
export function callPaths(
  method: string,
  checked: { args: unknown[]; paths: string[] },
): {
  reads: string[];
  writes: string[];
} {
  let writes: string[] = [];
  if (method === 'startRun') {
    const outDir = (checked.args[0] as { outDir?: string | null }).outDir;
    writes = outDir ? [outDir] : [];
  } else if (method === 'exportRun') writes = [checked.args[1] as string];
  return { reads: checked.paths.filter((p) => !writes.includes(p)), writes };
}

/**
 * The one path check of every door (HTTP and Electron IPC): every path a call reads must lie in a
 * read or write root; every path it writes must lie in a write root and must be neither a cohort
 * folder nor inside one. Returns the refusal's message, or null when the call may go ahead.
 */
export function checkDoorPaths(call: { reads: string[]; writes: string[] }, roots: DoorRoots): string | null {
  const real = (list: string[]): string[] => list.filter((r) => existsSync(r)).map((r) => realPathOf(r));
  const readable = real([...roots.read, ...roots.write]);
  const writable = real(roots.write);
  const cohorts = roots.cohorts.map((c) => realPathOf(c));
  for (const p of call.reads) {
    if (!insideRoots(p, readable))
      return `${p} is outside the folders this session may use (${[...roots.read, ...roots.write].join(', ')})`;
  }
  for (const p of call.writes) {
    if (!insideRoots(p, writable))
      return `${p} is not inside a folder this session may write to (${roots.write.join(', ') || 'none'}); cohort folders and the sample are read-only`;
    const out = realPathOf(p);
    const cohort = cohorts.find((c) => within(out, c));
    if (cohort !== undefined)
      return `${p} ${out === cohort ? 'is' : 'lies inside'} the cohort folder ${cohort}, which is read-only: choose another output folder`;
  }
  return null;
}
