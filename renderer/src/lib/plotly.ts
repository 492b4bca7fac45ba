/**
 * Plotly, loaded once and only when the first chart is drawn (it is several megabytes).
 * Only SVG trace types are used, so charts render without a GPU.
 */
import type { Figure } from './figure.ts';

export interface PlotlyEvent {
  points?: Array<{ customdata?: unknown; curveNumber: number; pointNumber: number }>;
}

export interface PlotlyLike {
  react(el: HTMLElement, data: unknown[], layout: unknown, config?: unknown): Promise<unknown>;
  purge(el: HTMLElement): void;
  toImage(
    el: HTMLElement,
    opts: { format: 'svg' | 'png'; width?: number; height?: number; scale?: number },
  ): Promise<string>;
  Plots: { resize(el: HTMLElement): void };
}

let loading: Promise<PlotlyLike> | null = null;

export function loadPlotly(): Promise<PlotlyLike> {
  loading ??= import('plotly.js-dist').then((m) => (m.default ?? m) as unknown as PlotlyLike);
  return loading;
}

/**
 * Every chart's configuration. Nothing leaves the machine: Plotly's "Share chart…" button
 * (`sendChartToCloud` in plotly.js 3+; `sendDataToCloud` before) uploads the figure to an external
 * service, so it is switched off (`showSendToCloud`), removed under both names, and given no
 * server to send to. Our own export buttons add provenance; Plotly's image button would not.
 */
export const PLOT_CONFIG = {
  displaylogo: false,
  responsive: true,
  showSendToCloud: false,
  plotlyServerURL: '',
  modeBarButtonsToRemove: ['toImage', 'sendChartToCloud', 'sendDataToCloud', 'select2d', 'lasso2d'],
};

/**
 * The layout with every axis's hover values to 4 significant digits (d3-format '.4~g', trailing
 * zeros dropped), unless the figure sets its own: hover texts never show 0.30000000000000004.
 */
export function readableLayout(layout: Record<string, unknown>): Record<string, unknown> {
  const out: Record<string, unknown> = { ...layout };
  const axes = new Set(['xaxis', 'yaxis', ...Object.keys(layout).filter((k) => /^[xy]axis\d*$/.test(k))]);
  for (const k of axes) {
    const axis = (layout[k] ?? {}) as Record<string, unknown>;
    out[k] = { hoverformat: '.4~g', ...axis };
  }
  return out;
}

export async function draw(el: HTMLElement, fig: Figure): Promise<PlotlyLike> {
  const Plotly = await loadPlotly();
  await Plotly.react(el, fig.data, readableLayout({ autosize: true, ...fig.layout }), PLOT_CONFIG);
  return Plotly;
}
