/**
 * report.html, read back as a user's browser would (parsed by jsdom): its counts and listed rows
 * are those of the run's own stats.tsv and diagram-tests.tsv (read with papaparse), the methods
 * name the design, permutations and seed the run used, it names the scans left out with the
 * reason, and it is self-contained (no script, no external resource). The cohort is the planted
 * session effect of planted-designs.ts (the SESSION_REGIONS bridge in every ses-post scan), so
 * some rows are significant.
 */
import { appendFileSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { JSDOM } from 'jsdom';
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createLoopwiseService } from '../../electron/service/service.ts';
import { defaultAnalysisSettings, defaultStatsSettings } from '../../electron/service/settings.ts';
import { writeSessionCohort } from './planted-designs.ts';

let root: string;
let out: string;
const service = createLoopwiseService();

beforeAll(async () => {
  root = mkdtempSync(join(tmpdir(), 'loopwise-report-'));
  const cohort = join(root, 'cohort');
  writeSessionCohort(cohort, { participants: 10, seed: 3, planted: true });
  // One unreadable scan: the report must name it among the scans left out.
  appendFileSync(
    join(cohort, 'sub-04', 'ses-post', 'func', 'sub-04_ses-post_task-rest_desc-corr_relmat.tsv'),
    'x\ty\n',
  );
  out = join(root, 'out');
  const { runId } = await service.startRun({
    cohort: { dir: cohort },
    settings: defaultAnalysisSettings(),
    stats: {
      ...defaultStatsSettings(),
      model: 'session + age',
      test: 'session',
      blocks: 'participant_id',
      permutations: 499,
      seed: 17,
    },
    outDir: out,
    workers: 2,
  });
  const summary = await service.waitForRun(runId);
  expect(summary.files).toContain('report.html');
}, 300_000);
afterAll(async () => {
  await service.close();
  rmSync(root, { recursive: true, force: true });
});

const table = (name: string) =>
  Papa.parse<Record<string, string>>(readFileSync(join(out, name), 'utf8').trimEnd(), {
    header: true,
    delimiter: '\t',
  }).data;

describe('report.html', () => {
  it('counts and lists what stats.tsv holds, family by family', () => {
    const html = readFileSync(join(out, 'report.html'), 'utf8');
    const doc = new JSDOM(html).window.document;
    const stats = table('stats.tsv');
    const counts = [...doc.querySelectorAll('#family-counts tbody tr')].map((tr) =>
      [...tr.querySelectorAll('td')].map((td) => td.textContent),
    );
    const families = [...new Set(stats.map((r) => r.family))];
    expect(counts.map((r) => r[0])).toEqual(families);
    for (const [family, tests, fwer, fdr] of counts) {
      const rows = stats.filter((r) => r.family === family);
      expect(Number(tests)).toBe(rows.length);
      expect(Number(fwer)).toBe(rows.filter((r) => r.p_fwer !== 'NA' && Number(r.p_fwer) <= 0.05).length);
      expect(Number(fdr)).toBe(rows.filter((r) => r.q_fdr !== 'NA' && Number(r.q_fdr) <= 0.05).length);
    }
    const significant = stats.filter(
      (r) => r.family === 'features' && r.p_fwer !== 'NA' && Number(r.p_fwer) <= 0.05,
    );
    const listed = [...doc.querySelectorAll('#significant-features tbody tr')].map(
      (tr) => tr.querySelector('td')?.textContent,
    );
    // The planted session effect makes some scalar features significant; the report lists exactly those.
    expect(significant.length).toBeGreaterThan(0);
    expect(listed).toEqual(significant.map((r) => r.feature));
    // Whole-diagram tests: the rows of diagram-tests.tsv, column by column.
    const tests = table('diagram-tests.tsv');
    const shown = [...doc.querySelectorAll('#diagram-tests tbody tr')].map((tr) =>
      [...tr.querySelectorAll('td')].map((td) => td.textContent),
    );
    const head = [...doc.querySelectorAll('#diagram-tests thead th')].map((th) => th.textContent ?? '');
    expect(shown).toHaveLength(tests.length);
    tests.forEach((row, i) => {
      expect(shown[i][head.indexOf('family')]).toBe(row.family);
      expect(shown[i][head.indexOf('test')]).toBe(row.test);
      expect(Number(shown[i][head.indexOf('p')])).toBeCloseTo(Number(row.p), 3);
    });
  });

  it('states the design, permutations and seed used, names the scan left out, and cites its methods', () => {
    const doc = new JSDOM(readFileSync(join(out, 'report.html'), 'utf8')).window.document;
    const text = doc.body.textContent ?? '';
    expect(text).toMatch(/the model session \+ age .*testing the term session/);
    expect(text).toMatch(/499 permutations/);
    expect(text).toMatch(/seed 17/);
    expect(text).toMatch(/exchangeability blocks defined by participant_id/);
    expect(text).toMatch(/Winkler AM, Webster MA/);
    expect(text).toMatch(
      /19 of 20 scans were analysed \(10 participants, sessions ses-post, ses-pre|19 of 20 scans were analysed \(10 participants, sessions ses-pre, ses-post/,
    );
    expect(text).toMatch(/sub-04_ses-post: .*relmat\.tsv/);
    expect(text).toMatch(/not a diagnostic device/);
    expect(text).toMatch(/without a node table/);
  });

  it('is self-contained: no script, no external resource', () => {
    const html = readFileSync(join(out, 'report.html'), 'utf8');
    const doc = new JSDOM(html).window.document;
    expect(doc.querySelectorAll('script, link, img, iframe, object').length).toBe(0);
    expect(html).not.toMatch(/\b(src|href)\s*=/i);
    expect(doc.querySelector('meta[charset]')?.getAttribute('charset')).toBe('utf-8');
  });
});
