/** Worker-thread entry: runs one FiltrationTask per message and posts the packed result (or the error) back. */
import { parentPort } from 'node:worker_threads';
import { runFiltration, transferList } from './filtration.ts';
import type { FiltrationFailure, FiltrationTask } from './filtration.ts';

const port = parentPort;
if (!port) throw new Error('filtration-worker.ts must run in a worker thread');

port.on('message', (task: FiltrationTask) => {
  try {
    const result = runFiltration(task);
    port.postMessage({ ok: true, result }, transferList(result));
  } catch (e) {
    const failure: FiltrationFailure = {
      taskId: task.taskId,
      error: e instanceof Error ? e.message : String(e),
    };
    port.postMessage({ ok: false, failure });
  }
});
