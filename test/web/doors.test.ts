/**
 * One contract, four doors: the same bad value is refused by the CLI (exit 2, one stderr line
 * naming the option), the browser API (HTTP 400 with the problems), the Electron IPC check
 * (checkCall, which main.ts runs on every call) and the renderer's form check; and the new
 * options reach the service through each.
 */
import { spawn } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { AnalysisSettings, StartRunRequest, StatsSettings } from '../../electron/api.ts';
import { parseAnalyzeArgs } from '../../electron/cli/analyze.ts';
import { parseValidateArgs } from '../../electron/cli/validate.ts';
import {
  defaultAnalysisSettings,
  defaultStatsSettings,
  validateAnalysisSettings,
  validateCohortRequest,
  validateStatsSettings,
} from '../../electron/contract.ts';
import { BadRequest, checkCall } from '../../electron/web-client.ts';
import { startWebServer, type WebServer } from '../../electron/web.ts';
import { settingsProblems } from '../../renderer/src/lib/settings.ts';
import { createLoopwiseService } from '../../electron/service/service.ts';
import { writeCohort } from '../service/support.ts';
import { createFakeApi, type FakeApi } from './fake-api.ts';

const BIN = new URL('../../bin/loopwise.js', import.meta.url).pathname;

interface BadCase {
  name: string;
  /** The CLI arguments after `analyze COHORT --out DIR`. */
  cli: string[];
  cohort?: Record<string, unknown>;
  settings?: Partial<AnalysisSettings>;
  stats?: Partial<StatsSettings>;
  field: string;
  option: string;
}

const BAD: BadCase[] = [
  {
    name: 'a distance cap of 0',
    cli: ['--cap-distance', '0'],
    settings: { cap: { kind: 'distance', value: 0 } },
    field: 'settings.cap',
    option: '--cap-distance',
  },
  {
    name: 'a density cap of 0',
    cli: ['--cap-density', '0'],
    settings: { cap: { kind: 'density', value: 0 } },
    field: 'settings.cap',
    option: '--cap-density',
  },
  { name: 'seed −1', cli: ['--seed', '-1'], stats: { seed: -1 }, field: 'stats.seed', option: '--seed' },
  {
    name: '2.5 permutations',
    cli: ['--permutations', '2.5'],
    stats: { permutations: 2.5 },
    field: 'stats.permutations',
    option: '--permutations',
  },
  {
    name: 'an empty grid range',
    cli: ['--grid-range', '1,1'],
    settings: { gridRange: [1, 1] },
    field: 'settings.gridRange',
    option: '--grid-range',
  },
  {
    name: 'a one-point grid',
    cli: ['--grid-points', '1'],
    settings: { gridPoints: 1 },
    field: 'settings.gridPoints',
    option: '--grid-points',
  },
  {
    name: 'a negative floor',
    cli: ['--floor', '-0.1'],
    settings: { persistenceFloor: -0.1 },
    field: 'settings.persistenceFloor',
    option: '--floor',
  },
  {
    name: 'a transform that does not fit the input',
    cli: ['--input', 'weight', '--transform', 'sqrt'],
    settings: { input: 'weight', transform: 'sqrt' },
    field: 'settings.transform',
    option: '--transform',
  },
  {
    name: '--test without --model',
    cli: ['--test', 'group:session'],
    stats: { test: 'group:session' },
    field: 'stats.test',
    option: '--test',
  },
  {
    name: 'both --group and --effect',
    cli: ['--group', 'group', '--effect', 'age'],
    stats: { groupColumn: 'group', effect: 'age' },
    field: 'stats.effect',
    option: '--effect',
  },
  {
    name: 'a correlation estimator without time series',
    cli: ['--correlation', 'ledoit-wolf'],
    cohort: { correlation: 'ledoit-wolf' },
    field: 'cohort.correlation',
    option: '--correlation',
  },
  {
    name: 'an unknown correlation estimator',
    cli: ['--time-series', '--correlation', 'spearman'],
    cohort: { timeSeries: true, correlation: 'spearman' },
    field: 'cohort.correlation',
    option: '--correlation',
  },
];

