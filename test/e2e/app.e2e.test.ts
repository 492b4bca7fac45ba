/**
 * The whole app in a real browser: browser mode over the real service and the bundled sample
 * cohort, driven through the UI as a user would. Screenshots of each view go to test-results/e2e/.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { crc32 } from 'node:zlib';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { diagramDistance, finiteDiagram } from '../../electron/engine/stats/diagram-distance.ts';
import { hasChromium, launch, type Browser } from './support/browser.ts';
import { artefacts, messyCohort, sampleCohort, startApp, type RunningApp } from './support/app.ts';

/**
 * The sample as its files lay it out (BIDS): participants and their group from participants.tsv,
 * scans from the sub-XX/ses-YY/func/…_relmat.tsv files, regions from the rows of nodes.tsv. Every count the
 * tests expect is derived from these, not from what the app prints.
 */
function sampleLayout() {
  const table = (file: string) =>
    readFileSync(join(sampleCohort, file), 'utf8')
      .trimEnd()
      .split('\n')
      .map((l) => l.split('\t'));
  const [head, ...rows] = table('participants.tsv');
  const groupAt = head.indexOf('group');
  const scans: Array<{ participant: string; session: string; group: string }> = [];
  for (const r of rows)
    for (const ses of readdirSync(join(sampleCohort, r[0])).filter((d) => d.startsWith('ses-')))
      for (const f of readdirSync(join(sampleCohort, r[0], ses, 'func')))
        if (f.endsWith('_relmat.tsv')) scans.push({ participant: r[0], session: ses, group: r[groupAt] });
  const groups = [...new Set(rows.map((r) => r[groupAt]))].sort();
  return {
    participants: rows.length,
    scans,
    sessions: [...new Set(scans.map((x) => x.session))],
    groups,
    scansOf: (g: string) => scans.filter((x) => x.group === g).length,
    regions: table('nodes.tsv').length - 1,
  };
}
const sample = sampleLayout();
/** The Regions chart draws a page of 50 ranked regions (REGIONS_PER_PAGE in lib/regions.ts). */
const CHART_TOP = 50;

let app: RunningApp;
let browser: Browser;
let page: Page;

const shot = (name: string) => page.screenshot({ path: join(artefacts, `${name}.png`), fullPage: true });
const tab = (name: string) => page.locator('nav').getByRole('button', { name, exact: true }).click();
const plot = (name: string) => page.locator(`.plot[data-figure="${name}"]`);
const drawn = async (name: string) => {
  await plot(name).locator('.main-svg').first().waitFor({ timeout: 30_000 });
};

/** PNG chunks as [type, data], each CRC checked with node's zlib.crc32 (an implementation independent of ours). */
function pngChunks(bytes: Buffer): Array<[string, Buffer]> {
  expect([...bytes.subarray(0, 8)]).toEqual([137, 80, 78, 71, 13, 10, 26, 10]);
  const out: Array<[string, Buffer]> = [];
  let at = 8;
  while (at < bytes.length) {
    const len = bytes.readUInt32BE(at);
    const type = bytes.subarray(at + 4, at + 8).toString('latin1');
    const data = bytes.subarray(at + 8, at + 8 + len);
    expect(bytes.readUInt32BE(at + 8 + len), `CRC of ${type}`).toBe(
      crc32(bytes.subarray(at + 4, at + 8 + len)),
    );
    out.push([type, data]);
    at += 12 + len;
  }
  return out;
}

/**
 * No plot on the page offers a control that sends data off the machine: every modebar button's
 * title and attribute are read, and none shares, uploads or links to a cloud service. Returns
 * how many buttons were looked at, so a caller can tell the check was not vacuous.
 */
async function noCloudControls(): Promise<number> {
  const titles = await page
    .locator('.plot .modebar-btn')
    .evaluateAll((els) =>
      els.map((e) => `${e.getAttribute('data-title') ?? ''} ${e.getAttribute('data-attr') ?? ''}`),
    );
  for (const t of titles) expect(t).not.toMatch(/share|cloud|upload|chart studio/i);
  expect(await page.locator('.plot a[href]').count()).toBe(0);
  return titles.length;
}

async function runAnalysis(expectStatus = 'done'): Promise<string> {
  await tab('Analysis');
  await page.locator('input[name=permutations]').fill('199');
  await page.locator('input[name=permutations]').dispatchEvent('change');
  await page.getByRole('button', { name: 'Run analysis' }).click();
  await page.getByTestId('run-progress').waitFor();
  const summary = page.getByTestId('run-summary');
  await summary.waitFor({ timeout: 170_000 });
  const text = (await summary.textContent()) ?? '';
  expect(text).toContain(`Run ${expectStatus}`);
  return text;
}

