/**
 * The Electron door: one window running the built renderer (dist/) with contextIsolation, sandbox
 * and no node integration; the service runs here in the main process (its engine on worker threads)
 * and the renderer reaches it only through the preload bridge. Every IPC call is checked here:
 * its sender, its method, its arguments' shapes, and that every path it names is a folder the
 * user picked in a native dialog (or the bundled sample cohort, or the default output folder).
 * Cohort folders (picked as such, or opened) and the sample are read-only; outputs go only into
 * the default output folder or folders picked for output (service/confine.ts, as in browser mode).
 */
import { app, BrowserWindow, dialog, ipcMain, session, shell, type IpcMainInvokeEvent } from 'electron';
import { existsSync, mkdirSync } from 'node:fs';
import { dirname, join, resolve, sep } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import type { LoopwiseApi, OpenCohortRequest } from './api.ts';
import { callPaths, checkDoorPaths, realPathOf } from './service/confine.ts';
import { createLoopwiseService } from './service/service.ts';
import { BadRequest, checkCall, isApiMethod, type DoorInfo } from './web-client.ts';
import { CONTENT_SECURITY_POLICY } from './web.ts';

export const CALL_CHANNEL = 'loopwise:call';
export const PROGRESS_CHANNEL = 'loopwise:progress';

export interface ElectronAppOptions {
  /** The built renderer's index.html. */
  indexHtml: string;
  /** The bundled preload script (CommonJS: sandboxed preloads cannot be ES modules). */
  preload: string;
  sampleCohort: string | null;
  /** The study named at start (`npm start -- --cohort DIR`): readable, read-only, opened at once. */
  startCohort?: string | null;
  defaultOutDir: string;
  version: string;
  /** The folders this session may touch (grows through native dialogs); shared with the service's allowedRoots. */
  roots?: Set<string>;
}

/** Wires the window, its security policy and the IPC bridge to the given service. */
export function startElectronApp(api: LoopwiseApi, opts: ElectronAppOptions): void {
  const pageUrl = pathToFileURL(opts.indexHtml).href;
  // The folders this session may touch: grow only through native dialogs. Every one is readable
  // (`roots`, shared with the service's allowedRoots); outputs go only into writeRoots.
  const roots = opts.roots ?? new Set<string>();
  const writeRoots = new Set<string>([opts.defaultOutDir]);
  roots.add(opts.defaultOutDir);
  if (opts.sampleCohort) roots.add(opts.sampleCohort);
  if (opts.startCohort) roots.add(opts.startCohort);
  // Never written: the sample, the study named at start and every cohort opened in this session.
  const cohorts = new Set<string>([opts.sampleCohort, opts.startCohort].filter((c): c is string => !!c));

  const fromOurPage = (e: IpcMainInvokeEvent) => e.senderFrame?.url.split('#')[0].split('?')[0] === pageUrl;

  ipcMain.handle(CALL_CHANNEL, async (e, method: unknown, args: unknown) => {
    if (!fromOurPage(e)) throw new Error('refused: the call did not come from the Loopwise page');
    if (typeof method !== 'string' || !Array.isArray(args)) throw new BadRequest('malformed call');
    if (method === 'info') {
      const info: DoorInfo = {
        mode: 'electron',
        version: opts.version,
        sampleCohort: opts.sampleCohort,
        startCohort: opts.startCohort ?? null,
        defaultOutDir: opts.defaultOutDir,
        roots: [...roots],
      };
      return info;
    }
    if (method === 'pickFolder') {
      const purpose = args[0] === 'output' ? 'output' : 'cohort';
      const win = BrowserWindow.fromWebContents(e.sender);
      const options = {
        title: purpose === 'cohort' ? 'Choose a cohort folder' : 'Choose a folder for the results',
        properties: ['openDirectory', 'createDirectory'] as Array<'openDirectory' | 'createDirectory'>,
      };
      const picked = win ? await dialog.showOpenDialog(win, options) : await dialog.showOpenDialog(options);
      if (picked.canceled || picked.filePaths.length === 0) return null;
      roots.add(picked.filePaths[0]);
      if (purpose === 'output') writeRoots.add(picked.filePaths[0]);
      return picked.filePaths[0];
    }
    if (!isApiMethod(method)) throw new BadRequest(`no such method: ${method}`);
    const checked = checkCall(method, args);
    const refusal = checkDoorPaths(callPaths(method, checked), {
      read: [...roots],
      write: [...writeRoots],
      cohorts: [...cohorts],
    });
    if (refusal) throw new Error(`${refusal}; choose a folder with the folder button first`);
    if (method === 'openCohort' || method === 'startRun') {
      const arg = checked.args[0] as OpenCohortRequest | { cohort: OpenCohortRequest };
      cohorts.add(realPathOf('cohort' in arg ? arg.cohort.dir : arg.dir));
    }
    const fn = api[method] as (...a: unknown[]) => Promise<unknown>;
    try {
      return await fn.apply(api, checked.args);
    } catch (e) {
      // Electron's IPC carries only an error's message: an output folder's refusal code travels at
      // its end, in brackets, where the renderer reads it (as the HTTP door's `code` field).
      const code = (e as { code?: unknown }).code;
      if (e instanceof Error && e.name === 'OutDirError' && typeof code === 'string')
        throw new Error(`${e.message} [${code}]`);
      throw e;
    }
  });

  const windows = new Set<BrowserWindow>();
  api.onProgress((event) => {
    for (const w of windows) if (!w.isDestroyed()) w.webContents.send(PROGRESS_CHANNEL, event);
  });

  const createWindow = () => {
    const win = new BrowserWindow({
      width: 1400,
      height: 900,
      title: 'Loopwise',
      webPreferences: {
        preload: opts.preload,
        contextIsolation: true,
        sandbox: true,
        nodeIntegration: false,
        nodeIntegrationInWorker: false,
        webSecurity: true,
        allowRunningInsecureContent: false,
        webviewTag: false,
        spellcheck: false,
      },
    });
    windows.add(win);
    win.on('closed', () => windows.delete(win));
    // No navigation away from the app and no new windows; links to the web open in the user's browser.
    win.webContents.on('will-navigate', (ev, url) => {
      if (url !== pageUrl) ev.preventDefault();
    });
    win.webContents.setWindowOpenHandler(({ url }) => {
      if (url.startsWith('https://')) void shell.openExternal(url);
      return { action: 'deny' };
    });
    void win.loadFile(opts.indexHtml);
  };

  void app.whenReady().then(() => {
    const ses = session.defaultSession;
    // Nothing remote: only the app's own files, inline data and blobs (figure export) load.
    ses.webRequest.onBeforeRequest((details, callback) => {
      const ok = /^(file|data|blob|devtools):/.test(details.url);
      callback({ cancel: !ok });
    });
    ses.webRequest.onHeadersReceived((details, callback) => {
      callback({
        responseHeaders: { ...details.responseHeaders, 'Content-Security-Policy': [CONTENT_SECURITY_POLICY] },
      });
    });
    ses.setPermissionRequestHandler((_wc, _permission, callback) => callback(false));
    createWindow();
    app.on('activate', () => {
      if (BrowserWindow.getAllWindows().length === 0) createWindow();
    });
  });
  app.on('window-all-closed', () => {
    if (process.platform !== 'darwin') app.quit();
  });
}

