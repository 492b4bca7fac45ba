/**
 * The run's tables on disk: intervals, subjects and provenance, each written atomically (the
 * output folder's rules are outdir.ts's). A single run and a merge
 * of shards call writeRunTables with the same records, so they write the same bytes (apart from
 * provenance.createdAt).
 */
import { join } from 'node:path';
import type { AnalysisSettings, CohortReport, Provenance, StatsSettings } from '../api.ts';
import { ENGINE_VERSION } from '../engine/version.ts';
import pkg from '../../package.json' with { type: 'json' };
import { openAtomicWriter, writeFileAtomic } from './atomic.ts';
import type { CachedFiltration, FiltrationCache } from './cache.ts';
import { MISSING_VALUE } from '../contract.ts';

export const SOFTWARE_VERSION: string = pkg.version;

export type TableFormat = 'tsv' | 'csv';

/** What became of one subject. Deterministic: no timings, no reused/computed distinction. */
export interface SubjectRecord {
  id: string;
  /** The participant and session of the scan (SubjectEntry); absent in records written before sessions existed. */
  participant?: string;
  session?: string | null;
  /** Position in the cohort's subject order. */
  index: number;
  status: 'analysed' | 'failed' | 'excluded';
  reason: string | null;
  /** Cache key of the filtration (analysed subjects). */
  key: string | null;
  matrixSha256: string | null;
  /** Matrix file relative to the cohort root (forward slashes), with its SHA-256. */
  file: string | null;
  fileSha256: string | null;
  variable?: string;
  stackIndex?: number;
}

/** Everything the tables are made from. */
export interface RunRecords {
  cohortRoot: string;
  settings: AnalysisSettings;
  stats: StatsSettings;
  /** One record per subject of the cohort, in cohort order. */
  records: SubjectRecord[];
  /** Participants the cohort check found no matrix for (listed in subjects.tsv as excluded). */
  unmatched?: Array<{ id: string; reason: string }>;
}

/** A finding's message naming the file behind it ('FILE: message'), unless the message already starts with it. */
export function findingText(f: { file?: string | null; message: string }): string {
  return f.file && !f.message.startsWith(f.file) ? `${f.file}: ${f.message}` : f.message;
}

/** Participants of the report without a matrix: the QC findings 'no-matrix' (naming the participants table). */
export function unmatchedParticipants(report: CohortReport): Array<{ id: string; reason: string }> {
  return report.findings
    .filter((f) => f.code === 'no-matrix' && f.subject !== null)
    .map((f) => ({ id: f.subject as string, reason: findingText(f) }));
}

export function tableNames(format: TableFormat): { intervals: string; subjects: string; provenance: string } {
  return { intervals: `intervals.${format}`, subjects: `subjects.${format}`, provenance: 'provenance.json' };
}

/** A number as written: the shortest decimal that reads back to the same double; ±∞ as inf / -inf. */
export function formatNumber(x: number): string {
  if (x === Infinity) return 'inf';
  if (x === -Infinity) return '-inf';
  return String(x);
}

