/** The Analysis view's logic: which choices go together and what the settings form may send. */
import type { AnalysisSettings, CohortReport, StatsSettings } from '../../../electron/api.ts';
import type { InputKind, TransformName } from '../../../electron/engine/transform.ts';

/** Mirrors the engine's TRANSFORMS_FOR (kept here so the renderer bundle does not pull in the engine). */
export const TRANSFORMS: Record<InputKind, Array<{ name: TransformName; label: string }>> = {
  correlation: [
    { name: 'one-minus', label: '1 − r' },
    { name: 'one-minus-abs', label: '1 − |r|' },
    { name: 'sqrt', label: '√(2(1 − r))' },
  ],
  weight: [
    { name: 'inverse', label: '1 / w' },
    { name: 'neg-log', label: '−log(w / max w)' },
  ],
  distance: [{ name: 'identity', label: 'as given' }],
};

/** Switching the input kind keeps the transform when it still applies, else takes the kind's first. */
export function withInput(s: AnalysisSettings, input: InputKind): AnalysisSettings {
  const allowed = TRANSFORMS[input].map((t) => t.name);
  return { ...s, input, transform: allowed.includes(s.transform) ? s.transform : allowed[0] };
}

/** Problems that would make the service refuse the run, worded for the form. Empty when it can start. */
export function settingsProblems(
  s: AnalysisSettings,
  st: StatsSettings,
  report: CohortReport | null,
): string[] {
  const out: string[] = [];
  if (!TRANSFORMS[s.input].some((t) => t.name === s.transform)) {
    out.push(`The transform ${s.transform} does not apply to ${s.input} input.`);
  }
  if (s.cap.kind === 'density' && !(s.cap.value > 0 && s.cap.value <= 1)) {
    out.push('A density cap is a fraction of edges in (0, 1].');
  }
  if (s.cap.kind === 'distance' && !(s.cap.value > 0)) out.push('A distance cap must be positive.');
  if (!Number.isInteger(s.gridPoints) || s.gridPoints < 2 || s.gridPoints > 10000) {
    out.push('The grid needs between 2 and 10000 points.');
  }
  if (s.gridRange && !(s.gridRange[1] > s.gridRange[0]))
    out.push('The grid range must run from low to high.');
  if (!(s.persistenceFloor >= 0)) out.push('The persistence floor cannot be negative.');
  if (!Number.isInteger(st.permutations) || st.permutations < 0) {
    out.push('Permutations must be a whole number (0 skips the tests).');
  }
  if (!Number.isInteger(st.seed) || st.seed < 0 || st.seed > 2 ** 32 - 1) {
    out.push('The seed must be a whole number between 0 and 4294967295.');
  }
  if (report) {
    if (report.subjects.filter((x) => x.usable).length === 0)
      out.push('No subject in this cohort can be analysed.');
    const n = report.n ?? 0;
    const bad = s.dropRegions.filter((r) => r < 0 || r >= n);
    if (bad.length) out.push(`Regions ${bad.join(', ')} do not exist (the cohort has ${n}).`);
    if (st.groupColumn && !report.columns.some((c) => c.name === st.groupColumn)) {
      out.push(`The participants table has no column ${st.groupColumn}.`);
    } else if (st.groupColumn) {
      // A group comparison needs two subjects per group at least (a variance per group).
      const col = st.groupColumn;
      const sizes = new Map<string, number>();
      for (const x of report.subjects) {
        const g = x.covariates[col];
        if (x.usable && g !== null && g !== undefined) sizes.set(String(g), (sizes.get(String(g)) ?? 0) + 1);
      }
      const small = [...sizes].filter(([, k]) => k < 2).map(([g]) => g);
      if (sizes.size < 2)
        out.push(`Comparing groups needs two groups in ${col}; choose no group column instead.`);
      else if (small.length) {
        out.push(
          `Group ${small.join(', ')} of ${col} has fewer than 2 usable subjects; choose no group column instead.`,
        );
      }
    }
  }
  return out;
}
