/**
 * Small text tables of strings: the participants table (BIDS participants.tsv, or CSV) and the
 * node table. Read whole (they are small) through papaparse; .tsv is tab-separated as BIDS says,
 * other files get their separator detected.
 */
import { readFile } from 'node:fs/promises';
import { extname } from 'node:path';
import Papa from 'papaparse';
import type { ColumnInfo, CovariateValue, NodeInfo, QcFinding } from '../api.ts';
import { detectDelimiter } from './delimited.ts';
import { InputFileError, fsError } from './errors.ts';

export interface StringTable {
  header: string[];
  rows: string[][];
}

export async function readStringTable(file: string): Promise<StringTable> {
  let text: string;
  try {
    text = (await readFile(file, 'utf8')).replace(/^\uFEFF/, '');
  } catch (e) {
    throw fsError(file, e);
  }
  if (text.trim() === '') throw new InputFileError(file, 'empty table', 'empty-file');
  const d = extname(file).toLowerCase() === '.tsv' ? '\t' : detectDelimiter(text);
  const parsed = Papa.parse<string[]>(text, {
    delimiter: d === 'whitespace' ? '\t' : d,
    skipEmptyLines: 'greedy',
  });
  const [header, ...rows] = parsed.data;
  return { header: header.map((h) => h.trim()), rows };
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
            message: `column '${name}', row ${r + 2}: '${s}' is not a number; treated as missing`,
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
  const t = await readStringTable(file);
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
        message: `row ${r + 2}: ${axis} coordinate '${row[c]}' is not a number`,
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
        message: `label '${n.label}' is on rows ${before + 2} and ${n.index + 2}`,
      });
    } else seen.set(n.label, n.index);
  }
  return nodes;
}