/** Boots the packaged or development app: dist-electron/main.js next to dist/ and sample-data/. */
async function boot(): Promise<void> {
  const here = dirname(fileURLToPath(import.meta.url));
  const appRoot = join(here, '..');
  const defaultOutDir = join(app.getPath('documents'), 'Loopwise');
  mkdirSync(defaultOutDir, { recursive: true });
  const sample = [
    join(process.resourcesPath ?? '', 'sample-data', 'rhythm-study'),
    join(appRoot, 'sample-data', 'rhythm-study'),
  ].find((p) => existsSync(p));
  // Worker threads cannot start from inside the asar archive: the build unpacks dist-electron/.
  const workerDir = here.replace(`app.asar${sep}`, `app.asar.unpacked${sep}`);
  // The engine runs on worker threads; the build bundles their entry next to this file.
  // The folders this session may touch, shared with the service so a cohort's files stay inside them.
  const roots = new Set<string>();
  const api = createLoopwiseService({
    allowedRoots: () => [...roots],
    cacheDir: join(app.getPath('userData'), 'cache'),
    workerEntry: pathToFileURL(join(workerDir, 'filtration-worker.js')),
  });
  // `npm start -- --cohort DIR` passes the study on: the app opens it at once.
  const at = process.argv.indexOf('--cohort');
  const startCohort = at > 0 && process.argv[at + 1] ? resolve(process.argv[at + 1]) : null;
  startElectronApp(api, {
    indexHtml: join(appRoot, 'dist', 'index.html'),
    preload: join(here, 'preload.cjs'),
    sampleCohort: sample ?? null,
    startCohort,
    roots,
    defaultOutDir,
    version: app.getVersion(),
  });
}

if (process.versions.electron) {
  boot().catch((e: unknown) => {
    dialog.showErrorBox('Loopwise could not start', e instanceof Error ? e.message : String(e));
    app.exit(1);
  });
}
