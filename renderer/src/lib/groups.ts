/** The Groups view's logic: curve bands, feature distributions beside their tests, the subject map. */
import type { CohortResults, CurveBand, StatsRow, Table } from '../../../electron/api.ts';
import { baseLayout, type Figure, type Trace } from './figure.ts';
import { groupColour } from './format.ts';
import { asNumber, records, scanKey } from './tables.ts';

/** Group labels in the order they first appear in the curves (the colour order everywhere). */
export function groupsOf(results: CohortResults): string[] {
  const seen: string[] = [];
  const add = (g: string | null) => {
    if (g !== null && !seen.includes(g)) seen.push(g);
  };
  for (const c of results.groupCurves) add(c.group);
  for (const e of results.embedding ?? []) add(e.group);
  return seen;
}

export function curveNames(bands: CurveBand[]): string[] {
  return [...new Set(bands.map((b) => b.curve))];
}

const CURVE_TITLES: Record<string, string> = {
  betti0: 'Betti-0 curve (components)',
  betti1: 'Betti-1 curve (loops)',
  betti2: 'Betti-2 curve (voids)',
  euler: 'Euler characteristic curve',
};

export function curveTitle(curve: string): string {
  if (CURVE_TITLES[curve]) return CURVE_TITLES[curve];
  const m = /^landscape(\d+)-(\d+)$/.exec(curve);
  return m ? `Persistence landscape, H${m[1]} level ${m[2]}` : curve;
}

function rgba(hex: string, alpha: number): string {
  const n = parseInt(hex.slice(1), 16);
  return `rgba(${(n >> 16) & 255},${(n >> 8) & 255},${n & 255},${alpha})`;
}

/**
 * Mean curve per group with its band drawn as a filled polygon (upper edge out, lower edge back),
 * so each band is one trace and legends toggle mean and band together.
 */
export function curveFigure(bands: CurveBand[], curve: string, groups: string[]): Figure {
  const data: Trace[] = [];
  for (const b of bands.filter((x) => x.curve === curve)) {
    const colour = groupColour(groups, b.group);
    data.push({
      type: 'scatter',
      mode: 'lines',
      x: [...b.grid, ...[...b.grid].reverse()],
      y: [...b.upper, ...[...b.lower].reverse()],
      fill: 'toself',
      fillcolor: rgba(colour, 0.18),
      line: { width: 0 },
      hoverinfo: 'skip',
      legendgroup: b.group,
      showlegend: false,
      name: `${b.group} band`,
    });
    data.push({
      type: 'scatter',
      mode: 'lines',
      x: b.grid,
      y: b.mean,
      line: { color: colour, width: 2 },
      legendgroup: b.group,
      name: b.group,
    });
  }
  return {
    name: `curve-${curve}`,
    data,
    layout: baseLayout(curveTitle(curve), {
      xaxis: { title: { text: 'filtration value' } },
      yaxis: { title: { text: curve === 'euler' ? 'χ' : 'mean' } },
    }),
  };
}

/**
 * The features worth a distribution: the run's feature columns (`featureNames`, whatever families
 * it wrote) that hold a number varying across scans (a constant, like H0's count in a full
 * filtration, has no distribution to show).
 */
export function featureColumns(features: Table, names: string[]): string[] {
  return names.filter((c) => {
    const i = features.columns.indexOf(c);
    if (i < 0) return false;
    let first: number | null = null;
    for (const r of features.rows) {
      const v = r[i];
      if (typeof v !== 'number' || !Number.isFinite(v)) continue;
      if (first === null) first = v;
      else if (v !== first) return true;
    }
    return false;
  });
}

/** The feature shown first: the one with the smallest FWER-corrected p in the run's feature tests, else the first. */
export function defaultFeature(features: string[], tests: StatsRow[] | null): string {
  let best = features[0] ?? '';
  let bestP = Infinity;
  for (const row of tests ?? []) {
    if (row.p_fwer !== null && row.p_fwer < bestP && features.includes(row.feature)) {
      bestP = row.p_fwer;
      best = row.feature;
    }
  }
  return best;
}

