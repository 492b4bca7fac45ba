/**
 * Small text tables of strings: the participants table (BIDS participants.tsv, or CSV), the node
 * table and the sessions table. Read whole (they are small); .tsv is tab-separated as BIDS says,
 * other files get their separator detected. Decoded as text.ts says (UTF-8, UTF-16 with a
 * byte-order mark, else Windows-1252 with a warning). A row with more or fewer fields than the
 * header is not used: its cells would land in the wrong columns.
 */
import { readFile } from 'node:fs/promises';
import { extname } from 'node:path';
import type { ColumnInfo, CovariateValue, NodeInfo, QcFinding } from '../api.ts';
import { LineSplitter, RecordAssembler, detectDelimiter } from './delimited.ts';
import { InputFileError, fsError } from './errors.ts';
import { decodeText, excerpt, replacementNote } from './text.ts';

export interface StringTable {
  header: string[];
  rows: string[][];
  /** The line of the file each row starts on (1-based, as an editor shows it). */
  lines?: number[];
  /** Rows whose number of fields differs from the header's (left out, or kept blank). */
  rejected?: Array<{ line: number; fields: number }>;
}

/** Where a table's own problems go: the cohort's findings, under the table's path as shown. */
export interface TableReport {
  findings: QcFinding[];
  rel: string;
  /** Prefixes the finding codes: 'participants-ragged', 'nodes-ragged', 'sessions-ragged'. */
  table: 'participants' | 'nodes' | 'sessions';
  /**
   * Rows stand for something by their place (the node table: row k is region k): a ragged row is
   * kept there with every field empty, instead of being left out.
   */
  keepPlace?: boolean;
}

export async function readStringTable(file: string, report?: TableReport): Promise<StringTable> {
  let buf: Buffer;
  try {
    buf = await readFile(file);
  } catch (e) {
    throw fsError(file, e);
  }
  if (buf.length === 0) throw new InputFileError(file, 'empty table', 'empty-file');
  const { text, note } = decodeText(file, buf);
  if (text.trim() === '') throw new InputFileError(file, 'empty table', 'empty-file');
  if (note && report) {
    report.findings.push({
      severity: 'warning',
      code: 'text-encoding',
      file: report.rel,
      subject: null,
      message: note,
    });
  }
  const found = extname(file).toLowerCase() === '.tsv' ? '\t' : detectDelimiter(text);
  const d = found === 'whitespace' ? '\t' : found;
  const records: Array<{ cells: string[]; line: number }> = [];
  // No comment lines in a table: a '#' may start a value.
  const assembler = new RecordAssembler(file, d, (cells, line) => records.push({ cells, line }), false);
  const splitter = new LineSplitter((line, no) => assembler.line(line, no));
  splitter.feed(text);
  splitter.end();
  assembler.end();
  if (records.length === 0) throw new InputFileError(file, 'empty table', 'empty-file');
  if (assembler.replacement && report) {
    report.findings.push({
      severity: 'warning',
      code: 'text-encoding',
      file: report.rel,
      subject: null,
      message: replacementNote(assembler.replacement),
    });
  }
  const [head, ...body] = records;
  // Empty names at the end of the header come from separators at the ends of lines.
  const header = head.cells.map((h) => h.trim());
  while (header.length > 1 && header[header.length - 1] === '') header.pop();
  // A name used twice would let the second column overwrite the first: the first one counts.
  const seen = new Map<string, number>();
  header.forEach((h, c) => {
    if (h === '') return;
    const first = seen.get(h);
    if (first === undefined) {
      seen.set(h, c);
      return;
    }
    header[c] = '';
    report?.findings.push({
      severity: 'warning',
      code: `${report.table}-duplicate-column`,
      file: report.rel,
      subject: null,
      message: `column '${excerpt(h, 40)}' appears twice (columns ${first + 1} and ${c + 1}); the second is not used`,
    });
  });
  const idCol = header.findIndex((h) => h.toLowerCase() === 'participant_id');
  const rows: string[][] = [];
  const lines: number[] = [];
  const rejected: NonNullable<StringTable['rejected']> = [];
  for (const { cells, line } of body) {
    if (cells.every((c) => c.trim() === '')) continue;
    // Empty fields past the header's width (a separator at the end of the line) carry nothing.
    let k = cells.length;
    while (k > header.length && cells[k - 1].trim() === '') k--;
    if (k !== header.length) {
      rejected.push({ line, fields: k });
      report?.findings.push({
        severity: 'error',
        code: `${report.table}-ragged`,
        file: report.rel,
        subject: idCol >= 0 && cells[idCol] !== undefined ? excerpt(cells[idCol].trim(), 40) : null,
        message: `line ${line} has ${k} fields but the header has ${header.length}${k > header.length ? ' (an extra separator?)' : ''}; ${report.keepPlace ? 'its fields are not used' : 'the row is not used'}`,
        where: [line - 1, Math.min(k, header.length)],
      });
      if (report?.keepPlace) {
        rows.push(header.map(() => ''));
        lines.push(line);
      }
      continue;
    }
    rows.push(k === cells.length ? cells : cells.slice(0, k));
    lines.push(line);
  }
  return { header, rows, lines, rejected };
}

