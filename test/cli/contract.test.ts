/**
 * The options contract itself: every option it lists is documented (README, the CLI's help), and
 * its checks of the design options and the cohort's columns say what is wrong in the words the
 * user typed.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { ColumnInfo } from '../../electron/api.ts';
import { ANALYZE_HELP } from '../../electron/cli/analyze.ts';
import { VALIDATE_HELP } from '../../electron/cli/validate.ts';
import {
  OPTIONS,
  defaultStatsSettings,
  formulaColumns,
  validateStatsColumns,
  validateStatsSettings,
} from '../../electron/contract.ts';

const README = readFileSync(new URL('../../README.md', import.meta.url), 'utf8');

describe('the options contract', () => {
  it('every option is documented in README and in analyze --help', () => {
    const flags = OPTIONS.flatMap((o) => (o.option ?? '').split(' / ')).filter((f) => f.startsWith('--'));
    expect(flags.length).toBeGreaterThan(25);
    for (const flag of flags) {
      expect(README, flag).toContain(`\`${flag}`);
      expect(ANALYZE_HELP, flag).toContain(flag);
    }
    for (const o of OPTIONS.filter((x) => x.field.startsWith('cohort.')))
      for (const flag of (o.option ?? '').split(' / ')) expect(VALIDATE_HELP, flag).toContain(flag);
  });

  it('reads the columns of a Wilkinson–Rogers formula', () => {
    expect(formulaColumns('group*session + age')).toEqual(['group', 'session', 'age']);
    expect(formulaColumns('group:session')).toEqual(['group', 'session']);
    expect(formulaColumns('age + group:site')).toEqual(['age', 'group', 'site']);
    expect(formulaColumns('log(age)')).toEqual([]);
  });

  it('checks how the design options go together', () => {
    const stats = (patch: object) => ({ ...defaultStatsSettings(), ...patch });
    const fields = (patch: object) =>
      validateStatsSettings(stats(patch)).map((p) => `${p.field}: ${p.message}`);
    expect(fields({ model: 'group*session', test: 'group:session', blocks: 'participant_id' })).toEqual([]);
    expect(fields({ effect: 'age', covariates: ['sex', 'fd_mean'] })).toEqual([]);
    // The statistics engine's own parser reads the formula (electron/engine/stats/formula.ts).
    expect(fields({ model: 'group session' })).toEqual([
      "stats.model: model 'group session': expected an operator but found 'session'",
    ]);
    expect(fields({ model: 'group + log(age)' })[0]).toMatch(/^stats\.model: unsupported token 'log\(age\)'/);
    expect(fields({ model: '(group + site)*age' })[0]).toMatch(/^stats\.model: unsupported token/);
    expect(fields({ model: 'group +' })).toEqual(["stats.model: model 'group +' ends with '+'"]);
    expect(fields({ model: ' ' })).toEqual([
      "stats.model: is empty: give a formula such as 'group*session + age'",
    ]);
    expect(fields({ model: 'group*session', test: 'session:group' })).toEqual([]);
    expect(fields({ model: 'group*session', test: 'group:site' })).toEqual([
      "stats.test: 'group:site' is not a term of the model 'group*session' (its terms: group, session, group:session)",
    ]);
    expect(fields({ model: 'group + session', test: 'group:session' })).toEqual([
      "stats.test: 'group:session' is not a term of the model 'group + session' (its terms: group, session)",
    ]);
    expect(fields({ reference: 'control' })).toEqual([
      'stats.reference: applies only with --group, --effect or --model',
    ]);
    expect(fields({ blocks: 'participant_id' })).toEqual([
      'stats.blocks: applies only with --group, --effect or --model',
    ]);
    expect(fields({ groupColumn: 'group', covariates: ['age', 'group', 'age'] })).toEqual([
      "stats.covariates: names 'age' twice",
      "stats.covariates: holds 'group', the effect itself (--group)",
    ]);
    expect(fields({ groupColumn: '' })).toEqual([
      "stats.groupColumn: must be a non-empty name of at most 256 characters, got ''",
    ]);
  });

  it('checks the columns against the cohort, listing those there are', () => {
    const columns: ColumnInfo[] = [
      { name: 'participant_id', kind: 'categorical', levels: ['sub-01', 'sub-02'], missing: 0 },
      { name: 'session', kind: 'categorical', levels: ['pre', 'post'], missing: 0 },
      { name: 'group', kind: 'categorical', levels: ['control', 'patient'], missing: 0 },
      { name: 'age', kind: 'numeric', missing: 1 },
    ];
    const check = (patch: object) =>
      validateStatsColumns({ ...defaultStatsSettings(), ...patch }, columns).map(
        (p) => `${p.option}: ${p.message}`,
      );
    expect(
      check({
        model: 'group*session + age',
        test: 'group:session',
        blocks: 'participant_id',
        reference: 'control',
      }),
    ).toEqual([]);
    const available = 'available: participant_id, session, group, age';
    expect(check({ groupColumn: 'diagnosis' })).toEqual([
      `--group: no column 'diagnosis' in the participants table; ${available}`,
    ]);
    expect(check({ effect: 'group', covariates: ['agee'], blocks: 'subject' })).toEqual([
      `--blocks: no column 'subject' in the participants table; ${available}`,
      `--covariates: no column 'agee' in the participants table; ${available}`,
    ]);
    expect(check({ model: 'group*visit' })).toEqual([
      `--model: no column 'visit' in the participants table; ${available}`,
    ]);
    expect(check({ effect: 'session', reference: 'baseline' })).toEqual([
      "--reference: 'baseline' is not a level of session; its levels: pre, post",
    ]);
    expect(check({ effect: 'age', reference: 'young' })).toEqual([
      '--reference: age is numeric: a reference level applies to a categorical effect',
    ]);
    expect(validateStatsColumns({ ...defaultStatsSettings(), groupColumn: 'group' }, [])[0].message).toMatch(
      /available: none \(no participants table was read\)/,
    );
  });
});
