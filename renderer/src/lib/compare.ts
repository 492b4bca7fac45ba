/**
 * The Compare view's logic: two filtrations (scans or group means) on shared axes, their curves
 * overlaid, the distance the service computed, their cycles linked, and their regions ranked by
 * difference. Everything shown comes from the service's Comparison; nothing is computed here but
 * the drawing.
 */
import type {
  CohortResults,
  Comparison,
  ComparisonSide,
  CycleJson,
  DiagramJson,
  FiltrationSide,
  GroupFiltration,
  NodeDifferenceRow,
} from '../../../electron/api.ts';
import { baseLayout, type Figure, type Trace } from './figure.ts';
import type { NodeLayout } from './layout.ts';
import type { IntervalRow } from './subject.ts';

/** A side as a select value: 'scan:ID' or 'group:LEVEL'. */
export function sideKey(side: ComparisonSide): string {
  return side.kind === 'scan' ? `scan:${side.id}` : `group:${side.group}`;
}

export function parseSideKey(key: string): ComparisonSide | null {
  const m = /^(scan|group):(.+)$/s.exec(key);
  if (!m) return null;
  return m[1] === 'scan' ? { kind: 'scan', id: m[2] } : { kind: 'group', group: m[2] };
}

/** Side colours (Okabe–Ito): A blue, B vermillion — readable by colour-blind readers (Okabe & Ito 2008). */
export const SIDE_COLOURS = { a: '#0072B2', b: '#D55E00' } as const;
const SIDE_SYMBOLS = { a: 'circle', b: 'x' } as const;

/** A distance in words: "H0 0.1234 · H1 0.0567 (2-Wasserstein)". */
export function metricLabel(metric: string): string {
  const w = /^wasserstein-(\d+)$/.exec(metric);
  if (w) return `${w[1]}-Wasserstein distance`;
  const s = /^sliced-wasserstein-(\d+)$/.exec(metric);
  if (s) return `sliced Wasserstein distance (${s[1]} directions)`;
  return metric === 'bottleneck' ? 'bottleneck distance' : metric;
}

/** The largest finite value of both sides' diagrams, and where classes that never die are drawn. */
export function sharedRange(a: DiagramJson[], b: DiagramJson[]): { top: number; inf: number } {
  let top = 0;
  for (const d of [...a, ...b]) for (const [x, y] of d) top = Math.max(top, x, y === null ? x : y);
  const t = top > 0 ? top : 1;
  return { top: t, inf: t * 1.08 };
}

/**
 * Both sides' persistence diagrams on one pair of shared axes: dimension by colour shade, side by
 * symbol (A circles, B crosses); classes that never die on the dotted ∞ line. Points carry
 * `side:dim:k` ids for linked selection.
 */
export function sharedDiagramFigure(c: Comparison, selected: string | null): Figure {
  const { inf } = sharedRange(c.a.diagrams, c.b.diagrams);
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
  for (const which of ['a', 'b'] as const) {
    const side = c[which];
    side.diagrams.forEach((dg, dim) => {
      if (dim === 0) return; // H0 births are all 0 in a clique filtration: shown in the barcode only.
      data.push({
        type: 'scatter',
        mode: 'markers',
        name: `${which.toUpperCase()} H${dim}: ${side.label}`,
        x: dg.map(([b]) => b),
        y: dg.map(([, d]) => d ?? inf),
        customdata: dg.map((_, k) => `${which}:${dim}:${k}`),
        marker: {
          size: 8,
          color: dim === 1 ? SIDE_COLOURS[which] : which === 'a' ? '#56B4E9' : '#E69F00',
          symbol: SIDE_SYMBOLS[which],
          line: { color: SIDE_COLOURS[which], width: 1 },
          opacity: 0.8,
        },
        hovertemplate: `${escapeText(side.label)} H${dim}: born %{x:.3f}, dies %{y:.3f}<extra></extra>`,
      });
    });
  }
  const sel = selectedPoint(c, selected);
  if (sel) {
    data.push({
      type: 'scatter',
      mode: 'markers',
      name: 'selected',
      x: [sel.birth],
      y: [sel.death ?? inf],
      marker: { size: 18, color: 'rgba(0,0,0,0)', line: { color: '#000', width: 3 } },
      hoverinfo: 'skip',
      showlegend: false,
    });
  }
  return {
    name: 'compare-diagrams',
    data,
    layout: baseLayout('Diagrams (H1+), shared axes', {
      xaxis: { title: { text: 'birth' }, range: [-inf * 0.02, inf * 1.04] },
      yaxis: { title: { text: 'death' }, range: [-inf * 0.02, inf * 1.04], scaleanchor: 'x' },
      annotations: [{ x: 0, y: inf, text: '∞', showarrow: false, xanchor: 'right', font: { size: 14 } }],
      height: 420,
    }),
  };
}

