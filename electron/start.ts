/**
 * `npm start`: the desktop app where Electron's binary is installed; otherwise browser mode
 * (same renderer, same service, over loopback HTTP), saying so in one line and printing the URL.
 *
 *   npm start                          sample cohort one click away, results under ~/Loopwise
 *   npm start -- --cohort DIR --out DIR [--root DIR]… [--port N] [--browser]
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { homedir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { staleBuild } from './start-build.ts';
import { createLoopwiseService } from './service/service.ts';
import { startWebServer } from './web.ts';

const repo = resolve(dirname(fileURLToPath(import.meta.url)), '..');

/** The Electron executable, found without loading the electron package (which would try to download it). */
function electronBinary(root = repo): string | null {
  const pkg = join(root, 'node_modules', 'electron');
  const pathFile = join(pkg, 'path.txt');
  if (!existsSync(pathFile)) return null;
  const exe = join(pkg, 'dist', readFileSync(pathFile, 'utf8').trim());
  return existsSync(exe) ? exe : null;
}

/** Builds the renderer and Electron entries when missing or older than their sources: never a stale app. */
function ensureBuilt(): void {
  const why = staleBuild(repo);
  if (!why) return;
  console.log(`Building the app (${why})…`);
  const r = spawnSync('npm', ['run', 'build'], {
    cwd: repo,
    stdio: 'inherit',
    shell: process.platform === 'win32',
  });
  if (r.status !== 0) throw new Error('npm run build failed');
}

async function main(): Promise<void> {
  const { values } = parseArgs({
    options: {
      cohort: { type: 'string' },
      out: { type: 'string' },
      root: { type: 'string', multiple: true },
      port: { type: 'string' },
      browser: { type: 'boolean' },
    },
  });
  ensureBuilt();

  const exe = values.browser ? null : electronBinary();
  if (exe) {
    // The study named at start travels to the desktop app, which opens it at once.
    const child = spawn(exe, [repo, ...(values.cohort ? ['--cohort', resolve(values.cohort)] : [])], {
      stdio: 'inherit',
    });
    child.on('exit', (code) => process.exit(code ?? 0));
    return;
  }
  if (!values.browser) {
    console.log(
      'Electron is not installed here (no binary under node_modules/electron/dist): starting browser mode.',
    );
  }

  const sampleRoot = join(repo, 'sample-data');
  const sample = join(sampleRoot, 'rhythm-study');
  const outDir = resolve(values.out ?? join(homedir(), 'Loopwise'));
  mkdirSync(outDir, { recursive: true });
  // Read roots (cohorts, the sample) are only read; outputs go only into the --out folder.
  const roots = (values.root ?? []).map((r) => resolve(r));
  if (values.cohort) roots.push(resolve(values.cohort));
  if (existsSync(sampleRoot)) roots.push(sampleRoot);

  const api = createLoopwiseService({
    cacheDir: join(homedir(), '.cache', 'loopwise'),
    allowedRoots: () => [...roots, outDir],
  });
  const server = await startWebServer(api, {
    port: values.port ? Number(values.port) : 0,
    roots,
    writeRoots: [outDir],
    staticDir: join(repo, 'dist'),
    sampleCohort: existsSync(sample) ? sample : null,
    startCohort: values.cohort ? resolve(values.cohort) : null,
    defaultOutDir: outDir,
    version: JSON.parse(readFileSync(join(repo, 'package.json'), 'utf8')).version,
  });
  console.log(`Loopwise is running at ${server.url}`);
  // api.close() also removes the tables the session's runs kept for export (CACHE/runs/).
  const stop = () =>
    void server
      .close()
      .then(() => api.close())
      .then(() => process.exit(0));
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}

main().catch((e: unknown) => {
  console.error(`loopwise: ${e instanceof Error ? e.message : String(e)}`);
  process.exit(1);
});
