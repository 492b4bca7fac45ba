/**
 * The Electron door's IPC checks, with electron itself replaced by a stand-in (no binary here):
 * who may call, which methods, which argument shapes, and which folders.
 */
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { createFakeApi } from './fake-api.ts';

type Handler = (event: unknown, method: unknown, args: unknown) => Promise<unknown>;
const electron = vi.hoisted(() => ({
  handlers: new Map<string, (event: unknown, method: unknown, args: unknown) => Promise<unknown>>(),
  picked: [] as string[],
}));

vi.mock('electron', () => ({
  app: { whenReady: () => new Promise(() => undefined), on: () => undefined, quit: () => undefined },
  BrowserWindow: { fromWebContents: () => null, getAllWindows: () => [] },
  dialog: {
    showOpenDialog: async () => {
      const p = electron.picked.shift();
      return p ? { canceled: false, filePaths: [p] } : { canceled: true, filePaths: [] };
    },
    showErrorBox: () => undefined,
  },
  ipcMain: { handle: (channel: string, h: Handler) => electron.handlers.set(channel, h) },
  session: {},
  shell: { openExternal: async () => undefined },
}));

const { CALL_CHANNEL, startElectronApp } = await import('../../electron/main.ts');

let dir: string;
let sample: string;
let out: string;
let other: string;
const api = createFakeApi();
const indexHtml = '/opt/loopwise/dist/index.html';
const ours = { senderFrame: { url: pathToFileURL(indexHtml).href }, sender: {} };
const call = (method: unknown, args: unknown, event: unknown = ours) =>
  electron.handlers.get(CALL_CHANNEL)!(event, method, args);

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'loopwise-ipc-'));
  [sample, out, other] = ['sample', 'out', 'other'].map((d) => join(dir, d));
  for (const d of [sample, out, other]) mkdirSync(d);
  startElectronApp(api, {
    indexHtml,
    preload: '/opt/loopwise/preload.cjs',
    sampleCohort: sample,
    defaultOutDir: out,
    version: '1',
  });
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('Electron IPC', () => {
  it('refuses calls from any page but the app’s own', async () => {
    await expect(
      call('openCohort', [{ dir: sample }], { senderFrame: { url: 'https://evil.example/' }, sender: {} }),
    ).rejects.toThrow(/did not come from the Loopwise page/);
    await expect(call('openCohort', [{ dir: sample }], { senderFrame: null, sender: {} })).rejects.toThrow(
      /refused/,
    );
  });

  it('refuses unknown methods and arguments of the wrong shape', async () => {
    await expect(call('constructor', [])).rejects.toThrow(/no such method/);
    await expect(call('openCohort', 'not an array')).rejects.toThrow(/malformed/);
    await expect(call('openCohort', [{ dir: 42 }])).rejects.toThrow(/cohort.dir/);
    await expect(call('exportRun', ['run-1', out, 'yes'])).rejects.toThrow(/overwrite/);
    await expect(
      call('compare', ['run-1', { kind: 'scan', id: 'sub-01' }, { kind: 'group' }]),
    ).rejects.toThrow(/b\.group/);
  });

  it('rejects the values the contract refuses (here seed −1), naming the field and the option', async () => {
    const { settings, stats } = (await call('defaultSettings', [])) as { settings: unknown; stats: object };
    const req = { cohort: { dir: sample }, settings, stats: { ...stats, seed: -1 }, outDir: null };
    await expect(call('startRun', [req])).rejects.toThrow(/stats\.seed \(--seed\): must be an integer/);
    const calls = api.calls.filter((c) => c.method === 'startRun').length;
    expect(calls).toBe(0);
  });

  it('passes a comparison through to the service', async () => {
    const { settings, stats } = (await call('defaultSettings', [])) as { settings: never; stats: never };
    const { runId } = (await call('startRun', [
      { cohort: { dir: sample }, settings, stats, outDir: null },
    ])) as {
      runId: string;
    };
    const c = (await call('compare', [
      runId,
      { kind: 'scan', id: 'sub-01' },
      { kind: 'scan', id: 'sub-03' },
    ])) as {
      distances: unknown[];
      a: { label: string };
    };
    expect(c.a.label).toBe('sub-01');
    expect(c.distances).toHaveLength(2);
  });

  it('touches only the sample cohort, the default output folder and folders picked in the native dialog', async () => {
    await expect(call('openCohort', [{ dir: sample }])).resolves.toMatchObject({ n: 16 });
    await expect(call('exportRun', ['run-1', join(out, 'x'), false])).resolves.toBeTruthy();
    await expect(call('openCohort', [{ dir: other }])).rejects.toThrow(/outside the folders .*folder button/);
    await expect(call('openCohort', [{ dir: join(sample, '..', 'other') }])).rejects.toThrow(/outside/);
    electron.picked.push(other);
    await expect(call('pickFolder', ['cohort'])).resolves.toBe(other);
    await expect(call('openCohort', [{ dir: other }])).resolves.toMatchObject({ n: 16 });
    await expect(call('pickFolder', ['output'])).resolves.toBeNull();
    const info = (await call('info', [])) as { mode: string; roots: string[] };
    expect(info.mode).toBe('electron');
    expect(info.roots.sort()).toEqual([other, out, sample].sort());
  });

  it('never writes into the sample or a cohort folder, even one picked for output', async () => {
    const { settings, stats } = await api.defaultSettings();
    // The sample is readable, not writable.
    await expect(call('exportRun', ['run-1', sample, true])).rejects.toThrow(/not inside a folder .* write/);
    await expect(
      call('startRun', [
        { cohort: { dir: sample }, settings, stats, outDir: join(sample, 'out'), force: true },
      ]),
    ).rejects.toThrow(/write/);
    // A cohort picked as such is read-only; picked again for output, it stays a cohort.
    await expect(call('exportRun', ['run-1', other, true])).rejects.toThrow(/write/);
    electron.picked.push(other);
    await expect(call('pickFolder', ['output'])).resolves.toBe(other);
    await expect(call('exportRun', ['run-1', join(other, 'tables'), true])).rejects.toThrow(
      /inside the cohort folder .*read-only/,
    );
    await expect(call('exportRun', ['run-1', join(out, 'tables'), true])).resolves.toBeTruthy();
  });

  it('carries an output folder refusal’s code at the end of the message (IPC keeps only messages)', async () => {
    await expect(call('exportRun', ['run-1', join(out, 'taken'), false])).rejects.toThrow(
      /already holds results; .* \[finished-run\]$/,
    );
    await expect(call('exportRun', ['run-1', join(out, 'taken'), true])).resolves.toBeTruthy();
  });

  it('lists the session’s runs (listRuns) and takes no arguments for it', async () => {
    const { settings, stats } = await api.defaultSettings();
    const { runId } = (await call('startRun', [
      { cohort: { dir: sample }, settings, stats: { ...stats, groupColumn: null }, outDir: null },
    ])) as { runId: string };
    const runs = (await call('listRuns', [])) as Array<{
      runId: string;
      request: { cohort: { dir: string } };
    }>;
    expect(runs.find((r) => r.runId === runId)?.request.cohort.dir).toBe(sample);
    await expect(call('listRuns', [1])).rejects.toThrow(/takes 0 arguments/);
  });

  it('forwards the results queries after checking their arguments, as the browser door does', async () => {
    const { settings, stats } = await api.defaultSettings();
    const { runId } = (await call('startRun', [
      { cohort: { dir: sample }, settings, stats, outDir: null },
    ])) as {
      runId: string;
    };
    await expect(call('regionEffects', [runId, 'participation'])).resolves.toEqual(
      await api.regionEffects(runId, 'participation'),
    );
    await expect(call('regionValues', [runId, 'participation', 0])).resolves.toMatchObject({
      number: 1,
      label: 'R1',
    });
    await expect(
      call('tablePage', [runId, { table: 'features', offset: 0, limit: 3 }]),
    ).resolves.toMatchObject({
      total: 9,
    });
    await expect(call('regionValues', [runId, 'participation', '0'])).rejects.toThrow(
      /node must be an integer/,
    );
    await expect(call('tablePage', [runId, { table: '../x', offset: 0, limit: 3 }])).rejects.toThrow(
      /table must be one of/,
    );
  });
});