/**
 * The two barcodes stacked on one shared filtration axis (A above B), each dimension ≥ 1 longest
 * first (Ghrist 2008); H0 bars only with `withH0`.
 */
export function sharedBarcodeFigure(c: Comparison, selected: string | null, withH0 = false): Figure {
  const { inf } = sharedRange(c.a.diagrams, c.b.diagrams);
  const data: Trace[] = [];
  const ticks: { at: number; text: string }[] = [];
  let y = 0;
  for (const which of ['a', 'b'] as const) {
    const side = c[which];
    ticks.push({ at: y, text: `${which.toUpperCase()}: ${side.label}` });
    side.diagrams.forEach((dg, dim) => {
      if (dim === 0 && !withH0) return;
      const bars = dg
        .map(([b, d], k) => ({ b, d: d ?? inf, k }))
        .sort((p, q) => q.d - q.b - (p.d - p.b) || p.k - q.k);
      const xs: Array<number | null> = [];
      const ys: Array<number | null> = [];
      const ids: Array<string | null> = [];
      for (const bar of bars) {
        xs.push(bar.b, bar.d, null);
        ys.push(y, y, null);
        ids.push(`${which}:${dim}:${bar.k}`, `${which}:${dim}:${bar.k}`, null);
        y++;
      }
      data.push({
        type: 'scatter',
        mode: 'lines',
        name: `${which.toUpperCase()} H${dim}`,
        x: xs,
        y: ys,
        customdata: ids,
        line: { color: dim === 1 ? SIDE_COLOURS[which] : which === 'a' ? '#56B4E9' : '#E69F00', width: 3 },
        hovertemplate: `${escapeText(side.label)} H${dim}: %{x:.3f}<extra></extra>`,
      });
      y += 1;
    });
    y += 3;
  }
  const sel = selectedPoint(c, selected);
  const shapes: Array<Record<string, unknown>> = [
    {
      type: 'line',
      x0: inf,
      x1: inf,
      y0: 0,
      y1: 1,
      yref: 'paper',
      line: { dash: 'dot', color: '#999', width: 1 },
    },
  ];
  if (sel) {
    shapes.push({
      type: 'rect',
      x0: sel.birth,
      x1: sel.death ?? inf,
      y0: 0,
      y1: 1,
      yref: 'paper',
      fillcolor: 'rgba(0,0,0,0.08)',
      line: { width: 0 },
    });
  }
  return {
    name: 'compare-barcodes',
    data,
    layout: baseLayout('Barcodes, shared axis', {
      xaxis: { title: { text: 'filtration value' }, range: [0, inf * 1.02] },
      yaxis: {
        autorange: 'reversed',
        tickvals: ticks.map((t) => t.at),
        ticktext: ticks.map((t) => t.text),
        showgrid: false,
        zeroline: false,
      },
      margin: { l: 150, r: 20, t: 40, b: 50 },
      shapes,
      height: Math.min(640, 220 + 2 * y),
    }),
  };
}

