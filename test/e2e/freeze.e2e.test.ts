/**
 * No freezes: the longest main-thread task while opening or switching each view, on a generated
 * 120-subject × 200-region cohort without a node table, measured in the page by a
 * PerformanceObserver of 'longtask' entries (W3C Long Tasks API: tasks of 50 ms and more).
 *
 * The figures are printed per view. The 200 ms bound (issue 12) is asserted only when
 * LOOPWISE_ASSERT_LONGTASKS=1: on a machine shared with other work a task's duration measures the
 * machine's load as much as the app, so by default the test reports and does not time-gate (the
 * project's rule: no timed assertions in tests). What it always asserts is that every view drew
 * what it shows for this cohort (every region reachable, region names, not numbers).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { writeCohort } from '../service/support.ts';
import { hasChromium, launch, type Browser } from './support/browser.ts';
import { artefacts, startApp, type RunningApp } from './support/app.ts';

const SUBJECTS = 120;
const REGIONS = 200;
/** The issue's bound on any main-thread task when a view opens. */
const BOUND_MS = 200;

let app: RunningApp;
let browser: Browser;
let page: Page;
let cohortDir: string;
const longest: Array<{ step: string; ms: number; tasks: number; chart: string }> = [];

const tab = (name: string) => page.locator('nav').getByRole('button', { name, exact: true }).click();
const plot = (name: string) => page.locator(`.plot[data-figure="${name}"]`);
const drawn = async (name: string) => {
  await plot(name).locator('.main-svg').first().waitFor({ timeout: 60_000 });
};

/** Runs one step and records the longest task that started during it (and until the page is quiet). */
async function measure(step: string, action: () => Promise<void>): Promise<void> {
  const mark = await page.evaluate(() => performance.now());
  await action();
  // Quiet: two animation frames and 400 ms without a new long task.
  await page.evaluate(async () => {
    const w = window as unknown as { __longtasks: Array<{ start: number; duration: number }> };
    let seen = -1;
    while (seen !== w.__longtasks.length) {
      seen = w.__longtasks.length;
      await new Promise((ok) => requestAnimationFrame(() => requestAnimationFrame(ok)));
      await new Promise((ok) => setTimeout(ok, 400));
    }
  });
  const tasks = await page.evaluate(
    (since) =>
      (window as unknown as { __longtasks: Array<{ start: number; duration: number }> }).__longtasks
        .filter((t) => t.start >= since)
        .map((t) => t.duration),
    mark,
  );
  // The slowest chart drawn in the step (user-timing entries of lib/plotly.ts draw()).
  const chart = await page.evaluate(
    (since) =>
      performance
        .getEntriesByType('measure')
        .filter((m) => m.name.startsWith('draw ') && m.startTime >= since)
        .sort((a, b) => b.duration - a.duration)
        .map((m) => `${m.name.slice(5)} ${Math.round(m.duration)} ms`)[0] ?? '',
    mark,
  );
  longest.push({ step, ms: Math.round(Math.max(0, ...tasks)), tasks: tasks.length, chart });
}