/** BIDS writes n/a for a missing value; an empty cell and NaN count as missing too. */
export function isMissing(s: string | undefined): boolean {
  if (s === undefined) return true;
  const t = s.trim().toLowerCase();
  return t === '' || t === 'n/a' || t === 'nan';
}

function asNumber(s: string): number | null {
  const t = s.trim();
  if (!/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(t)) return null;
  return Number(t);
}

/** Sorts levels the way people read them: numbers inside names by value (site2 before site10). */
const natural = new Intl.Collator('en', { numeric: true, sensitivity: 'base' });

/**
 * Column kinds: numeric when every present value is a number, else categorical; `kinds` overrides.
 * Returns the columns and each row's values (numbers parsed for numeric columns, null for missing).
 */
export function covariateColumns(
  file: string,
  table: StringTable,
  skip: Set<string>,
  kinds: Record<string, 'numeric' | 'categorical'> = {},
  findings: QcFinding[],
): { columns: ColumnInfo[]; values: Array<Record<string, CovariateValue>> } {
  const columns: ColumnInfo[] = [];
  const values: Array<Record<string, CovariateValue>> = table.rows.map(() => ({}));
  table.header.forEach((name, c) => {
    if (skip.has(name) || name === '') return;
    const cells = table.rows.map((r) => r[c]);
    const present = cells.filter((s) => !isMissing(s));
    const detected =
      present.length > 0 && present.every((s) => asNumber(s) !== null) ? 'numeric' : 'categorical';
    const kind = kinds[name] ?? detected;
    if (kinds[name] === undefined && detected === 'categorical') {
      // A column of numbers with a few words among them (a typo) or with decimal commas would turn
      // into a categorical covariate with a level per value: say so.
      const words = cells.map((s, r) => ({ s, r })).filter(({ s }) => !isMissing(s) && asNumber(s) === null);
      const commas = words.filter(({ s }) => /^\s*[+-]?\d+,\d+\s*$/.test(s));
      const numbers = present.length - words.length;
      const at = (x: { s: string; r: number }): string =>
        `line ${table.lines?.[x.r] ?? x.r + 2}: '${excerpt(x.s)}'`;
      if (commas.length > 0 && commas.length === words.length) {
        findings.push({
          severity: 'warning',
          code: 'covariate-decimal-comma',
          file,
          subject: null,
          message: `column '${name}' holds numbers with a decimal comma (${at(commas[0])}); read as categorical with ${new Set(present.map((x) => x.trim())).size} levels. Write decimal points in the file`,
          where: [commas[0].r + 1, c],
        });
      } else if (numbers > 0 && words.length <= numbers / 4) {
        findings.push({
          severity: 'warning',
          code: 'covariate-mostly-numeric',
          file,
          subject: null,
          message: `column '${name}' is read as categorical because ${words.length} of ${present.length} values ${words.length === 1 ? 'is' : 'are'} not a number (${words.slice(0, 3).map(at).join(', ')}); fix ${words.length === 1 ? 'it' : 'them'}, or read the column as numbers (--numeric ${name}) to take ${words.length === 1 ? 'it' : 'them'} as missing`,
          where: [words[0].r + 1, c],
        });
      }
    }
    let missing = 0;
    const levels = new Set<string>();
    cells.forEach((s, r) => {
      if (isMissing(s)) {
        values[r][name] = null;
        missing++;
        return;
      }
      if (kind === 'numeric') {
        const x = asNumber(s);
        if (x === null) {
          findings.push({
            severity: 'warning',
            code: 'covariate-not-numeric',
            file,
            subject: table.rows[r][0]?.trim() ?? null,
            message: `column '${name}', line ${table.lines?.[r] ?? r + 2}: '${excerpt(s)}' is not a number; treated as missing`,
            where: [r + 1, c],
          });
          values[r][name] = null;
          missing++;
          return;
        }
        values[r][name] = x;
      } else {
        const t = s.trim();
        values[r][name] = t;
        levels.add(t);
      }
    });
    columns.push(
      kind === 'numeric'
        ? { name, kind, missing }
        : { name, kind, levels: [...levels].sort(natural.compare), missing },
    );
  });
  return { columns, values };
}

