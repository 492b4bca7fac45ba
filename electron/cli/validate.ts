/**
 * `loopwise validate COHORT_DIR [options]`: reads every subject's matrix once and prints the QC
 * report. Exit code 0 when at least one subject is usable, 1 when none is, 2 on a usage error.
 */
import type { CohortReport, OpenCohortRequest, QcFinding } from '../api.ts';
import type { CliIO } from '../cli.ts';
import type { InputKind } from '../engine/transform.ts';
import { openCohort } from '../io/cohort.ts';
import { InputFileError } from '../io/errors.ts';
import { INPUT_KINDS } from '../contract.ts';
import { UsageError, parseArgs } from './args.ts';
import { READER_FLAGS, READER_OPTIONS, cohortRequest } from './filtration-options.ts';

export const VALIDATE_HELP = `usage: loopwise validate COHORT_DIR [options]

Checks a cohort: finds each participant's matrix, reads it once, and reports every problem with
its file and place. Nothing on disk is changed.

options:
  --participants FILE   participants table (default COHORT_DIR/participants.tsv or .csv)
  --nodes FILE          node table: label, network, x, y, z (default COHORT_DIR/nodes.tsv if present)
  --json                print the report as JSON (the CohortReport of the API)
  --input correlation|weight|distance   what the matrices hold (default correlation)
  --time-series         the files hold region time series (time points × regions)
  --correlation pearson|ledoit-wolf   estimator for --time-series (default pearson)
  --variable NAME       the variable to read from .mat files
  --file-column NAME    the participants column naming each subject's file
  --match TEXT          only files whose name contains TEXT are matrices
  --drop-regions LIST   0-based regions to leave out, e.g. 3,17 (dead regions)
  --numeric COLS        participants columns to read as numbers (comma-separated)
  --categorical COLS    participants columns to read as categories, e.g. site codes 1, 2, 3

exit code: 0 at least one subject is usable, 1 none is, 2 usage error
`;

export interface ValidateArgs {
  json: boolean;
  input: InputKind;
  dropRegions: number[];
  /** The cohort request: COHORT_DIR and the reader options, as analyze and the browser API take them. */
  cohort: OpenCohortRequest;
}

export function parseValidateArgs(args: string[]): ValidateArgs | null {
  const p = parseArgs(args, {
    values: [...READER_OPTIONS, 'input', 'drop-regions'],
    flags: ['json', 'help', ...READER_FLAGS],
  });
  if (p.flags.has('help')) return null;
  if (p.positionals.length === 0) throw new UsageError('no COHORT_DIR given');
  if (p.positionals.length > 1)
    throw new UsageError(`one COHORT_DIR, got ${p.positionals.length}: ${p.positionals.join(' ')}`);
  const drop = p.values.get('drop-regions');
  const dropRegions =
    drop === undefined
      ? []
      : drop.split(',').map((s) => {
          const x = Number(s.trim());
          if (s.trim() === '' || !Number.isInteger(x) || x < 0) {
            throw new UsageError(`--drop-regions takes 0-based region numbers like 3,17; got '${drop}'`);
          }
          return x;
        });
  const input = p.values.get('input') ?? 'correlation';
  if (!(INPUT_KINDS as readonly string[]).includes(input))
    throw new UsageError(`--input: must be one of ${INPUT_KINDS.join(', ')}, got '${input}'`);
  return {
    json: p.flags.has('json'),
    input: input as InputKind,
    dropRegions,
    cohort: cohortRequest(p, p.positionals[0]),
  };
}

function line(f: QcFinding): string {
  const where = [f.subject, f.file].filter((x) => x !== null).join('  ');
  return `  ${where ? where + '  ' : ''}[${f.code}] ${f.message}`;
}

/** The report for people: a summary, then errors, warnings and dead regions. */
export function formatReport(r: CohortReport): string {
  const usable = r.subjects.filter((s) => s.usable).length;
  const out: string[] = [];
  out.push(`cohort ${r.root}`);
  out.push(`  regions (N): ${r.n ?? 'none readable'}`);
  if (r.sessions) {
    const participants = new Set(r.subjects.map((s) => s.participant)).size;
    out.push(`  scans: ${usable} usable of ${r.subjects.length} (${participants} participants)`);
    out.push(`  sessions: ${r.sessions.join(', ')}`);
  } else out.push(`  subjects: ${usable} usable of ${r.subjects.length}`);
  if (r.columns.length > 0) {
    const cols = r.columns.map(
      (c) =>
        `${c.name} (${c.kind === 'numeric' ? 'numeric' : `categorical: ${(c.levels ?? []).slice(0, 6).join(', ')}${(c.levels ?? []).length > 6 ? ', ...' : ''}`}${c.missing ? `; ${c.missing} missing` : ''})`,
    );
    out.push(`  covariates: ${cols.join('; ')}`);
  }
  out.push(`  node table: ${r.nodes ? `${r.nodes.length} regions` : 'none'}`);
  const errors = r.findings.filter((f) => f.severity === 'error');
  const warnings = r.findings.filter((f) => f.severity === 'warning');
  if (errors.length > 0)
    out.push('', `errors (${errors.length}; the subject is excluded):`, ...errors.map(line));
  if (warnings.length > 0)
    out.push('', `warnings (${warnings.length}; analysed, flagged):`, ...warnings.map(line));
  if (r.deadRegions.length > 0) {
    out.push('', 'dead regions (missing throughout in some subjects):');
    for (const d of r.deadRegions) {
      out.push(`  region ${d.index + 1} (${d.label}; index ${d.index}): ${d.subjects.join(', ')}`);
    }
    out.push(
      `  to drop them from every subject: --drop-regions ${r.deadRegions.map((d) => d.index).join(',')} (settings: dropRegions)`,
    );
  }
  if (r.findings.length === 0) out.push('', 'no problems found');
  const excluded = r.subjects.filter((s) => !s.usable).map((s) => s.id);
  if (excluded.length > 0) out.push('', `excluded: ${excluded.join(', ')}`);
  return out.join('\n') + '\n';
}

export async function validateCommand(args: string[], io: CliIO): Promise<number> {
  let a: ValidateArgs | null;
  try {
    a = parseValidateArgs(args);
  } catch (e) {
    if (e instanceof UsageError) {
      io.err(`loopwise validate: ${e.message} (see loopwise validate --help)\n`);
      return 2;
    }
    throw e;
  }
  if (a === null) {
    io.out(VALIDATE_HELP);
    return 0;
  }
  let report: CohortReport;
  try {
    report = await openCohort(a.cohort, { input: a.input, dropRegions: a.dropRegions });
  } catch (e) {
    if (e instanceof InputFileError) {
      io.err(`loopwise validate: ${e.message}\n`);
      return 2;
    }
    throw e;
  }
  io.out(a.json ? JSON.stringify(report, null, 1) + '\n' : formatReport(report));
  return report.subjects.some((s) => s.usable) ? 0 : 1;
}
