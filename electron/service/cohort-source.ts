/**
 * Where the service gets subjects from. A run only needs the cohort report (the subject list in
 * order, with covariates and usability) and a way to load one subject's matrix on demand, so the
 * matrices are never all held at once, and tests can inject in-memory cohorts.
 * The default source is the cohort readers of electron/io/cohort.ts.
 */
import type { CohortReport, OpenCohortRequest, SubjectEntry } from '../api.ts';
import type { InputKind } from '../engine/transform.ts';
import type { SquareMatrix } from '../engine/types.ts';
import { loadSubjectMatrix, openCohort } from '../io/cohort.ts';

export interface CohortSource {
  report: CohortReport;
  /** The subject's matrix as stored (regions are dropped later, by the filtration itself). */
  load(entry: SubjectEntry): Promise<SquareMatrix>;
  /**
   * load is the cohort readers' loadSubjectMatrix, which worker threads can call themselves: the
   * run then reads and hashes subjects on the workers, in parallel (in-memory sources cannot).
   */
  loadsInWorker?: boolean;
}

export interface SourceOptions {
  /** What the matrices hold (the cohort check tests correlations for range and diagonal). */
  input?: InputKind;
  /** Regions the run will drop: the cohort check leaves them out. */
  dropRegions?: number[];
  /** Folders besides the cohort's own that its files may resolve into (OpenCohortOptions.allowedRoots). */
  allowedRoots?: string[];
}

export async function openCohortSource(
  req: OpenCohortRequest,
  opts: SourceOptions = {},
): Promise<CohortSource> {
  const report = await openCohort(req, {
    ...(opts.input !== undefined ? { input: opts.input } : {}),
    ...(opts.dropRegions !== undefined ? { dropRegions: opts.dropRegions } : {}),
    ...(opts.allowedRoots !== undefined ? { allowedRoots: opts.allowedRoots } : {}),
  });
  // The correlation estimator travels with each subject's source, so workers (and merges) load alike.
  if (req.timeSeries && req.correlation === 'ledoit-wolf')
    for (const s of report.subjects) s.source = { ...s.source, correlation: 'ledoit-wolf' };
  return { report, load: (entry) => loadSubjectMatrix(entry), loadsInWorker: true };
}