/** Values of one feature split by group (subjects with a missing group or value are left out). */
export function featureByGroup(
  features: Table,
  feature: string,
  groupColumn: string,
): Array<{ group: string; subjects: string[]; values: number[] }> {
  // features.tsv's first column is participant_id (then session, where the cohort has sessions).
  const subjectCol = features.columns[0] ?? null;
  const out = new Map<string, { group: string; subjects: string[]; values: number[] }>();
  for (const r of records(features)) {
    const g = r[groupColumn];
    const v = asNumber(r[feature]);
    if (g === null || g === undefined || v === null) continue;
    const key = String(g);
    const entry = out.get(key) ?? { group: key, subjects: [], values: [] };
    entry.subjects.push(subjectCol ? scanKey(r, subjectCol) : '');
    entry.values.push(v);
    out.set(key, entry);
  }
  return [...out.values()];
}

/** Violin with a box inside and every subject as a point: the distribution, its summary and the data. */
export function distributionFigure(
  features: Table,
  feature: string,
  groupColumn: string,
  groups: string[],
): Figure {
  const split = featureByGroup(features, feature, groupColumn);
  return {
    name: `distribution-${feature}`,
    data: split.map((s) => ({
      type: 'violin',
      name: s.group,
      x: s.values.map(() => s.group),
      y: s.values,
      text: s.subjects,
      box: { visible: true },
      meanline: { visible: true },
      points: 'all',
      pointpos: 0,
      jitter: 0.4,
      marker: { size: 6, opacity: 0.8 },
      line: { color: groupColour(groups, s.group) },
      hovertemplate: '%{text}: %{y}<extra></extra>',
    })),
    layout: baseLayout(feature, { showlegend: false, yaxis: { title: { text: feature }, zeroline: false } }),
  };
}

/** The run's tests of one scalar feature (every contrast). */
export function statsFor(tests: StatsRow[] | null, feature: string): StatsRow[] {
  return (tests ?? []).filter((r) => r.feature === feature);
}

/** The map methods the run computed (MDS first). */
export function embeddingMethods(results: CohortResults): Array<'mds' | 'umap'> {
  const have = new Set((results.embedding ?? []).map((e) => e.method));
  return (['mds', 'umap'] as const).filter((m) => have.has(m));
}

/** Subjects on the 2-D map of diagram distances by one method, one trace per group. */
export function embeddingFigure(
  results: CohortResults,
  groups: string[],
  method: 'mds' | 'umap' = 'mds',
): Figure | null {
  const pts = (results.embedding ?? []).filter((e) => e.method === method);
  if (pts.length === 0) return null;
  const byGroup = new Map<string, typeof pts>();
  for (const p of pts) {
    const key = p.group ?? 'n/a';
    byGroup.set(key, [...(byGroup.get(key) ?? []), p]);
  }
  const label = method.toUpperCase();
  return {
    name: `subject-map-${method}`,
    data: [...byGroup].map(([g, ps]) => ({
      type: 'scatter',
      mode: 'markers',
      name: g,
      x: ps.map((p) => p.x),
      y: ps.map((p) => p.y),
      text: ps.map((p) => p.subject),
      customdata: ps.map((p) => p.subject),
      marker: {
        size: 10,
        color: groupColour(groups, g === 'n/a' ? null : g),
        line: { color: '#fff', width: 1 },
      },
      hovertemplate: '%{text}<extra></extra>',
    })),
    layout: baseLayout(`Subject map (${label} of diagram distances)`, {
      xaxis: { title: { text: `${label} 1` }, zeroline: false },
      yaxis: { title: { text: `${label} 2` }, zeroline: false, scaleanchor: 'x' },
    }),
  };
}
