/**
 * `npm run bench`: every benchmark in turn, each as its own process. Figures are ratios against a
 * reference run side by side (ripser for the engine, one worker for the cohort) plus absolute
 * medians for the record; nothing here is asserted. `--quick` asks each for a shorter run.
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';

const benches = [
  ['targets.ts', 'the speed targets, whole processes vs their references'],
  ['engine.ts', 'persistence engine vs ripser'],
  ['io.ts', 'matrix and cohort loading'],
  ['cohort.ts', 'cohort throughput and memory'],
  ['startup.ts', 'start-up and single diagrams, whole processes'],
];
const extra = process.argv.slice(2);
let failed = 0;
for (const [file, what] of benches) {
  const path = join(import.meta.dirname, file);
  if (!existsSync(path)) continue;
  console.log(`\n== ${what} (${file})`);
  const r = spawnSync(process.execPath, ['--import', 'tsx', path, ...extra], { stdio: 'inherit' });
  if (r.status !== 0) {
    console.log(`!! ${file} exited with ${r.status}`);
    failed++;
  }
}
process.exitCode = failed ? 1 : 0;
