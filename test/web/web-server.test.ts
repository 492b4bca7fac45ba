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
let sample: string;
let api: FakeApi;
let server: WebServer;
let base: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'loopwise-web-'));
  cohort = join(dir, 'cohort');
  out = join(dir, 'out');
  outside = join(dir, 'elsewhere');
  sample = join(dir, 'sample-data', 'rhythm-study');
  for (const d of [cohort, out, outside, sample]) mkdirSync(d, { recursive: true });
  const statics = join(dir, 'dist');
  mkdirSync(statics);
  writeFileSync(join(statics, 'index.html'), '<!doctype html><title>t</title>');
  writeFileSync(join(dir, 'secret.txt'), 'not for the page');
  symlinkSync(outside, join(cohort, 'link-out'));
  api = createFakeApi({ root: cohort });
  server = await startWebServer(api, {
    port: 0,
    roots: [cohort, join(dir, 'sample-data')],
    writeRoots: [out],
    sampleCohort: sample,
    staticDir: statics,
  });
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
    const body = await res.json();
    expect(body.error).toMatch(/already holds results/);
    // The rule's code travels too, so the app can offer the explicit "replace" choice.
    expect(body.code).toBe('finished-run');
    expect((await post('exportRun', ['run-1', join(out, 'taken'), true])).status).toBe(200);
    // The browser client hands both to the renderer on the error.
    const client = createHttpClient({ base, token: server.token });
    const e = await client.exportRun('run-1', join(out, 'taken'), false).catch((x: unknown) => x);
    expect(e).toMatchObject({ code: 'finished-run', status: 409 });
  });

  it('lists the session’s runs with their state and request (listRuns), for a page that reattaches', async () => {
    const started = (await (
      await post('startRun', [
        {
          cohort: { dir: cohort },
          settings: (await (await post('defaultSettings', [])).json()).settings,
          stats: { ...(await (await post('defaultSettings', [])).json()).stats, groupColumn: null },
          outDir: null,
        },
      ])
    ).json()) as { runId: string };
    const res = await post('listRuns', []);
    expect(res.status).toBe(200);
    const runs = (await res.json()) as Array<{
      runId: string;
      status: string;
      request: { cohort: { dir: string } };
    }>;
    const mine = runs.find((r) => r.runId === started.runId);
    expect(mine?.request.cohort.dir).toBe(cohort);
    expect(['running', 'done']).toContain(mine?.status);
    expect((await post('listRuns', ['extra'])).status).toBe(400);
    const client = createHttpClient({ base, token: server.token });
    expect((await client.listRuns()).map((r) => r.runId)).toContain(started.runId);
  });

  it('tells the page when the service stops answering (onConnection)', async () => {
    const seen: boolean[] = [];
    const client = createHttpClient({
      base: 'http://127.0.0.1:1',
      token: 'x',
      fetch: async () => {
        throw new TypeError('fetch failed');
      },
    });
    client.onConnection?.((up) => seen.push(up));
    await expect(client.listRuns()).rejects.toThrow(/does not answer/);
    expect(seen).toEqual([false]);
  });

  it('answers 409, not 500, when the run to export did not finish (the service’s RunStateError)', async () => {
    const res = await post('exportRun', ['run-failed', join(out, 'fresh'), false]);
    expect(res.status).toBe(409);
    expect((await res.json()).error).toMatch(/failed \(statistics\): nothing to export/);
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

  it('answers a comparison of two scans, 400 for a side of the wrong shape or one the run lacks', async () => {
    const { runId } = await api.startRun({
      cohort: { dir: cohort },
      ...(await api.defaultSettings()),
      outDir: null,
    });
    const res = await post('compare', [
      runId,
      { kind: 'scan', id: 'sub-01' },
      { kind: 'scan', id: 'sub-02' },
    ]);
    expect(res.status).toBe(200);
    const c = await res.json();
    expect(c.metric).toBe('wasserstein-2');
    expect(c.distances.map((d: { dimension: number }) => d.dimension)).toEqual([0, 1]);
    expect(api.calls.at(-1)).toEqual({
      method: 'compare',
      args: [runId, { kind: 'scan', id: 'sub-01' }, { kind: 'scan', id: 'sub-02' }],
    });
    const bad = await post('compare', [runId, { kind: 'scan' }, { kind: 'group', group: 'control' }]);
    expect(bad.status).toBe(400);
    expect((await bad.json()).error).toMatch(/a\.id/);
    expect(
      (await post('compare', [runId, { kind: 'region', id: 'x' }, { kind: 'scan', id: 'sub-01' }])).status,
    ).toBe(400);
    const missing = await post('compare', [
      runId,
      { kind: 'scan', id: 'sub-77' },
      { kind: 'scan', id: 'sub-01' },
    ]);
    expect(missing.status).toBe(400);
    expect((await missing.json()).error).toMatch(/no scan sub-77/);
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
    expect(res.headers.get('set-cookie')).toBeNull();
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
    expect(info.roots).toEqual([cohort, join(dir, 'sample-data'), out]);
  });

  it('refuses the token in the address of any API request (it would stay in logs and history)', async () => {
    const before = api.calls.length;
    const t = encodeURIComponent(server.token);
    expect((await fetch(`${base}/api/events?token=${t}`)).status).toBe(401);
    expect((await fetch(`${base}/api/info?token=${t}`, { method: 'POST', body: '[]' })).status).toBe(401);
    expect(
      (
        await fetch(`${base}/api/openCohort?token=${t}`, {
          method: 'POST',
          body: JSON.stringify([{ dir: cohort }]),
        })
      ).status,
    ).toBe(401);
    expect(api.calls.length).toBe(before);
  });

  it('trades the token of the first page load for an HttpOnly SameSite=Strict cookie and a clean address', async () => {
    const res = await fetch(`${base}/?token=${encodeURIComponent(server.token)}`, { redirect: 'manual' });
    expect(res.status).toBe(303);
    expect(res.headers.get('location')).toBe('/');
    const cookie = res.headers.get('set-cookie') ?? '';
    expect(cookie).toMatch(/^loopwise-token=[^;]+; /);
    expect(cookie).toMatch(/; HttpOnly/);
    expect(cookie).toMatch(/; SameSite=Strict/);
    const pair = cookie.split(';')[0];
    // The cookie alone opens the API (what the page's fetch and EventSource send).
    const ok = await fetch(`${base}/api/info`, { method: 'POST', body: '[]', headers: { cookie: pair } });
    expect(ok.status).toBe(200);
    const events = await fetch(`${base}/api/events`, { headers: { cookie: pair } });
    expect(events.status).toBe(200);
    await events.body?.cancel();
    // Another parameter of the address survives; a wrong token gets neither cookie nor page.
    const other = await fetch(`${base}/?view=groups&token=${encodeURIComponent(server.token)}`, {
      redirect: 'manual',
    });
    expect(other.headers.get('location')).toBe('/?view=groups');
    const wrong = await fetch(`${base}/?token=nope`, { redirect: 'manual' });
    expect(wrong.status).toBe(401);
    expect(wrong.headers.get('set-cookie')).toBeNull();
    const bad = await fetch(`${base}/api/info`, {
      method: 'POST',
      body: '[]',
      headers: { cookie: 'loopwise-token=nope' },
    });
    expect(bad.status).toBe(401);
  });

  it('refuses requests from another origin or site with 403, even carrying the token', async () => {
    const before = api.calls.length;
    const foreign: Array<Record<string, string>> = [
      { origin: 'https://evil.example' },
      { origin: `http://127.0.0.1:${server.port + 1}` },
      { origin: 'null' },
      { 'sec-fetch-site': 'cross-site' },
      { 'sec-fetch-site': 'same-site' },
    ];
    for (const headers of foreign) {
      const res = await fetch(`${base}/api/openCohort`, {
        method: 'POST',
        headers: { 'x-loopwise-token': server.token, ...headers },
        body: JSON.stringify([{ dir: cohort }]),
      });
      expect(res.status, JSON.stringify(headers)).toBe(403);
    }
    expect(api.calls.length).toBe(before);
    const own = await fetch(`${base}/api/openCohort`, {
      method: 'POST',
      headers: { 'x-loopwise-token': server.token, origin: base, 'sec-fetch-site': 'same-origin' },
      body: JSON.stringify([{ dir: cohort }]),
    });
    expect(own.status).toBe(200);
  });

  it('writes only inside the write roots, never into a cohort folder or the sample', async () => {
    const { settings, stats } = await (await post('defaultSettings', [])).json();
    const before = api.calls.length;
    const run = (outDir: string) =>
      post('startRun', [{ cohort: { dir: cohort }, settings, stats, outDir, force: true }]);
    // The cohort itself, inside it, the sample, inside the sample's folder: all read-only.
    for (const target of [cohort, join(cohort, 'results'), sample, join(dir, 'sample-data')]) {
      expect((await run(target)).status, target).toBe(403);
      expect((await post('exportRun', ['run-1', target, true])).status, target).toBe(403);
    }
    expect((await (await post('exportRun', ['run-1', sample, true])).json()).error).toMatch(/read-only/);
    expect(api.calls.length).toBe(before);
    // A cohort opened from inside the write root becomes read-only too.
    const study = join(out, 'study');
    mkdirSync(study);
    expect((await post('exportRun', ['run-1', join(study, 'tables'), true])).status).toBe(200);
    expect((await post('openCohort', [{ dir: study }])).status).toBe(200);
    const refused = await post('exportRun', ['run-1', join(study, 'tables'), true]);
    expect(refused.status).toBe(403);
    expect((await refused.json()).error).toMatch(/inside the cohort folder .*read-only/);
    expect((await run(join(out, 'results'))).status).toBe(200);
  });
});

