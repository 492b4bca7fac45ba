/**
 * The Regions view's figures, from what the service answers (api.ts `RegionEffects`,
 * `RegionValues`): the effect sizes, p-values and ranking are the run's statistics (stats.tsv);
 * nothing here computes a statistic. Regions are shown 1-based (`region 12` is index 11) and named
 * by the node table's label where there is one (engine/features/columns.ts `regionName`).
 */
import type { NodeInfo, RegionEffect, RegionEffects, RegionValues } from '../../../electron/api.ts';
import { baseLayout, type Figure, type Trace } from './figure.ts';
import { groupColour } from './format.ts';
import type { NodeLayout } from './layout.ts';

/** Human names of the statistics' effect-size kinds (the `effect_kind` column of stats.tsv). */
export const EFFECT_KIND_NAMES: Record<string, string> = {
  adjusted_d: 'adjusted d',
  d_z: 'd_z (paired)',
  partial_r: 'partial r',
  partial_eta_squared: 'partial η²',
};

/** Bars per page of the ranked chart. */
export const REGIONS_PER_PAGE = 50;

/** The value a region is drawn with: the tested model's effect size, or its mean where the run tested nothing. */
export function shownValue(r: RegionEffect): number | null {
  return r.tested ? r.effect_size : r.mean;
}

/** The name of what is drawn: the effect size's kind, or the measure's mean when untested. */
export function shownName(e: RegionEffects): string {
  if (e.tested === 0 || !e.effect_kind) return `mean ${e.measure} (not tested in this run)`;
  return EFFECT_KIND_NAMES[e.effect_kind] ?? e.effect_kind;
}

/** The regions of one page of the ranking (page 0 is ranks 1 … perPage). */
export function pageOf(e: RegionEffects, page: number, perPage = REGIONS_PER_PAGE): RegionEffect[] {
  return e.regions.slice(page * perPage, (page + 1) * perPage);
}

export function pageCount(e: RegionEffects, perPage = REGIONS_PER_PAGE): number {
  return Math.max(1, Math.ceil(e.regions.length / perPage));
}

/** "Ranks 1–50 of 200 regions · 200 tested · 7 significant (corrected p < 0.05)". */
export function rankingCaption(e: RegionEffects, page: number, perPage = REGIONS_PER_PAGE): string {
  const from = page * perPage + 1;
  const to = Math.min(e.regions.length, (page + 1) * perPage);
  const tests =
    e.tested > 0
      ? ` · ${e.tested} tested · ${e.significant} significant (FWER-corrected p < ${e.alpha})`
      : ' · none tested in this run';
  return `Ranks ${from}–${to} of ${e.regions.length} regions${tests}`;
}

const fmt = (v: number | null, digits = 3) => (v === null ? 'n/a' : v.toPrecision(digits));

/**
 * The ranked bar chart of one page: one bar per region, largest first at the top, significant ones
 * outlined and starred. Categories are region names (never numbers, so the axis never becomes a
 * number line); a bar's customdata is its 0-based index for the click.
 */
export function rankedBarFigure(e: RegionEffects, page: number, perPage = REGIONS_PER_PAGE): Figure {
  const rows = pageOf(e, page, perPage).slice().reverse();
  const name = shownName(e);
  const rank = new Map(e.regions.map((r, k) => [r.node, k + 1]));
  return {
    name: `regions-${e.measure}`,
    data: [
      {
        type: 'bar',
        orientation: 'h',
        x: rows.map((r) => shownValue(r) ?? 0),
        y: rows.map((r) => (r.significant ? `${r.label} *` : r.label)),
        customdata: rows.map((r) => r.node),
        text: rows.map(
          (r) =>
            `#${rank.get(r.node)} ${r.label}${r.network ? ` (${r.network})` : ''}<br>` +
            `${name} = ${fmt(shownValue(r))}` +
            (r.tested
              ? `${r.effect_low !== null ? ` [${fmt(r.effect_low)}, ${fmt(r.effect_high)}]` : ''}<br>corrected p (FWER) = ${fmt(r.p_fwer, 2)}`
              : ''),
        ),
        // The text is for the hover only, never written on the bars.
        textposition: 'none',
        hovertemplate: '%{text}<extra></extra>',
        marker: {
          color: rows.map((r) => ((shownValue(r) ?? 0) >= 0 ? '#D55E00' : '#0072B2')),
          line: { color: rows.map((r) => (r.significant ? '#000' : 'rgba(0,0,0,0)')), width: 2 },
        },
      },
    ],
    layout: baseLayout(
      e.tested > 0
        ? `${e.measure}: ${name} of ${e.contrast ?? 'the tested term'} (* corrected p < ${e.alpha})`
        : `${e.measure}: ${name}`,
      {
        height: Math.max(320, 18 * rows.length + 90),
        margin: { l: 140, r: 20, t: 40, b: 50 },
        xaxis: { title: { text: name }, zeroline: true },
        // Category axis: names are never read as numbers; order as given (largest at the top).
        yaxis: {
          type: 'category',
          automargin: true,
          categoryorder: 'array',
          categoryarray: rows.map((r) => (r.significant ? `${r.label} *` : r.label)),
        },
      },
    ),
  };
}

