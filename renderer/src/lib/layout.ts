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
