/**
 * Readable figures: the node cloud's outline (convex hull, checked against scipy), labels that do
 * not overlap, the matrix heatmap's network blocks, H0 points not clipped, hover values rounded.
 */
import { describe, expect, it } from 'vitest';
import type { NodeInfo, SubjectResult } from '../../electron/api.ts';
import { convexHull, networkBlocks, outlineTrace, spreadLabels } from '../../renderer/src/lib/layout.ts';
import { readableLayout } from '../../renderer/src/lib/plotly.ts';
import { diagramFigure, heatmapFigure, intervals } from '../../renderer/src/lib/subject.ts';

describe('the outline of the node cloud', () => {
  it('is the convex hull scipy finds (scipy.spatial.ConvexHull 1.10.1 on the same 30 points)', () => {
    const pts = Array.from({ length: 30 }, (_, i) => ({
      x: ((i * 37) % 101) / 101,
      y: ((i * 53) % 97) / 97,
    }));
    const hull = convexHull(pts);
    const indices = hull.map((h) => pts.findIndex((q) => q.x === h.x && q.y === h.y)).sort((a, b) => a - b);
    // /usr/bin/python3: sorted(ConvexHull(pts).vertices) → [0, 2, 3, 9, 19, 20, 24, 27, 29]
    expect(indices).toEqual([0, 2, 3, 9, 19, 20, 24, 27, 29]);
    // Counter-clockwise: positive signed area (shoelace formula).
    let area = 0;
    hull.forEach((a, i) => {
      const b = hull[(i + 1) % hull.length];
      area += a.x * b.y - b.x * a.y;
    });
    expect(area).toBeGreaterThan(0);
  });

  it('is a closed path under projected layouts and absent on the circle', () => {
    const nodes = [
      { index: 0, label: 'a', network: null, x: 0, y: 0 },
      { index: 1, label: 'b', network: null, x: 2, y: 0 },
      { index: 2, label: 'c', network: null, x: 1, y: 1 },
      { index: 3, label: 'd', network: null, x: 1, y: 3 },
    ];
    const t = outlineTrace({ kind: 'axial', xTitle: '', yTitle: '', nodes }) as { x: number[]; y: number[] };
    expect(t.x).toEqual([0, 2, 1, 0]);
    expect(t.y).toEqual([0, 0, 3, 0]);
    expect(outlineTrace({ kind: 'circle', xTitle: '', yTitle: '', nodes })).toBeNull();
  });
});

describe('labels', () => {
  it('shows no two labels closer than the gap, and every label when points are apart', () => {
    const crowded = Array.from({ length: 40 }, (_, i) => ({
      x: Math.cos(i) * (i % 5),
      y: Math.sin(i) * (i % 7),
      label: `r${i}`,
    }));
    const gap = 1;
    const { text, position } = spreadLabels(crowded, gap);
    const shown = crowded.filter((_, i) => text[i] !== '');
    expect(shown.length).toBeGreaterThan(3);
    expect(shown.length).toBeLessThan(crowded.length);
    for (const a of shown)
      for (const b of shown)
        if (a !== b) expect(Math.hypot(a.x - b.x, a.y - b.y)).toBeGreaterThanOrEqual(gap);
    expect(position.every((p) => /^(top|bottom) (left|right|center)$/.test(p))).toBe(true);
    const apart = [0, 1, 2].map((i) => ({ x: i * 10, y: 0, label: `p${i}` }));
    expect(spreadLabels(apart, 1).text).toEqual(['p0', 'p1', 'p2']);
  });
});

describe('the matrix heatmap', () => {
  const n = 60;
  const networks = ['VIS', 'DMN', 'SAL'];
  const nodes: NodeInfo[] = Array.from({ length: n }, (_, i) => ({
    index: i,
    label: `R_${networks[Math.floor(i / 20)]}_${i % 20}`,
    network: networks[Math.floor(i / 20)],
    x: null,
    y: null,
    z: null,
  }));
  const subject = {
    id: 'sub-01',
    group: null,
    n,
    matrix: Array.from({ length: n * n }, (_, k) => ((k % 7) - 3) / 3),
    diagrams: [],
    representatives: [],
    nodeScores: {},
  } as SubjectResult;

  it('finds the network blocks in region order', () => {
    expect(networkBlocks(nodes)).toEqual([
      { network: 'VIS', start: 0, end: 19 },
      { network: 'DMN', start: 20, end: 39 },
      { network: 'SAL', start: 40, end: 59 },
    ]);
    expect(networkBlocks(nodes.map((x) => ({ ...x, network: null })))).toEqual([]);
  });

  it('draws a line between blocks and names each block on the axes (too many regions for each label)', () => {
    const fig = heatmapFigure(subject, nodes);
    const shapes = fig.layout.shapes as Array<{ x0: number; x1: number; y0: number; y1: number }>;
    expect(shapes).toHaveLength(4);
    // Vertical lines between the blocks, and horizontal ones, each from edge to edge of the matrix.
    expect(shapes.filter((s) => s.x0 === s.x1).map((s) => [s.x0, s.y0, s.y1])).toEqual([
      [19.5, -0.5, 59.5],
      [39.5, -0.5, 59.5],
    ]);
    expect(shapes.filter((s) => s.y0 === s.y1).map((s) => [s.y0, s.x0, s.x1])).toEqual([
      [19.5, -0.5, 59.5],
      [39.5, -0.5, 59.5],
    ]);
    const xaxis = fig.layout.xaxis as { tickvals: string[]; ticktext: string[]; showticklabels: boolean };
    expect(xaxis.showticklabels).toBe(true);
    expect(xaxis.ticktext).toEqual(networks);
    expect(xaxis.tickvals).toEqual(['R_VIS_9', 'R_DMN_9', 'R_SAL_9']);
    // The regions keep their labels in the hover text.
    expect((fig.data[0] as { x: string[] }).x[25]).toBe('R_DMN_5');
  });
});

describe('the persistence diagram and hover values', () => {
  it('does not clip H0 points born at 0: markers drawn beyond the axes and the axes start below 0', () => {
    const s = {
      id: 's',
      group: null,
      n: 3,
      matrix: [],
      diagrams: [
        [
          [0, 0.5],
          [0, null],
        ],
        [[0.6, 0.8]],
      ],
      representatives: [],
      nodeScores: {},
    } as unknown as SubjectResult;
    const fig = diagramFigure(intervals(s), null);
    const h0 = fig.data.find((t) => t.name === 'H0') as { cliponaxis: boolean; x: number[] };
    expect(h0.x).toContain(0);
    expect(h0.cliponaxis).toBe(false);
    expect((fig.layout.xaxis as { range: number[] }).range[0]).toBeLessThan(0);
    expect((fig.layout.yaxis as { range: number[] }).range[0]).toBeLessThan(0);
  });

  it('rounds hover values to 4 significant digits on every axis unless a figure chose otherwise', () => {
    const l = readableLayout({ xaxis: { title: 'a' }, yaxis2: { hoverformat: '.2f' } });
    expect(l.xaxis).toEqual({ hoverformat: '.4~g', title: 'a' });
    expect(l.yaxis).toEqual({ hoverformat: '.4~g' });
    expect(l.yaxis2).toEqual({ hoverformat: '.2f' });
  });
});
