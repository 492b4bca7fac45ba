/**
 * No chart offers a control that sends data off the machine. The button names are read from the
 * installed plotly.js-dist itself (its modebar button definitions), so a renamed or new upload
 * button in a future Plotly fails this test instead of reappearing in the app.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { PLOT_CONFIG } from '../../renderer/src/lib/plotly.ts';

const require = createRequire(import.meta.url);
const plotlySource = readFileSync(require.resolve('plotly.js-dist'), 'utf8');

/** Each modebar button plotly defines: its name and the text of its definition. */
function modebarButtons(): Array<{ name: string; body: string }> {
  const out: Array<{ name: string; body: string }> = [];
  const re = /modeBarButtons\.(\w+) = \{\s*name: "(\w+)"/g;
  for (let m = re.exec(plotlySource); m; m = re.exec(plotlySource)) {
    // The definition ends at the first line that closes it at its own indentation.
    const indent = /[ \t]*$/.exec(plotlySource.slice(0, m.index))![0];
    const end = plotlySource.indexOf(`\n${indent}};`, m.index);
    out.push({ name: m[2], body: plotlySource.slice(m.index, end) });
  }
  return out;
}

describe('the charts’ configuration (plotly.js-dist as installed)', () => {
  it('finds plotly’s modebar buttons at all (the reading below is not vacuous)', () => {
    const names = modebarButtons().map((b) => b.name);
    expect(names).toContain('toImage');
    expect(names).toContain('zoom2d');
    expect(names.length).toBeGreaterThan(10);
  });

  it('removes every button that uploads to a cloud service, under its current name', () => {
    const uploads = modebarButtons().filter(
      (b) => /cloud/i.test(b.name) || /cloudupload|sendDataToCloud/i.test(b.body),
    );
    // plotly.js 4 names it sendChartToCloud ("Share chart..."); there is at least one.
    expect(uploads.map((b) => b.name)).toContain('sendChartToCloud');
    for (const b of uploads) expect(PLOT_CONFIG.modeBarButtonsToRemove).toContain(b.name);
  });

  it('switches the upload off where plotly adds it (showSendToCloud) and leaves it no server', () => {
    // The config attribute plotly reads before adding the button to the common group.
    expect(plotlySource).toMatch(/if \(context\.showSendToCloud\) commonGroup\.push\("sendChartToCloud"\)/);
    expect(PLOT_CONFIG.showSendToCloud).toBe(false);
    expect(PLOT_CONFIG.plotlyServerURL).toBe('');
    expect(PLOT_CONFIG.displaylogo).toBe(false);
  });
});
