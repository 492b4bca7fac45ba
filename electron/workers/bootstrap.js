// Thread entry for the filtration pool. Worker threads do not reliably inherit the TypeScript
// loader of the thread that starts them (under `node bin/loopwise.js`, tsx is registered in the
// main thread only; under vitest, the test code is transformed by vite and no loader is registered
// at all). So each worker registers tsx's ESM loader itself, resolved from this file's location,
// then imports the TypeScript worker. This works the same under tsx, vitest and plain node, and
// needs no `--import tsx` in execArgv (which would depend on the current working directory).
// A bundled build (Electron) points the pool at the compiled worker instead (WorkerPool's `entry`).
import { register } from 'tsx/esm/api';

register();
await import('./filtration-worker.ts');
