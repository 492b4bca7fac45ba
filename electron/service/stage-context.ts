/**
 * What a stage (hooks.ts) sees of its run: the subjects' filtrations and matrices, and writers
 * into the run's output folder. Every file goes through the folder (outdir.ts), so it is listed
 * in the manifest before it is written and never replaces a file Loopwise did not write.
 */
import type { CohortReport, ProgressEvent } from '../api.ts';
import type { FiltrationCache } from './cache.ts';
import type { CohortSource } from './cohort-source.ts';
import type { StageContext } from './hooks.ts';
import type { SubjectFeatures } from '../workers/filtration.ts';
import type { GroupMeansGatherer } from './stages.ts';
import type { OutputFolder } from './outdir.ts';
import { tableLine } from './tables.ts';
import type { RunRecords, TableFormat } from './tables.ts';

export interface StageContextParts {
  runId: string;
  run: RunRecords;
  report: CohortReport;
  cache: FiltrationCache;
  source: CohortSource | null;
  /** The output folder; null for a run without one (the app's own runs). */
  folder: OutputFolder | null;
  format: TableFormat;
  emit(e: ProgressEvent): void;
  cancelled(): boolean;
  /** Worker threads the run may use (the statistics stage runs on as many). */
  workers?: number;
  /** Subjects' features computed by their workers in stage (1) (taken once each by the features stage). */
  subjectFeatures?: Map<string, SubjectFeatures>;
  /** Group means gathered in stage (1) (stages.ts GroupMeansGatherer). */
  groupMeans?: GroupMeansGatherer | null;
}

export function makeStageContext(p: StageContextParts): StageContext {
  const { run, folder, format } = p;
  return {
    runId: p.runId,
    run,
    stats: run.stats,
    report: p.report,
    analysed: run.records.filter((r) => r.status === 'analysed'),
    filtration: async (record) => {
      const e = record.key ? await p.cache.get(record.key) : null;
      if (!e) throw new Error(`the cached filtration of subject ${record.id} is missing from ${p.cache.dir}`);
      return e;
    },
    matrix: async (entry) => (p.source ? p.source.load(entry) : null),
    groupMeans: p.groupMeans ?? null,
    takeFeatures: (record) => {
      const f = p.subjectFeatures?.get(record.id) ?? null;
      p.subjectFeatures?.delete(record.id);
      return f;
    },
    writeTable: async (name, table) => {
      if (!folder) return null;
      const file = `${name}.${format}`;
      let text = tableLine(table.columns, format);
      for (const row of table.rows) text += tableLine(row, format);
      await folder.writeFile(file, text);
      return file;
    },
    openTable: async (name, columns) => {
      if (!folder) return { row: async () => {}, close: async () => null, abort: async () => {} };
      const file = `${name}.${format}`;
      const writer = await folder.openWriter(file);
      // Rows are gathered into chunks of about 1 MB before each write.
      let chunk = tableLine(columns, format);
      return {
        row: async (cells) => {
          chunk += tableLine(cells, format);
          if (chunk.length > 1 << 20) {
            await writer.write(chunk);
            chunk = '';
          }
        },
        close: async () => {
          if (chunk) await writer.write(chunk);
          await writer.close();
          return file;
        },
        abort: () => writer.abort(),
      };
    },
    writeJson: async (name, value) => {
      if (!folder) return null;
      await folder.writeFile(name, JSON.stringify(value, null, 2) + '\n');
      return name;
    },
    format,
    progress: (phase, done, total, message, etaMs) =>
      p.emit({
        runId: p.runId,
        phase,
        done,
        total,
        reused: 0,
        currentSubject: null,
        elapsedMs: 0,
        etaMs: etaMs ?? null,
        failures: [],
        ...(message !== undefined ? { message } : {}),
      }),
    cancelled: p.cancelled,
    workers: p.workers,
  };
}
