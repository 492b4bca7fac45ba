/** The Subject view's logic: barcode and diagram with one shared selection, heatmap, cycle on the node layout. */
import type { NodeInfo, SubjectResult } from '../../../electron/api.ts';
import { regionName, regionNumber } from '../../../electron/engine/features/columns.ts';
import { baseLayout, type Figure, type Trace } from './figure.ts';
import { networkBlocks, outlineTrace, spreadLabels, type NodeLayout } from './layout.ts';

export interface IntervalRow {
  /** Stable id across both plots: `${dim}:${k}`, k the position in the subject's H_dim diagram. */
  id: string;
  dim: number;
  k: number;
  birth: number;
  death: number | null;
  persistence: number | null;
}

const DIM_COLOURS = ['#0072B2', '#D55E00', '#009E73'];

export function intervals(s: SubjectResult): IntervalRow[] {
  return s.diagrams.flatMap((d, dim) =>
    d.map(([birth, death], k) => ({
      id: `${dim}:${k}`,
      dim,
      k,
      birth,
      death,
      persistence: death === null ? null : death - birth,
    })),
  );
}

/** Where a class that never dies is drawn: a little above the largest finite value (marked ∞). */
export function infinityLine(rows: IntervalRow[]): number {
  const finite = rows.flatMap((r) => (r.death === null ? [r.birth] : [r.birth, r.death]));
  const top = finite.length ? Math.max(...finite) : 1;
  return top > 0 ? top * 1.08 : 1;
}

/** The longest intervals of dimension ≥ 1 first: the ones worth looking at. */
export function notableIntervals(rows: IntervalRow[], limit = 20): IntervalRow[] {
  return rows
    .filter((r) => r.dim >= 1)
    .sort((a, b) => (b.persistence ?? Infinity) - (a.persistence ?? Infinity))
    .slice(0, limit);
}

/**
 * Barcode: every interval a horizontal bar, grouped by dimension, longest first within it
 * (Ghrist 2008, "Barcodes: the persistent topology of data", Bull. AMS 45(1)).
 */
export function barcodeFigure(rows: IntervalRow[], selected: string | null): Figure {
  const inf = infinityLine(rows);
  const data: Trace[] = [];
  let y = 0;
  const dims = [...new Set(rows.map((r) => r.dim))].sort();
  const selectedBar: { x: number[]; y: number } = { x: [], y: -1 };
  for (const dim of dims) {
    const mine = rows
      .filter((r) => r.dim === dim)
      .sort((a, b) => (b.death ?? inf) - b.birth - ((a.death ?? inf) - a.birth));
    const xs: Array<number | null> = [];
    const ys: Array<number | null> = [];
    const ids: Array<string | null> = [];
    for (const r of mine) {
      xs.push(r.birth, r.death ?? inf, null);
      ys.push(y, y, null);
      ids.push(r.id, r.id, null);
      if (r.id === selected) {
        selectedBar.x = [r.birth, r.death ?? inf];
        selectedBar.y = y;
      }
      y++;
    }
    data.push({
      type: 'scatter',
      mode: 'lines+markers',
      name: `H${dim}`,
      x: xs,
      y: ys,
      customdata: ids,
      line: { color: DIM_COLOURS[dim % 3], width: 3 },
      marker: { size: 4, color: DIM_COLOURS[dim % 3] },
      hovertemplate: `H${dim} [%{x:.3f}]<extra></extra>`,
    });
    y += 2;
  }
  if (selectedBar.y >= 0) {
    data.push({
      type: 'scatter',
      mode: 'lines',
      name: 'selected',
      x: selectedBar.x,
      y: [selectedBar.y, selectedBar.y],
      line: { color: '#000', width: 7 },
      hoverinfo: 'skip',
    });
  }
  return {
    name: 'barcode',
    data,
    layout: baseLayout('Barcode', {
      xaxis: { title: { text: 'filtration value' } },
      yaxis: { visible: false },
      shapes: [
        {
          type: 'line',
          x0: inf,
          x1: inf,
          y0: 0,
          y1: 1,
          yref: 'paper',
          line: { dash: 'dot', color: '#999', width: 1 },
        },
      ],
    }),
  };
}

