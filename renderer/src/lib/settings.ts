/**
 * The Analysis and Study views' logic: which choices go together and what the form may send. Every
 * vocabulary and check comes from the contract (electron/contract.ts), the one the service and the
 * other doors use; here are only the form's own extra checks against the open cohort.
 */
import type {
  AnalysisSettings,
  CohortReport,
  OpenCohortRequest,
  StatsSettings,
} from '../../../electron/api.ts';
import {
  TRANSFORMS_FOR,
  TRANSFORM_LABELS,
  validateAnalysisSettings,
  validateCohortRequest,
  validateStatsColumns,
  validateStatsSettings,
} from '../../../electron/contract.ts';
import type { Problem } from '../../../electron/contract.ts';
import type { InputKind, TransformName } from '../../../electron/engine/transform.ts';

export type { Problem };
export { problemsOf } from '../../../electron/contract.ts';

/** The transforms offered for each input, with their labels (the contract's lists). */
export function transformsFor(input: InputKind): Array<{ name: TransformName; label: string }> {
  return TRANSFORMS_FOR[input].map((name) => ({ name, label: TRANSFORM_LABELS[name] }));
}

/** Switching the input kind keeps the transform when it still applies, else takes the kind's first. */
export function withInput(s: AnalysisSettings, input: InputKind): AnalysisSettings {
  const allowed = TRANSFORMS_FOR[input];
  return { ...s, input, transform: allowed.includes(s.transform) ? s.transform : allowed[0] };
}

/**
 * Problems that would make the service refuse the run, each with its field (the view shows the
 * message under that field). Empty when the run can start.
 */
export function settingsProblems(
  s: AnalysisSettings,
  st: StatsSettings,
  report: CohortReport | null,
  cohort: Omit<OpenCohortRequest, 'dir'> = {},
): Problem[] {
  const out: Problem[] = [
    ...validateCohortRequest({ dir: report?.root ?? '.', ...cohort }),
    ...validateAnalysisSettings(s),
    ...validateStatsSettings(st),
  ];
  if (!report) return out;
  out.push(...validateStatsColumns(st, report.columns));
  if (report.subjects.filter((x) => x.usable).length === 0)
    out.push({
      field: 'cohort',
      option: 'COHORT_DIR',
      message: 'No subject in this cohort can be analysed.',
    });
  const n = report.n ?? 0;
  const bad = s.dropRegions.filter((r) => r < 0 || r >= n);
  if (bad.length)
    out.push({
      field: 'settings.dropRegions',
      option: '--drop-regions',
      message: `Regions ${bad.join(', ')} do not exist (the cohort has ${n}).`,
    });
  const col = st.groupColumn;
  if (col && report.columns.some((c) => c.name === col)) {
    // A group comparison needs two subjects per group at least (a variance per group).
    const sizes = new Map<string, number>();
    for (const x of report.subjects) {
      const g = x.covariates[col];
      if (x.usable && g !== null && g !== undefined) sizes.set(String(g), (sizes.get(String(g)) ?? 0) + 1);
    }
    const small = [...sizes].filter(([, k]) => k < 2).map(([g]) => g);
    const problem = (message: string): Problem => ({
      field: 'stats.groupColumn',
      option: '--group',
      message,
    });
    if (sizes.size < 2)
      out.push(problem(`Comparing groups needs two groups in ${col}; choose no group column instead.`));
    else if (small.length)
      out.push(
        problem(
          `Group ${small.join(', ')} of ${col} has fewer than 2 usable subjects; choose no group column instead.`,
        ),
      );
  }
  return out;
}

/** The kinds of design the Study view offers (at most one of group, effect, model is set). */
export type DesignKind = 'none' | 'group' | 'effect' | 'model';

export function designKind(st: StatsSettings): DesignKind {
  return st.model !== null
    ? 'model'
    : st.effect !== null
      ? 'effect'
      : st.groupColumn !== null
        ? 'group'
        : 'none';
}

/**
 * Switches the design kind, carrying the column over where it fits (a group column becomes the
 * effect and back); test and reference only stay where they apply.
 */
export function withDesign(st: StatsSettings, kind: DesignKind, column: string | null): StatsSettings {
  const base: StatsSettings = { ...st, groupColumn: null, effect: null, model: null, test: null };
  switch (kind) {
    case 'none':
      return { ...base, reference: null, blocks: null };
    case 'group':
      return { ...base, groupColumn: column };
    case 'effect':
      return { ...base, effect: column };
    case 'model':
      return { ...base, model: st.model ?? column ?? '', test: st.test, reference: st.reference };
  }
}

/** A text field's value as a setting: blank → null. */
export function textSetting(v: string): string | null {
  return v.trim() === '' ? null : v.trim();
}