describe('results queries through the browser door', () => {
  it('answers regionEffects, regionValues and tablePage through the HTTP client exactly as the service does', async () => {
    const client = createHttpClient({ base, token: server.token });
    const defaults = await api.defaultSettings();
    const { runId } = await client.startRun({ cohort: { dir: cohort }, ...defaults, outDir: null });
    expect(await client.regionEffects(runId, 'strength')).toEqual(await api.regionEffects(runId, 'strength'));
    const effects = (await client.regionEffects(runId, 'strength'))!;
    expect(effects.regions).toHaveLength(16);
    expect(await client.regionValues(runId, 'strength', 3)).toEqual(
      await api.regionValues(runId, 'strength', 3),
    );
    const req = {
      table: 'stats' as const,
      offset: 2,
      limit: 5,
      sort: { column: 'p_uncorrected', descending: true },
      equals: { family: 'nodes:strength' },
    };
    const page = (await client.tablePage(runId, req))!;
    expect(page).toEqual(await api.tablePage(runId, req));
    expect([page.rows.length, page.total]).toEqual([5, 16]);
    expect(api.calls.at(-1)).toEqual({ method: 'tablePage', args: [runId, req] });
    // The cohort's results no longer carry the long tables.
    const results = (await client.cohortResults(runId))!;
    expect(Object.keys(results)).not.toContain('nodeScores');
    expect(results.nodeMeasures).toEqual(['strength', 'participation']);
  });

  it('answers 400 to malformed results queries, naming the argument, before the service sees them', async () => {
    const before = api.calls.length;
    const bad: Array<[string, unknown[], RegExp]> = [
      ['regionEffects', ['run-1'], /takes 2 arguments/],
      ['regionEffects', ['run-1', ''], /measure/],
      ['regionValues', ['run-1', 'strength', -1], /node must be an integer/],
      ['regionValues', ['run-1', 'strength', 1.5], /node must be an integer/],
      ['tablePage', ['run-1', { table: 'secrets', offset: 0, limit: 5 }], /table must be one of/],
      [
        'tablePage',
        ['run-1', { table: 'stats', offset: 0, limit: 50_000 }],
        /limit must be an integer in \[1, 5000\]/,
      ],
      [
        'tablePage',
        ['run-1', { table: 'stats', offset: 0, limit: 5, sort: { column: 'p', descending: 'yes' } }],
        /sort.descending/,
      ],
      [
        'tablePage',
        ['run-1', { table: 'stats', offset: 0, limit: 5, equals: { family: {} } }],
        /equals.family/,
      ],
    ];
    for (const [method, args, message] of bad) {
      const res = await post(method, args);
      expect(res.status, method).toBe(400);
      expect((await res.json()).error).toMatch(message);
    }
    expect(api.calls.length).toBe(before);
    // A column the table lacks is the service's 400, naming the column.
    const res = await post('tablePage', [
      'run-1',
      { table: 'stats', offset: 0, limit: 5, sort: { column: 'nope', descending: false } },
    ]);
    expect(res.status).toBe(400);
    expect((await res.json()).error).toMatch(/no column nope/);
  });
});
