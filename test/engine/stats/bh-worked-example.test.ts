import { describe, expect, it } from 'vitest';
import { bhQValues } from '../../../electron/engine/stats/multiple.ts';

describe('Benjamini–Hochberg on the 1995 worked example', () => {
  it('rejects exactly the 4 smallest of the 15 p-values at q = 0.05', () => {
    // Benjamini & Hochberg (1995), J R Stat Soc B 57:289–300, section 3.2: 15 p-values from a
    // study of myocardial infarction treatments; the step-up procedure at q = 0.05 rejects four
    // hypotheses (those with p ≤ 0.0095), where Bonferroni rejects three. Values quoted from memory.
    const p = [
      0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.324, 0.4262, 0.5719, 0.6528,
      0.759, 1.0,
    ];
    const q = bhQValues(p);
    const rejected = p.filter((_, i) => q[i] <= 0.05);
    expect(rejected).toEqual([0.0001, 0.0004, 0.0019, 0.0095]);
    expect(p.filter((x) => x <= 0.05 / 15)).toHaveLength(3); // Bonferroni
    // q_(i) = min over j ≥ i of p_(j)·m/j: the 4th is 0.0095·15/4.
    expect(q[3]).toBeCloseTo((0.0095 * 15) / 4, 12);
  });
});
