/**
 * The Electron preload with electron replaced by a stand-in (no binary here): it exposes every
 * method of the doors' protocol, the results queries included, each as one IPC call with the
 * arguments as given.
 */
import { describe, expect, it, vi } from 'vitest';
import { API_METHODS } from '../../electron/web-client.ts';

const electron = vi.hoisted(() => ({
  exposed: {} as Record<string, Record<string, unknown>>,
  invoked: [] as Array<{ channel: string; method: string; args: unknown[] }>,
}));

vi.mock('electron', () => ({
  contextBridge: {
    exposeInMainWorld: (key: string, api: Record<string, unknown>) => (electron.exposed[key] = api),
  },
  ipcRenderer: {
    invoke: async (channel: string, method: string, args: unknown[]) => {
      electron.invoked.push({ channel, method, args });
      return null;
    },
    on: () => undefined,
    removeListener: () => undefined,
  },
}));

await import('../../electron/preload.ts');

describe('Electron preload', () => {
  it('exposes every protocol method, the results queries included, as one IPC call each', async () => {
    const bridge = electron.exposed.loopwise;
    for (const m of ['regionEffects', 'regionValues', 'tablePage']) expect(API_METHODS).toContain(m);
    for (const m of API_METHODS) expect(typeof bridge[m], m).toBe('function');
    const page = { table: 'nodes', offset: 0, limit: 10 };
    await (bridge.tablePage as (...a: unknown[]) => Promise<unknown>)('run-1', page);
    await (bridge.regionValues as (...a: unknown[]) => Promise<unknown>)('run-1', 'h1_weighted', 4);
    expect(electron.invoked).toEqual([
      { channel: 'loopwise:call', method: 'tablePage', args: ['run-1', page] },
      { channel: 'loopwise:call', method: 'regionValues', args: ['run-1', 'h1_weighted', 4] },
    ]);
  });
});
