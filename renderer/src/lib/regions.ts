/** The Regions view's logic: per node × measure group differences, their ranking, layouts and network summaries. */
import type { NodeInfo, Table } from '../../../electron/api.ts';
import { hedgesG } from '../../../electron/engine/stats/effect-size.ts';
import { baseLayout, type Figure, type Trace } from './figure.ts';
import type { NodeLayout } from './layout.ts';
import { CORRECTED_P } from './groups.ts';
import { asNumber, findColumn, records, scanKey } from './tables.ts';

export interface NodeEffect {
  node: number;
  label: string;
  network: string | null;
  measure: string;
  /** Mean of group B minus mean of group A. */
  difference: number;
  /** Hedges' g of B − A: the difference over the pooled SD, small-sample corrected. NaN when undefined. */
  g: number;
  nA: number;
  nB: number;
  /** Corrected p from the run's statistics, when they tested this node and measure. */
  pCorrected: number | null;
  /**
   * The effect size the run's statistics report for this node and measure (from the tested model:
   * adjusted d, d_z, partial r or partial η², named by `effectKind`), or null when untested.
   */
  tested: number | null;
  effectKind: string | null;
  significant: boolean;
}

export function measuresOf(nodeScores: Table): string[] {
  const col = findColumn(nodeScores, ['measure']);
  if (!col) return [];
  return [...new Set(records(nodeScores).map((r) => String(r[col])))];
}

/**
 * Corrected p per (measure, node label) from the stats table's node-level rows. Layouts read:
 * the statistics stage's (family 'nodes:<measure>', feature = measure, node_or_point = label);
 * columns 'measure' and 'node'/'label'; or a feature named 'measure:label'. With several contrasts,
 * the one naming both groups is used.
 */
export function nodePValues(
  stats: Table | null,
  groups: [string, string] | null = null,
): Map<string, number> {
  const out = new Map<string, number>();
  if (!stats) return out;
  const pCol = findColumn(stats, CORRECTED_P);
  if (!pCol) return out;
  const familyCol = findColumn(stats, ['family']);
  const measureCol = findColumn(stats, ['measure']);
  const nodeCol = findColumn(stats, ['node_or_point', 'label', 'node', 'region']);
  const featureCol = findColumn(stats, ['feature', 'name', 'variable']);
  const contrastCol = findColumn(stats, ['contrast']);
  let rows = records(stats);
  if (contrastCol && groups) {
    const both = rows.filter((r) => groups.every((g) => String(r[contrastCol] ?? '').includes(g)));
    if (both.length) rows = both;
  }
  for (const r of rows) {
    const p = asNumber(r[pCol]);
    if (p === null) continue;
    const family = familyCol ? String(r[familyCol] ?? '') : '';
    if (familyCol && nodeCol && family.startsWith('nodes:')) {
      const measure = featureCol && r[featureCol] !== null ? String(r[featureCol]) : family.slice(6);
      if (!out.has(`${measure}\u0000${r[nodeCol]}`)) out.set(`${measure}\u0000${r[nodeCol]}`, p);
    } else if (!familyCol && measureCol && nodeCol && r[measureCol] !== null && r[nodeCol] !== null) {
      out.set(`${r[measureCol]}\u0000${r[nodeCol]}`, p);
    } else if (!familyCol && featureCol && typeof r[featureCol] === 'string') {
      const m = /^(.+?)(?::|\[|\/)(.+?)\]?$/.exec(r[featureCol] as string);
      if (m) out.set(`${m[1]}\u0000${m[2]}`, p);
    }
  }
  return out;
}

/** Human names of the statistics' effect-size kinds (the `effect_kind` column of stats.tsv). */
export const EFFECT_KIND_NAMES: Record<string, string> = {
  adjusted_d: 'adjusted d',
  d_z: 'd_z (paired)',
  partial_r: 'partial r',
  partial_eta_squared: 'partial η²',
};

/** The effect size and its kind per (measure, node label) from the stats table's node families. */
export function nodeTestedEffects(stats: Table | null): Map<string, { value: number; kind: string }> {
  const out = new Map<string, { value: number; kind: string }>();
  if (!stats) return out;
  const familyCol = findColumn(stats, ['family']);
  const nodeCol = findColumn(stats, ['node_or_point']);
  const sizeCol = findColumn(stats, ['effect_size']);
  const kindCol = findColumn(stats, ['effect_kind']);
  if (!familyCol || !nodeCol || !sizeCol || !kindCol) return out;
  for (const r of records(stats)) {
    const family = String(r[familyCol] ?? '');
    const value = asNumber(r[sizeCol]);
    if (!family.startsWith('nodes:') || value === null) continue;
    const key = `${family.slice(6)}\u0000${r[nodeCol]}`;
    if (!out.has(key)) out.set(key, { value, kind: String(r[kindCol]) });
  }
  return out;
}

/** The value the Regions view ranks and draws: the tested model's effect size when there is one, else Hedges' g. */
export function shownEffect(e: NodeEffect): number {
  return e.tested ?? e.g;
}

