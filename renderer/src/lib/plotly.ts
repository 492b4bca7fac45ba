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

let warmed: Promise<void> | null = null;

/**
 * Evaluates Plotly and draws one empty chart off screen, so that its one-off costs (evaluating
 * megabytes of script, the first draw's set-up) fall while the user waits for a run rather than
 * when the first result view opens.
 */
export function warmPlotly(): Promise<void> {
  warmed ??= loadPlotly().then(async (Plotly) => {
    const el = document.createElement('div');
    el.style.cssText = 'position:absolute;left:-10000px;top:0;width:400px;height:300px';
    document.body.appendChild(el);
    try {
      await new Promise((ok) => setTimeout(ok, 0));
      await Plotly.react(el, [{ type: 'scatter', x: [0, 1], y: [0, 1] }], { autosize: false }, PLOT_CONFIG);
    } finally {
      Plotly.purge(el);
      el.remove();
    }
  });
  return warmed;
}

/** The end of the queue of pending draws: charts are drawn one at a time, each in a task of its own. */
let queue: Promise<unknown> = Promise.resolve();

/** A new task: lets the page handle input and paint between two charts. */
function nextTask(): Promise<void> {
  return new Promise((ok) => setTimeout(ok, 0));
}

/**
 * Draws a figure into el. Draws are queued and each starts in a task of its own, so a view with
 * several charts never holds the main thread for all of them at once (a long task freezes the
 * page); a chart whose element left the page meanwhile is skipped.
 */
export function draw(el: HTMLElement, fig: Figure): Promise<PlotlyLike> {
  const turn = queue.then(async () => {
    await nextTask();
    const Plotly = await loadPlotly();
    if (!el.isConnected) return Plotly;
    // A user-timing entry per chart (DevTools' Timings track; the end-to-end tests read them).
    const start = performance.now();
    await Plotly.react(el, fig.data, readableLayout({ autosize: true, ...fig.layout }), PLOT_CONFIG);
    performance.measure(`draw ${fig.name}`, { start });
    return Plotly;
  });
  queue = turn.catch(() => undefined);
  return turn;
}