function cell(v: string | number | null, format: TableFormat): string {
  if (v === null) return MISSING_VALUE;
  if (typeof v === 'number') return formatNumber(v);
  if (format === 'tsv') return v.replace(/[\t\r\n]+/g, ' ');
  return /[",\r\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
}

export function tableLine(cells: Array<string | number | null>, format: TableFormat): string {
  return cells.map((c) => cell(c, format)).join(format === 'tsv' ? '\t' : ',') + '\n';
}

export interface ProvenanceExtras {
  createdAt: string;
}

export function buildProvenance(run: RunRecords, createdAt: string): Provenance {
  const inputHashes: Record<string, string> = {};
  const inputFiles: NonNullable<Provenance['inputFiles']> = [];
  for (const r of run.records) {
    if (r.matrixSha256) inputHashes[r.id] = r.matrixSha256;
    if (r.file) {
      inputFiles.push({
        subject: r.id,
        file: r.file,
        sha256: r.fileSha256,
        ...(r.variable !== undefined ? { variable: r.variable } : {}),
        ...(r.stackIndex !== undefined ? { stackIndex: r.stackIndex } : {}),
      });
    }
  }
  return {
    tool: 'loopwise',
    version: SOFTWARE_VERSION,
    engineVersion: ENGINE_VERSION,
    createdAt,
    settings: run.settings,
    stats: run.stats,
    inputHashes,
    cohortRoot: run.cohortRoot,
    inputFiles,
    counts: {
      subjects: run.records.length,
      analysed: run.records.filter((r) => r.status === 'analysed').length,
      failed: run.records.filter((r) => r.status === 'failed').length,
      excluded: run.records.filter((r) => r.status === 'excluded').length,
    },
  };
}

/**
 * Writes intervals, subjects and provenance into `dir` (opened as an OutputFolder, these names claimed). Entries are
 * read from the cache one subject at a time, so memory stays bounded for any cohort size.
 * Returns the file names written.
 */
export async function writeRunTables(
  dir: string,
  run: RunRecords,
  cache: FiltrationCache,
  format: TableFormat,
  createdAt: string,
): Promise<{ files: string[]; provenance: Provenance }> {
  const names = tableNames(format);
  const maxDim = run.settings.maxDim;
  // participant_id, and session where the cohort has sessions: the first cells of a scan's rows.
  const withSessions = run.records.some((r) => (r.session ?? null) !== null);
  const first = withSessions ? ['participant_id', 'session'] : ['participant_id'];
  const scan = (r: { id: string; participant?: string; session?: string | null }): Array<string | null> =>
    withSessions ? [r.participant ?? r.id, r.session ?? null] : [r.participant ?? r.id];

  const intervals = openAtomicWriter(join(dir, names.intervals));
  const subjects = openAtomicWriter(join(dir, names.subjects));
  try {
    await intervals.write(tableLine([...first, 'dimension', 'birth', 'death', 'nodes'], format));
    const dimCols = Array.from({ length: maxDim + 1 }, (_, d) => `h${d}_intervals`);
    await subjects.write(
      tableLine(
        [
          ...first,
          'status',
          'reason',
          'regions',
          'threshold',
          'threshold_source',
          ...dimCols,
          'matrix_sha256',
        ],
        format,
      ),
    );
    for (const r of run.records) {
      const cells = scan(r);
      let entry: CachedFiltration | null = null;
      if (r.status === 'analysed') {
        entry = r.key ? await cache.get(r.key) : null;
        if (!entry) throw new Error(`the cached filtration of subject ${r.id} is missing from ${cache.dir}`);
        for (let d = 0; d < entry.diagrams.length; d++) {
          const reps = d === 1 ? entry.representatives : null;
          let text = '';
          entry.diagrams[d].forEach(([birth, death], k) => {
            const nodes = reps ? reps[k].nodes.join(' ') : null;
            text += tableLine([...cells, d, birth, death ?? Infinity, nodes], format);
          });
          if (text) await intervals.write(text);
        }
      }
      await subjects.write(
        tableLine(
          [
            ...cells,
            r.status,
            r.reason,
            entry ? entry.n : null,
            entry ? (entry.threshold ?? Infinity) : null,
            entry ? entry.thresholdSource : null,
            ...Array.from({ length: maxDim + 1 }, (_, d) =>
              entry ? (entry.diagrams[d]?.length ?? 0) : null,
            ),
            r.matrixSha256,
          ],
          format,
        ),
      );
    }
    for (const u of run.unmatched ?? []) {
      await subjects.write(
        tableLine(
          [
            ...scan(u),
            'excluded',
            u.reason,
            null,
            null,
            null,
            ...Array.from({ length: maxDim + 1 }, () => null),
            null,
          ],
          format,
        ),
      );
    }
    await intervals.close();
    await subjects.close();
  } catch (e) {
    await intervals.abort();
    await subjects.abort();
    throw e;
  }
  const provenance = buildProvenance(run, createdAt);
  await writeFileAtomic(join(dir, names.provenance), JSON.stringify(provenance, null, 2) + '\n');
  return { files: [names.intervals, names.subjects, names.provenance], provenance };
}