const LABEL = /^(label|labels|name|region|region_name|roi|roi_name|node)$/i;
const NETWORK = /^(network|network_name|module|community|system|yeo|yeo_network)$/i;
const COORD = {
  x: /^(x|mni_x|x_mm|coord_x)$/i,
  y: /^(y|mni_y|y_mm|coord_y)$/i,
  z: /^(z|mni_z|z_mm|coord_z)$/i,
};

/** The node table: one row per region with a label, an optional network and optional x, y, z. */
export async function readNodeTable(file: string, findings: QcFinding[], rel: string): Promise<NodeInfo[]> {
  const t = await readStringTable(file, { findings, rel, table: 'nodes', keepPlace: true });
  const find = (re: RegExp): number => t.header.findIndex((h) => re.test(h));
  let label = find(LABEL);
  if (label < 0) {
    // Without a label column: the first column that is not a coordinate or a network.
    label = t.header.findIndex((h) => !NETWORK.test(h) && !Object.values(COORD).some((re) => re.test(h)));
    findings.push({
      severity: 'warning',
      code: 'nodes-no-label',
      file: rel,
      subject: null,
      message: `no label column (label, name, region, roi); using '${t.header[label] ?? 'the row number'}'`,
    });
  }
  const network = find(NETWORK);
  const cx = find(COORD.x);
  const cy = find(COORD.y);
  const cz = find(COORD.z);
  const coord = (row: string[], c: number, r: number, axis: string): number | null => {
    if (c < 0 || isMissing(row[c])) return null;
    const x = asNumber(row[c]);
    if (x === null) {
      findings.push({
        severity: 'warning',
        code: 'nodes-bad-coordinate',
        file: rel,
        subject: null,
        message: `line ${t.lines?.[r] ?? r + 2}: ${axis} coordinate '${excerpt(row[c])}' is not a number`,
        where: [r + 1, c],
      });
    }
    return x;
  };
  const nodes = t.rows.map((row, r) => ({
    index: r,
    label: label >= 0 && !isMissing(row[label]) ? row[label].trim() : `region ${r + 1}`,
    network: network >= 0 && !isMissing(row[network]) ? row[network].trim() : null,
    x: coord(row, cx, r, 'x'),
    y: coord(row, cy, r, 'y'),
    z: coord(row, cz, r, 'z'),
  }));
  const seen = new Map<string, number>();
  for (const n of nodes) {
    const before = seen.get(n.label);
    if (before !== undefined) {
      findings.push({
        severity: 'warning',
        code: 'nodes-duplicate-label',
        file: rel,
        subject: null,
        message: `label '${excerpt(n.label, 40)}' is on lines ${t.lines?.[before] ?? before + 2} and ${t.lines?.[n.index] ?? n.index + 2}`,
      });
    } else seen.set(n.label, n.index);
  }
  return nodes;
}
