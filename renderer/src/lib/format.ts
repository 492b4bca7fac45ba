/** Number and time formatting shared by the views. */

/** A value for a table cell: missing as 'n/a' on screen (the written tables say NA), numbers to 4 significant digits. */
export function formatCell(v: string | number | null | undefined): string {
  if (v === null || v === undefined) return 'n/a';
  if (typeof v === 'string') return v;
  if (!Number.isFinite(v)) return v > 0 ? 'inf' : v < 0 ? '-inf' : 'NaN';
  if (Number.isInteger(v)) return String(v);
  const a = Math.abs(v);
  if (a !== 0 && (a < 1e-3 || a >= 1e5)) return v.toExponential(2);
  return String(Number(v.toPrecision(4)));
}

/** A p-value as reported: below 0.001 as '< 0.001' (common practice). */
export function formatP(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return 'n/a';
  if (p < 0.001) return '< 0.001';
  return p.toFixed(3);
}

/** A duration for an ETA: '45 s', '3 min 05 s', '1 h 02 min'. */
export function formatDuration(ms: number | null | undefined): string {
  if (ms === null || ms === undefined || !Number.isFinite(ms) || ms < 0) return '—';
  const s = Math.round(ms / 1000);
  if (s < 60) return `${s} s`;
  const m = Math.floor(s / 60);
  if (m < 60) return `${m} min ${String(s % 60).padStart(2, '0')} s`;
  return `${Math.floor(m / 60)} h ${String(m % 60).padStart(2, '0')} min`;
}

/** Colours for groups, in order of first appearance (colour-blind-safe palette of Okabe & Ito, 2008). */
export const GROUP_COLOURS = [
  '#0072B2',
  '#D55E00',
  '#009E73',
  '#CC79A7',
  '#E69F00',
  '#56B4E9',
  '#F0E442',
  '#000000',
];

export function groupColour(groups: string[], group: string | null): string {
  if (group === null) return '#888888';
  const i = groups.indexOf(group);
  return i < 0 ? '#888888' : GROUP_COLOURS[i % GROUP_COLOURS.length];
}
