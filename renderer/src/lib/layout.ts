/** Where to draw nodes: by their coordinates (two orthogonal projections), or on a circle by network. */
import type { NodeInfo } from '../../../electron/api.ts';
import { regionName } from '../../../electron/engine/features/columns.ts';

export interface Placed {
  index: number;
  label: string;
  network: string | null;
  x: number;
  y: number;
}

export interface NodeLayout {
  kind: 'axial' | 'sagittal' | 'circle';
  /** Axis titles. */
  xTitle: string;
  yTitle: string;
  nodes: Placed[];
}

export function hasCoordinates(nodes: NodeInfo[] | null): nodes is NodeInfo[] {
  return !!nodes && nodes.length > 0 && nodes.every((n) => n.x !== null && n.y !== null && n.z !== null);
}

/**
 * Two orthogonal projections of the coordinates: axial (x right, y anterior, seen from above)
 * and sagittal (y anterior, z up, seen from the side). MNI-style axes are assumed (common practice).
 */
export function projections(nodes: NodeInfo[]): [NodeLayout, NodeLayout] {
  const base = (n: NodeInfo) => ({ index: n.index, label: n.label, network: n.network });
  return [
    {
      kind: 'axial',
      xTitle: 'x (left → right)',
      yTitle: 'y (posterior → anterior)',
      nodes: nodes.map((n) => ({ ...base(n), x: n.x as number, y: n.y as number })),
    },
    {
      kind: 'sagittal',
      xTitle: 'y (posterior → anterior)',
      yTitle: 'z (inferior → superior)',
      nodes: nodes.map((n) => ({ ...base(n), x: n.y as number, y: n.z as number })),
    },
  ];
}

/**
 * Nodes evenly on the unit circle, grouped by network (networks in order of first appearance,
 * nodes in index order within each), with a gap of one slot between networks so they read as arcs.
 */
export function circleLayout(nodes: NodeInfo[]): NodeLayout {
  const networks: string[] = [];
  for (const n of nodes) {
    const key = n.network ?? '';
    if (!networks.includes(key)) networks.push(key);
  }
  const ordered = networks.flatMap((net) => nodes.filter((n) => (n.network ?? '') === net));
  const gaps = networks.length > 1 ? networks.length : 0;
  const slots = ordered.length + gaps;
  const placed: Placed[] = [];
  let slot = 0;
  let prev: string | null = null;
  for (const n of ordered) {
    const key = n.network ?? '';
    if (prev !== null && key !== prev && gaps) slot++;
    prev = key;
    // Start at 12 o'clock and go clockwise.
    const angle = Math.PI / 2 - (2 * Math.PI * slot) / slots;
    placed.push({
      index: n.index,
      label: n.label,
      network: n.network,
      x: Math.cos(angle),
      y: Math.sin(angle),
    });
    slot++;
  }
  placed.sort((a, b) => a.index - b.index);
  return { kind: 'circle', xTitle: '', yTitle: '', nodes: placed };
}

/** Regions without a node table: named `region k`, k the 1-based number (columns.ts regionName), no network. */
export function anonymousNodes(n: number): NodeInfo[] {
  return Array.from({ length: n }, (_, i) => ({
    index: i,
    label: regionName(i, null),
    network: null,
    x: null,
    y: null,
    z: null,
  }));
}

/** The layouts a view draws for these nodes: both projections when there are coordinates, else the circle. */
export function layoutsFor(nodes: NodeInfo[]): NodeLayout[] {
  return hasCoordinates(nodes) ? projections(nodes) : [circleLayout(nodes)];
}

/**
 * The convex hull of points, counter-clockwise, without repeating the first point (Andrew's
 * monotone chain: A. M. Andrew, "Another efficient algorithm for convex hulls in two dimensions",
 * Information Processing Letters 9, 1979). Collinear points on an edge are left out.
 */
