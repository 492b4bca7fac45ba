/**
 * The analysis grid and a subject's named curves (the inputs of the group bands), including what a
 * distance cap does to them: the complex is frozen at the cap.
 */
import { describe, expect, it } from 'vitest';
import { columnsMarkdown } from '../../../electron/engine/features/columns.ts';
import { subjectCurves } from '../../../electron/engine/features/curves.ts';
import { eulerCurve } from '../../../electron/engine/features/euler.ts';
import { analysisGrid, grid, userCap } from '../../../electron/engine/features/grid.ts';
import { computePersistence } from '../../../electron/engine/persistence.ts';
import { curves, distancesOf } from './goldens.ts';

const c = curves.cases.find((x) => x.name === 'correlation-1-minus-r')!;
const d = distancesOf(c);

describe('analysis grid', () => {
  it("uses the user's range when given, else the cohort range", () => {
    const r = computePersistence(d);
    expect(Array.from(analysisGrid([r], { gridPoints: 3, gridRange: [0, 1] }))).toEqual([0, 0.5, 1]);
    const g = analysisGrid([r], { gridPoints: 5, gridRange: null });
    expect(g[0]).toBe(r.mergeTree[0].value); // the shortest edge
    expect(g[4]).toBe(r.threshold);
  });
});

describe('subject curves', () => {
  it('names match CurveBand: betti{d}, landscape{d}-{k}, euler; values match the golden Betti curves', () => {
    const r = computePersistence(d, { maxDim: 1 });
    const cs = subjectCurves(r, c.grid, { maxDim: 1, landscapeLevels: 2 }, d);
    expect(Object.keys(cs)).toEqual([
      'betti0',
      'landscape0-1',
      'landscape0-2',
      'betti1',
      'landscape1-1',
      'landscape1-2',
      'euler',
    ]);
    expect(Array.from(cs['betti1'])).toEqual(c.dims[1].betti);
    expect(Array.from(cs['euler'])).toEqual(c.euler);
    expect('euler' in subjectCurves(r, c.grid, { maxDim: 1, landscapeLevels: 1 })).toBe(false);
  });

  it('a distance cap freezes every curve at the cap', () => {
    const cap = 0.8;
    const r = computePersistence(d, { maxDim: 1, cap: { kind: 'distance', value: cap } });
    expect(userCap(r)).toBe(cap);
    expect(userCap(computePersistence(d))).toBe(Infinity);
    const g = grid(0.5, 1.2, 15); // 0.8 is grid point 6
    const cs = subjectCurves(r, g, { maxDim: 1, landscapeLevels: 1 }, d);
    const atCap = eulerCurve(d, [cap], 2)[0];
    for (let i = 6; i < g.length; i++) {
      expect(cs['euler'][i]).toBe(atCap);
      expect(cs['betti0'][i]).toBe(cs['betti0'][6]);
      expect(cs['betti1'][i]).toBe(cs['betti1'][6]);
    }
    // below the cap the capped complex is the complex
    const free = eulerCurve(d, g, 2);
    for (let i = 0; i <= 6; i++) expect(cs['euler'][i]).toBe(free[i]);
  });
});

describe('column documentation', () => {
  it('renders both lists as Markdown tables', () => {
    const md = columnsMarkdown();
    expect(md).toContain('| `h{d}_entropy_finite` |');
    expect(md).toContain('| `h0_join_value` |');
    expect(md.split('\n').filter((l) => l.startsWith('| `')).length).toBeGreaterThan(20);
  });
});
