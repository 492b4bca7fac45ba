/**
 * The doors' one path check (service/confine.ts), as pure functions over real folders: what a call
 * reads must lie in a read or write root, what it writes in a write root and never in a cohort;
 * '..' and symbolic links do not lead around either rule. And the service's own rule: an output
 * folder may not be, lie inside, or hold a run's input.
 */
import { mkdirSync, mkdtempSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { callPaths, checkDoorPaths, outputOverlapsInputs } from '../../electron/service/confine.ts';

let dir: string;
let cohort: string;
let results: string;
let sample: string;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'loopwise-confine-'));
  cohort = join(dir, 'cohort');
  results = join(dir, 'results');
  sample = join(dir, 'sample');
  for (const d of [cohort, results, sample]) mkdirSync(d);
  writeFileSync(join(cohort, 'participants.tsv'), 'participant_id\n');
  // A link inside the results folder that leads into the cohort.
  symlinkSync(cohort, join(results, 'into-cohort'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('checkDoorPaths', () => {
  const roots = () => ({ read: [cohort, sample], write: [results], cohorts: [cohort, sample] });

  it('lets reads of the roots and writes inside a write root through', () => {
    expect(checkDoorPaths({ reads: [cohort, join(sample, 'x.csv')], writes: [] }, roots())).toBeNull();
    expect(checkDoorPaths({ reads: [], writes: [join(results, 'run-1', 'new')] }, roots())).toBeNull();
    expect(checkDoorPaths({ reads: [join(results, 'run-1')], writes: [] }, roots())).toBeNull();
  });

  it('refuses reads outside every root, by path, by .. and relative paths', () => {
    expect(checkDoorPaths({ reads: [dir], writes: [] }, roots())).toMatch(/outside the folders/);
    expect(checkDoorPaths({ reads: [join(cohort, '..', 'elsewhere')], writes: [] }, roots())).toMatch(
      /outside/,
    );
    expect(checkDoorPaths({ reads: ['cohort'], writes: [] }, roots())).toMatch(/outside/);
  });

  it('refuses writes into read roots, cohorts and the sample, also through a link', () => {
    for (const target of [cohort, join(cohort, 'out'), sample, join(sample, 'rhythm-study')])
      expect(checkDoorPaths({ reads: [], writes: [target] }, roots()), target).toMatch(/read-only/);
    expect(checkDoorPaths({ reads: [], writes: [join(results, 'into-cohort', 'out')] }, roots())).toMatch(
      /read-only/,
    );
    // A cohort that lies inside the write root (opened from there) is read-only as well.
    const study = join(results, 'study');
    const r = { ...roots(), cohorts: [...roots().cohorts, study] };
    expect(checkDoorPaths({ reads: [], writes: [study] }, r)).toMatch(/is the cohort folder/);
    expect(checkDoorPaths({ reads: [], writes: [join(results, 'other')] }, r)).toBeNull();
  });
});

describe('callPaths', () => {
  it('names the output folder of startRun and exportRun as written, the cohort’s files as read', () => {
    const start = callPaths('startRun', {
      args: [{ cohort: { dir: cohort }, outDir: results }],
      paths: [cohort, join(cohort, 'participants.tsv'), results],
    });
    expect(start).toEqual({ reads: [cohort, join(cohort, 'participants.tsv')], writes: [results] });
    expect(callPaths('exportRun', { args: ['run-1', results, false], paths: [results] })).toEqual({
      reads: [],
      writes: [results],
    });
    expect(callPaths('openCohort', { args: [{ dir: cohort }], paths: [cohort] })).toEqual({
      reads: [cohort],
      writes: [],
    });
  });
});

describe('outputOverlapsInputs', () => {
  it('refuses an output folder that is, lies inside, or holds an input; accepts a sibling', () => {
    const inputs = [cohort, join(cohort, 'participants.tsv')];
    expect(outputOverlapsInputs(cohort, inputs)).toMatch(/is the run's input/);
    expect(outputOverlapsInputs(join(cohort, 'derivatives', 'loopwise'), inputs)).toMatch(
      /inside the run's input/,
    );
    expect(outputOverlapsInputs(dir, inputs)).toMatch(/holds the run's input/);
    expect(outputOverlapsInputs(join(results, 'into-cohort'), inputs)).toMatch(/is the run's input/);
    expect(outputOverlapsInputs(join(results, 'run'), inputs)).toBeNull();
    // A participants table kept elsewhere counts too.
    expect(outputOverlapsInputs(results, [cohort, join(results, 'participants.tsv')])).toMatch(/holds/);
  });
});
