// Reference values: numpy.corrcoef (Pearson), sklearn.covariance.LedoitWolf fitted to the z-scored
// series and scaled to a unit diagonal (Ledoit–Wolf), numpy tanh(mean(arctanh)) (Fisher z mean),
// all computed by test/reference/make_io_fixtures.py on the committed series in
// test/fixtures/io/timeseries/ and stored in its expected.json (tool versions recorded there).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ledoitWolf, pearson } from '../../electron/engine/correlation.ts';
import { groupMeanMatrix } from '../../electron/engine/features/group.ts';
import type { TimeSeries } from '../../electron/engine/correlation.ts';
import { readTable2D } from '../../electron/io/read-matrix.ts';

const DIR = join(import.meta.dirname, '..', 'fixtures', 'io', 'timeseries');
type Json = number | null | Json[];
const EXPECTED = JSON.parse(readFileSync(join(DIR, 'expected.json'), 'utf8')) as {
  series: Record<
    string,
    { shape: [number, number]; pearson: Json[][]; ledoitWolf: Json[][]; shrinkage: number }
  > & {
    fisher: { inputs: Json[][][]; mean: Json[][] };
  };
};

function flat(rows: Json[][]): Float64Array {
  return Float64Array.from(rows.flat().map((x) => (x === null ? NaN : (x as number))));
}

function maxDiff(a: Float64Array, b: Float64Array): number {
  expect(a.length).toBe(b.length);
  let d = 0;
  for (let k = 0; k < a.length; k++) d = Math.max(d, Math.abs(a[k] - b[k]));
  return d;
}

async function series(name: string): Promise<TimeSeries> {
  const m = await readTable2D(join(DIR, name));
  return { t: m.rows, n: m.cols, values: m.values };
}

describe('correlation of region time series', () => {
  for (const name of ['ts_long.csv', 'ts_short.npy', 'ts_scaled.tsv']) {
    const exp = EXPECTED.series[name] as {
      shape: [number, number];
      pearson: Json[][];
      ledoitWolf: Json[][];
      shrinkage: number;
    };
    it(`${name}: Pearson equals numpy.corrcoef to 1e-12`, async () => {
      const ts = await series(name);
      expect([ts.t, ts.n]).toEqual(exp.shape);
      expect(maxDiff(pearson(ts).values, flat(exp.pearson))).toBeLessThan(1e-12);
    });
    it(`${name}: Ledoit–Wolf equals sklearn LedoitWolf (z-scored, unit diagonal) to 1e-12`, async () => {
      const ts = await series(name);
      const lw = ledoitWolf(ts);
      expect(Math.abs(lw.shrinkage - exp.shrinkage)).toBeLessThan(1e-12);
      expect(maxDiff(lw.matrix.values, flat(exp.ledoitWolf))).toBeLessThan(1e-12);
    });
  }

  it('shrinks more when there are fewer time points than regions (T = 12, N = 15)', () => {
    const short = EXPECTED.series['ts_short.npy'] as { shrinkage: number };
    const long = EXPECTED.series['ts_long.csv'] as { shrinkage: number };
    expect(short.shrinkage).toBeGreaterThan(long.shrinkage);
  });

  it('gives NaN rows for a constant region and leaves the others as without it', () => {
    // 4 time points × 3 regions, the middle region constant.
    const values = Float64Array.of(1, 5, 2, 2, 5, 1, 4, 5, 3, 3, 5, 5);
    const r = pearson({ t: 4, n: 3, values });
    expect(Number.isNaN(r.values[1])).toBe(true);
    expect(Number.isNaN(r.values[4])).toBe(true);
    const without = pearson({ t: 4, n: 2, values: Float64Array.of(1, 2, 2, 1, 4, 3, 3, 5) });
    expect(r.values[2]).toBeCloseTo(without.values[1], 14);
    const lw = ledoitWolf({ t: 4, n: 3, values });
    expect(Number.isNaN(lw.matrix.values[3])).toBe(true);
    expect(lw.matrix.values[0]).toBe(1);
    expect(lw.matrix.values[8]).toBe(1);
  });
});

describe('Fisher z group mean (groupMeanMatrix, the one group mean)', () => {
  it('equals numpy tanh(mean(arctanh(r))) to 1e-12', () => {
    const { inputs, mean } = EXPECTED.series.fisher;
    const mats = inputs.map((m) => ({ n: m.length, values: flat(m) }));
    expect(maxDiff(groupMeanMatrix(mats, 'correlation').values, flat(mean))).toBeLessThan(1e-12);
  });
  it('is not the plain mean', () => {
    const a = { n: 2, values: Float64Array.of(1, 0.1, 0.1, 1) };
    const b = { n: 2, values: Float64Array.of(1, 0.95, 0.95, 1) };
    const m = groupMeanMatrix([a, b], 'correlation').values[1];
    expect(m).toBeCloseTo(Math.tanh((Math.atanh(0.1) + Math.atanh(0.95)) / 2), 15);
    expect(m).toBeGreaterThan(0.525);
  });
});
