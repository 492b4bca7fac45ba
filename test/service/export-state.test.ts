/** exportRun refuses a run that is unknown or did not finish with a RunStateError (a 409 at the HTTP door). */
import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { RunStateError, createLoopwiseService } from '../../electron/service/service.ts';

const work = mkdtempSync(join(tmpdir(), 'loopwise-export-state-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));

describe('exportRun of a run that cannot be exported', () => {
  it('names the unknown run and writes nothing', async () => {
    const api = createLoopwiseService({ cacheDir: join(work, 'cache'), workers: 1 });
    const out = join(work, 'out');
    const call = api.exportRun('run-9', out, false);
    await expect(call).rejects.toBeInstanceOf(RunStateError);
    await expect(api.exportRun('run-9', out, false)).rejects.toThrow(/no run run-9 in this session/);
    expect(() => readdirSync(out)).toThrow();
  });
});
