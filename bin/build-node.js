// Compiles the command line (the CLI, the service it runs and the worker-thread entry) to plain
// JavaScript in dist-node/, so `loopwise` starts without compiling TypeScript on every run.
//
//   node bin/build-node.js [OUT_DIR] [--force]
//
// `npm run build:node`; `npm test` and `npm run sample` run it first, and `npm ci`/`npm install`
// run it with --force as `prepare`. Without --force it does nothing while the build is up to date.
//
// esbuild bundles electron/cli.ts and the worker entries (electron/workers/filtration-worker.ts,
// statistics-worker.ts) with their npm
// dependencies into ES modules; commands the CLI imports lazily become chunks of their own, so
// `loopwise --help` loads a few kilobytes. The worker lands beside the chunks: the pool finds it at
// ./filtration-worker.js relative to its own module. No type checking happens here (that is
// `npm run typecheck`).
//
// The build ends by writing dist-node/build-stamp.json: every file under electron/ plus
// package.json, package-lock.json and this script, each with its size and modification time, as they were when the
// build started. bin/loopwise.js runs the compiled code only while that list still matches the
// files on disk, and otherwise runs the sources through tsx: an edited, added, removed or
// checked-out file is never served from a stale build.
import { existsSync, readFileSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { join, relative, resolve, sep } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const REPO = fileURLToPath(new URL('..', import.meta.url));
export const STAMP_FILE = 'build-stamp.json';

/** The files a build depends on, as `[path relative to root, size, mtimeMs]`, sorted by path. */
export function sourceStamp(root = REPO) {
  // package-lock.json stands for the bundled npm packages' versions.
  const files = ['package.json', 'package-lock.json', join('bin', 'build-node.js')].filter((f) =>
    existsSync(join(root, f)),
  );
  // A plain walk: readdirSync's `recursive` option costs several times more on Node 20.
  const walk = (dir) => {
    for (const e of readdirSync(join(root, dir), { withFileTypes: true })) {
      const path = join(dir, e.name);
      if (e.isDirectory()) walk(path);
      else if (e.name.endsWith('.ts') || e.name.endsWith('.js')) files.push(path);
    }
  };
  walk('electron');
  return files
    .map((f) => {
      const s = statSync(join(root, f));
      return [f.split(sep).join('/'), s.size, s.mtimeMs];
    })
    .sort((a, b) => (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0));
}

/** True when `outDir` holds a finished build of the files under `root` as they are now. */
export function isBuildFresh(root = REPO, outDir = join(root, 'dist-node')) {
  let stamp;
  try {
    stamp = readFileSync(join(outDir, STAMP_FILE), 'utf8');
  } catch {
    return false;
  }
  try {
    return stamp === JSON.stringify(sourceStamp(root));
  } catch {
    return false;
  }
}

/** Builds into `outDir` (emptied first); the stamp is written last, so a failed build is never taken as fresh. */
export async function buildNode(root = REPO, outDir = join(root, 'dist-node')) {
  const stamp = sourceStamp(root);
  rmSync(outDir, { recursive: true, force: true });
  const { build } = await import('esbuild');
  const result = await build({
    absWorkingDir: root,
    entryPoints: {
      cli: 'electron/cli.ts',
      'filtration-worker': 'electron/workers/filtration-worker.ts',
      'statistics-worker': 'electron/workers/statistics-worker.ts',
    },
    outdir: outDir,
    bundle: true,
    splitting: true,
    format: 'esm',
    platform: 'node',
    target: 'node20',
    sourcemap: true,
    logLevel: 'warning',
    metafile: true,
    // Bundled CommonJS dependencies (papaparse) require node built-ins; ES modules have no `require`.
    banner: {
      js: "import { createRequire as __loopwiseRequire } from 'node:module'; const require = __loopwiseRequire(import.meta.url);",
    },
  });
  // The stamp must cover every source the bundle holds, or an edit to one would go unnoticed.
  const stamped = new Set(stamp.map(([path]) => path));
  const unstamped = Object.keys(result.metafile.inputs).filter(
    (f) => !f.split('/').includes('node_modules') && !stamped.has(f),
  );
  if (unstamped.length > 0)
    throw new Error(`the build reads files its stamp does not cover: ${unstamped.join(', ')}`);
  // The output is ES modules wherever it is written, also outside this package.
  writeFileSync(join(outDir, 'package.json'), '{ "type": "module" }\n');
  writeFileSync(join(outDir, STAMP_FILE), JSON.stringify(stamp));
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const args = process.argv.slice(2);
  const force = args.includes('--force');
  const dir = args.find((a) => a !== '--force');
  const outDir = resolve(dir ?? join(REPO, 'dist-node'));
  const shown = relative(process.cwd(), outDir) || '.';
  if (!force && isBuildFresh(REPO, outDir)) {
    console.log(`${shown} is up to date`);
  } else {
    const t0 = performance.now();
    await buildNode(REPO, outDir);
    console.log(`built ${shown} in ${((performance.now() - t0) / 1000).toFixed(2)} s`);
  }
}
