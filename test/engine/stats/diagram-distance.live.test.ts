// Live cross-check of the exact diagram distances on 80 random, tie-heavy pairs: W1 and W2 vs scipy's
// linear_sum_assignment and the bottleneck vs gudhi.bottleneck_distance(e = 0), through
// `test/reference/make_stats_refs.py --live` run by Debian's /usr/bin/python3 (GUDHI 3.7.1).
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { createRng } from '../../../electron/engine/random.ts';
import {
  bottleneck,
  wasserstein,
  type DiagramPoint,
} from '../../../electron/engine/stats/diagram-distance.ts';

const python = '/usr/bin/python3';
const script = fileURLToPath(new URL('../../reference/make_stats_refs.py', import.meta.url));
const available =
  spawnSync(python, ['-c', 'import gudhi, scipy.optimize'], { encoding: 'utf8' }).status === 0;

describe.skipIf(!available)('diagram distances, live against scipy and GUDHI', () => {
  it('80 random pairs on coarse grids (many ties and equal points)', () => {
    const rng = createRng(31);
    const diagram = (k: number, grid: number): DiagramPoint[] =>
      Array.from({ length: k }, () => {
        const b = Math.round(rng.next() * grid) / grid;
        return [b, b + Math.round(rng.next() * grid * 0.5) / grid];
      });
    const cases = Array.from({ length: 80 }, (_, i) => {
      const grid = [4, 8, 100][i % 3];
      return { a: diagram(rng.int(30), grid), b: diagram(rng.int(30), grid) };
    });
    const run = spawnSync(python, [script, '--live'], { input: JSON.stringify(cases), encoding: 'utf8' });
    expect(run.status, run.stderr).toBe(0);
    const ref = JSON.parse(run.stdout) as Array<{ w1: number; w2: number; bottleneck: number }>;
    cases.forEach((c, i) => {
      expect(wasserstein(c.a, c.b, 1)).toBeCloseTo(ref[i].w1, 10);
      expect(wasserstein(c.a, c.b, 2)).toBeCloseTo(ref[i].w2, 10);
      expect(bottleneck(c.a, c.b)).toBeCloseTo(ref[i].bottleneck, 12);
    });
  });
});
