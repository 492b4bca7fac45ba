/** Browser mode over the real service, as `npm start` runs it, on a fresh cache and output folder. */
import { existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createLoopwiseService } from '../../../electron/service/service.ts';
import { startWebServer, type WebServer } from '../../../electron/web.ts';

export const repo = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..', '..');
export const sampleRoot = join(repo, 'sample-data');
export const sampleCohort = join(sampleRoot, 'rhythm-study');
export const messyCohort = join(sampleRoot, 'rhythm-study-messy');
export const distDir = join(repo, 'dist');
/** Screenshots of each view, kept as test artefacts (git-ignored). */
export const artefacts = join(repo, 'test-results', 'e2e');

export interface RunningApp {
  server: WebServer;
  outDir: string;
  close(): Promise<void>;
}

/** `roots`: further folders the browser may read (e.g. a cohort a test generates). */
export async function startApp(options: { roots?: string[] } = {}): Promise<RunningApp> {
  if (!existsSync(join(distDir, 'index.html'))) throw new Error('dist/ is missing: run npm run build first');
  const work = mkdtempSync(join(tmpdir(), 'loopwise-e2e-'));
  const outDir = join(work, 'out');
  mkdirSync(outDir);
  mkdirSync(artefacts, { recursive: true });
  const api = createLoopwiseService({ cacheDir: join(work, 'cache'), workers: 2 });
  const server = await startWebServer(api, {
    port: 0,
    roots: [sampleRoot, outDir, ...(options.roots ?? [])],
    staticDir: distDir,
    sampleCohort,
    defaultOutDir: outDir,
    version: 'e2e',
  });
  return {
    server,
    outDir,
    close: async () => {
      await server.close();
      rmSync(work, { recursive: true, force: true });
    },
  };
}
