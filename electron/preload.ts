/**
 * The sandboxed preload: exposes exactly the LoopwiseDoor methods on window.loopwise, each one a
 * single IPC call that the main process checks. No Node, no ipcRenderer, no event objects cross over.
 */
import { contextBridge, ipcRenderer, type IpcRendererEvent } from 'electron';
import type { ProgressEvent } from './api.ts';
import { API_METHODS } from './web-client.ts';

const CALL_CHANNEL = 'loopwise:call';
const PROGRESS_CHANNEL = 'loopwise:progress';

const call =
  (method: string) =>
  (...args: unknown[]): Promise<unknown> =>
    ipcRenderer.invoke(CALL_CHANNEL, method, args);

const bridge: Record<string, unknown> = {
  info: call('info'),
  pickFolder: call('pickFolder'),
  onProgress(listener: (e: ProgressEvent) => void): () => void {
    if (typeof listener !== 'function') throw new TypeError('onProgress needs a function');
    const handler = (_e: IpcRendererEvent, event: ProgressEvent) => listener(event);
    ipcRenderer.on(PROGRESS_CHANNEL, handler);
    return () => {
      ipcRenderer.removeListener(PROGRESS_CHANNEL, handler);
    };
  },
};
for (const m of API_METHODS) bridge[m] = call(m);

contextBridge.exposeInMainWorld('loopwise', bridge);
