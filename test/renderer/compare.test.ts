/** The Compare view's drawing logic on a service-shaped Comparison: shared axes, linked cycles, ranked regions. */
import { describe, expect, it } from 'vitest';
import type { Comparison, FiltrationSide, GroupFiltration } from '../../electron/api.ts';
import {
  differenceBarFigure,
  differencesFor,
  groupIntervalRows,
  groupParticipationFigure,
  linkText,
  linkedCycle,
  metricLabel,
  parseSideKey,
  persistentCycles,
  selectedPoint,
  sharedBarcodeFigure,
  sharedDiagramFigure,
  sharedRange,
  sideKey,
} from '../../renderer/src/lib/compare.ts';
import { usesOnlySvg } from '../../renderer/src/lib/figure.ts';

const side = (label: string, over: Partial<FiltrationSide> = {}): FiltrationSide => ({
  side: { kind: 'scan', id: label },
  label,
  group: 'control',
  diagrams: [
    [
      [0, 0.3],
      [0, null],
    ],
    [
      [0.4, 0.9],
      [0.5, 0.6],
    ],
  ],
  representatives: [
    {
      birth: 0.4,
      death: 0.9,
      nodes: [0, 1, 2, 3],
      edges: [
        [1, 0],
        [2, 1],
        [3, 2],
        [3, 0],
      ],
    },
    {
      birth: 0.5,
      death: 0.6,
      nodes: [4, 5, 6],
      edges: [
        [5, 4],
        [6, 5],
        [6, 4],
      ],
    },
  ],
  nodeScores: {},
  curves: {},
  ...over,
});

const comparison: Comparison = {
  runId: 'run-1',
  a: side('sub-01'),
  b: side('sub-02', {
    diagrams: [[[0, 1.2]], [[0.45, 0.7]]],
    representatives: [{ birth: 0.45, death: 0.7, nodes: [3, 2, 1, 0], edges: [] }],
  }),
  grid: [0, 0.5, 1],
  metric: 'wasserstein-2',
  distances: [
    { dimension: 0, distance: 0.9 },
    { dimension: 1, distance: 0.2 },
  ],
  cycleMatches: [
    { a: 0, b: 0, overlap: 1 },
    { a: 1, b: null, overlap: 0 },
  ],
  nodeDifferences: [
    { measure: 'm', rank: 2, node: 1, label: 'region 2', network: null, a: 1, b: 2, difference: 1 },
    { measure: 'm', rank: 1, node: 0, label: 'region 1', network: null, a: 3, b: 0, difference: -3 },
    { measure: 'm', rank: 3, node: 2, label: 'region 3', network: null, a: null, b: 1, difference: null },
  ],
  positions: null,
};

describe('Compare view logic', () => {
  it('round-trips a side through its select value', () => {
    expect(parseSideKey(sideKey({ kind: 'scan', id: 'sub-01_ses-pre' }))).toEqual({
      kind: 'scan',
      id: 'sub-01_ses-pre',
    });
    expect(parseSideKey(sideKey({ kind: 'group', group: 'a:b' }))).toEqual({ kind: 'group', group: 'a:b' });
    expect(parseSideKey('nonsense')).toBeNull();
    expect(metricLabel('wasserstein-2')).toBe('2-Wasserstein distance');
    expect(metricLabel('sliced-wasserstein-50')).toBe('sliced Wasserstein distance (50 directions)');
  });

  it('draws both diagrams on one pair of axes reaching the larger side, never-dying classes on the ∞ line', () => {
    const { top, inf } = sharedRange(comparison.a.diagrams, comparison.b.diagrams);
    expect(top).toBe(1.2);
    expect(inf).toBeCloseTo(1.296, 12);
    const fig = sharedDiagramFigure(comparison, 'b:1:0');
    expect(usesOnlySvg(fig)).toBe(true);
    const h1 = fig.data.filter((t) => String(t.name).includes('H1'));
    expect(h1.map((t) => t.x)).toEqual([[0.4, 0.5], [0.45]]);
    expect(h1[1].customdata).toEqual(['b:1:0']);
    expect(fig.data.at(-1)?.x).toEqual([0.45]);
    const bars = sharedBarcodeFigure(comparison, null, true);
    // H0 of A: [0, 0.3] and [0, ∞) → ∞ drawn at the shared line.
    const h0a = bars.data.find((t) => t.name === 'A H0')!;
    expect(h0a.x).toEqual([0, inf, null, 0, 0.3, null]);
  });

  it('links a cycle to the one through the same regions, and says when there is none', () => {
    const selA = selectedPoint(comparison, 'a:1:0');
    expect(selA?.cycle?.nodes).toEqual([0, 1, 2, 3]);
    expect(linkedCycle(comparison, selA)).toEqual({ side: 'b', k: 0, overlap: 1, same: true });
    expect(linkText(comparison, selA, linkedCycle(comparison, selA))).toMatch(/same 4 regions/);
    const lone = selectedPoint(comparison, 'a:1:1');
    expect(linkedCycle(comparison, lone)).toBeNull();
    expect(linkText(comparison, lone, null)).toMatch(
      /No cycle of sub-02 passes through any of these 3 regions/,
    );
    const fromB = selectedPoint(comparison, 'b:1:0');
    expect(linkedCycle(comparison, fromB)).toEqual({ side: 'a', k: 0, overlap: 1, same: true });
    expect(linkText(comparison, selectedPoint(comparison, 'a:0:0'), null)).toMatch(/only H1/);
  });

  it('ranks regions as the service did and labels the chart with how many it shows', () => {
    const rows = differencesFor(comparison, 'm');
    expect(rows.map((r) => r.label)).toEqual(['region 1', 'region 2', 'region 3']);
    const fig = differenceBarFigure(rows, 'm', 1);
    expect(fig.data[0].y).toEqual(['region 1']);
    expect(String((fig.layout.title as { text: string }).text)).toMatch(/1 of 3 regions/);
  });

  it('shows a group filtration’s most persistent cycles first and its participation side by side', () => {
    const g = (group: string, scores: number[]): GroupFiltration => ({
      group,
      scans: 3,
      nodeCount: 3,
      threshold: 1,
      diagrams: [
        [[0, null]],
        [
          [0.2, 0.3],
          [0.1, 0.9],
        ],
      ],
      representatives: [
        { birth: 0.2, death: 0.3, nodes: [0, 1, 2], edges: [] },
        { birth: 0.1, death: 0.9, nodes: [0, 1, 2], edges: [] },
      ],
      nodeScores: { m: scores },
    });
    const a = g('a', [1, 5, 2]);
    expect(groupIntervalRows(a).map((r) => r.id)).toEqual(['0:0', '1:0', '1:1']);
    expect(persistentCycles(a).map((c) => c.id)).toEqual(['1:1', '1:0']);
    const fig = groupParticipationFigure([a, g('b', [4, 0, NaN])], 'm', ['x', 'y', 'z'], 2);
    expect(fig.data.map((t) => t.y)).toEqual([
      ['y', 'x'],
      ['y', 'x'],
    ]);
    expect(fig.data[1].x).toEqual([0, 4]);
  });
});