/** Persistence diagram: (birth, death) per interval above the diagonal; classes that never die on the ∞ line. */
export function diagramFigure(rows: IntervalRow[], selected: string | null): Figure {
  const inf = infinityLine(rows);
  const dims = [...new Set(rows.map((r) => r.dim))].sort();
  const data: Trace[] = [
    {
      type: 'scatter',
      mode: 'lines',
      x: [0, inf],
      y: [0, inf],
      line: { color: '#999', width: 1 },
      hoverinfo: 'skip',
      showlegend: false,
    },
  ];
  for (const dim of dims) {
    const mine = rows.filter((r) => r.dim === dim);
    data.push({
      type: 'scatter',
      mode: 'markers',
      name: `H${dim}`,
      x: mine.map((r) => r.birth),
      y: mine.map((r) => r.death ?? inf),
      customdata: mine.map((r) => r.id),
      marker: {
        size: 8,
        color: DIM_COLOURS[dim % 3],
        symbol: mine.map((r) => (r.death === null ? 'triangle-up' : 'circle')),
        line: { color: '#fff', width: 1 },
      },
      hovertemplate: `H${dim}: born %{x:.3~g}, dies %{y:.3~g}<extra></extra>`,
      // H0 classes are born at 0: their markers sit on the axis and must not be cut in half.
      cliponaxis: false,
    });
  }
  const sel = rows.find((r) => r.id === selected);
  if (sel) {
    data.push({
      type: 'scatter',
      mode: 'markers',
      name: 'selected',
      x: [sel.birth],
      y: [sel.death ?? inf],
      marker: { size: 16, color: 'rgba(0,0,0,0)', line: { color: '#000', width: 3 } },
      hoverinfo: 'skip',
      cliponaxis: false,
    });
  }
  const pad = inf * 0.04;
  return {
    name: 'persistence-diagram',
    data,
    layout: baseLayout('Persistence diagram', {
      xaxis: { title: { text: 'birth' }, range: [-pad, inf + pad], zeroline: true, zerolinecolor: '#ddd' },
      yaxis: { title: { text: 'death' }, range: [-pad, inf + pad], zeroline: true, zerolinecolor: '#ddd' },
      annotations: [{ x: 0, y: inf, text: '∞', showarrow: false, xanchor: 'right', font: { size: 14 } }],
    }),
  };
}

/** The interval id a Plotly click reports through customdata, if any. */
export function clickedInterval(point: { customdata?: unknown } | undefined): string | null {
  const id = point?.customdata;
  return typeof id === 'string' && /^\d+:\d+$/.test(id) ? id : null;
}

/** The representative of an H1 interval (matched by birth and death, which the engine pairs exactly). */
export function representativeOf(s: SubjectResult, row: IntervalRow | undefined) {
  if (!row || row.dim !== 1) return null;
  return s.representatives.find((r) => r.birth === row.birth && r.death === row.death) ?? null;
}

export function heatmapFigure(s: SubjectResult, nodes: NodeInfo[]): Figure {
  const z: number[][] = [];
  let maxAbs = 0;
  for (let i = 0; i < s.n; i++) {
    const row = s.matrix.slice(i * s.n, (i + 1) * s.n);
    for (let j = 0; j < s.n; j++)
      if (i !== j && Number.isFinite(row[j])) maxAbs = Math.max(maxAbs, Math.abs(row[j]));
    z.push(row);
  }
  const named = nodes.length === s.n;
  const labels = Array.from({ length: s.n }, (_, i) => regionName(i, named ? nodes[i].label : null));
  // Networks (from the node table): a line between consecutive blocks, and the network's name
  // as the axis label of its block where the regions are too many to label one by one.
  const blocks = named ? networkBlocks(nodes) : [];
  const few = s.n <= 40;
  const edge = [-0.5, s.n - 0.5];
  const line = { color: '#222', width: 1 };
  // In the regions' own coordinates, so the lines stop at the matrix's edges.
  const separators = blocks.slice(1).flatMap((b) => [
    {
      type: 'line',
      xref: 'x',
      yref: 'y',
      x0: b.start - 0.5,
      x1: b.start - 0.5,
      y0: edge[0],
      y1: edge[1],
      line,
    },
    {
      type: 'line',
      xref: 'x',
      yref: 'y',
      y0: b.start - 0.5,
      y1: b.start - 0.5,
      x0: edge[0],
      x1: edge[1],
      line,
    },
  ]);
  const blockTicks =
    !few && blocks.length > 0
      ? {
          tickmode: 'array',
          tickvals: blocks.map((b) => labels[Math.floor((b.start + b.end) / 2)]),
          ticktext: blocks.map((b) => b.network),
        }
      : {};
  const axis = { showticklabels: few || blocks.length > 0, tickfont: { size: few ? 9 : 10 }, ...blockTicks };
  return {
    name: `matrix-${s.id}`,
    data: [
      {
        type: 'heatmap',
        z,
        x: labels,
        y: labels,
        // Plotly's RdBu runs blue (low) to red (high): positive correlations red.
        colorscale: 'RdBu',
        zmin: -maxAbs,
        zmax: maxAbs,
        hovertemplate: '%{y} – %{x}: %{z:.3~g}<extra></extra>',
      },
    ],
    layout: baseLayout(`Matrix of ${s.id}`, {
      yaxis: { autorange: 'reversed', scaleanchor: 'x', ...axis },
      xaxis: { tickangle: -90, ...axis },
      shapes: separators,
      margin: { l: 90, r: 20, t: 40, b: 90 },
      height: 520,
    }),
  };
}