/** The name of what the Regions view draws for a measure. */
export function shownEffectName(effects: NodeEffect[], measure: string): string {
  const kind = effects.find((e) => e.measure === measure && e.effectKind)?.effectKind ?? null;
  return kind ? `${EFFECT_KIND_NAMES[kind] ?? kind}, from the tested model` : "Hedges' g";
}

/**
 * Group differences of every node and measure between groups A (reference) and B, from the long
 * node-score table and each subject's group. Significance is read from the run's corrected p-values
 * (alpha 0.05, common practice); nodes the run did not test are never marked.
 */
export function nodeEffects(
  nodeScores: Table,
  groupOf: Map<string, string | null>,
  groupA: string,
  groupB: string,
  stats: Table | null,
  alpha = 0.05,
): NodeEffect[] {
  const subj = findColumn(nodeScores, ['subject', 'participant_id', 'id']);
  const nodeCol = findColumn(nodeScores, ['node', 'index']);
  const labelCol = findColumn(nodeScores, ['label']);
  const netCol = findColumn(nodeScores, ['network']);
  const measureCol = findColumn(nodeScores, ['measure']);
  const valueCol = findColumn(nodeScores, ['value']);
  if (!subj || !nodeCol || !measureCol || !valueCol) return [];
  const cells = new Map<
    string,
    { node: number; label: string; network: string | null; measure: string; a: number[]; b: number[] }
  >();
  for (const r of records(nodeScores)) {
    const g = groupOf.get(scanKey(r, subj));
    if (g !== groupA && g !== groupB) continue;
    const v = asNumber(r[valueCol]);
    const node = asNumber(r[nodeCol]);
    if (v === null || node === null) continue;
    const measure = String(r[measureCol]);
    const key = `${measure}\u0000${node}`;
    let c = cells.get(key);
    if (!c) {
      c = {
        node,
        label: labelCol ? String(r[labelCol] ?? node) : String(node),
        network: netCol && r[netCol] !== null ? String(r[netCol]) : null,
        measure,
        a: [],
        b: [],
      };
      cells.set(key, c);
    }
    (g === groupA ? c.a : c.b).push(v);
  }
  const ps = nodePValues(stats, [groupA, groupB]);
  const tested = nodeTestedEffects(stats);
  return [...cells.values()].map((c) => {
    const mean = (x: number[]) => (x.length ? x.reduce((s, v) => s + v, 0) / x.length : NaN);
    const p = ps.get(`${c.measure}\u0000${c.label}`) ?? ps.get(`${c.measure}\u0000${c.node}`) ?? null;
    const t = tested.get(`${c.measure}\u0000${c.label}`) ?? tested.get(`${c.measure}\u0000${c.node}`) ?? null;
    return {
      node: c.node,
      label: c.label,
      network: c.network,
      measure: c.measure,
      difference: mean(c.b) - mean(c.a),
      // Hedges (1981) with the exact small-sample factor, from the statistics engine.
      g: c.a.length >= 2 && c.b.length >= 2 ? hedgesG(c.b, c.a) : NaN,
      nA: c.a.length,
      nB: c.b.length,
      pCorrected: p,
      tested: t?.value ?? null,
      effectKind: t?.kind ?? null,
      significant: p !== null && p < alpha,
    };
  });
}

/** One measure's effects, largest |shown effect| first (undefined effects last). */
export function ranked(effects: NodeEffect[], measure: string): NodeEffect[] {
  const key = (e: NodeEffect) => (Number.isFinite(shownEffect(e)) ? Math.abs(shownEffect(e)) : -1);
  return effects.filter((e) => e.measure === measure).sort((x, y) => key(y) - key(x) || x.node - y.node);
}

/** The ranked bar chart: one bar per node, significant ones outlined and starred. */
export function rankedBarFigure(
  effects: NodeEffect[],
  measure: string,
  groupA: string,
  groupB: string,
  top = 40,
): Figure {
  const rows = ranked(effects, measure).slice(0, top).reverse();
  const name = shownEffectName(effects, measure);
  const value = (e: NodeEffect) => shownEffect(e);
  return {
    name: `regions-${measure}`,
    data: [
      {
        type: 'bar',
        orientation: 'h',
        x: rows.map((e) => (Number.isFinite(value(e)) ? value(e) : 0)),
        y: rows.map((e) => (e.significant ? `${e.label} *` : e.label)),
        marker: {
          color: rows.map((e) => (value(e) >= 0 ? '#D55E00' : '#0072B2')),
          line: { color: rows.map((e) => (e.significant ? '#000' : 'rgba(0,0,0,0)')), width: 2 },
        },
        customdata: rows.map((e) => [e.pCorrected ?? 'not tested', e.network ?? '']),
        hovertemplate: `%{y}: ${name} = %{x:.3f}<br>corrected p: %{customdata[0]}<br>%{customdata[1]}<extra></extra>`,
      },
    ],
    layout: baseLayout(
      name === "Hedges' g"
        ? `${measure}: ${groupB} − ${groupA} (Hedges' g; * corrected p < 0.05)`
        : `${measure}: ${name} (* corrected p < 0.05)`,
      {
        height: Math.max(320, 18 * rows.length + 90),
        margin: { l: 140, r: 20, t: 40, b: 50 },
        xaxis: { title: { text: name }, zeroline: true },
        yaxis: { automargin: true },
      },
    ),
  };
}