/** Regions on a layout, sized and coloured by the shown value (diverging, symmetric about 0); customdata is the index. */
export function nodeMapFigure(layout: NodeLayout, e: RegionEffects, nodes: NodeInfo[]): Figure {
  const byNode = new Map(e.regions.map((r) => [r.node, r]));
  const name = shownName(e);
  const v = layout.nodes.map((n) => {
    const r = byNode.get(n.index);
    return r ? shownValue(r) : null;
  });
  const maxAbs = Math.max(1e-9, ...v.filter((x): x is number => x !== null).map(Math.abs));
  const sig = layout.nodes.map((n) => byNode.get(n.index)?.significant ?? false);
  const circle = layout.kind === 'circle';
  const traces: Trace[] = [
    {
      type: 'scatter',
      mode: 'markers',
      x: layout.nodes.map((n) => n.x),
      y: layout.nodes.map((n) => n.y),
      text: layout.nodes.map(
        (n, k) =>
          `${byNode.get(n.index)?.label ?? n.label}${n.network ? ` (${n.network})` : ''}<br>${name} = ${fmt(v[k])}`,
      ),
      customdata: layout.nodes.map((n) => n.index),
      hovertemplate: '%{text}<extra></extra>',
      marker: {
        size: v.map((x) => 6 + 18 * (x === null ? 0 : Math.abs(x) / maxAbs)),
        color: v.map((x) => x ?? 0),
        colorscale: 'RdBu',
        cmin: -maxAbs,
        cmax: maxAbs,
        colorbar: { title: { text: name.split(' (')[0] }, thickness: 12 },
        line: { color: sig.map((s) => (s ? '#000' : '#fff')), width: sig.map((s) => (s ? 2.5 : 1)) },
      },
      showlegend: false,
    },
  ];
  if (circle) traces.push(...networkLabels(layout, nodes));
  const title = circle
    ? 'Regions by network'
    : layout.kind === 'axial'
      ? 'Axial (from above)'
      : 'Sagittal (from the side)';
  return {
    name: `regions-${e.measure}-${layout.kind}`,
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

/**
 * One region's values per scan: a box with every scan as a point, one box per group, and per
 * session within a group when the cohort has sessions (x = session, a trace per group). Scans
 * without a value are left out and counted in the title.
 */
export function regionValuesFigure(v: RegionValues, groups: string[]): Figure {
  const shown = v.values.filter((x) => x.value !== null);
  const missing = v.values.length - shown.length;
  const bySession = v.sessions !== null && v.sessions.length > 1;
  const keys = [...new Set(shown.map((x) => x.group ?? 'all scans'))];
  const data: Trace[] = keys.map((g) => {
    const mine = shown.filter((x) => (x.group ?? 'all scans') === g);
    return {
      type: 'box',
      name: g,
      x: mine.map((x) => (bySession ? (x.session ?? 'n/a') : g)),
      y: mine.map((x) => x.value),
      text: mine.map((x) => x.subject),
      boxpoints: 'all',
      jitter: 0.4,
      pointpos: 0,
      marker: { size: 5, color: groupColour(groups, g === 'all scans' ? null : g) },
      line: { color: groupColour(groups, g === 'all scans' ? null : g) },
      hovertemplate: '%{text}: %{y:.4g}<extra></extra>',
    };
  });
  const split = [v.groupColumn, bySession ? 'session' : null].filter(Boolean).join(' and ');
  return {
    name: `region-${v.measure}-${v.number}`,
    data,
    layout: baseLayout(
      `${v.label}: ${v.measure} per scan${split ? ` by ${split}` : ''}` +
        (missing > 0 ? ` (${missing} without a value)` : ''),
      {
        boxmode: bySession ? 'group' : 'overlay',
        showlegend: bySession,
        xaxis: {
          type: 'category',
          title: { text: bySession ? 'session' : (v.groupColumn ?? '') },
          ...(bySession && v.sessions ? { categoryorder: 'array', categoryarray: v.sessions } : {}),
        },
        yaxis: { title: { text: v.measure }, zeroline: false },
      },
    ),
  };
}

/** The network table's rows (service-computed summaries), formatted by the DataTable. */
export function networkRows(e: RegionEffects): Array<Array<string | number | null>> {
  return (e.networks ?? []).map((n) => [
    n.network,
    n.regions,
    n.tested,
    n.mean_effect,
    n.max_abs_effect,
    n.significant,
  ]);
}
