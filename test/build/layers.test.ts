/**
 * The layer rule (loopwise/layers in eslint.config.js) fires at every folder depth: the project's
 * own ESLint configuration lints small snippets as if they were files at the given paths.
 */
import { ESLint } from 'eslint';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

const repo = join(import.meta.dirname, '..', '..');
const eslint = new ESLint({ cwd: repo });

/** The messages of the layer rule for `code` placed at `path` (relative to the repository). */
async function layerErrors(path: string, code: string): Promise<string[]> {
  const [result] = await eslint.lintText(code + '\n', { filePath: join(repo, path) });
  const fatal = result.messages.filter((m) => m.fatal);
  expect(fatal).toEqual([]);
  return result.messages.filter((m) => m.ruleId === 'loopwise/layers').map((m) => m.message);
}

describe('loopwise/layers', () => {
  it.each([
    ['electron/engine/x.ts', "import { readMatrixFile } from '../io/read-matrix.ts';"],
    ['electron/engine/features/x.ts', "import { readMatrixFile } from '../../io/read-matrix.ts';"],
    ['electron/engine/stats/deep/x.ts', "import { FiltrationCache } from '../../../service/cache.ts';"],
    ['electron/engine/features/x.ts', "import { WorkerPool } from '../../workers/pool.ts';"],
    ['electron/engine/features/x.ts', "import { sha256Matrix } from '../../shared/hash.ts';"],
    ['electron/engine/features/x.ts', "import { main } from '../../cli.ts';"],
    ['electron/engine/features/x.ts', "import { x } from '../../../renderer/src/lib/settings.ts';"],
    ['electron/engine/features/x.ts', "export { readMatrixFile } from '../../io/read-matrix.ts';"],
    ['electron/engine/features/x.ts', "export * from '../../io/read-matrix.ts';"],
    ['electron/engine/features/x.ts', "export const m = () => import('../../io/read-matrix.ts');"],
    ['electron/engine/features/x.ts', "import { readFileSync } from 'node:fs';"],
    ['electron/engine/stats/x.ts', "import { join } from 'path';"],
    ['electron/engine/stats/x.ts', "import { Worker } from 'worker_threads';"],
    ['electron/engine/stats/x.ts', "import { readFile } from 'fs/promises';"],
    ['electron/engine/x.ts', "import { app } from 'electron';"],
    // A value import from the contract (types are allowed, below).
    ['electron/engine/stats/x.ts', "import { something } from '../../api.ts';"],
    ['electron/workers/x.ts', "import { FiltrationCache } from '../service/cache.ts';"],
    ['electron/workers/sub/x.ts', "import { checkSettings } from '../../service/settings.ts';"],
    ['electron/workers/x.ts', "import type { CachedFiltration } from '../service/cache.ts';"],
    ['electron/shared/x.ts', "import { FiltrationCache } from '../service/cache.ts';"],
    ['electron/shared/x.ts', "import { WorkerPool } from '../workers/pool.ts';"],
    [
      'renderer/src/lib/x.ts',
      "import { createLoopwiseService } from '../../../electron/service/service.ts';",
    ],
    ['renderer/src/x.ts', "import { readMatrixFile } from '../../electron/io/read-matrix.ts';"],
    ['renderer/src/lib/deep/x.ts', "import { WorkerPool } from '../../../../electron/workers/pool.ts';"],
  ])('%s: %s is refused', async (path, code) => {
    const errors = await layerErrors(path, code);
    expect(errors).toHaveLength(1);
  });

  it.each([
    ['electron/engine/features/x.ts', "import { toDistances } from '../transform.ts';"],
    ['electron/engine/stats/x.ts', "import type { Table } from '../../api.ts';"],
    ['electron/engine/stats/x.ts', "import { type Table } from '../../api.ts';"],
    ['electron/engine/stats/x.ts', "import { UMAP } from 'umap-js';"],
    ['electron/workers/x.ts', "import { sha256Matrix } from '../shared/hash.ts';"],
    ['electron/workers/x.ts', "import { loadSubjectMatrix } from '../io/cohort.ts';"],
    ['electron/workers/x.ts', "import { parentPort } from 'node:worker_threads';"],
    ['electron/shared/x.ts', "import { ENGINE_VERSION } from '../engine/version.ts';"],
    ['electron/service/x.ts', "import { WorkerPool } from '../workers/pool.ts';"],
    ['renderer/src/lib/x.ts', "import type { CohortResults } from '../../../electron/api.ts';"],
  ])('%s: %s is allowed', async (path, code) => {
    expect(await layerErrors(path, code)).toEqual([]);
  });

  it('names the import and the layer it reaches', async () => {
    const [message] = await layerErrors(
      'electron/engine/features/x.ts',
      "import { readMatrixFile } from '../../io/read-matrix.ts';",
    );
    expect(message).toContain("'../../io/read-matrix.ts' is in io");
  });
});
