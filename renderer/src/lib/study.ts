/** The Study view's logic: the participants table, the QC report and the choice of group and covariates. */
import type {
  CohortReport,
  ColumnInfo,
  CovariateValue,
  QcFinding,
  Severity,
  StatsSettings,
} from '../../../electron/api.ts';
import {
  designGroupColumn as designGroupColumn_,
  formulaColumns,
  statisticsRequested,
} from '../../../electron/contract.ts';

export interface ParticipantRow {
  id: string;
  usable: boolean;
  group: string | null;
  values: CovariateValue[];
  errors: number;
  warnings: number;
}

const ID_COLUMNS = new Set(['participant_id', 'subject', 'subject_id', 'id']);

/** The distinct non-missing values of a column among the subjects, in order of first appearance. */
export function columnLevels(report: CohortReport, column: string): string[] {
  const seen = new Set<string>();
  for (const s of report.subjects) {
    const v = s.covariates[column];
    if (v !== null && v !== undefined && v !== '') seen.add(String(v));
  }
  return [...seen];
}

/**
 * Columns that can split the cohort into groups: categorical, with 2 to 12 levels among the
 * subjects, and at least two subjects per level on average (an identifier never qualifies).
 */
export function groupColumnChoices(report: CohortReport): string[] {
  return report.columns
    .filter((c) => c.kind === 'categorical' && !ID_COLUMNS.has(c.name.toLowerCase()))
    .filter((c) => {
      const k = columnLevels(report, c.name).length;
      return k >= 2 && k <= 12 && report.subjects.length >= 2 * k;
    })
    .map((c) => c.name);
}

/**
 * Columns that can enter the model as covariates: everything but the group column, identifiers and
 * the columns a model formula already names.
 */
export function covariateChoices(
  report: CohortReport,
  groupColumn: string | null,
  model: string | null = null,
): string[] {
  const inModel = model ? formulaColumns(model) : [];
  return report.columns
    .filter((c) => c.name !== groupColumn && !ID_COLUMNS.has(c.name.toLowerCase()))
    .filter((c) => !inModel.includes(c.name))
    .filter((c) => columnLevels(report, c.name).length >= 2)
    .map((c) => c.name);
}

/** The column picked until the user picks one: 'group' (or 'diagnosis', …) if present, else the first choice. */
export function defaultGroupColumn(report: CohortReport): string | null {
  const choices = groupColumnChoices(report);
  return choices.find((c) => /^(group|diagnosis|dx|condition)$/i.test(c)) ?? choices[0] ?? null;
}

/** Participants-table columns shown beside the group (identifiers and the group itself left out). */
export function shownColumns(columns: ColumnInfo[], groupColumn: string | null): string[] {
  return columns.map((c) => c.name).filter((c) => c !== groupColumn && !ID_COLUMNS.has(c.toLowerCase()));
}

export function participantRows(
  report: CohortReport,
  groupColumn: string | null,
  shown: string[],
): ParticipantRow[] {
  const counts = findingCounts(report.findings);
  return report.subjects.map((s) => {
    const g = groupColumn ? s.covariates[groupColumn] : null;
    const c = counts.get(s.id) ?? { errors: 0, warnings: 0 };
    return {
      id: s.id,
      usable: s.usable,
      group: g === null || g === undefined ? null : String(g),
      values: shown.map((col) => s.covariates[col] ?? null),
      ...c,
    };
  });
}

function findingCounts(findings: QcFinding[]): Map<string, { errors: number; warnings: number }> {
  const m = new Map<string, { errors: number; warnings: number }>();
  for (const f of findings) {
    if (!f.subject) continue;
    const c = m.get(f.subject) ?? { errors: 0, warnings: 0 };
    if (f.severity === 'error') c.errors++;
    else c.warnings++;
    m.set(f.subject, c);
  }
  return m;
}

export interface FindingFilter {
  severity: Severity | 'all';
  /** Matched case-insensitively against subject, file, code and message. */
  text: string;
}

export function filterFindings(findings: QcFinding[], filter: FindingFilter): QcFinding[] {
  const needle = filter.text.trim().toLowerCase();
  return findings
    .filter((f) => filter.severity === 'all' || f.severity === filter.severity)
    .filter(
      (f) =>
        !needle ||
        [f.subject, f.file, f.code, f.message].some((x) => x !== null && x.toLowerCase().includes(needle)),
    )
    .sort((a, b) => (a.severity === b.severity ? 0 : a.severity === 'error' ? -1 : 1));
}

export interface CohortSummary {
  /** Scans (one per participant and session where the cohort has sessions). */
  subjects: number;
  /** Distinct participants among the scans. */
  participants: number;
  usable: number;
  excluded: number;
  errors: number;
  warnings: number;
  /** Usable subjects per level of the group column (missing values under 'n/a'). */
  groups: Array<{ group: string; count: number }>;
}

export function cohortSummary(report: CohortReport, groupColumn: string | null): CohortSummary {
  const usable = report.subjects.filter((s) => s.usable);
  const groups = new Map<string, number>();
  if (groupColumn) {
    for (const s of usable) {
      const g = s.covariates[groupColumn];
      const key = g === null || g === undefined ? 'n/a' : String(g);
      groups.set(key, (groups.get(key) ?? 0) + 1);
    }
  }
  return {
    subjects: report.subjects.length,
    participants: new Set(report.subjects.map((s) => s.participant)).size,
    usable: usable.length,
    excluded: report.subjects.length - usable.length,
    errors: report.findings.filter((f) => f.severity === 'error').length,
    warnings: report.findings.filter((f) => f.severity === 'warning').length,
    groups: [...groups].map(([group, count]) => ({ group, count })),
  };
}

