/**
 * Benchmark child: reads a lower-triangular distance file (ripser's lower-distance format),
 * computes its persistence three times to warm the JIT (a cohort runs on warm workers), then measures the CPU time (user + system) of
 * `reps` more runs and prints JSON:
 * {"ms": [..], "maxRssKb": ..}. Run by engine.ts; not a test.
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
for (let w = 0; w < 3; w++) computePersistence({ n, values }, opts);
const ms: number[] = [];
for (let r = 0; r < Number(repsArg); r++) {
  const t0 = process.cpuUsage();
  computePersistence({ n, values }, opts);
  const t = process.cpuUsage(t0);
  ms.push((t.user + t.system) / 1000);
}
console.log(JSON.stringify({ ms, maxRssKb: process.resourceUsage().maxRSS }));
