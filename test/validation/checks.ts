/**
 * Calibration checks: a rejection rate counted over independent cohorts, what it should be, and
 * the verdict from its Clopper–Pearson interval (binomial.ts).
 *
 * Several checks run together, so a correct implementation would fail one of k checks at the 95%
 * level with probability up to about k · 5%. The verdict therefore uses the Bonferroni-adjusted
 * level 1 − 0.05/k for every check (Bonferroni inequality; common practice), so that a correct
 * implementation fails the whole run with probability at most 5%; the plain 95% interval is
 * printed beside it.
 *
 *   verdict({ k: 52, n: 1000 }, 'equal', 0.05, 0.99)  // 'PASS': 0.05 lies in [0.035, 0.073]
 */
import { clopperPearson } from './binomial.ts';

export interface Rate {
  /** Cohorts with a rejection. */
  k: number;
  /** Cohorts. */
  n: number;
}

/**
 * 'equal': an exact test, the rate should be α (two-sided check);
 * 'at-most': a test guaranteed only not to exceed α, e.g. BH under dependence or a discrete statistic;
 * 'above': a deliberately wrong analysis that the check must catch (the rate must exceed α).
 */
export type Expectation = 'equal' | 'at-most' | 'above';

export interface Check {
  setting: string;
  measure: string;
  rate: Rate;
  expect: Expectation;
}

export type Verdict = 'PASS' | 'FAIL';

/** PASS when the level-`level` Clopper–Pearson interval of the rate is compatible with the expectation. */
export function verdict(rate: Rate, expect: Expectation, alpha: number, level: number): Verdict {
  const [low, high] = clopperPearson(rate.k, rate.n, level);
  if (expect === 'equal') return low <= alpha && alpha <= high ? 'PASS' : 'FAIL';
  if (expect === 'at-most') return low <= alpha ? 'PASS' : 'FAIL';
  return low > alpha ? 'PASS' : 'FAIL';
}

const pct = (x: number): string => `${(100 * x).toFixed(2)}%`;
const band = ([a, b]: [number, number]): string => `[${pct(a)}, ${pct(b)}]`;
const EXPECT_TEXT: Record<Expectation, string> = {
  equal: '= α',
  'at-most': '≤ α',
  above: '> α (must be caught)',
};

/** The report table of the checks, and whether all passed. */
export function checkTable(checks: Check[], alpha: number): { lines: string[]; allPass: boolean } {
  const adjusted = 1 - 0.05 / Math.max(1, checks.length);
  const header = [
    'setting',
    'measure',
    'rate',
    'k/n',
    '95% CP band',
    `${(100 * adjusted).toFixed(2)}% CP band`,
    'expected',
    'verdict',
  ];
  const rows = checks.map((c) => {
    const v = verdict(c.rate, c.expect, alpha, adjusted);
    return [
      c.setting,
      c.measure,
      pct(c.rate.k / c.rate.n),
      `${c.rate.k}/${c.rate.n}`,
      band(clopperPearson(c.rate.k, c.rate.n, 0.95)),
      band(clopperPearson(c.rate.k, c.rate.n, adjusted)),
      EXPECT_TEXT[c.expect],
      v,
    ];
  });
  const allPass = rows.every((r) => r[7] === 'PASS');
  return { lines: formatTable(header, rows), allPass };
}

/** Left-aligned columns separated by two spaces. */
export function formatTable(header: string[], rows: string[][]): string[] {
  const widths = header.map((h, j) => Math.max(h.length, ...rows.map((r) => r[j].length)));
  const line = (r: string[]) =>
    r
      .map((x, j) => x.padEnd(widths[j]))
      .join('  ')
      .trimEnd();
  return [line(header), line(widths.map((w) => '-'.repeat(w))), ...rows.map(line)];
}

export { pct };
