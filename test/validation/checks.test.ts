// Verdict logic of the calibration checks; the interval itself is checked against statsmodels in binomial.test.ts.
import { describe, expect, it } from 'vitest';
import { checkTable, verdict } from './checks.ts';

describe('calibration verdicts', () => {
  it('an exact test passes when α lies in the band and fails on either side', () => {
    expect(verdict({ k: 50, n: 1000 }, 'equal', 0.05, 0.95)).toBe('PASS');
    expect(verdict({ k: 80, n: 1000 }, 'equal', 0.05, 0.95)).toBe('FAIL'); // too liberal
    expect(verdict({ k: 25, n: 1000 }, 'equal', 0.05, 0.95)).toBe('FAIL'); // too conservative
  });
  it('an at-most test only fails when liberal', () => {
    expect(verdict({ k: 0, n: 1000 }, 'at-most', 0.05, 0.95)).toBe('PASS');
    expect(verdict({ k: 80, n: 1000 }, 'at-most', 0.05, 0.95)).toBe('FAIL');
  });
  it('a deliberately wrong analysis must be caught', () => {
    expect(verdict({ k: 60, n: 1000 }, 'above', 0.05, 0.95)).toBe('FAIL');
    expect(verdict({ k: 200, n: 1000 }, 'above', 0.05, 0.95)).toBe('PASS');
  });
  it('the table uses the Bonferroni-adjusted level over its checks', () => {
    // 3.7% of 2000 lies below the 95% band around 5% but inside the 99.5% band of 10 checks.
    const c = { setting: 's', measure: 'm', rate: { k: 74, n: 2000 }, expect: 'equal' as const };
    expect(verdict(c.rate, 'equal', 0.05, 0.95)).toBe('FAIL');
    const { allPass, lines } = checkTable(
      Array.from({ length: 10 }, () => c),
      0.05,
    );
    expect(allPass).toBe(true);
    expect(lines[0]).toContain('99.50% CP band');
  });
});
