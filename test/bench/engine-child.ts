/**
 * Benchmark child: reads a lower-triangular distance file (ripser's lower-distance format) and
 * measures the CPU time (user + system) of computing its persistence: once cold (the first call in
 * a fresh process, as for a single `loopwise diagram`), then warm — after up to 12 untimed calls
 * or 3 s of them, as on a cohort worker that has already filtered a few subjects — `reps` times.
 * Prints JSON {"coldMs", "ms": [..], "maxRssKb"}. Run by engine.ts; not a test.
 */
import { readFileSync } from 'node:fs';
import { computePersistence } from '../../electron/engine/persistence.ts';

const [file, dimArg, repsArg, repsFlag] = process.argv.slice(2);
const lines = readFileSync(file, 'utf8').trimEnd().split('\n');
const n = lines.length;
const values = new Float64Array((n * (n - 1)) / 2);
let k = 0;
for (const line of lines.slice(1)) for (const x of line.split(',')) values[k++] = Number(x);
const opts = { maxDim: Number(dimArg) as 1 | 2, representatives: repsFlag === 'reps' };

const cpuMs = (): number => {
  const t0 = process.cpuUsage();
  computePersistence({ n, values }, opts);
  const t = process.cpuUsage(t0);
  return (t.user + t.system) / 1000;
};
const coldMs = cpuMs();
const start = performance.now();
for (let w = 0; w < 12 && performance.now() - start < 3000; w++) cpuMs();
const ms: number[] = [];
for (let r = 0; r < Number(repsArg); r++) ms.push(cpuMs());
console.log(JSON.stringify({ coldMs, ms, maxRssKb: process.resourceUsage().maxRSS }));