/** The interval a point id `side:dim:k` names, with its cycle when it has one. */
export function selectedPoint(
  c: Comparison,
  id: string | null,
): {
  side: 'a' | 'b';
  dim: number;
  k: number;
  birth: number;
  death: number | null;
  cycle: CycleJson | null;
} | null {
  const m = id ? /^([ab]):(\d+):(\d+)$/.exec(id) : null;
  if (!m) return null;
  const side = m[1] as 'a' | 'b';
  const dim = Number(m[2]);
  const k = Number(m[3]);
  const point = c[side].diagrams[dim]?.[k];
  if (!point) return null;
  const cycle = dim === 1 ? (c[side].representatives[k] ?? null) : null;
  return { side, dim, k, birth: point[0], death: point[1], cycle };
}

/**
 * The cycle linked to a selected one on the other side: the service's match (A → B by largest
 * region overlap; for a B cycle, the A cycle matched to it with the largest overlap). `same` when
 * both run through the same regions.
 */
export function linkedCycle(
  c: Comparison,
  sel: { side: 'a' | 'b'; dim: number; k: number } | null,
): { side: 'a' | 'b'; k: number; overlap: number; same: boolean } | null {
  if (!sel || sel.dim !== 1) return null;
  if (sel.side === 'a') {
    const m = c.cycleMatches.find((x) => x.a === sel.k);
    return m && m.b !== null ? { side: 'b', k: m.b, overlap: m.overlap, same: m.overlap === 1 } : null;
  }
  const best = c.cycleMatches
    .filter((x) => x.b === sel.k)
    .sort((p, q) => q.overlap - p.overlap || p.a - q.a)[0];
  return best ? { side: 'a', k: best.a, overlap: best.overlap, same: best.overlap === 1 } : null;
}

/** Words for the linked cycle: which cycle, or that none runs through the same regions. */
export function linkText(
  c: Comparison,
  sel: ReturnType<typeof selectedPoint>,
  link: ReturnType<typeof linkedCycle>,
): string {
  if (!sel) return 'Select a point or bar to link its cycle in both panels.';
  if (sel.dim !== 1) return `H${sel.dim} class selected: only H1 classes have cycles to link.`;
  if (!sel.cycle) return 'No cycle representative is stored for this interval.';
  const other = sel.side === 'a' ? c.b.label : c.a.label;
  if (!link) return `No cycle of ${other} passes through any of these ${sel.cycle.nodes.length} regions.`;
  if (link.same)
    return `${other} has a cycle through the same ${sel.cycle.nodes.length} regions: shown in both panels.`;
  return `No cycle of ${other} runs through the same regions; the closest shares ${Math.round(100 * link.overlap)}% of its regions (Jaccard), shown dashed.`;
}

/** Both sides' curves overlaid on the run's grid, one figure per curve name both sides have. */
export function curveFigures(c: Comparison): Figure[] {
  const names = Object.keys(c.a.curves).filter((k) => k in c.b.curves);
  const titles: Record<string, string> = {
    betti0: 'Betti-0 curve (components)',
    betti1: 'Betti-1 curve (loops)',
    betti2: 'Betti-2 curve (voids)',
    euler: 'Euler characteristic curve',
  };
  return names.map((name) => ({
    name: `compare-${name}`,
    data: (['a', 'b'] as const).map((which) => ({
      type: 'scatter',
      mode: 'lines',
      name: `${which.toUpperCase()}: ${c[which].label}`,
      x: c.grid,
      y: c[which].curves[name],
      line: { color: SIDE_COLOURS[which], width: 2, dash: which === 'b' ? 'dash' : 'solid' },
      hovertemplate: `${escapeText(c[which].label)}: %{y:.3g} at %{x:.3f}<extra></extra>`,
    })),
    layout: baseLayout(titles[name] ?? name, {
      xaxis: { title: { text: 'filtration value' } },
      yaxis: { title: { text: name === 'euler' ? 'χ' : 'count' } },
      height: 300,
    }),
  }));
}

/** The node measures the comparison ranks, in the service's order. */
export function measuresOf(c: Comparison): string[] {
  return [...new Set(c.nodeDifferences.map((d) => d.measure))];
}

