// Every file of the malformed corpus (malformed-corpus.ts, which builds each from the published
// byte layout of its format) must give exactly its stated outcome: the values, or the one finding
// with its code, the file's name and the place in the file. Nothing may be read silently wrong.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { QcFinding } from '../../electron/api.ts';
import { main } from '../../electron/cli.ts';
import { toDistances } from '../../electron/engine/transform.ts';
import { InputFileError } from '../../electron/io/errors.ts';
import { checkSquare } from '../../electron/io/qc.ts';
import { readMatrixFile, readTable2D } from '../../electron/io/read-matrix.ts';
import { readNodeTable, readStringTable } from '../../electron/io/table.ts';
import { writeCorpus } from './malformed-corpus.ts';

const dir = mkdtempSync(join(tmpdir(), 'loopwise-corpus-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const cases = writeCorpus(dir);

/** Bit-for-bit equality, NaN equal to NaN. */
function same(got: ArrayLike<number>, want: number[]): string | null {
  if (got.length !== want.length) return `length ${got.length}, want ${want.length}`;
  for (let k = 0; k < want.length; k++) {
    if (!Object.is(got[k], want[k]) && !(Number.isNaN(got[k]) && Number.isNaN(want[k])))
      return `value ${k}: got ${got[k]}, want ${want[k]}`;
  }
  return null;
}

async function failure(p: Promise<unknown>): Promise<InputFileError> {
  try {
    await p;
  } catch (e) {
    if (e instanceof InputFileError) return e;
    throw e;
  }
  throw new Error('read without an error');
}

describe('malformed corpus', () => {
  it('has at least 60 files', () => {
    expect(cases.length).toBeGreaterThanOrEqual(60);
    expect(new Set(cases.map((c) => c.name)).size).toBe(cases.length);
  });

  for (const c of cases) {
    it(c.name, async () => {
      const x = c.expect;
      if (x.kind === 'read') {
        const m = await readTable2D(c.file, x.pick ?? {});
        expect([m.rows, m.cols]).toEqual([x.rows, x.cols]);
        expect(same(m.values, x.values)).toBeNull();
        if (x.rowLabels !== undefined) expect(m.rowLabels).toEqual(x.rowLabels);
        if (x.colLabels !== undefined) expect(m.colLabels).toEqual(x.colLabels);
        expect((m.notes ?? []).map((n) => n.code)).toEqual(x.notes ?? []);
        if (x.note) expect(m.notes![0].message).toMatch(x.note);
        // No reader ever makes a replacement character; one already in the file is reported.
        if (!c.bytes.includes(Buffer.from('\uFFFD')))
          for (const l of [...(m.rowLabels ?? []), ...(m.colLabels ?? [])]) expect(l).not.toMatch(/\uFFFD/);
        return;
      }
      if (x.kind === 'error') {
        const e = await failure(x.pick ? readTable2D(c.file, x.pick) : readMatrixFile(c.file));
        expect(e.code).toBe(x.code);
        expect(e.file).toBe(c.file);
        expect(e.message.startsWith(`${c.file}: `)).toBe(true);
        expect(e.detail).toMatch(x.message);
        if (x.where) expect(e.where).toEqual(x.where);
        // A message never echoes more than a short, printable excerpt of the file.
        expect(e.detail.length).toBeLessThan(400);
        expect(e.detail).not.toMatch(/[\p{Cc}\u202e\uFFFD]/u);
        return;
      }
      if (x.kind === 'qc') {
        const m = await readTable2D(c.file);
        const r = checkSquare(m, {
          input: 'correlation',
          drop: new Set(),
          symmetryTolerance: 1e-6,
          name: (i) => `region ${i + 1}`,
        });
        const f = r.findings.filter((y) => y.code === x.code);
        expect(f, JSON.stringify(r.findings)).toHaveLength(1);
        expect(f[0].severity).toBe(x.severity);
        expect(f[0].message).toMatch(x.message);
        // Integer data and Fisher z are told apart: never both, never the range error besides.
        const codes = r.findings.map((y) => y.code);
        if (x.code === 'integer-values') expect(codes).not.toContain('fisher-z');
        if (x.code === 'fisher-z') expect(codes).not.toContain('diagonal-not-one');
        return;
      }
      const findings: QcFinding[] = [];
      let header: string[] = [];
      let rows: string[][] = [];
      try {
        if (x.table === 'nodes') {
          const nodes = await readNodeTable(c.file, findings, c.name);
          const t = await readStringTable(c.file, {
            findings: [],
            rel: c.name,
            table: 'nodes',
            keepPlace: true,
          });
          header = t.header;
          rows = t.rows;
          // Region k keeps row k: a blanked row is named by its number.
          expect(nodes.map((n) => n.label)).toEqual(rows.map((r, k) => r[0] || `region ${k + 1}`));
        } else {
          const t = await readStringTable(c.file, { findings, rel: c.name, table: x.table });
          header = t.header;
          rows = t.rows;
          expect(t.lines).toHaveLength(rows.length);
        }
      } catch (e) {
        if (!(e instanceof InputFileError)) throw e;
        expect(e.file).toBe(c.file);
        findings.push({
          severity: 'error',
          code: `${x.table}-unreadable`,
          file: c.name,
          subject: null,
          message: e.detail,
        });
      }
      expect(header).toEqual(x.header);
      expect(rows).toEqual(x.rows);
      expect(findings.map((f) => [f.code, f.severity])).toEqual(x.findings.map((f) => [f.code, f.severity]));
      x.findings.forEach((want, k) => {
        expect(findings[k].file).toBe(c.name);
        expect(findings[k].message).toMatch(want.message);
        if (want.subject !== undefined) expect(findings[k].subject).toBe(want.subject);
      });
      if (!c.bytes.includes(Buffer.from('\uFFFD')))
        for (const r of rows) for (const cell of r) expect(cell).not.toMatch(/\uFFFD/);
    });
  }

  it('the transform tells whole numbers from Fisher z, and sees Fisher z in the diagonal', () => {
    const counts = { n: 3, values: Float64Array.from([0, 12, 3, 12, 0, 40, 3, 40, 0]) };
    expect(() => toDistances(counts, { input: 'correlation' })).toThrow(
      /correlation 12 at row 2, column 1 lies outside \[−1, 1\] \(a whole number: counts or a label image\? counts are weights \(--input weight\)\)/,
    );
    const z = { n: 2, values: Float64Array.from([1, 1.5, 1.5, 1]) };
    expect(() => toDistances(z, { input: 'correlation' })).toThrow(
      /Fisher-z values\? back-transform with tanh/,
    );
    // |z| < 1 everywhere but an infinite diagonal: still Fisher z, said so by the transform too
    // (the `diagram` door has no QC step before it).
    const small = { n: 2, values: Float64Array.from([Infinity, 0.5, 0.5, Infinity]) };
    expect(() => toDistances(small, { input: 'correlation' })).toThrow(
      /^looks like Fisher z \(diagonal Infinity\): give correlations/,
    );
    expect(toDistances(small, { input: 'weight' }).values[0]).toBe(2);
  });

  it('loopwise diagram refuses a Fisher-z file with |z| < 1, naming it', async () => {
    const file = cases.find((c) => c.name === 'fisher-z-infinite-diagonal.csv')!.file;
    let out = '';
    let err = '';
    const code = await main(['diagram', file], { out: (t) => (out += t), err: (t) => (err += t) });
    expect(code).toBe(2);
    expect(out).toBe('');
    expect(err).toBe(
      `loopwise diagram: ${file}: looks like Fisher z (diagonal Infinity): give correlations (tanh of the values), or set the diagonal to 1 if they already are correlations\n`,
    );
  });

  it('keeps "Gruppe Ä" and "Gruppe Ö" apart in a Windows-1252 participants table', async () => {
    const file = cases.find((c) => c.name === 'participants-cp1252.tsv')!.file;
    const t = await readStringTable(file);
    expect(new Set(t.rows.map((r) => r[1]))).toEqual(new Set(['Gruppe Ä', 'Gruppe Ö']));
  });
});
