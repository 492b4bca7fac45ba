// Live cross-check of the malformed corpus against the reference tools: every .npy the corpus says
// reads correctly is read by numpy.load, every such .mat by scipy.io.loadmat, and every table by
// Python's csv module with the encoding the file was written in (cp1252, utf-16, utf-8-sig); the
// values, dtypes and cells must be what Loopwise reads. Skipped when /usr/bin/python3 with numpy
// and scipy is missing (CI installs them).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readTable2D } from '../../electron/io/read-matrix.ts';
import { readStringTable } from '../../electron/io/table.ts';
import { writeCorpus } from './malformed-corpus.ts';

const PY = '/usr/bin/python3';
const haveTools =
  existsSync(PY) && spawnSync(PY, ['-c', 'import numpy, scipy.io'], { encoding: 'utf8' }).status === 0;

const SCRIPT = `
import csv, io, json, sys
import numpy as np, scipy.io
out = {}
for job in json.load(sys.stdin):
    f = job['file']
    if job['how'] == 'npy':
        a = np.load(f)
        if job.get('stackIndex') is not None:
            a = a[job['stackIndex']]
        out[f] = {'dtype': a.dtype.name, 'values': [None if x != x else x for x in a.astype(float).ravel(order='C').tolist()], 'shape': list(a.shape)}
    elif job['how'] == 'mat':
        d = scipy.io.loadmat(f)
        names = [k for k in d if not k.startswith('__')]
        a = d[job.get('variable') or names[0]]
        if job.get('stackIndex') is not None:
            a = a[:, :, job['stackIndex']]
        out[f] = {'dtype': str(a.dtype), 'values': a.astype(float).ravel(order='C').tolist(), 'shape': list(a.shape)}
    else:
        with open(f, encoding=job['encoding'], newline='') as fh:
            rows = list(csv.reader(fh, delimiter=job['sep']))
        out[f] = {'rows': rows}
json.dump(out, sys.stdout)
`;

describe.skipIf(!haveTools)('the malformed corpus read by numpy, scipy and Python csv', () => {
  const dir = mkdtempSync(join(tmpdir(), 'loopwise-corpus-live-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const cases = writeCorpus(dir);

  it('gives the same numbers, integer dtypes and table cells as Loopwise', async () => {
    const jobs: object[] = [];
    for (const c of cases) {
      const x = c.expect;
      if (c.name.endsWith('.npy') && (x.kind === 'read' || x.kind === 'qc'))
        jobs.push({
          file: c.file,
          how: 'npy',
          stackIndex: x.kind === 'read' ? x.pick?.stackIndex : undefined,
        });
      if (c.name.endsWith('.mat') && (x.kind === 'read' || x.kind === 'qc'))
        jobs.push({
          file: c.file,
          how: 'mat',
          variable: x.kind === 'read' ? x.pick?.variable : undefined,
          stackIndex: x.kind === 'read' ? x.pick?.stackIndex : undefined,
        });
      if (x.kind === 'table' && x.findings.every((f) => !f.code.endsWith('-unreadable'))) {
        const b = c.bytes;
        const encoding =
          b[0] === 0xff && b[1] === 0xfe
            ? 'utf-16'
            : x.findings.some((f) => f.code === 'text-encoding' && /Windows-1252/.test(f.message.source))
              ? 'cp1252'
              : 'utf-8-sig';
        jobs.push({ file: c.file, how: 'csv', encoding, sep: c.name.endsWith('.tsv') ? '\t' : ',' });
      }
    }
    expect(jobs.length).toBeGreaterThanOrEqual(20);
    const r = spawnSync(PY, ['-c', SCRIPT], { input: JSON.stringify(jobs), encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const ref = JSON.parse(r.stdout) as Record<
      string,
      { dtype?: string; values?: Array<number | null>; shape?: number[]; rows?: string[][] }
    >;
    for (const c of cases) {
      const want = ref[c.file];
      if (!want) continue;
      const x = c.expect;
      if (want.values) {
        const m = await readTable2D(c.file, x.kind === 'read' ? (x.pick ?? {}) : {});
        expect([m.rows, m.cols], c.name).toEqual(want.shape);
        const got = Array.from(m.values);
        const w = want.values.map((v) => (v === null ? NaN : v));
        expect(got, c.name).toEqual(w);
        // The integer message names numpy's (or MATLAB's) own type.
        if (x.kind === 'qc' && x.code === 'integer-values' && c.name.endsWith('.npy'))
          expect(m.dtype, c.name).toBe(want.dtype);
      } else if (want.rows && x.kind === 'table') {
        const t = await readStringTable(c.file);
        const header = want.rows[0].map((h) => h.trim());
        while (header.length > 1 && header[header.length - 1] === '') header.pop();
        expect(t.header, c.name).toEqual(header);
        // Python keeps every row; Loopwise keeps those with the header's width (trailing empties cut).
        const kept = want.rows
          .slice(1)
          .filter((row) => row.some((cell) => cell.trim() !== ''))
          .map((row) => {
            const k = [...row];
            while (k.length > header.length && k[k.length - 1].trim() === '') k.pop();
            return k;
          })
          .filter((row) => row.length === header.length);
        expect(t.rows, c.name).toEqual(kept);
      }
    }
  });
});