/** Levels a reference may take: those of the categorical effect column (none for a numeric one). */
export function referenceChoices(report: CohortReport, column: string | null): string[] {
  const c = column ? report.columns.find((x) => x.name === column) : undefined;
  return c && c.kind === 'categorical' ? (c.levels ?? columnLevels(report, c.name)) : [];
}

/** Columns that can define exchangeability blocks: categorical ones, participant_id first. */
export function blockChoices(report: CohortReport): string[] {
  const names = report.columns.filter((c) => c.kind === 'categorical').map((c) => c.name);
  return [...names.filter((n) => n === 'participant_id'), ...names.filter((n) => n !== 'participant_id')];
}

/** Columns an effect may name: every column but identifiers, numeric (slope) or categorical. */
export function effectChoices(report: CohortReport): string[] {
  return report.columns
    .filter((c) => !ID_COLUMNS.has(c.name.toLowerCase()))
    .filter((c) => columnLevels(report, c.name).length >= 2)
    .map((c) => c.name);
}

/** The column a cohort's scans carry their session in (CohortReport.sessions non-null). */
export const SESSION_COLUMN = 'session';
/** The column naming each scan's participant, the exchangeability blocks of repeated scans. */
export const PARTICIPANT_COLUMN = 'participant_id';

/** Whether some participant has more than one scan (BIDS sessions): then the design needs blocks. */
export function hasRepeatedScans(report: CohortReport): boolean {
  const seen = new Set<string>();
  for (const s of report.subjects) {
    if (seen.has(s.participant)) return true;
    seen.add(s.participant);
  }
  return false;
}

/** The columns a design names (group, effect, model terms, blocks, covariates). */
function designColumns(st: StatsSettings): string[] {
  return [
    ...(st.groupColumn ? [st.groupColumn] : []),
    ...(st.effect ? [st.effect] : []),
    ...(st.model ? formulaColumns(st.model) : []),
    ...(st.blocks ? [st.blocks] : []),
  ];
}

/**
 * The design proposed for a cohort just opened, from the settings in use. A design whose columns
 * all exist in the cohort is kept; otherwise (or when none is chosen) the proposal is:
 * - scans in sessions with a group column: the group × session interaction (model
 *   `group*session`, test `group:session`), blocks participant_id;
 * - scans in sessions without a group column: the effect of session, blocks participant_id;
 * - one scan per participant: the group column ('group', 'diagnosis', …), if any.
 * Where a participant has several scans, blocks participant_id are added to a kept design that
 * has none (the design refuses repeated participants without blocks). Covariates that are no
 * column of the cohort, or that are the effect itself, are dropped; a reference is kept only with
 * a kept design.
 */
export function proposedDesign(report: CohortReport, st: StatsSettings): StatsSettings {
  const names = new Set(report.columns.map((c) => c.name));
  const repeated = hasRepeatedScans(report) && names.has(PARTICIPANT_COLUMN);
  const chosen = statisticsRequested(st);
  const keep = chosen && designColumns(st).every((c) => names.has(c));
  let next: StatsSettings;
  if (keep) {
    next = { ...st, blocks: st.blocks ?? (repeated ? PARTICIPANT_COLUMN : null) };
  } else {
    const base: StatsSettings = {
      ...st,
      groupColumn: null,
      effect: null,
      model: null,
      test: null,
      reference: null,
      blocks: repeated ? PARTICIPANT_COLUMN : null,
    };
    const sessions = report.sessions !== null && names.has(SESSION_COLUMN);
    const group = defaultGroupColumn({
      ...report,
      columns: report.columns.filter((c) => c.name !== SESSION_COLUMN),
    });
    if (sessions && group)
      next = { ...base, model: `${group}*${SESSION_COLUMN}`, test: `${group}:${SESSION_COLUMN}` };
    else if (sessions) next = { ...base, effect: SESSION_COLUMN };
    else next = { ...base, groupColumn: group };
  }
  const effect = next.groupColumn ?? next.effect;
  return { ...next, covariates: next.covariates.filter((c) => names.has(c) && c !== effect) };
}

/**
 * The column the design splits scans by, the service's rule for group curves and group
 * filtrations: the group column, a categorical effect, or with a model the first categorical
 * column of the tested term that is not the blocks column (group for group:session).
 */
export function designGroupColumn(st: StatsSettings | null, report: CohortReport | null): string | null {
  // The contract's rule (the service uses the same), with the cohort's column kinds.
  return designGroupColumn_(
    st,
    (name) => report?.columns.find((c) => c.name === name)?.kind === 'categorical',
  );
}

/** A line under the design fields for a cohort whose scans come in sessions, or null without sessions. */
export function sessionsDesignHint(report: CohortReport): string | null {
  if (!report.sessions) return null;
  return (
    `Scans in ${report.sessions.length} sessions (${report.sessions.join(', ')}): repeated scans of a participant ` +
    `are not exchangeable, so choose ${PARTICIPANT_COLUMN} as the exchangeability blocks; with a group column, ` +
    `test the group × session interaction (model group*${SESSION_COLUMN}, test group:${SESSION_COLUMN}).`
  );
}
