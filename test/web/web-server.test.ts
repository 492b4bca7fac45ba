import { mkdirSync, mkdtempSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { request } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ProgressEvent } from '../../electron/api.ts';
import { startWebServer, type WebServer } from '../../electron/web.ts';
import { createHttpClient } from '../../electron/web-client.ts';
import { createFakeApi, type FakeApi } from './fake-api.ts';
import { nodeEventSource } from './sse.ts';

let dir: string;
let cohort: string;
let out: string;
let outside: string;
let api: FakeApi;
let server: WebServer;
let base: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'loopwise-web-'));
  cohort = join(dir, 'cohort');
  out = join(dir, 'out');
  outside = join(dir, 'elsewhere');
  for (const d of [cohort, out, outside]) mkdirSync(d);
  const statics = join(dir, 'dist');
  mkdirSync(statics);
  writeFileSync(join(statics, 'index.html'), '<!doctype html><title>t</title>');
  writeFileSync(join(dir, 'secret.txt'), 'not for the page');
  symlinkSync(outside, join(cohort, 'link-out'));
  api = createFakeApi({ root: cohort });
  server = await startWebServer(api, { port: 0, roots: [cohort, out], staticDir: statics });
  base = `http://127.0.0.1:${server.port}`;
});

afterAll(async () => {
  await server.close();
  rmSync(dir, { recursive: true, force: true });
});

const post = (method: string, args: unknown[], token: string | null = server.token) =>
  fetch(`${base}/api/${method}`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', ...(token === null ? {} : { 'x-loopwise-token': token }) },
    body: JSON.stringify(args),
  });

