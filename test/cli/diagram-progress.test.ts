/** `loopwise diagram --progress` and the notice before a large matrix: stderr only, stdout unchanged. */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main } from '../../electron/cli.ts';
import { largeRunNotice } from '../../electron/cli/diagram.ts';
import { estimatePersistence } from '../../electron/engine/persistence.ts';

const dir = mkdtempSync(join(tmpdir(), 'loopwise-diagram-progress-'));
// Points on a circle: a metric with one long-lived H1 class (common practice).
const n = 40;
const rows = Array.from({ length: n }, (_, i) =>
  Array.from({ length: n }, (_, j) => (2 * Math.sin((Math.PI * Math.abs(i - j)) / n)).toFixed(6)),
);
const file = join(dir, 'circle.csv');
writeFileSync(file, rows.map((r) => r.join(',')).join('\n') + '\n');

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await main(args, { out: (t) => (out += t), err: (t) => (err += t) });
  return { code, out, err };
}

describe('loopwise diagram --progress', () => {
  it('reports the phases on stderr and prints the same JSON', async () => {
    const plain = await run(['diagram', file, '--input', 'distance']);
    const watched = await run(['diagram', file, '--input', 'distance', '--progress']);
    expect(watched.code).toBe(0);
    expect(watched.out).toBe(plain.out);
    expect(plain.err).toBe('');
    const lines = watched.err.trim().split('\n');
    expect(lines[0]).toBe(
      `loopwise diagram: ${file}: sorting edges 0% (0 of ${(n * (n - 1)) / 2} node pairs)`,
    );
    expect(lines[1]).toMatch(
      new RegExp(`^loopwise diagram: .*circle\\.csv: reducing H1 0% \\(0 of \\d+ columns\\)$`),
    );
    expect(JSON.parse(plain.out).diagrams['1']).toHaveLength(1);
  });

  it('names nodes, edges, columns and memory in the notice before a large matrix', () => {
    const m = 2000;
    const est = estimatePersistence({ n: m, values: new Float64Array((m * (m - 1)) / 2).fill(0.5) });
    expect(est.large).toBe(true);
    const text = largeRunNotice('big.csv', est);
    expect(text).toBe(
      `loopwise diagram: big.csv: large filtration: 2000 nodes, 2.00 million edges up to 0.5, ` +
        `~2.00 million H1 columns, at least ~${Math.ceil(est.bytes / 2 ** 20)} MiB of working memory; ` +
        `this can take many minutes (Ctrl-C stops it)\n`,
    );
  });
});
