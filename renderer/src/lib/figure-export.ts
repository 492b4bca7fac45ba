/** Saving a drawn chart as SVG or PNG, with the run's provenance embedded in the file. */
import type { Provenance } from '../../../electron/api.ts';
import {
  dataUrlBytes,
  download,
  fileStem,
  pngWithText,
  PROVENANCE_KEY,
  svgWithProvenance,
} from './export.ts';
import { loadPlotly } from './plotly.ts';

export async function exportFigure(
  el: HTMLElement,
  name: string,
  format: 'svg' | 'png',
  provenance: Provenance | null,
): Promise<string> {
  const Plotly = await loadPlotly();
  const width = Math.max(600, el.clientWidth);
  const height = Math.max(400, el.clientHeight);
  const url = await Plotly.toImage(el, { format, width, height, scale: format === 'png' ? 2 : 1 });
  const file = `${fileStem(name)}.${format}`;
  if (format === 'svg') {
    let svg = new TextDecoder().decode(dataUrlBytes(url));
    if (provenance) svg = svgWithProvenance(svg, provenance);
    download(file, svg, 'image/svg+xml');
  } else {
    let png = dataUrlBytes(url);
    if (provenance) png = pngWithText(png, PROVENANCE_KEY, JSON.stringify(provenance));
    download(file, png, 'image/png');
  }
  return file;
}
