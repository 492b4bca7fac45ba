/** Figures as plain data (Plotly's JSON schema): the views build these, Plot.svelte draws them. */
export type Trace = Record<string, unknown>;
export type Layout = Record<string, unknown>;

export interface Figure {
  data: Trace[];
  layout: Layout;
  /** File name stem for exports. */
  name: string;
}

/** Common layout: white background, system font, compact margins. SVG only (no WebGL traces anywhere). */
export function baseLayout(title: string, extra: Layout = {}): Layout {
  return {
    title: { text: title, font: { size: 14 }, x: 0.01, xanchor: 'left' },
    margin: { l: 60, r: 20, t: 40, b: 50 },
    paper_bgcolor: '#ffffff',
    plot_bgcolor: '#ffffff',
    font: { family: 'system-ui, sans-serif', size: 12 },
    hovermode: 'closest',
    // Legends sit above the plot, right-aligned, clear of the axis titles below.
    legend: { orientation: 'h', x: 1, xanchor: 'right', y: 1.02, yanchor: 'bottom' },
    ...extra,
  };
}

/** Trace types that draw with SVG (or, for heatmap, a plain 2-D canvas image): never WebGL. */
export const SVG_TRACE_TYPES = new Set(['scatter', 'bar', 'box', 'violin', 'heatmap']);

export function usesOnlySvg(fig: Figure): boolean {
  return fig.data.every((t) => SVG_TRACE_TYPES.has(String(t.type ?? 'scatter')));
}