/** The selected cycle drawn on the node layout: all nodes faint, the cycle's edges and nodes bold. */
export function cycleFigure(
  layout: NodeLayout,
  rep: { edges: Array<[number, number]>; nodes: number[] } | null,
  title: string,
): Figure {
  const at = new Map(layout.nodes.map((n) => [n.index, n]));
  const ex: Array<number | null> = [];
  const ey: Array<number | null> = [];
  for (const [i, j] of rep?.edges ?? []) {
    const a = at.get(i);
    const b = at.get(j);
    if (!a || !b) continue;
    ex.push(a.x, b.x, null);
    ey.push(a.y, b.y, null);
  }
  const inCycle = new Set(rep?.nodes ?? []);
  const cycleNodes = layout.nodes.filter((n) => inCycle.has(n.index));
  const circle = layout.kind === 'circle';
  // Labels that would overlap are left to the hover text; the others sit away from the cycle's centre.
  const xs = layout.nodes.map((n) => n.x);
  const ys = layout.nodes.map((n) => n.y);
  const extent = Math.max(Math.max(...xs) - Math.min(...xs), Math.max(...ys) - Math.min(...ys)) || 1;
  const labels = spreadLabels(cycleNodes, extent * 0.1);
  const outline = outlineTrace(layout);
  return {
    name: `cycle-${layout.kind}`,
    data: [
      ...(outline ? [outline] : []),
      {
        type: 'scatter',
        mode: 'markers',
        x: layout.nodes.map((n) => n.x),
        y: layout.nodes.map((n) => n.y),
        text: layout.nodes.map((n) => n.label),
        marker: { size: 6, color: '#c8c8c8' },
        hovertemplate: '%{text}<extra></extra>',
        showlegend: false,
      },
      {
        type: 'scatter',
        mode: 'lines',
        x: ex,
        y: ey,
        line: { color: '#D55E00', width: 3 },
        hoverinfo: 'skip',
        showlegend: false,
      },
      {
        type: 'scatter',
        mode: 'markers+text',
        x: cycleNodes.map((n) => n.x),
        y: cycleNodes.map((n) => n.y),
        text: labels.text,
        textposition: labels.position,
        hovertext: cycleNodes.map((n) => n.label),
        cliponaxis: false,
        marker: { size: 10, color: '#D55E00', line: { color: '#fff', width: 1 } },
        hovertemplate: '%{hovertext}<extra></extra>',
        showlegend: false,
      },
    ],
    layout: baseLayout(title, {
      xaxis: { title: { text: layout.xTitle }, visible: !circle, zeroline: false },
      yaxis: { title: { text: layout.yTitle }, visible: !circle, zeroline: false, scaleanchor: 'x' },
      height: 360,
    }),
  };
}

/** The subject's node scores as table rows: number (1-based), label, network, one value per measure. */
export function nodeScoreRows(
  s: SubjectResult,
  nodes: NodeInfo[],
): { columns: string[]; rows: Array<Array<string | number | null>> } {
  const measures = Object.keys(s.nodeScores);
  return {
    columns: ['region', 'label', 'network', ...measures],
    rows: Array.from({ length: s.n }, (_, i) => [
      regionNumber(i),
      regionName(i, nodes[i]?.label),
      nodes[i]?.network ?? null,
      ...measures.map((m) => s.nodeScores[m][i] ?? null),
    ]),
  };
}
