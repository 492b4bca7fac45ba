/**
 * Whether `npm start` may serve the built app as it is: the build (dist/, dist-electron/) must
 * exist and be newer than every source it is made from, so an edited renderer is never served stale.
 */
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';

/** The newest modification time under `path` (a file or a folder, walked; node_modules skipped). */
export function newestMtime(path: string): number {
  if (!existsSync(path)) return 0;
  const st = statSync(path);
  if (!st.isDirectory()) return st.mtimeMs;
  let newest = st.mtimeMs;
  for (const name of readdirSync(path)) {
    if (name === 'node_modules') continue;
    newest = Math.max(newest, newestMtime(join(path, name)));
  }
  return newest;
}

/** What the build reads: the renderer, the electron folder it imports (contract, api) and the build's own files. */
export const BUILD_INPUTS = ['renderer', 'electron', 'package.json', 'package-lock.json'];
/** What the build writes; the oldest of them must be newer than every input. */
export const BUILD_OUTPUTS = [
  join('dist', 'index.html'),
  join('dist-electron', 'main.js'),
  join('dist-electron', 'preload.cjs'),
];

/** Why the built app cannot be served as it is (missing, or older than a source), or null. */
export function staleBuild(root: string): string | null {
  const outputs = BUILD_OUTPUTS.map((o) => join(root, o));
  const missing = outputs.find((o) => !existsSync(o));
  if (missing) return `${missing} is missing`;
  const built = Math.min(...outputs.map((o) => statSync(o).mtimeMs));
  const edited = BUILD_INPUTS.find((i) => newestMtime(join(root, i)) > built);
  return edited ? `${edited} changed since the last build` : null;
}
