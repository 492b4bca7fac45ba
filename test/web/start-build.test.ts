/**
 * `npm start` never serves a stale app: the build is redone when an output is missing or any
 * source it is made from is newer than the oldest output. Modification times are set explicitly
 * (utimes), so nothing here depends on the clock.
 */
import { mkdirSync, mkdtempSync, rmSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { BUILD_OUTPUTS, staleBuild } from '../../electron/start-build.ts';

const root = mkdtempSync(join(tmpdir(), 'loopwise-start-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

const at = (file: string, seconds: number) => utimesSync(join(root, file), seconds, seconds);
function put(file: string, seconds: number) {
  mkdirSync(join(root, file, '..'), { recursive: true });
  writeFileSync(join(root, file), 'x');
  at(file, seconds);
}

describe('staleBuild', () => {
  it('asks for a build while an output is missing', () => {
    put('renderer/src/App.svelte', 1000);
    put('electron/contract.ts', 1000);
    put('package.json', 1000);
    expect(staleBuild(root)).toMatch(/index\.html is missing/);
  });

  it('serves the build when every output is newer than every source', () => {
    for (const o of BUILD_OUTPUTS) put(o, 2000);
    // Folders count by their own time too: set them back as well.
    for (const d of ['renderer', 'renderer/src', 'electron']) at(d, 1000);
    expect(staleBuild(root)).toBeNull();
  });

  it('rebuilds when a renderer source, or an electron module the renderer imports, is edited later', () => {
    at('renderer/src/App.svelte', 3000);
    expect(staleBuild(root)).toMatch(/renderer changed since the last build/);
    at('renderer/src/App.svelte', 1000);
    expect(staleBuild(root)).toBeNull();
    at('electron/contract.ts', 3000);
    expect(staleBuild(root)).toMatch(/electron changed/);
    at('electron/contract.ts', 1000);
    // One output older than a source is enough (e.g. a build that stopped half-way).
    at(BUILD_OUTPUTS[1], 500);
    expect(staleBuild(root)).toMatch(/changed since the last build/);
  });
});