describe('browser-mode server', () => {
  it('binds to loopback and prints a URL carrying the token', () => {
    expect(server.url).toBe(`http://127.0.0.1:${server.port}/?token=${server.token}`);
    expect(server.token.length).toBeGreaterThanOrEqual(32);
  });

  it('answers 401 to /api/ requests without the token or with a wrong one, and never calls the service', async () => {
    const before = api.calls.length;
    expect((await post('openCohort', [{ dir: cohort }], null)).status).toBe(401);
    expect((await post('openCohort', [{ dir: cohort }], server.token.slice(1) + 'x')).status).toBe(401);
    expect((await fetch(`${base}/api/events`)).status).toBe(401);
    expect((await fetch(`${base}/api/info`, { method: 'POST', body: '[]' })).status).toBe(401);
    expect(api.calls.length).toBe(before);
  });

  it('passes a call with the token through to the service', async () => {
    const res = await post('openCohort', [{ dir: cohort }]);
    expect(res.status).toBe(200);
    const report = await res.json();
    expect(report.n).toBe(16);
    expect(api.calls.at(-1)).toEqual({ method: 'openCohort', args: [{ dir: cohort }] });
  });

  it('answers 403 to a path outside the named folders, including by .. and by symlink', async () => {
    const before = api.calls.length;
    for (const dirArg of [outside, join(cohort, '..', 'elsewhere'), join(cohort, 'link-out'), '/etc']) {
      const res = await post('openCohort', [{ dir: dirArg }]);
      expect(res.status, dirArg).toBe(403);
    }
    expect((await post('exportRun', ['run-1', join(dir, 'secret-out'), false])).status).toBe(403);
    expect((await post('openCohort', [{ dir: cohort, participants: join(dir, 'secret.txt') }])).status).toBe(
      403,
    );
    expect(api.calls.length).toBe(before);
  });

  it('passes the reader options through and drops what a door must not set (the cache folder)', async () => {
    const cohortReq = { dir: cohort, timeSeries: true, match: '_conn', columnKinds: { age: 'numeric' } };
    expect((await post('openCohort', [cohortReq])).status).toBe(200);
    expect(api.calls.at(-1)?.args[0]).toEqual(cohortReq);
    const { settings, stats } = await (await post('defaultSettings', [])).json();
    const res = await post('startRun', [
      { cohort: { dir: cohort }, settings, stats, outDir: null, cacheDir: '/etc', workers: 64, force: true },
    ]);
    expect(res.status).toBe(200);
    const sent = api.calls.at(-1)?.args[0] as Record<string, unknown>;
    expect(sent.cacheDir).toBeUndefined();
    expect(sent.workers).toBeUndefined();
    expect(sent.force).toBe(true);
    expect((await post('openCohort', [{ dir: cohort, columnKinds: { age: 'text' } }])).status).toBe(400);
  });

  it('takes tables named relative to the cohort folder inside it', async () => {
    expect((await post('openCohort', [{ dir: cohort, participants: 'participants.tsv' }])).status).toBe(200);
    expect(api.calls.at(-1)?.args[0]).toEqual({ dir: cohort, participants: `${cohort}/participants.tsv` });
  });

  it('lets an output folder that does not exist yet through when it lies inside a root', async () => {
    const res = await post('exportRun', ['run-1', join(out, 'new', 'deeper'), false]);
    expect(res.status).toBe(200);
  });

  it('answers 409 with the reason when the service refuses to overwrite earlier results', async () => {
    const res = await post('exportRun', ['run-1', join(out, 'taken'), false]);
    expect(res.status).toBe(409);
    expect((await res.json()).error).toMatch(/already holds results/);
    expect((await post('exportRun', ['run-1', join(out, 'taken'), true])).status).toBe(200);
  });

  it('answers 400 with the bad field named when arguments do not match the contract', async () => {
    const res = await post('startRun', [
      { cohort: { dir: cohort }, settings: { input: 'banana' }, stats: {} },
    ]);
    expect(res.status).toBe(400);
    expect((await res.json()).error).toMatch(/settings/);
    expect((await post('subjectResult', ['run-1'])).status).toBe(400);
    expect((await post('noSuchThing', [])).status).toBe(404);
  });

  it('rejects a request addressed to another host name (DNS rebinding)', async () => {
    const status = await new Promise<number>((ok, fail) => {
      const req = request(
        { host: '127.0.0.1', port: server.port, path: '/', headers: { host: 'evil.example:80' } },
        (res) => ok(res.statusCode ?? 0),
      );
      req.on('error', fail);
      req.end();
    });
    expect(status).toBe(421);
  });

  it('serves the renderer with a content security policy and refuses to leave its folder', async () => {
    const res = await fetch(`${base}/`);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-security-policy')).toContain("default-src 'self'");
    expect((await fetch(`${base}/..%2fsecret.txt`)).status).toBe(404);
  });

  it('streams progress events as server-sent events to the HTTP client', async () => {
    const client = createHttpClient({ base, token: server.token, eventSource: nodeEventSource });
    const got: ProgressEvent[] = [];
    let mine: string | null = null;
    const finished = new Promise<void>((ok) => {
      const off = client.onProgress((e) => {
        got.push(e);
        if (e.phase === 'done' && e.runId === mine) {
          off();
          ok();
        }
      });
    });
    // Give the event stream a moment to connect before the run starts emitting.
    await new Promise((ok) => setTimeout(ok, 200));
    const settings = await client.defaultSettings();
    const { runId } = await client.startRun({ cohort: { dir: cohort }, ...settings, outDir: null });
    mine = runId;
    await finished;
    const ours = got.filter((e) => e.runId === runId);
    expect(ours.filter((e) => e.phase === 'filtrations').map((e) => e.done)).toEqual([
      1, 2, 3, 4, 5, 6, 7, 8, 9,
    ]);
    expect(ours.at(-1)?.phase).toBe('done');
  });

  it('reports the door info with the roots', async () => {
    const client = createHttpClient({ base, token: server.token });
    const info = await client.info();
    expect(info.mode).toBe('web');
    expect(info.roots).toEqual([cohort, out]);
  });
});