let dir: string;
let cohort: string;
let api: FakeApi;
let server: WebServer;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'loopwise-doors-'));
  cohort = join(dir, 'cohort');
  mkdirSync(cohort);
  api = createFakeApi({ root: cohort });
  server = await startWebServer(api, { port: 0, roots: [dir] });
});
afterAll(async () => {
  await server.close();
  rmSync(dir, { recursive: true, force: true });
});

function request(c: BadCase): StartRunRequest {
  return {
    cohort: { dir: cohort, ...(c.cohort ?? {}) } as StartRunRequest['cohort'],
    settings: { ...defaultAnalysisSettings(), ...(c.settings ?? {}) },
    stats: { ...defaultStatsSettings(), ...(c.stats ?? {}) },
    outDir: null,
  };
}

function runCli(args: string[]): Promise<{ code: number | null; err: string }> {
  return new Promise((done) => {
    const child = spawn(process.execPath, [BIN, ...args], { stdio: ['ignore', 'ignore', 'pipe'] });
    let err = '';
    child.stderr.setEncoding('utf8');
    child.stderr.on('data', (t: string) => (err += t));
    child.on('close', (code) => done({ code, err }));
  });
}

const post = (method: string, args: unknown[]) =>
  fetch(`http://127.0.0.1:${server.port}/api/${method}`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-loopwise-token': server.token },
    body: JSON.stringify(args),
  });

describe('the same bad value is refused by every door', () => {
  it('the contract finds each, naming its field and option', () => {
    for (const c of BAD) {
      const r = request(c);
      const problems = [
        ...validateCohortRequest(r.cohort),
        ...validateAnalysisSettings(r.settings),
        ...validateStatsSettings(r.stats),
      ];
      expect(problems, c.name).toHaveLength(1);
      expect(problems[0], c.name).toMatchObject({ field: c.field, option: c.option });
    }
    // The defaults pass.
    const ok = request({ name: 'defaults', cli: [], field: '', option: '' });
    expect([...validateAnalysisSettings(ok.settings), ...validateStatsSettings(ok.stats)]).toEqual([]);
  });

  it('the CLI (node bin/loopwise.js analyze) exits 2 with one stderr line naming the option', async () => {
    const results = await Promise.all(
      BAD.map((c) => runCli(['analyze', cohort, '--out', join(dir, 'never'), ...c.cli])),
    );
    results.forEach((r, i) => {
      const c = BAD[i];
      expect(r.code, c.name).toBe(2);
      const lines = r.err.trimEnd().split('\n');
      expect(lines, c.name).toHaveLength(1);
      expect(lines[0], c.name).toContain(c.option);
    });
  });

  it('the browser API answers 400 with the problems, and never calls the service', async () => {
    const before = api.calls.length;
    for (const c of BAD) {
      const res = await post('startRun', [request(c)]);
      expect(res.status, c.name).toBe(400);
      const body = (await res.json()) as {
        error: string;
        problems: Array<{ field: string; option: string }>;
      };
      expect(body.problems, c.name).toEqual([expect.objectContaining({ field: c.field, option: c.option })]);
      expect(body.error, c.name).toContain(c.field);
    }
    expect(api.calls.length).toBe(before);
  });

  it('the Electron IPC check (checkCall, run by main.ts on every call) rejects with the problems', () => {
    for (const c of BAD) {
      let caught: unknown = null;
      try {
        checkCall('startRun', [request(c)]);
      } catch (e) {
        caught = e;
      }
      expect(caught, c.name).toBeInstanceOf(BadRequest);
      expect((caught as BadRequest).problems, c.name).toEqual([
        expect.objectContaining({ field: c.field, option: c.option }),
      ]);
    }
  });

  it('the renderer’s form check names the same field', () => {
    for (const c of BAD) {
      const r = request(c);
      const { dir: _dir, ...options } = r.cohort;
      const problems = settingsProblems(r.settings, r.stats, null, options);
      expect(
        problems.map((p) => p.field),
        c.name,
      ).toEqual([c.field]);
    }
  });
});