/** Nodes on a layout, sized and coloured by the shown effect (the tested model's, else Hedges' g; diverging, symmetric about 0). */
export function nodeMapFigure(
  layout: NodeLayout,
  effects: NodeEffect[],
  measure: string,
  nodes: NodeInfo[],
): Figure {
  const byNode = new Map(effects.filter((e) => e.measure === measure).map((e) => [e.node, e]));
  const name = shownEffectName(effects, measure);
  const g = layout.nodes.map((n) => {
    const e = byNode.get(n.index);
    return e ? shownEffect(e) : NaN;
  });
  const maxAbs = Math.max(1e-9, ...g.filter(Number.isFinite).map(Math.abs));
  const sig = layout.nodes.map((n) => byNode.get(n.index)?.significant ?? false);
  const circle = layout.kind === 'circle';
  const traces: Trace[] = [
    {
      type: 'scatter',
      mode: 'markers',
      x: layout.nodes.map((n) => n.x),
      y: layout.nodes.map((n) => n.y),
      text: layout.nodes.map((n) => `${n.label}${n.network ? ` (${n.network})` : ''}`),
      customdata: g.map((v) => (Number.isFinite(v) ? v.toFixed(3) : 'n/a')),
      hovertemplate: `%{text}<br>${name} = %{customdata}<extra></extra>`,
      marker: {
        size: g.map((v) => 6 + 18 * (Number.isFinite(v) ? Math.abs(v) / maxAbs : 0)),
        color: g.map((v) => (Number.isFinite(v) ? v : 0)),
        colorscale: 'RdBu',
        cmin: -maxAbs,
        cmax: maxAbs,
        colorbar: { title: { text: name === "Hedges' g" ? 'g' : name.split(',')[0] }, thickness: 12 },
        line: { color: sig.map((s) => (s ? '#000' : '#fff')), width: sig.map((s) => (s ? 2.5 : 1)) },
      },
      showlegend: false,
    },
  ];
  if (circle) traces.push(...networkLabels(layout, nodes));
  const title = circle
    ? 'Nodes by network'
    : layout.kind === 'axial'
      ? 'Axial (from above)'
      : 'Sagittal (from the side)';
  return {
    name: `regions-${measure}-${layout.kind}`,
    data: traces,
    layout: baseLayout(title, {
      xaxis: { title: { text: layout.xTitle }, visible: !circle, zeroline: false },
      yaxis: { title: { text: layout.yTitle }, visible: !circle, zeroline: false, scaleanchor: 'x' },
      height: 380,
    }),
  };
}

/** Network names placed just outside their arc of the circle. */
export function networkLabels(layout: NodeLayout, _nodes: NodeInfo[]): Trace[] {
  const nets = new Map<string, { x: number; y: number; k: number }>();
  for (const n of layout.nodes) {
    if (!n.network) continue;
    const s = nets.get(n.network) ?? { x: 0, y: 0, k: 0 };
    s.x += n.x;
    s.y += n.y;
    s.k++;
    nets.set(n.network, s);
  }
  if (nets.size === 0) return [];
  const pts = [...nets].map(([name, s]) => {
    const r = Math.hypot(s.x, s.y) || 1;
    return { name, x: (1.22 * s.x) / r, y: (1.22 * s.y) / r };
  });
  return [
    {
      type: 'scatter',
      mode: 'text',
      x: pts.map((p) => p.x),
      y: pts.map((p) => p.y),
      text: pts.map((p) => p.name),
      textfont: { size: 11, color: '#444' },
      hoverinfo: 'skip',
      showlegend: false,
    },
  ];
}

export interface NetworkSummary {
  network: string;
  nodes: number;
  meanG: number;
  maxAbsG: number;
  significant: number;
}

/** Per network: how many nodes, their mean and largest |g|, how many reach corrected significance. */
export function networkSummary(effects: NodeEffect[], measure: string): NetworkSummary[] {
  const by = new Map<string, NodeEffect[]>();
  for (const e of effects.filter((x) => x.measure === measure)) {
    const key = e.network ?? '(none)';
    by.set(key, [...(by.get(key) ?? []), e]);
  }
  return [...by].map(([network, es]) => {
    const gs = es.map((e) => e.g).filter(Number.isFinite);
    return {
      network,
      nodes: es.length,
      meanG: gs.length ? gs.reduce((s, v) => s + v, 0) / gs.length : NaN,
      maxAbsG: gs.length ? Math.max(...gs.map(Math.abs)) : NaN,
      significant: es.filter((e) => e.significant).length,
    };
  });
}
