// Benjamini–Hochberg q-values vs statsmodels multipletests(method='fdr_bh') and R p.adjust('BH').
import { describe, expect, it } from 'vitest';
import { bhQValues } from '../../../electron/engine/stats/multiple.ts';
import { golden } from './golden.ts';

const py = golden<{ cases: Array<{ p: number[]; q: number[] }> }>('bh.json');
const r = golden<{ bh: number[][] }>('glm_r.json');

describe('Benjamini–Hochberg q-values', () => {
  it('match statsmodels fdr_bh (including ties and a family of one)', () => {
    for (const c of py.cases) bhQValues(c.p).forEach((q, i) => expect(q).toBeCloseTo(c.q[i], 14));
  });
  it('match R p.adjust(method = "BH")', () => {
    py.cases.forEach((c, k) => bhQValues(c.p).forEach((q, i) => expect(q).toBeCloseTo(r.bh[k][i], 14)));
  });
  it('leave missing p-values out of the count', () => {
    const q = bhQValues([0.01, NaN, 0.02]);
    expect(Number.isNaN(q[1])).toBe(true);
    // m = 2: q = [min(0.02, 0.02), 0.02]
    expect(q[0]).toBeCloseTo(0.02, 15);
    expect(q[2]).toBeCloseTo(0.02, 15);
  });
});