describe.skipIf(!hasChromium)('Loopwise in Chromium (browser mode)', () => {
  beforeAll(async () => {
    app = await startApp();
    browser = await launch();
    page = browser.page;
  });
  afterAll(async () => {
    await browser?.close();
    await app?.close();
  });

  it('opens the sample cohort in one click and shows the study with its QC report', async () => {
    await page.goto(app.server.url);
    await expect.poll(() => page.getByRole('note').textContent()).toContain('not a diagnostic device');
    await page.getByRole('button', { name: 'Open the sample cohort' }).click();
    const summary = page.getByTestId('cohort-summary');
    await summary.waitFor();
    const text = (await summary.textContent()) ?? '';
    // The data: 24 participants × 2 sessions = 48 scans of 60 regions, 12 + 12 participants per group.
    expect(sample.sessions).toHaveLength(2);
    expect(text).toMatch(new RegExp(`${sample.scans.length}\\s*scans`));
    expect(text).toMatch(new RegExp(`${sample.participants}\\s*participants`));
    expect(text).toMatch(new RegExp(`${sample.sessions.length}\\s*sessions`));
    expect(text).toMatch(new RegExp(`${sample.regions}\\s*regions`));
    for (const g of sample.groups) expect(text).toMatch(new RegExp(`${sample.scansOf(g)}\\s*${g}`));
    await page.getByRole('heading', { name: 'Quality control' }).waitFor();
    // Scans in sessions: the proposed design is the group × session interaction with the
    // participant's scans as exchangeability blocks (the design refuses repeated scans without).
    expect(await page.locator('select[name=design]').inputValue()).toBe('model');
    expect(await page.locator('input[name=model]').inputValue()).toBe('group*session');
    expect(await page.locator('input[name=test]').inputValue()).toBe('group:session');
    expect(await page.locator('select[name=blocks]').inputValue()).toBe('participant_id');
    expect(await page.getByTestId('sessions-hint').textContent()).toMatch(/participant_id/);
    await shot('1-study');
  });

  it('keeps the token out of the address after the first load and works through the cookie', async () => {
    // The address printed by npm start carries the token; the first load traded it for a cookie.
    expect(new URL(app.server.url).searchParams.get('token')).toBe(app.server.token);
    expect(page.url()).not.toContain('token=');
    expect(page.url()).not.toContain(app.server.token);
    // HttpOnly: the page's scripts cannot read it…
    expect(await page.evaluate(() => document.cookie)).not.toContain(app.server.token);
    // …yet the page's API calls carry it: the sample opened above, and a call without the header passes.
    const status = await page.evaluate(
      async () =>
        (
          await fetch('/api/info', {
            method: 'POST',
            headers: { 'content-type': 'application/json' },
            body: '[]',
          })
        ).status,
    );
    expect(status).toBe(200);
    // Without the cookie (outside the browser) the same call is refused.
    const bare = await fetch(new URL('/api/info', app.server.url), { method: 'POST', body: '[]' });
    expect(bare.status).toBe(401);
  });

  it('runs the analysis with a progress bar and reaches the results', async () => {
    const text = await runAnalysis();
    expect(text).toMatch(new RegExp(`${sample.scans.length} computed, 0 from cache,\\s+0 failed`));
    expect(await page.getByRole('progressbar').getAttribute('aria-valuenow')).toBe('100');
    // The same settings again: every filtration comes from the cache, and the run panel says so.
    const again = await runAnalysis();
    expect(again).toMatch(new RegExp(`0 computed, ${sample.scans.length} from cache`));
    await page.getByText(new RegExp(`Subjects \\(${sample.scans.length} from cache\\)`)).waitFor();
    await shot('2-analysis');
  });

  it('shows mean Betti curves with bands, the Euler curve and feature distributions by group', async () => {
    await tab('Groups');
    await drawn('curve-betti1');
    await drawn('curve-euler');
    // Scans split by group (the categorical column of the tested group:session term): one band
    // and one mean per group.
    const lines = plot('curve-betti1').locator('.scatterlayer .trace');
    expect(await lines.count()).toBe(2 * sample.groups.length);
    const featureName = await page.locator('select[name=feature]').inputValue();
    expect(featureName).not.toBe('');
    await drawn(`distribution-${featureName}`);
    expect(await plot(`distribution-${featureName}`).locator('.violinlayer .trace').count()).toBe(
      sample.groups.length,
    );
    expect(await noCloudControls()).toBeGreaterThan(0);
    await shot('3-groups');
  });

  it('shows the ranked region chart and the node maps', async () => {
    await tab('Regions');
    const measure = await page.locator('select[name=measure]').inputValue();
    await drawn(`regions-${measure}`);
    expect(await plot(`regions-${measure}`).locator('.barlayer .point').count()).toBe(
      Math.min(CHART_TOP, sample.regions),
    );
    // Every region is counted and reachable: the rest are on the next page.
    expect(await page.getByTestId('region-count').textContent()).toMatch(
      new RegExp(`^Ranks 1–${Math.min(CHART_TOP, sample.regions)} of ${sample.regions} regions`),
    );
    // Bars are named by the node table's labels.
    const names = await plot(`regions-${measure}`).locator('.ytick text').allTextContents();
    expect(names.every((n) => /^[LR]_[A-Z]+_\d+( \*)?$/.test(n))).toBe(true);
    // A click on the top bar shows that region's values per scan: a box per group, by session.
    const top = await plot(`regions-${measure}`).locator('.barlayer .point').last().boundingBox();
    await page.mouse.click(top!.x + top!.width / 2, top!.y + top!.height / 2);
    const values = page.getByTestId('region-values').locator('.plot');
    await values.locator('.main-svg').first().waitFor({ timeout: 30_000 });
    expect(await values.locator('.boxlayer .trace').count()).toBe(sample.groups.length);
    const sessions = await values.locator('.xtick text').allTextContents();
    expect(sessions.sort()).toEqual(sample.sessions.map((x) => x.replace(/^ses-/, '')).sort());
    await drawn(`regions-${measure}-axial`);
    await drawn(`regions-${measure}-sagittal`);
    expect(await noCloudControls()).toBeGreaterThan(0);
    await shot('4-regions');
  });

  it('opens a subject, selects an interval and draws its cycle', async () => {
    await tab('Subject');
    // A scan's id is participant and session (BIDS): sub-02's ses-pre scan.
    const scan = sample.scans.find((x) => x.participant === 'sub-02' && x.session === 'ses-pre');
    expect(scan).toBeDefined();
    const scanId = `${scan!.participant}_${scan!.session}`;
    await page.locator('select[name=subject]').selectOption(scanId);
    await drawn('barcode');
    await drawn('persistence-diagram');
    await drawn(`matrix-${scanId}`);
    const rows = page.getByTestId('interval-table').locator('tbody tr');
    await rows.nth(2).waitFor();
    const id = (await rows.nth(2).locator('td').first().textContent())?.trim();
    await rows.nth(2).click();
    const heading = page.getByTestId('selected-interval');
    await expect.poll(() => heading.textContent()).toMatch(/Selected: H1 \[.*a cycle through \d+ regions/);
    expect(await rows.nth(2).getAttribute('class')).toContain('selected-row');
    // The selection is shared: the diagram draws a ring around the same interval.
    expect(
      await plot('persistence-diagram').locator('.scatterlayer .trace').last().locator('.point').count(),
    ).toBe(1);
    // The cycle's edges are drawn on both projections.
    // Trace 0 is the outline of the node cloud, 1 the nodes, 2 the cycle's edges.
    const edges = plot('cycle-axial').locator('.scatterlayer .trace').nth(2).locator('path.js-line');
    expect(await edges.count()).toBeGreaterThan(0);
    expect(await edges.first().getAttribute('d')).toMatch(/^M.+L/);
    expect(id).toMatch(/^1:\d+$/);

    // Selecting in the diagram selects in the barcode too: click another H1 point.
    const before = await heading.textContent();
    const h1Points = plot('persistence-diagram').locator('.scatterlayer .trace').nth(2).locator('.point');
    const box = await h1Points.first().boundingBox();
    expect(box).not.toBeNull();
    await page.mouse.move(box!.x + box!.width / 2, box!.y + box!.height / 2);
    await page.mouse.down();
    await page.mouse.up();
    await expect.poll(() => heading.textContent()).not.toBe(before);
    expect(await heading.textContent()).toMatch(/Selected: H1 \[/);
    const bar = plot('barcode').locator('.scatterlayer .trace').last().locator('path.js-line');
    expect(await bar.count()).toBe(1);
    expect(await noCloudControls()).toBeGreaterThan(0);
    await shot('5-subject');
  });

  it('exports the tables to the output folder and a table and figures as downloads, with provenance', async () => {
    await tab('Export');
    const target = join(app.outDir, 'first-export');
    await page.locator('input[name=out-dir]').fill(target);
    await page.getByRole('button', { name: 'Export tables' }).click();
    await page.getByTestId('export-files').waitFor({ timeout: 60_000 });
    const written = readdirSync(target);
    expect(written).toContain('provenance.json');
    const provenance = JSON.parse(readFileSync(join(target, 'provenance.json'), 'utf8'));
    expect(provenance.tool).toBe('loopwise');
    expect(Object.keys(provenance.inputHashes)).toHaveLength(sample.scans.length);
    await shot('6-export');

    // A second export to the same folder is refused in the app's words (no CLI flag), with an
    // explicit choice to replace: nothing is overwritten without it.
    await page.getByRole('button', { name: 'Export tables' }).click();
    const refusal = page.getByTestId('export-message');
    await expect.poll(() => refusal.textContent()).toMatch(/earlier Loopwise run\. Replace them/);
    expect(await refusal.textContent()).not.toMatch(/--force|HTTP/);
    await refusal.getByRole('button', { name: 'Replace the earlier files in this folder' }).click();
    await page.getByTestId('export-done').waitFor({ timeout: 60_000 });
    expect(readdirSync(target)).toContain('stats.tsv');
    await shot('6b-export-replaced');

    // One click saves the table and its provenance sidecar.
    const saved = new Map<string, string>();
    const bothSaved = new Promise<void>((ok) => {
      const onDownload = async (d: import('playwright-core').Download) => {
        saved.set(d.suggestedFilename(), await d.path());
        if (saved.size === 2) {
          page.off('download', onDownload);
          ok();
        }
      };
      page.on('download', onDownload);
    });
    await page.locator('button[data-table=features]').click();
    await bothSaved;
    const tsv = saved.get('features.tsv')!;
    const sidecar = saved.get('features.provenance.json')!;
    const lines = readFileSync(tsv, 'utf8').trimEnd().split('\n');
    expect(lines).toHaveLength(sample.scans.length + 1);
    expect(lines[0].split('\t').slice(0, 2)).toEqual(['participant_id', 'session']);
    expect(JSON.parse(readFileSync(sidecar, 'utf8')).tool).toBe('loopwise');

    await tab('Groups');
    await drawn('curve-betti1');
    const svgButton = plot('curve-betti1').getByRole('button', { name: 'SVG' });
    const [svgDownload] = await Promise.all([page.waitForEvent('download'), svgButton.click()]);
    expect(svgDownload.suggestedFilename()).toBe('curve-betti1.svg');
    const svg = readFileSync(await svgDownload.path(), 'utf8');
    expect(svg).toMatch(/^<svg/);
    expect(svg).toContain('<metadata id="loopwise:provenance">');

    const pngButton = plot('curve-betti1').getByRole('button', { name: 'PNG' });
    const [pngDownload] = await Promise.all([page.waitForEvent('download'), pngButton.click()]);
    const chunks = pngChunks(readFileSync(await pngDownload.path()));
    expect(chunks[0][0]).toBe('IHDR');
    const itxt = chunks.find(([t]) => t === 'iTXt');
    expect(itxt?.[1].toString('utf8')).toMatch(/^loopwise:provenance\0\0\0\0\0\{"tool":"loopwise"/);
    expect(chunks.at(-1)?.[0]).toBe('IEND');
  });

  it('compares two subjects picked on the subject map, a subject against its group mean, and shows each group’s mean-matrix filtration', async () => {
    const exported = join(app.outDir, 'first-export');
    const rowsOf = (file: string) => {
      const [head, ...rows] = readFileSync(join(exported, file), 'utf8')
        .trimEnd()
        .split('\n')
        .map((l) => l.split('\t'));
      return rows.map((r) => Object.fromEntries(head.map((h, i) => [h, r[i]])));
    };
    const num = (v: string) => (v === 'inf' ? null : Number(v));
    await tab('Compare');
    await drawn('subject-map-mds');
    // Two clicks on the subject map fill A, then B, and compare them.
    const points = plot('subject-map-mds').locator('.scatterlayer .trace .point');
    // The mouse clicks at viewport positions: the map must be in view (the views' help text and
    // notices push it down).
    await plot('subject-map-mds').scrollIntoViewIfNeeded();
    for (const k of [0, 5]) {
      const box = await points.nth(k).boundingBox();
      expect(box).not.toBeNull();
      await page.mouse.click(box!.x + box!.width / 2, box!.y + box!.height / 2);
    }
    const distance = page.getByTestId('compare-distance');
    await distance.waitFor({ timeout: 30_000 });
    await drawn('compare-diagrams');
    await drawn('compare-barcodes');
    const [a, b] = [
      (await page.locator('select[name=compare-a]').inputValue()).replace(/^scan:/, ''),
      (await page.locator('select[name=compare-b]').inputValue()).replace(/^scan:/, ''),
    ];
    expect(a).not.toBe(b);
    // The distance shown is the engine's own W2 (48 scans ≤ 60: the whole-diagram tests' exact
    // W2) on the two scans' diagrams as intervals.tsv holds them; the engine's distance is
    // checked against GUDHI and scipy in test/engine/stats.
    expect(await distance.textContent()).toMatch(/2-Wasserstein distance/);
    const intervals = rowsOf('intervals.tsv');
    const diagramOf = (scan: string, dim: number) =>
      intervals
        .filter((r) => `${r.participant_id}_ses-${r.session}` === scan && r.dimension === String(dim))
        .map((r) => [Number(r.birth), num(r.death)] as [number, number | null]);
    for (const dim of [0, 1]) {
      const shown = Number(await distance.locator(`[data-dimension="${dim}"]`).getAttribute('data-value'));
      const want = diagramDistance(finiteDiagram(diagramOf(a, dim)), finiteDiagram(diagramOf(b, dim)), {
        kind: 'wasserstein',
        p: 2,
      });
      expect(shown).toBeCloseTo(want, 9);
    }
    await expect.poll(() => page.getByTestId('compare-link').textContent()).toMatch(/cycle|regions/);
    await shot('7-compare');

    // A against its own group's mean matrix: B becomes the group, and A's percentile ranks appear.
    await page.getByRole('button', { name: 'A against its group mean' }).click();
    await expect.poll(() => distance.textContent()).toMatch(/mean of \d+ scans/);
    await page.getByTestId('compare-positions').locator('tbody tr').first().waitFor();
    expect(await page.getByText('not a clinical norm').count()).toBeGreaterThan(0);
    await shot('8-compare-group');

    // Groups: each group's mean-matrix diagram is group-intervals.tsv.
    await tab('Groups');
    const groupRows = rowsOf('group-intervals.tsv');
    for (const g of sample.groups) {
      await drawn(`group-diagram-${g}`);
      const drawnPoints = await plot(`group-diagram-${g}`)
        .locator('.canvas')
        .evaluate((el) =>
          (el as unknown as { data: Array<{ name?: string; x: number[]; y: number[] }> }).data
            .filter((t) => t.name === 'H1')
            .flatMap((t) => t.x.map((x, i) => [x, t.y[i]])),
        );
      const want = groupRows
        .filter((r) => r.group === g && r.dimension === '1')
        .map((r) => [Number(r.birth), Number(r.death)]);
      expect(drawnPoints).toHaveLength(want.length);
      drawnPoints.forEach(([x, y], i) => {
        expect(x).toBeCloseTo(want[i][0], 12);
        expect(y).toBeCloseTo(want[i][1], 12);
      });
    }
    await page.getByTestId('group-distances').waitFor();
    await shot('9-group-filtrations');
  });

  it('after an export, the run panel shows the run as it ended and the next run starts', async () => {
    await tab('Analysis');
    // Not "Running statistics 18 / 19": the export's progress is the export's.
    expect(await page.getByRole('progressbar').getAttribute('aria-valuenow')).toBe('100');
    expect(await page.getByTestId('run-progress').textContent()).toMatch(/Done/);
    expect(await page.getByRole('button', { name: 'Run analysis' }).isDisabled()).toBe(false);
    const before = (await page.getByTestId('run-summary').textContent()) ?? '';
    const previous = /(run-\d+)/.exec(before)?.[1];
    const text = await runAnalysis();
    expect(text).not.toContain(previous!);
    // The previous results are not thrown away in silence.
    expect(await page.getByTestId('notice').textContent()).toContain(`results of ${previous} stay listed`);
  });

  it('lists earlier runs and reopens one with its results', async () => {
    await tab('Analysis');
    const runs = page.getByTestId('runs');
    const listed = await runs.locator('tbody tr').count();
    expect(listed).toBeGreaterThanOrEqual(3);
    await runs.getByRole('button', { name: 'Open run-1', exact: true }).click();
    // A finished run opens on its results (Groups); the run panel then names it.
    await expect.poll(() => page.locator('nav button.active').textContent()).toBe('Groups');
    await drawn('curve-betti1');
    await tab('Analysis');
    await expect.poll(() => page.getByTestId('run-summary').textContent()).toMatch(/^run-1 · Run done/);
    await shot('11-runs');
  });

  it('a reload mid-run reattaches to the run with its progress, and keeps the choices', async () => {
    await tab('Analysis');
    // Another transform: every filtration is computed again, so the run lasts a while.
    await page.locator('select[name=transform]').selectOption('sqrt');
    await page.locator('input[name=permutations]').fill('1999');
    await page.locator('input[name=permutations]').dispatchEvent('change');
    await page.getByRole('button', { name: 'Run analysis' }).click();
    await page.getByTestId('run-progress').waitFor();
    await expect.poll(() => page.getByTestId('run-progress').textContent()).toMatch(/Computing/);
    const runId = (await page.getByTestId('runs').locator('tr.current td').first().textContent())?.trim();
    expect(runId).toMatch(/^run-\d+$/);
    const state = async () => {
      const res = await page.evaluate(
        async () =>
          (
            await fetch('/api/listRuns', {
              method: 'POST',
              headers: { 'content-type': 'application/json' },
              body: '[]',
            })
          ).json() as Promise<Array<{ runId: string; status: string }>>,
      );
      return res.find((r) => r.runId === runId)?.status;
    };
    expect(await state()).toBe('running');
    await page.reload();
    // The same run, with its progress, not an empty start screen; the form keeps the choices.
    await page.getByTestId('run-progress').waitFor();
    expect(await page.getByTestId('runs').locator('tr.current td').first().textContent()).toBe(runId);
    expect(await page.locator('select[name=transform]').inputValue()).toBe('sqrt');
    expect(await page.locator('input[name=permutations]').inputValue()).toBe('1999');
    await shot('12-reattached');
    const summary = page.getByTestId('run-summary');
    await summary.waitFor({ timeout: 170_000 });
    expect(await summary.textContent()).toMatch(new RegExp(`^${runId} · Run done`));
  });

  it('shows a malformed cohort’s findings and still runs its good subjects', async () => {
    await tab('Study');
    await page.locator('input[name=cohort-dir]').fill(messyCohort);
    await page.getByRole('button', { name: 'Open', exact: true }).click();
    await page.getByTestId('qc-report').waitFor();
    expect(await page.getByTestId('qc-report').locator('tr.error-row').count()).toBeGreaterThan(0);
    const summary = (await page.getByTestId('cohort-summary').textContent()) ?? '';
    const usable = Number(/(\d+)\s*usable/.exec(summary)?.[1]);
    expect(usable).toBeGreaterThan(0);
    await page.locator('select[name=qc-severity]').selectOption('error');
    await shot('7-messy-study');
    // Too few good subjects per group for a comparison: the run is held back with the reason…
    await tab('Analysis');
    await page.getByText(/Group training of group has fewer than 2 usable subjects/).waitFor();
    expect(await page.getByRole('button', { name: 'Run analysis' }).isDisabled()).toBe(true);
    // …and the good subjects are analysed without one.
    await tab('Study');
    await page.locator('select[name=group-column]').selectOption('');
    const text = await runAnalysis();
    const computed = Number(/(\d+) computed/.exec(text)?.[1]);
    expect(computed).toBeGreaterThan(0);
    expect(computed).toBeLessThanOrEqual(usable);
    await shot('8-messy-run');
  });

  it('refuses a folder outside the ones this session may use', async () => {
    await tab('Study');
    await page.locator('input[name=cohort-dir]').fill('/etc');
    await page.getByRole('button', { name: 'Open', exact: true }).click();
    await expect.poll(() => page.getByRole('alert').textContent()).toMatch(/outside the folders/);
  });

  it('logged no errors in the page', () => {
    // The two refusals the tests provoke are expected: a folder outside the session's (403) and
    // an export over earlier results (409). A reload mid-run may cut the event stream.
    expect(browser.errors.filter((e) => !/(HTTP|status of) (403|409)/.test(e))).toEqual([]);
  });
});