/** One measure's ranked regions (rank 1 = largest |B − A|). */
export function differencesFor(c: Comparison, measure: string): NodeDifferenceRow[] {
  return c.nodeDifferences.filter((d) => d.measure === measure).sort((p, q) => p.rank - q.rank);
}

/** The `limit` regions with the largest |B − A| as horizontal bars, largest on top, labelled by name. */
export function differenceBarFigure(rows: NodeDifferenceRow[], measure: string, limit = 30): Figure {
  const shown = rows.filter((r) => r.difference !== null).slice(0, limit);
  return {
    name: `compare-nodes-${measure}`,
    data: [
      {
        type: 'bar',
        orientation: 'h',
        x: shown.map((r) => r.difference),
        y: shown.map((r) => r.label),
        customdata: shown.map((r) => [r.a, r.b, r.network ?? '']),
        marker: { color: shown.map((r) => ((r.difference ?? 0) >= 0 ? SIDE_COLOURS.b : SIDE_COLOURS.a)) },
        hovertemplate:
          '%{y}: B − A = %{x:.3g} (A %{customdata[0]:.3g}, B %{customdata[1]:.3g})<extra></extra>',
      },
    ],
    layout: baseLayout(
      `B − A in ${measure}: ${shown.length} of ${rows.length} regions with the largest difference`,
      {
        yaxis: { autorange: 'reversed', type: 'category', automargin: true },
        xaxis: { title: { text: 'B − A' }, zeroline: true },
        height: Math.max(260, 60 + 16 * shown.length),
      },
    ),
  };
}

/**
 * The node layout coloured by B − A (diverging, symmetric about 0), with an outline of the node
 * cloud and the selected cycles: A's solid, B's dashed.
 */
export function differenceLayoutFigure(
  layout: NodeLayout,
  rows: NodeDifferenceRow[],
  measure: string,
  cycles: { a: CycleJson | null; b: CycleJson | null },
): Figure {
  const diff = new Map(rows.map((r) => [r.node, r.difference]));
  const values = layout.nodes.map((n) => diff.get(n.index) ?? null);
  const maxAbs = Math.max(1e-12, ...values.map((v) => Math.abs(v ?? 0)));
  const data: Trace[] = [
    {
      type: 'scatter',
      mode: 'markers',
      x: layout.nodes.map((n) => n.x),
      y: layout.nodes.map((n) => n.y),
      text: layout.nodes.map(
        (n, i) => `${n.label}: B − A = ${values[i] === null ? 'NA' : values[i]!.toPrecision(3)}`,
      ),
      marker: {
        size: 9,
        color: values.map((v) => v ?? 0),
        // Plotly's RdBu without reversal: B − A > 0 red (B's side), < 0 blue (A's side), as the bars.
        colorscale: 'RdBu',
        cmin: -maxAbs,
        cmax: maxAbs,
        colorbar: { title: { text: 'B − A' }, thickness: 12 },
        line: { color: '#666', width: 0.5 },
      },
      hovertemplate: '%{text}<extra></extra>',
      showlegend: false,
    },
  ];
  const at = new Map(layout.nodes.map((n) => [n.index, n]));
  for (const which of ['a', 'b'] as const) {
    const cycle = cycles[which];
    if (!cycle) continue;
    const ex: Array<number | null> = [];
    const ey: Array<number | null> = [];
    for (const [i, j] of cycle.edges) {
      const p = at.get(i);
      const q = at.get(j);
      if (!p || !q) continue;
      ex.push(p.x, q.x, null);
      ey.push(p.y, q.y, null);
    }
    data.push({
      type: 'scatter',
      mode: 'lines',
      name: `cycle of ${which.toUpperCase()}`,
      x: ex,
      y: ey,
      line: { color: SIDE_COLOURS[which], width: 3, dash: which === 'b' ? 'dash' : 'solid' },
      hoverinfo: 'skip',
    });
  }
  const circle = layout.kind === 'circle';
  return {
    name: `compare-layout-${layout.kind}-${measure}`,
    data,
    layout: baseLayout(`B − A in ${measure} on the regions (${layout.kind})`, {
      xaxis: { title: { text: layout.xTitle }, visible: !circle, zeroline: false },
      yaxis: { title: { text: layout.yTitle }, visible: !circle, zeroline: false, scaleanchor: 'x' },
      height: 380,
    }),
  };
}

