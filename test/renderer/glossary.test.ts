/**
 * Every column the service can write has a human name and a one-line explanation in the app:
 * the lists come from the modules that write the tables (engine/features/columns.ts,
 * engine/stats/tables.ts), so a new column without a glossary entry fails here.
 */
import { describe, expect, it } from 'vitest';
import {
  FEATURE_COLUMNS,
  NODE_MEASURES,
  featureColumnNames,
} from '../../electron/engine/features/columns.ts';
import { DIAGRAM_TEST_COLUMNS, STATS_COLUMNS } from '../../electron/engine/stats/tables.ts';
import {
  DIAGRAM_TEST_TERMS,
  EFFECT_KIND_TERMS,
  FEATURE_TERMS,
  NODE_TERMS,
  STATS_TERMS,
  label,
  term,
  tooltip,
} from '../../renderer/src/lib/glossary.ts';

const oneLine = (t: { name: string; explain: string } | null) => {
  expect(t).not.toBeNull();
  expect(t!.name.length).toBeGreaterThan(0);
  expect(t!.explain.length).toBeGreaterThan(10);
  expect(t!.explain).not.toContain('\n');
};

describe('the glossary', () => {
  it('has an entry for every feature and node measure pattern of columns.ts, and no other', () => {
    expect(Object.keys(FEATURE_TERMS).sort()).toEqual(FEATURE_COLUMNS.map((c) => c.pattern).sort());
    expect(Object.keys(NODE_TERMS).sort()).toEqual(NODE_MEASURES.map((c) => c.pattern).sort());
  });

  it('names every concrete feature column the service writes, up to H2 and 5 landscape levels', () => {
    const names = featureColumnNames(2, 5);
    for (const c of names) oneLine(term(c));
    // The dimension and level are filled in, never left as placeholders.
    for (const c of names) expect(label(c)).not.toMatch(/\{[dk]\}/);
    expect(label('h1_count')).toBe('H1 intervals');
    expect(label('landscape2_5_l2')).toBe('H2 landscape 5, L² norm');
    expect(label('betti0_area')).toBe('Betti-0 curve area');
  });

  it('names every column of stats.tsv and diagram-tests.tsv, and every effect-size kind', () => {
    expect(Object.keys(STATS_TERMS).sort()).toEqual([...STATS_COLUMNS].sort());
    expect(Object.keys(DIAGRAM_TEST_TERMS).sort()).toEqual([...DIAGRAM_TEST_COLUMNS].sort());
    for (const c of [...STATS_COLUMNS, ...DIAGRAM_TEST_COLUMNS]) oneLine(term(c));
    // effect_kind's values: the family's kinds with '-' written as '_' (stats/tables.ts).
    for (const k of ['adjusted-d', 'd-z', 'partial-r', 'partial-eta-squared'])
      oneLine(EFFECT_KIND_TERMS[k.replace(/-/g, '_')]);
    expect(label('p_fwer')).toBe('p (FWER-corrected)');
    expect(label('q_fdr')).toBe('q (FDR)');
  });

  it('leaves names it does not know as they are, and keeps the file column in the tooltip', () => {
    expect(term('participant_id')).toBeNull();
    expect(label('participant_id')).toBe('participant_id');
    expect(term('h1_countx')).toBeNull();
    expect(term('constructor')).toBeNull();
    expect(tooltip('q_fdr')).toMatch(/^q \(FDR\): Benjamini–Hochberg .*\(column q_fdr\)$/);
  });
});