describe.skipIf(!hasChromium)('no freezes on a 120 × 200 cohort without a node table', () => {
  beforeAll(async () => {
    cohortDir = mkdtempSync(join(tmpdir(), 'loopwise-freeze-'));
    // Our seeded generator (test/service/support.ts): correlation matrices of random series with
    // a shared component, two groups alternating, no nodes.tsv.
    writeCohort(cohortDir, { subjects: SUBJECTS, n: REGIONS, seed: 12 });
    app = await startApp({ roots: [cohortDir] });
    browser = await launch();
    page = browser.page;
    await page.addInitScript(() => {
      const w = window as unknown as { __longtasks: Array<{ start: number; duration: number }> };
      w.__longtasks = [];
      new PerformanceObserver((list) => {
        for (const e of list.getEntries()) w.__longtasks.push({ start: e.startTime, duration: e.duration });
      }).observe({ type: 'longtask', buffered: true });
    });
  });
  afterAll(async () => {
    await browser?.close();
    await app?.close();
    if (cohortDir) rmSync(cohortDir, { recursive: true, force: true });
    if (longest.length) {
      console.log(`longest main-thread task per step (${SUBJECTS} subjects × ${REGIONS} regions):`);
      for (const l of longest)
        console.log(
          `  ${l.step.padEnd(34)} ${String(l.ms).padStart(6)} ms  (${l.tasks} long tasks)${l.chart ? `; slowest chart: ${l.chart}` : ''}`,
        );
    }
  });

  it('opens the cohort, runs, and opens every view, printing the longest task of each', async () => {
    await page.goto(app.server.url);
    await measure('Study: open the cohort', async () => {
      await page.locator('input[name=cohort-dir]').fill(cohortDir);
      await page.getByRole('button', { name: 'Open', exact: true }).click();
      await page.getByTestId('cohort-summary').waitFor();
    });
    expect(await page.getByTestId('cohort-summary').textContent()).toMatch(
      new RegExp(`${REGIONS}\\s*regions`),
    );

    await tab('Analysis');
    await page.locator('input[name=permutations]').fill('19');
    await page.locator('input[name=permutations]').dispatchEvent('change');
    await measure('Analysis: run to the end', async () => {
      await page.getByRole('button', { name: 'Run analysis' }).click();
      await page.getByTestId('run-summary').waitFor({ timeout: 600_000 });
    });
    expect(await page.getByTestId('run-summary').textContent()).toContain('Run done');

    await measure('Groups: first visit', async () => {
      await tab('Groups');
      await drawn('curve-betti1');
    });
    const featureName = await page.locator('select[name=feature]').inputValue();
    await drawn(`distribution-${featureName}`);

    let measureName = '';
    await measure('Regions: first visit', async () => {
      await tab('Regions');
      measureName = await page.locator('select[name=measure]').inputValue();
      await drawn(`regions-${measureName}`);
    });
    await regionsChecks(measureName);

    await measure('Regions: another measure', async () => {
      const options = await page.locator('select[name=measure] option').allTextContents();
      const next = await page
        .locator('select[name=measure] option')
        .nth(options.length > 1 ? 1 : 0)
        .getAttribute('value');
      await page.locator('select[name=measure]').selectOption(next!);
      await drawn(`regions-${next}`);
    });

    await measure('Subject: first visit', async () => {
      await tab('Subject');
    });
    await measure('Subject: pick a subject', async () => {
      await page.locator('select[name=subject]').selectOption('sub-007');
      await drawn('barcode');
      await drawn('matrix-sub-007');
    });
    await measure('Subject: pick another', async () => {
      await page.locator('select[name=subject]').selectOption('sub-042');
      await drawn('matrix-sub-042');
    });
    await measure('Groups: second visit', async () => {
      await tab('Groups');
      await drawn('curve-betti1');
    });
    await measure('Regions: second visit', async () => {
      await tab('Regions');
      await drawn(`regions-${await page.locator('select[name=measure]').inputValue()}`);
    });
    await measure('Compare: first visit', async () => {
      await tab('Compare');
      await page.locator('select[name=compare-a]').waitFor();
    });
    await measure('Compare: two subjects', async () => {
      await page.locator('select[name=compare-a]').selectOption('scan:sub-003');
      await page.locator('select[name=compare-b]').selectOption('scan:sub-004');
      await page.getByRole('region').getByRole('button', { name: 'Compare', exact: true }).click();
      await page.getByTestId('compare-distance').waitFor({ timeout: 60_000 });
      await drawn('compare-diagrams');
      await drawn('compare-barcodes');
    });
    // Both sides' distances are shown, one per dimension.
    expect(await page.getByTestId('compare-distance').locator('[data-dimension]').count()).toBe(2);
    await measure('Compare: subject against its group mean', async () => {
      await page.getByRole('button', { name: 'A against its group mean' }).click();
      await expect
        .poll(() => page.getByTestId('compare-distance').textContent())
        .toMatch(/mean of \d+ scans/);
      await page.getByTestId('compare-positions').locator('tbody tr').first().waitFor();
    });
    await measure('Compare: another node measure', async () => {
      await page.locator('select[name=compare-measure]').selectOption('h0_join_value');
      await drawn('compare-nodes-h0_join_value');
    });
    await measure('Export: first visit', async () => {
      await tab('Export');
      await page.getByRole('heading', { name: 'All tables of the run' }).waitFor();
    });
    await measure('Study: back', async () => {
      await tab('Study');
      await page.getByTestId('cohort-summary').waitFor();
    });
    await page.screenshot({ path: join(artefacts, 'freeze-study.png'), fullPage: true });

    if (process.env.LOOPWISE_ASSERT_LONGTASKS === '1')
      for (const l of longest.filter((x) => !x.step.startsWith('Analysis')))
        expect(l.ms, `${l.step}: longest task`).toBeLessThanOrEqual(BOUND_MS);
  });
});

/**
 * What the Regions view must show for a cohort without a node table: bars named "region k" on a
 * category axis (never a number line), the count of every region, every page reachable, and a
 * click on a bar showing that region's values per scan by group.
 */
async function regionsChecks(measure: string): Promise<void> {
  const chart = plot(`regions-${measure}`);
  const names = await chart.locator('.ytick text').allTextContents();
  expect(names.length).toBeGreaterThan(0);
  for (const n of names) expect(n).toMatch(/^region \d+( \*)?$/);
  const count = page.getByTestId('region-count');
  expect(await count.textContent()).toMatch(new RegExp(`^Ranks 1–50 of ${REGIONS} regions`));
  // The last page holds the last ranks: every region is reachable.
  for (let k = 1; k < REGIONS / 50; k++) await page.getByRole('button', { name: 'Next' }).click();
  await expect
    .poll(() => count.textContent())
    .toMatch(new RegExp(`^Ranks ${REGIONS - 49}–${REGIONS} of ${REGIONS}`));
  expect(await page.getByRole('button', { name: 'Next' }).isDisabled()).toBe(true);
  await page.getByRole('button', { name: 'Previous' }).click();
  // A click on the top bar shows its values per scan, one box per group.
  const bar = chart.locator('.barlayer .point').last();
  const box = await bar.boundingBox();
  expect(box).not.toBeNull();
  await page.mouse.click(box!.x + box!.width / 2, box!.y + box!.height / 2);
  const values = page.getByTestId('region-values').locator('.plot');
  await values.locator('.main-svg').first().waitFor({ timeout: 30_000 });
  expect(await values.getAttribute('data-figure')).toMatch(new RegExp(`^region-${measure}-\\d+$`));
  expect(await values.locator('.boxlayer .trace').count()).toBe(2);
  await page.screenshot({ path: join(artefacts, 'freeze-regions.png'), fullPage: true });
}
