/**
 * The worker pool and the filtration it runs: tasks side by side on every worker, transfer of the
 * matrix (the caller's buffer is detached, not copied), engine errors returned as the subject's
 * reason, and dropped regions mapped back to the node numbers of the matrix as read.
 */
import { afterAll, expect, it } from 'vitest';
import { computePersistence } from '../../electron/engine/persistence.ts';
import { toDistances } from '../../electron/engine/transform.ts';
import { dropRegions } from '../../electron/workers/filtration.ts';
import type { FiltrationSettings } from '../../electron/workers/filtration.ts';
import { FiltrationError, WorkerPool } from '../../electron/workers/pool.ts';
import { correlationMatrix } from './support.ts';

const pool = new WorkerPool(2);
afterAll(() => pool.terminate());

const settings: FiltrationSettings = {
  input: 'correlation',
  transform: 'one-minus',
  maxDim: 1,
  cap: { kind: 'none' },
  representatives: true,
  dropRegions: [],
};

it('runs tasks on both workers at once and transfers the matrix without a copy', async () => {
  const n = 80;
  const matrices = [1, 2, 3, 4].map((s) => correlationMatrix(n, 2 * n, s));
  const copies = matrices.map((m) => m.slice());
  const replies = await Promise.all(
    matrices.map((values, k) => pool.run({ kind: 'matrix', taskId: k, n, values, settings })),
  );
  expect(pool.peakBusy).toBe(2);
  // Transferred: the caller's arrays are detached.
  for (const m of matrices) expect(m.length).toBe(0);
  replies.forEach((reply, k) => {
    expect(reply.kind).toBe('computed');
    if (reply.kind !== 'computed') return;
    const direct = computePersistence(toDistances({ n, values: copies[k] }, { input: 'correlation' }), {
      maxDim: 1,
      representatives: true,
    });
    expect(Array.from(reply.result.births[1])).toEqual(direct.diagrams[1].map((iv) => iv.birth));
    expect(Array.from(reply.result.deaths[1])).toEqual(direct.diagrams[1].map((iv) => iv.death));
  });
});

it('returns an engine error as the reason, and the worker goes on', async () => {
  const n = 10;
  const values = correlationMatrix(n, 20, 9);
  values[3 * n + 4] = values[4 * n + 3] = Number.NaN;
  await expect(pool.run({ kind: 'matrix', taskId: 1, n, values, settings })).rejects.toThrow(FiltrationError);
  await expect(
    pool.run({ kind: 'matrix', taskId: 2, n, values: correlationMatrix(n, 20, 9), settings }),
  ).resolves.toMatchObject({ kind: 'computed' });
});

it('drops regions and names representative nodes as in the matrix as read', async () => {
  const n = 40;
  const drop = [0, 7, 39];
  const values = correlationMatrix(n, 80, 21);
  const reduced = dropRegions({ n, values: values.slice() }, drop);
  const reply = await pool.run({
    kind: 'matrix',
    taskId: 3,
    n,
    values,
    settings: { ...settings, dropRegions: drop },
  });
  if (reply.kind !== 'computed') throw new Error('expected a filtration');
  const r = reply.result;
  expect(r.n).toBe(37);
  const direct = computePersistence(toDistances(reduced.matrix, { input: 'correlation' }), {
    maxDim: 1,
    representatives: true,
  });
  expect(Array.from(r.births[1])).toEqual(direct.diagrams[1].map((iv) => iv.birth));
  const reps = direct.representatives ?? [];
  expect(reps.length).toBeGreaterThan(0);
  reps.forEach((rep, k) => {
    const nodes = Array.from((r.repNodes as Int32Array).subarray(r.repNodeStart![k], r.repNodeStart![k + 1]));
    // Node v of the reduced matrix is region kept[v] of the matrix as read.
    expect(nodes).toEqual(rep.nodes.map((v) => reduced.kept[v]));
    for (const d of drop) expect(nodes).not.toContain(d);
  });
});
