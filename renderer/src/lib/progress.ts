/** The run panel's logic: what the progress bar shows for the latest event of a run. */
import type { ProgressEvent } from '../../../electron/api.ts';
import { formatDuration } from './format.ts';

const PHASES: Record<ProgressEvent['phase'], string> = {
  filtrations: 'Computing filtrations',
  'group-filtrations': 'Computing group filtrations',
  features: 'Computing features',
  statistics: 'Running statistics',
  export: 'Writing tables',
  done: 'Done',
  cancelled: 'Cancelled',
  failed: 'Failed',
};

export interface ProgressView {
  /** 0..1 */
  fraction: number;
  phase: string;
  counts: string;
  eta: string;
  running: boolean;
  current: string | null;
}

export function progressView(e: ProgressEvent | null): ProgressView {
  if (!e) return { fraction: 0, phase: 'Not started', counts: '', eta: '', running: false, current: null };
  const finished = e.phase === 'done' || e.phase === 'cancelled' || e.phase === 'failed';
  const fraction = e.phase === 'done' ? 1 : e.total > 0 ? Math.min(1, Math.max(0, e.done / e.total)) : 0;
  const reused = e.reused > 0 ? ` (${e.reused} from cache)` : '';
  const failed = e.failures.length > 0 ? `, ${e.failures.length} failed` : '';
  return {
    fraction,
    phase: PHASES[e.phase] ?? e.phase,
    counts: e.total > 0 ? `${e.done} / ${e.total}${reused}${failed}` : '',
    eta: finished
      ? `took ${formatDuration(e.elapsedMs)}`
      : e.etaMs === null
        ? 'estimating…'
        : `about ${formatDuration(e.etaMs)} left`,
    running: !finished,
    current: finished ? null : e.currentSubject,
  };
}

/** Failures seen over the run, one per subject (the latest reason wins). */
export function mergeFailures(
  known: Array<{ subject: string; reason: string }>,
  incoming: Array<{ subject: string; reason: string }>,
): Array<{ subject: string; reason: string }> {
  const m = new Map(known.map((f) => [f.subject, f.reason]));
  for (const f of incoming) m.set(f.subject, f.reason);
  return [...m].map(([subject, reason]) => ({ subject, reason }));
}