export function convexHull(points: Array<{ x: number; y: number }>): Array<{ x: number; y: number }> {
  const p = [...points]
    .filter((q) => Number.isFinite(q.x) && Number.isFinite(q.y))
    .sort((a, b) => a.x - b.x || a.y - b.y);
  if (p.length < 3) return p;
  // A point within rounding of an edge counts as on it (left out), whatever the coordinates' scale.
  const span = Math.max(p[p.length - 1].x - p[0].x, ...p.map((q) => Math.abs(q.y - p[0].y))) || 1;
  const eps = 1e-12 * span * span;
  const cross = (o: { x: number; y: number }, a: { x: number; y: number }, b: { x: number; y: number }) =>
    (a.x - o.x) * (b.y - o.y) - (a.y - o.y) * (b.x - o.x);
  const lower: Array<{ x: number; y: number }> = [];
  for (const q of p) {
    while (lower.length >= 2 && cross(lower[lower.length - 2], lower[lower.length - 1], q) <= eps)
      lower.pop();
    lower.push(q);
  }
  const upper: Array<{ x: number; y: number }> = [];
  for (let i = p.length - 1; i >= 0; i--) {
    const q = p[i];
    while (upper.length >= 2 && cross(upper[upper.length - 2], upper[upper.length - 1], q) <= eps)
      upper.pop();
    upper.push(q);
  }
  return [...lower.slice(0, -1), ...upper.slice(0, -1)];
}

/** A faint outline of the node cloud (its convex hull, closed), drawn under the nodes. */
export function outlineTrace(layout: NodeLayout): Record<string, unknown> | null {
  if (layout.kind === 'circle') return null;
  const hull = convexHull(layout.nodes);
  if (hull.length < 3) return null;
  return {
    type: 'scatter',
    mode: 'lines',
    x: [...hull.map((q) => q.x), hull[0].x],
    y: [...hull.map((q) => q.y), hull[0].y],
    fill: 'toself',
    fillcolor: 'rgba(0,0,0,0.03)',
    line: { color: '#bbbbbb', width: 1, dash: 'dot' },
    hoverinfo: 'skip',
    showlegend: false,
  };
}

/**
 * Runs of consecutive regions of the same network, in region order (a network that appears in
 * two places gives two runs). Empty when no region has a network.
 */
export function networkBlocks(nodes: NodeInfo[]): Array<{ network: string; start: number; end: number }> {
  if (!nodes.some((n) => n.network)) return [];
  const blocks: Array<{ network: string; start: number; end: number }> = [];
  nodes.forEach((n, i) => {
    const net = n.network ?? '(none)';
    const last = blocks.at(-1);
    if (last && last.network === net) last.end = i;
    else blocks.push({ network: net, start: i, end: i });
  });
  return blocks;
}

/**
 * Which labels to show and where, so that no two shown labels overlap: each label goes to the side
 * of its point away from the points' centre, and a label whose point lies within `gap` (in data
 * units) of a point already labelled is left out (its point keeps its hover text). Greedy, in the
 * given order, so the caller puts the most important points first.
 */
export function spreadLabels(
  points: Array<{ x: number; y: number; label: string }>,
  gap: number,
): { text: string[]; position: string[] } {
  const cx = points.reduce((a, q) => a + q.x, 0) / Math.max(1, points.length);
  const cy = points.reduce((a, q) => a + q.y, 0) / Math.max(1, points.length);
  const shown: Array<{ x: number; y: number }> = [];
  const text: string[] = [];
  const position: string[] = [];
  for (const q of points) {
    const clear = shown.every((s) => Math.hypot(s.x - q.x, s.y - q.y) >= gap);
    text.push(clear ? q.label : '');
    if (clear) shown.push(q);
    const vertical = q.y >= cy ? 'top' : 'bottom';
    const horizontal = Math.abs(q.x - cx) < gap / 2 ? 'center' : q.x > cx ? 'right' : 'left';
    position.push(`${vertical} ${horizontal}`);
  }
  return { text, position };
}

/** The figure with the node cloud's outline drawn first (under everything), where the layout has one. */
export function withOutline<F extends { data: Array<Record<string, unknown>> }>(
  fig: F,
  layout: NodeLayout,
): F {
  const outline = outlineTrace(layout);
  return outline ? { ...fig, data: [outline, ...fig.data] } : fig;
}
