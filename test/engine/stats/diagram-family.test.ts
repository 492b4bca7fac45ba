// Whole-diagram tests end to end on simulated diagrams: groups whose H1 loops differ in size are
// told apart under every metric; groups drawn alike are not (p well above 0.05 for this seed).
import { describe, expect, it } from 'vitest';
import { createRng } from '../../../electron/engine/random.ts';
import type { DiagramInput } from '../../../electron/engine/stats/diagram-distance.ts';
import { diagramGroupTests } from '../../../electron/engine/stats/diagram-family.ts';
import { diagramTestsTable } from '../../../electron/engine/stats/tables.ts';

function cohort(seed: number, bigger: number): { diagrams: DiagramInput[]; group: Int32Array } {
  const rng = createRng(seed);
  const group = Int32Array.from({ length: 16 }, (_, i) => (i < 8 ? 0 : 1));
  const diagrams = Array.from(group, (g) => {
    const pts: Array<[number, number | null]> = [[0, null]];
    for (let k = 0; k < 12; k++) {
      const b = rng.next();
      pts.push([b, b + 0.05 + rng.next() * 0.2 + (g === 1 ? bigger : 0)]);
    }
    return pts;
  });
  return { diagrams, group };
}

const metrics = [
  { kind: 'wasserstein', p: 1 },
  { kind: 'wasserstein', p: 2 },
  { kind: 'bottleneck' },
  { kind: 'sliced-wasserstein', directions: 20 },
] as const;

describe('diagramGroupTests', () => {
  it('detects a difference in loop size under every metric', () => {
    const { diagrams, group } = cohort(1, 0.3);
    const { entries, distances } = diagramGroupTests('H1', diagrams, group, ['ctl', 'pat'], [...metrics], {
      seed: 2,
      permutations: 499,
    });
    expect(entries).toHaveLength(8);
    expect(distances.map((d) => d.metric)).toEqual([
      'wasserstein-1',
      'wasserstein-2',
      'bottleneck',
      'sliced-wasserstein-20',
    ]);
    for (const e of entries) expect(e.result.p).toBeLessThan(0.01);
    const table = diagramTestsTable(entries);
    expect(table.rows[0].slice(0, 3)).toEqual(['H1', 'wasserstein-1', 'joint-loss']);
    expect(table.rows[1][2]).toBe('permanova');
    expect(table.rows[0][table.columns.indexOf('n_per_group')]).toBe('ctl:8 pat:8');
  });

  it('does not under the null', () => {
    const { diagrams, group } = cohort(3, 0);
    const { entries } = diagramGroupTests('H1', diagrams, group, ['ctl', 'pat'], [metrics[1]], {
      seed: 2,
      permutations: 499,
    });
    for (const e of entries) expect(e.result.p).toBeGreaterThan(0.05);
  });
});
