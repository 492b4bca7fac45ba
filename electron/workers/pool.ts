/**
 * A fixed pool of worker threads running filtrations. Plain node:worker_threads: a task's matrix
 * buffer is transferred to the worker (the caller's array is detached, no copy is made) and the
 * packed result's buffers are transferred back. Results come back in completion order; callers
 * that need a deterministic order (the cohort run) place them by subject index, so the outcome is
 * the same for any pool size.
 *
 * A worker that dies (out of memory, a crash in native code) fails only its own task, with the
 * reason, and is replaced. terminate() stops every worker at once: a cancelled run does not wait
 * for the filtrations in flight. A live pool keeps the process alive (even unref'd workers do, once
 * they have registered the tsx loader), so whoever owns it must terminate it when done.
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import type { FiltrationFailure, WorkerReply, WorkerTask } from './filtration.ts';

/**
 * The worker's entry. Run as TypeScript source (tsx, vitest), the worker sits behind a tiny .js
 * bootstrap that registers tsx (see bootstrap.js for why). Compiled, this module is part of a
 * bundle (dist-node/ by `npm run build:node`, dist-electron/ by `npm run build`) and the compiled
 * worker sits beside it.
 */
export const DEFAULT_WORKER_ENTRY = new URL(
  import.meta.url.endsWith('.ts') ? './bootstrap.js' : './filtration-worker.js',
  import.meta.url,
);

export class FiltrationError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'FiltrationError';
  }
}

interface Pending {
  resolve: (r: WorkerReply) => void;
  reject: (e: Error) => void;
}

interface Slot {
  worker: Worker;
  /** Tasks posted to this worker and not yet answered, by task id. */
  pending: Map<number, Pending>;
}

/**
 * Tasks queued per worker. With two, the next subject is already waiting in the worker's message
 * port when it finishes one, so it never idles while this thread commits the last result; the
 * worker also reads one file while it computes another. Replies carry their task id, so their
 * order does not matter.
 */
export const TASKS_PER_WORKER = 2;

function replyTaskId(
  m: { ok: true; reply: WorkerReply } | { ok: false; failure: FiltrationFailure },
): number {
  if (!m.ok) return m.failure.taskId;
  return m.reply.kind === 'computed' ? m.reply.result.taskId : m.reply.taskId;
}

export function defaultPoolSize(): number {
  return Math.max(1, availableParallelism());
}

export class WorkerPool {
  readonly size: number;
  private readonly entry: URL;
  private slots: Slot[] = [];
  private waiting: Array<() => void> = [];
  private closed = false;
  /** Filtrations completed by the workers (success or engine error), for tests and benchmarks. */
  completed = 0;
  /** The most workers ever busy at once: shows the pool really ran tasks side by side (counted, not timed). */
  peakBusy = 0;

  constructor(size: number = defaultPoolSize(), entry: URL = DEFAULT_WORKER_ENTRY) {
    if (!(Number.isInteger(size) && size >= 1)) throw new RangeError(`pool size must be ≥ 1, got ${size}`);
    this.size = size;
    this.entry = entry;
    for (let i = 0; i < size; i++) this.slots.push(this.spawn());
  }

  private spawn(): Slot {
    const slot: Slot = { worker: new Worker(this.entry), pending: new Map() };
    slot.worker.on(
      'message',
      (m: { ok: true; reply: WorkerReply } | { ok: false; failure: FiltrationFailure }) => {
        const id = replyTaskId(m);
        const p = slot.pending.get(id);
        if (!p) return;
        slot.pending.delete(id);
        this.completed++;
        if (m.ok) p.resolve(m.reply);
        else p.reject(new FiltrationError(m.failure.error));
        this.release();
      },
    );
    const die = (reason: string): void => {
      const lost = [...slot.pending.values()];
      slot.pending.clear();
      if (this.closed) return;
      const i = this.slots.indexOf(slot);
      if (i >= 0) this.slots[i] = this.spawn();
      for (const p of lost) p.reject(new FiltrationError(`worker thread died: ${reason}`));
      for (let k = 0; k < Math.max(1, lost.length); k++) this.release();
    };
    slot.worker.on('error', (e) => die(e.message));
    slot.worker.on('exit', (code) => die(`exit code ${code}`));
    return slot;
  }

  private release(): void {
    const next = this.waiting.shift();
    if (next) next();
  }

  /** Runs one task; a matrix task's values are transferred (detached on return). */
  async run(task: WorkerTask): Promise<WorkerReply> {
    for (;;) {
      if (this.closed) throw new FiltrationError('worker pool is closed');
      // The least loaded worker with room in its queue.
      let slot: Slot | null = null;
      for (const s of this.slots) {
        if (s.pending.size < TASKS_PER_WORKER && (!slot || s.pending.size < slot.pending.size)) slot = s;
      }
      if (slot) {
        let transfer: ArrayBuffer[] = [];
        let message: WorkerTask = task;
        if (task.kind === 'matrix') {
          let values = task.values;
          if (values.byteOffset !== 0 || values.byteLength !== values.buffer.byteLength)
            values = values.slice();
          message = { ...task, values };
          transfer = [values.buffer as ArrayBuffer];
        }
        const target = slot;
        return new Promise<WorkerReply>((resolve, reject) => {
          target.pending.set(task.taskId, { resolve, reject });
          this.peakBusy = Math.max(this.peakBusy, this.slots.filter((s) => s.pending.size > 0).length);
          target.worker.postMessage(message, transfer);
        });
      }
      await new Promise<void>((resolve) => this.waiting.push(resolve));
    }
  }

  get isClosed(): boolean {
    return this.closed;
  }

  /** Stops every worker now; tasks in flight reject. */
  async terminate(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    const slots = this.slots;
    this.slots = [];
    for (const s of slots) {
      for (const p of s.pending.values()) p.reject(new FiltrationError('cancelled'));
      s.pending.clear();
    }
    await Promise.all(slots.map((s) => s.worker.terminate()));
    for (const w of this.waiting.splice(0)) w();
  }
}