/** The choices of both pickers: every analysed scan, then each group's mean-matrix filtration. */
export function sideChoices(
  scans: string[],
  results: CohortResults | null,
): Array<{ key: string; label: string; kind: 'scan' | 'group' }> {
  return [
    ...scans.map((id) => ({ key: `scan:${id}`, label: id, kind: 'scan' as const })),
    ...(results?.groupFiltrations ?? []).map((g) => ({
      key: `group:${g.group}`,
      label: `${g.group}: mean of ${g.scans} scans`,
      kind: 'group' as const,
    })),
  ];
}

/** The side a scan is compared with by default: its own group's mean, when the run has one. */
export function ownGroupSide(side: FiltrationSide, results: CohortResults | null): ComparisonSide | null {
  if (side.side.kind !== 'scan' || side.group === null) return null;
  return results?.groupFiltrations?.some((g) => g.group === side.group)
    ? { kind: 'group', group: side.group }
    : null;
}

/** Hover and label text is drawn as Plotly markup: keep user-named labels literal. */
function escapeText(s: string): string {
  return s.replace(/[<>&]/g, (ch) => ({ '<': '&lt;', '>': '&gt;', '&': '&amp;' })[ch] ?? ch);
}

/** A group's mean-matrix filtration as interval rows (the Subject view's shape), for its barcode and diagram. */
export function groupIntervalRows(g: GroupFiltration): IntervalRow[] {
  return g.diagrams.flatMap((d, dim) =>
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

/** The group's `limit` most persistent H1 cycles, longest first, with their interval row id. */
export function persistentCycles(
  g: GroupFiltration,
  limit = 5,
): Array<{ id: string; cycle: CycleJson; persistence: number }> {
  return g.representatives
    .map((cycle, k) => ({ id: `1:${k}`, cycle, persistence: (cycle.death ?? Infinity) - cycle.birth }))
    .sort((p, q) => q.persistence - p.persistence)
    .slice(0, limit);
}

/**
 * One node measure of every group's mean-matrix filtration side by side: the `limit` regions with
 * the largest value in any group, as grouped horizontal bars.
 */
export function groupParticipationFigure(
  groups: GroupFiltration[],
  measure: string,
  labels: string[],
  limit = 25,
): Figure {
  const n = labels.length;
  const top = Array.from({ length: n }, (_, i) => i)
    .map((i) => ({ i, max: Math.max(...groups.map((g) => g.nodeScores[measure]?.[i] ?? -Infinity)) }))
    .filter((r) => Number.isFinite(r.max))
    .sort((p, q) => q.max - p.max || p.i - q.i)
    .slice(0, limit);
  return {
    name: `group-participation-${measure}`,
    data: groups.map((g, k) => ({
      type: 'bar',
      orientation: 'h',
      name: g.group,
      x: top.map((r) => g.nodeScores[measure]?.[r.i] ?? null),
      y: top.map((r) => labels[r.i]),
      marker: { color: GROUP_PALETTE[k % GROUP_PALETTE.length] },
      hovertemplate: `${escapeText(g.group)} %{y}: %{x:.3g}<extra></extra>`,
    })),
    layout: baseLayout(
      `${measure} of each group's mean matrix: ${top.length} of ${n} regions with the largest value`,
      {
        barmode: 'group',
        yaxis: { autorange: 'reversed', type: 'category', automargin: true },
        xaxis: { title: { text: measure } },
        height: Math.max(280, 70 + 12 * top.length * Math.max(1, groups.length)),
      },
    ),
  };
}

const GROUP_PALETTE = ['#0072B2', '#D55E00', '#009E73', '#CC79A7', '#E69F00', '#56B4E9', '#F0E442'];
