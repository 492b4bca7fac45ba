/**
 * Worker-thread entry: one task per message, the reply (or the error) posted back with its
 * buffers transferred. A 'matrix' task brings its matrix; a 'subject' task names a subject the
 * worker reads, hashes and looks up in the cache itself (see SubjectTask).
 */
import { access } from 'node:fs/promises';
import { parentPort } from 'node:worker_threads';
import { loadSubjectMatrix } from '../io/cohort.ts';
import { cachePath, filtrationKey } from '../shared/cache-key.ts';
import { sha256File, sha256Matrix } from '../shared/hash.ts';
import { readCachedFiltration } from '../shared/filtration-record.ts';
import { featureTransferList, runFiltration, subjectFeatures, transferList, unpack } from './filtration.ts';
import type { FiltrationFailure, WorkerReply, WorkerTask } from './filtration.ts';

const port = parentPort;
if (!port) throw new Error('filtration-worker.ts must run in a worker thread');

async function handle(task: WorkerTask): Promise<WorkerReply> {
  if (task.kind === 'matrix')
    return { kind: 'computed', result: runFiltration(task), matrixSha256: null, key: null };
  const fileHash = task.hashFile
    ? sha256File(task.entry.source.file).catch(() => null)
    : Promise.resolve(null);
  const m = await loadSubjectMatrix(task.entry);
  if (task.expectedN !== null && m.n !== task.expectedN)
    throw new Error(
      `matrix is ${m.n} × ${m.n} but the cohort's matrices are ${task.expectedN} × ${task.expectedN}`,
    );
  const matrixSha256 = sha256Matrix(m);
  const key = filtrationKey(matrixSha256, task.settings);
  if (!task.recompute) {
    if (!task.features) {
      const present = await access(cachePath(task.cacheDir, key)).then(
        () => true,
        () => false,
      );
      if (present)
        return { kind: 'cached', taskId: task.taskId, matrixSha256, key, n: m.n, fileSha256: await fileHash };
    } else {
      // The features need the filtration itself: read the entry (an unreadable one is recomputed).
      const cached = await readCachedFiltration(cachePath(task.cacheDir, key), key);
      if (cached) {
        const features = subjectFeatures(cached, m, m.n, task.settings, task.features);
        return {
          kind: 'cached',
          taskId: task.taskId,
          matrixSha256,
          key,
          n: m.n,
          fileSha256: await fileHash,
          features,
        };
      }
    }
  }
  const result = runFiltration({ taskId: task.taskId, n: m.n, values: m.values, settings: task.settings });
  const features = task.features
    ? subjectFeatures(unpack(result, key, matrixSha256), m, m.n, task.settings, task.features)
    : undefined;
  return { kind: 'computed', result, matrixSha256, key, fileSha256: await fileHash, features };
}

// The pool may queue a second task while one is being read or computed; replies carry their task id.
port.on('message', (task: WorkerTask) => {
  handle(task).then(
    (reply) =>
      port.postMessage({ ok: true, reply }, [
        ...(reply.kind === 'computed' ? transferList(reply.result) : []),
        ...featureTransferList(reply.features),
      ]),
    (e: unknown) => {
      const failure: FiltrationFailure = {
        taskId: task.taskId,
        error: e instanceof Error ? e.message : String(e),
      };
      port.postMessage({ ok: false, failure });
    },
  );
});
