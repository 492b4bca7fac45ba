/**
 * Running the `ripser` binary (Debian package 1.2.1) on a lower-triangle distance file and
 * reading its barcodes back, for live cross-checks.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { RawInterval } from './diagrams.ts';

export function ripserAvailable(): boolean {
  const r = spawnSync('ripser', ['--help'], { encoding: 'utf8' });
  return r.error === undefined && /lower-distance/.test(r.stdout + r.stderr);
}

/**
 * Parses ripser's text output: a header, then per dimension a line
 * "persistence intervals in dim k:" followed by lines " [b,d)" or " [b, )" (infinite).
 */
export function parseRipserOutput(text: string, maxDim: number): RawInterval[][] {
  const diagrams: RawInterval[][] = Array.from({ length: maxDim + 1 }, () => []);
  let dim = -1;
  for (const raw of text.split('\n')) {
    const line = raw.trim();
    const header = /^persistence intervals in dim (\d+):$/.exec(line);
    if (header) {
      dim = Number(header[1]);
      continue;
    }
    const bar = /^\[([^,]+),\s*([^)]*)\)$/.exec(line);
    if (bar && dim >= 0) {
      const birth = Number(bar[1]);
      const death = bar[2].trim() === '' ? null : Number(bar[2]);
      if (!Number.isFinite(birth) || (death !== null && !Number.isFinite(death))) {
        throw new Error(`unreadable ripser line: ${raw}`);
      }
      diagrams[dim].push([birth, death]);
    }
  }
  return diagrams;
}

/**
 * Writes the compressed lower triangle (already formatted as decimal strings) to a temp file,
 * runs `ripser --dim D [--threshold T] --format lower-distance FILE` and parses the result.
 */
export function runRipser(
  lower: string[],
  n: number,
  maxDim: number,
  threshold: string | null,
): { diagrams: RawInterval[][]; command: string } {
  const dir = mkdtempSync(join(tmpdir(), 'loopwise-ripser-'));
  try {
    const file = join(dir, 'lower.txt');
    const rows: string[] = [];
    for (let i = 1, k = 0; i < n; k += i, i++) rows.push(lower.slice(k, k + i).join(','));
    writeFileSync(file, rows.join('\n') + '\n');
    const args = ['--dim', String(maxDim)];
    if (threshold !== null) args.push('--threshold', threshold);
    args.push('--format', 'lower-distance', file);
    const r = spawnSync('ripser', args, { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
    if (r.error || r.status !== 0) throw new Error(`ripser failed: ${r.error?.message ?? r.stderr}`);
    return { diagrams: parseRipserOutput(r.stdout, maxDim), command: `ripser ${args.join(' ')}` };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