describe('the new options reach the service through every door', () => {
  const readerArgs = [
    '--participants',
    '/abs/participants.tsv',
    '--nodes',
    '/abs/nodes.tsv',
    '--time-series',
    '--correlation',
    'ledoit-wolf',
    '--variable',
    'conn',
    '--file-column',
    'matrix_file',
    '--match',
    '_bold',
    '--numeric',
    'age',
    '--categorical',
    'site',
  ];
  const cohortFields = {
    participants: '/abs/participants.tsv',
    nodes: '/abs/nodes.tsv',
    timeSeries: true,
    correlation: 'ledoit-wolf',
    variable: 'conn',
    fileColumn: 'matrix_file',
    match: '_bold',
    columnKinds: { age: 'numeric', site: 'categorical' },
  };
  const designArgs = [
    '--model',
    'group*session + age',
    '--test',
    'group:session',
    '--reference',
    'control',
    '--blocks',
    'participant_id',
    '--covariates',
    'fd_mean',
    '--grid-range',
    '0,2',
    '--grid-points',
    '64',
    '--floor',
    '0.05',
  ];
  const stats = {
    groupColumn: null,
    effect: null,
    model: 'group*session + age',
    test: 'group:session',
    reference: 'control',
    blocks: 'participant_id',
    covariates: ['fd_mean'],
  };
  const grid = { gridRange: [0, 2], gridPoints: 64, persistenceFloor: 0.05 };

  it('analyze takes every reader option validate takes, into the same cohort request', () => {
    const a = parseAnalyzeArgs([cohort, '--out', join(dir, 'o'), ...readerArgs, ...designArgs])!;
    const v = parseValidateArgs([cohort, ...readerArgs])!;
    expect(a.cohort).toEqual({ dir: cohort, ...cohortFields });
    expect(v.cohort).toEqual(a.cohort);
    expect(a.stats).toMatchObject(stats);
    expect(a.settings).toMatchObject(grid);
  });

  it('the browser API and IPC pass them on unchanged', async () => {
    // Tables inside the folders this server may use.
    const inside = { participants: join(cohort, 'participants.tsv'), nodes: join(cohort, 'nodes.tsv') };
    const req = {
      cohort: { dir: cohort, ...cohortFields, ...inside },
      settings: { ...defaultAnalysisSettings(), ...grid },
      stats: { ...defaultStatsSettings(), ...stats },
      outDir: null,
    };
    expect(checkCall('startRun', [req]).args[0]).toEqual(req);
    const res = await post('startRun', [req]);
    expect(res.status).toBe(200);
    expect(api.calls.at(-1)).toEqual({ method: 'startRun', args: [req] });
  });
});

describe('columns the cohort lacks, through the browser API over the real service', () => {
  it('startRun answers 400 naming the column and the available ones; nothing is computed', async () => {
    const real = join(dir, 'real');
    writeCohort(real, { subjects: 4, n: 10, seed: 2 });
    const service = createLoopwiseService({ workers: 1 });
    const web = await startWebServer(service, { port: 0, roots: [dir] });
    try {
      const call = (req: unknown) =>
        fetch(`http://127.0.0.1:${web.port}/api/startRun`, {
          method: 'POST',
          headers: { 'content-type': 'application/json', 'x-loopwise-token': web.token },
          body: JSON.stringify([req]),
        });
      const base = {
        cohort: { dir: real },
        settings: defaultAnalysisSettings(),
        outDir: null,
      };
      const res = await call({
        ...base,
        stats: { ...defaultStatsSettings(), groupColumn: 'diagnosis', covariates: ['agee'] },
      });
      expect(res.status).toBe(400);
      const body = (await res.json()) as {
        problems: Array<{ field: string; option: string; message: string }>;
      };
      expect(body.problems.map((p) => [p.field, p.option])).toEqual([
        ['stats.groupColumn', '--group'],
        ['stats.covariates', '--covariates'],
      ]);
      expect(body.problems[0].message).toMatch(/no column 'diagnosis' .*available: .*group, age/);
      const ok = await call({
        ...base,
        stats: { ...defaultStatsSettings(), groupColumn: 'group', permutations: 9 },
      });
      expect(ok.status).toBe(200);
      const { runId } = (await ok.json()) as { runId: string };
      expect(runId).toBe('run-1');
    } finally {
      await web.close();
      await service.close();
    }
  });
});
