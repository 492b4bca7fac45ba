/**
 * Worker-thread entry of the statistics pool: one task per message (statistics.ts), the reply
 * posted back with its buffers transferred, or the error's message.
 */
import { parentPort } from 'node:worker_threads';
import { runStatisticsTask, statisticsTransferList } from './statistics.ts';
import type { StatisticsTask } from './statistics.ts';

const port = parentPort;
if (!port) throw new Error('statistics-worker.ts must run in a worker thread');

port.on('message', (task: StatisticsTask) => {
  try {
    const reply = runStatisticsTask(task);
    port.postMessage({ ok: true, reply }, statisticsTransferList(reply));
  } catch (e) {
    port.postMessage({ ok: false, taskId: task.taskId, error: e instanceof Error ? e.message : String(e) });
  }
});
