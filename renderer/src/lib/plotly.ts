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

export const PLOT_CONFIG = {
  displaylogo: false,
  responsive: true,
  // Our own export buttons add provenance; Plotly's would not.
  modeBarButtonsToRemove: ['toImage', 'sendDataToCloud', 'select2d', 'lasso2d'],
};

export async function draw(el: HTMLElement, fig: Figure): Promise<PlotlyLike> {
  const Plotly = await loadPlotly();
  await Plotly.react(el, fig.data, { autosize: true, ...fig.layout }, PLOT_CONFIG);
  return Plotly;
}
