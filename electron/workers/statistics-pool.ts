/**
 * Worker threads for the statistics stage (statistics.ts tasks), one task at a time per worker.
 * Results come back in completion order; the caller places them by task, so the outcome does not
 * depend on the number of workers. A worker that dies fails its task with the reason and is
 * replaced; terminate() stops every worker at once and rejects what is in flight (cancel).
 *
 *   const pool = new StatisticsPool(2);
 *   const reply = await pool.run(task);
 *   await pool.terminate();
 */
import { Worker } from 'node:worker_threads';
import type { StatisticsReply, StatisticsTask } from './statistics.ts';

/**
 * The worker's entry: a tsx bootstrap from sources, the compiled worker beside a bundle (build-node.js,
 * renderer/vite.config.ts). Worker threads cannot start from inside an Electron asar archive, and
 * the packaged app unpacks its bundle beside it (as for the filtration worker, main.ts).
 */
export const STATISTICS_WORKER_ENTRY = new URL(
  new URL(
    import.meta.url.endsWith('.ts') ? './statistics-bootstrap.js' : './statistics-worker.js',
    import.meta.url,
  ).href.replace('/app.asar/', '/app.asar.unpacked/'),
);

export class StatisticsTaskError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'StatisticsTaskError';
  }
}

type Message = { ok: true; reply: StatisticsReply } | { ok: false; taskId: number; error: string };

interface Slot {
  worker: Worker;
  busy: { taskId: number; resolve: (r: StatisticsReply) => void; reject: (e: Error) => void } | null;
}

export class StatisticsPool {
  readonly size: number;
  private slots: Slot[] = [];
  private waiting: Array<() => void> = [];
  private closed = false;
  /** Tasks answered, for tests. */
  completed = 0;

  constructor(
    size: number,
    private readonly entry: URL = STATISTICS_WORKER_ENTRY,
  ) {
    if (!(Number.isInteger(size) && size >= 1)) throw new RangeError(`pool size must be ≥ 1, got ${size}`);
    this.size = size;
    for (let i = 0; i < size; i++) this.slots.push(this.spawn());
  }

  private spawn(): Slot {
    const slot: Slot = { worker: new Worker(this.entry), busy: null };
    slot.worker.on('message', (m: Message) => {
      const b = slot.busy;
      const id = m.ok ? m.reply.taskId : m.taskId;
      if (!b || b.taskId !== id) return;
      slot.busy = null;
      this.completed++;
      if (m.ok) b.resolve(m.reply);
      else b.reject(new StatisticsTaskError(m.error));
      this.waiting.shift()?.();
    });
    const die = (reason: string): void => {
      const b = slot.busy;
      slot.busy = null;
      if (this.closed) return;
      const i = this.slots.indexOf(slot);
      if (i >= 0) this.slots[i] = this.spawn();
      b?.reject(new StatisticsTaskError(`statistics worker died: ${reason}`));
      this.waiting.shift()?.();
    };
    slot.worker.on('error', (e) => die(e.message));
    slot.worker.on('exit', (code) => die(`exit code ${code}`));
    return slot;
  }

  /** Runs one task on the first free worker (waiting for one when all are busy). */
  async run(task: StatisticsTask): Promise<StatisticsReply> {
    for (;;) {
      if (this.closed) throw new StatisticsTaskError('cancelled');
      const slot = this.slots.find((s) => !s.busy);
      if (slot) {
        return new Promise<StatisticsReply>((resolve, reject) => {
          slot.busy = { taskId: task.taskId, resolve, reject };
          slot.worker.postMessage(task);
        });
      }
      await new Promise<void>((resolve) => this.waiting.push(resolve));
    }
  }

  /** Stops every worker now; tasks in flight and waiting reject. */
  async terminate(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    const slots = this.slots;
    this.slots = [];
    for (const s of slots) s.busy?.reject(new StatisticsTaskError('cancelled'));
    for (const w of this.waiting.splice(0)) w();
    await Promise.all(slots.map((s) => s.worker.terminate()));
  }
}
