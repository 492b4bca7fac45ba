// Thread entry of the statistics pool when running from TypeScript sources (tsx, vitest): registers
// tsx's loader in this thread, then imports the TypeScript worker (see bootstrap.js for why).
import { register } from 'tsx/esm/api';

register();
await import('./statistics-worker.ts');
