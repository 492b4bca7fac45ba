/**
 * The checks of one subject's matrix or time series. Each problem becomes a finding with a
 * severity (error: the subject cannot be analysed as it is; warning: analysed, flagged), a stable
 * code, a message that says where, and the 0-based [row, column] of the first offending cell.
 * Regions listed in `drop` are left out of every check (they will be dropped from the analysis).
 */
import type { QcFinding, Severity } from '../api.ts';
import type { InputKind } from '../engine/transform.ts';
import type { Matrix2D } from './array.ts';

export type Finding = Omit<QcFinding, 'file' | 'subject'>;

export interface CheckOptions {
  input: InputKind;
  drop: ReadonlySet<number>;
  /** Largest |a_ij − a_ji| accepted, relative to max(1, largest |value|); the transform's default. */
  symmetryTolerance: number;
  /** A region's name for messages, e.g. "region 3 (L_M1)". */
  name: (i: number) => string;
}

export interface CheckResult {
  /** The number of regions: rows of a square matrix, columns of time series. */
  n: number;
  findings: Finding[];
  /** Regions with no usable value at all (NaN throughout, or a constant time series). */
  dead: number[];
}

const fmt = (v: number): string => (Number.isFinite(v) ? String(Number(v.toPrecision(6))) : String(v));
const cell = (i: number, j: number): string => `row ${i + 1}, column ${j + 1}`;

function finding(severity: Severity, code: string, message: string, where?: [number, number]): Finding {
  return where ? { severity, code, message, where } : { severity, code, message };
}

/** What the reader noticed (e.g. text that was not UTF-8), as warnings. */
function readerNotes(m: Matrix2D): Finding[] {
  return (m.notes ?? []).map((x) => finding('warning', x.code, x.message));
}

const INTEGER_DTYPE = /^(u?int\d+|bool|logical)$/;

export function checkSquare(m: Matrix2D, o: CheckOptions): CheckResult {
  const { rows: n, cols, values } = m;
  const out: Finding[] = readerNotes(m);
  if (n !== cols) {
    out.push(
      finding(
        'error',
        'not-square',
        `not square: ${n} rows × ${cols} columns` +
          (n > cols ? ' (region time series? open the cohort as time series)' : ''),
      ),
    );
    return { n: Math.max(n, cols), findings: out, dead: [] };
  }
  const keep = (i: number): boolean => !o.drop.has(i);
  const v = (i: number, j: number): number => values[i * n + j];

  // Dead regions: every off-diagonal cell of the row NaN.
  const dead: number[] = [];
  for (let i = 0; i < n; i++) {
    if (!keep(i)) continue;
    let allNaN = n > 1;
    for (let j = 0; j < n && allNaN; j++) if (j !== i && keep(j) && !Number.isNaN(v(i, j))) allNaN = false;
    if (allNaN) dead.push(i);
  }
  const kept = [...Array(n).keys()].filter(keep).length;
  if (n > 1 && dead.length === kept) {
    out.push(finding('error', 'all-nan', `every cell is missing (NaN)`, [0, 1]));
    return { n, findings: out, dead: [] };
  }
  for (const i of dead) {
    out.push(
      finding(
        'error',
        'nan-row',
        `${o.name(i)} is missing (NaN) in its whole row: a dead region; drop it from every subject (dropRegions ${i})`,
        [i, i === 0 ? 1 : 0],
      ),
    );
  }
  const isLive = Uint8Array.from({ length: n }, (_, i) => (keep(i) && !dead.includes(i) ? 1 : 0));
  const live = (i: number): boolean => isLive[i] === 1;

  let nanCount = 0;
  let nanAt: [number, number] | null = null;
  let infCount = 0;
  let infAt: [number, number] | null = null;
  let scale = 0;
  for (let i = 0; i < n; i++) {
    if (!live(i)) continue;
    for (let j = 0; j < n; j++) {
      if (j === i || !live(j)) continue;
      const x = v(i, j);
      if (Number.isNaN(x)) {
        nanCount++;
        nanAt ??= [i, j];
      } else if (!Number.isFinite(x)) {
        infCount++;
        infAt ??= [i, j];
      } else scale = Math.max(scale, Math.abs(x));
    }
  }

  // Symmetry, over pairs where both values are numbers.
  let maxAsym = 0;
  let asymAt: [number, number] | null = null;
  for (let i = 0; i < n; i++) {
    if (!live(i)) continue;
    for (let j = 0; j < i; j++) {
      if (!live(j)) continue;
      const a = v(i, j);
      const b = v(j, i);
      if (Number.isNaN(a) !== Number.isNaN(b)) {
        if (maxAsym < Infinity) asymAt = [i, j];
        maxAsym = Infinity;
        continue;
      }
      const d = Math.abs(a - b);
      if (d > maxAsym) {
        maxAsym = d;
        asymAt = [i, j];
      }
    }
  }
  if (asymAt && maxAsym > o.symmetryTolerance * Math.max(1, scale)) {
    const [i, j] = asymAt;
    out.push(
      finding(
        'error',
        'asymmetric',
        `not symmetric: max |r_ij − r_ji| = ${fmt(maxAsym)} at ${cell(i, j)} (${fmt(v(i, j))}) vs ${cell(j, i)} (${fmt(v(j, i))})`,
        asymAt,
      ),
    );
  }

  const diag: number[] = [];
  for (let i = 0; i < n; i++) if (live(i)) diag.push(v(i, i));

  if (o.input === 'correlation') {
    let outside = 0;
    let outsideAt: [number, number] | null = null;
    let worst = 0;
    for (let i = 0; i < n; i++) {
      if (!live(i)) continue;
      for (let j = 0; j < n; j++) {
        if (j === i || !live(j)) continue;
        const x = Math.abs(v(i, j));
        if (x > 1 + 1e-9 && Number.isFinite(x)) {
          outside++;
          outsideAt ??= [i, j];
          worst = Math.max(worst, x);
        }
      }
    }
    // Integers are no correlations: an int8/uint16/bool array, or a text file of whole numbers
    // beyond ±1, is a label (atlas) image, counts or a binary graph.
    let integral = true;
    for (let i = 0; i < n && integral; i++) {
      if (!live(i)) continue;
      for (let j = 0; j < n && integral; j++)
        if (j !== i && live(j) && Number.isFinite(v(i, j)) && !Number.isInteger(v(i, j))) integral = false;
    }
    const intType = m.dtype !== undefined && INTEGER_DTYPE.test(m.dtype);
    // atanh(1) = ∞, and atanh of 0.995 is already 3: a Fisher-z matrix has an infinite or large diagonal.
    const diagBig = diag.length > 0 && diag.every((d) => !Number.isFinite(d) || Math.abs(d) > 3);
    const diagZ =
      diag.length > 0 &&
      diag.every((d) => d === Infinity || d === -Infinity || (Number.isFinite(d) && Math.abs(d) > 3));
    if (intType || (integral && outside > 0)) {
      out.push(
        finding(
          'error',
          'integer-values',
          `${intType ? `stores ${m.dtype} integers` : 'holds only whole numbers'}${outside > 0 ? ` (largest |v| = ${fmt(worst)})` : ''}, not correlations: probably a label (atlas) image or counts. Streamline or edge counts and binary graphs are weights (--input weight); a label image is not a connectivity matrix: give the matrix computed from it`,
          outsideAt ?? [0, n > 1 ? 1 : 0],
        ),
      );
    } else if (outside > 0 && diagBig) {
      out.push(
        finding(
          'error',
          'fisher-z',
          `${outside} values outside [−1, 1] (largest |v| = ${fmt(worst)}, first at ${cell(...outsideAt!)}) and a diagonal of ${fmt(diag[0])}: looks like Fisher z (atanh r); back-transform with tanh`,
          outsideAt!,
        ),
      );
    } else if (outside === 0 && diagZ) {
      const i = [...Array(n).keys()].find(live)!;
      out.push(
        finding(
          'error',
          'fisher-z',
          `looks like Fisher z (diagonal ${fmt(diag[0])}, as atanh(1) = ∞, while every other value lies in [−1, 1]): give correlations (tanh of these values), or fix the diagonal to 1 if they already are correlations`,
          [i, i],
        ),
      );
    } else {
      // Whole numbers within ±1 (−1, 0, 1 only): a binarised graph rather than correlations.
      let nonzero = 0;
      for (let i = 0; i < n && integral; i++)
        for (let j = 0; j < n; j++)
          if (j !== i && live(i) && live(j) && Number.isFinite(v(i, j)) && v(i, j) !== 0) nonzero++;
      if (integral && outside === 0 && nonzero > 0 && kept >= 3) {
        out.push(
          finding(
            'warning',
            'integer-values',
            'holds only the whole numbers −1, 0 and 1 off the diagonal: a binarised graph rather than correlations? A binary graph is a weight matrix (--input weight)',
            [0, 1],
          ),
        );
      }
      if (outside > 0) {
        out.push(
          finding(
            'error',
            'out-of-range',
            `${outside} correlations outside [−1, 1] (largest |v| = ${fmt(worst)}, first at ${cell(...outsideAt!)})`,
            outsideAt!,
          ),
        );
      }
      const off = [...Array(n).keys()].filter((i) => live(i) && Math.abs(v(i, i) - 1) > 1e-6);
      if (off.length > 0) {
        const i = off[0];
        const allZero = off.length === diag.length && diag.every((d) => d === 0);
        out.push(
          finding(
            'warning',
            'diagonal-not-one',
            allZero
              ? 'the diagonal is 0, not 1 (the analysis ignores the diagonal); if these are Fisher z values (atanh r with the diagonal set to 0) rather than correlations, give correlations (tanh of the values)'
              : `the diagonal differs from 1 at ${off.length} regions (first: ${o.name(i)} = ${fmt(v(i, i))}; the analysis ignores the diagonal)`,
            [i, i],
          ),
        );
      }
    }
  } else {
    let neg = 0;
    let negAt: [number, number] | null = null;
    for (let i = 0; i < n; i++) {
      if (!live(i)) continue;
      for (let j = 0; j < n; j++) {
        if (j !== i && live(j) && v(i, j) < 0) {
          neg++;
          negAt ??= [i, j];
        }
      }
    }
    if (neg > 0) {
      out.push(
        finding(
          'error',
          o.input === 'weight' ? 'negative-weight' : 'negative-distance',
          `${neg} negative ${o.input === 'weight' ? 'weights' : 'distances'} (first ${fmt(v(...negAt!))} at ${cell(...negAt!)})`,
          negAt!,
        ),
      );
    }
  }

  if (nanCount > 0) {
    out.push(
      finding('error', 'nan-cells', `${nanCount} missing (NaN) cells, first at ${cell(...nanAt!)}`, nanAt!),
    );
  }
  // An infinite distance is an absent edge; anywhere else it is an error.
  if (infCount > 0 && o.input !== 'distance' && !out.some((f) => f.code === 'fisher-z')) {
    out.push(
      finding(
        'error',
        'inf-cells',
        `${infCount} infinite cells, first ${fmt(v(...infAt!))} at ${cell(...infAt!)}`,
        infAt!,
      ),
    );
  }

  // A row whose off-diagonal values are all one number (often all 0): a region without signal.
  for (let i = 0; i < n && kept > 2; i++) {
    if (!live(i)) continue;
    let first: number | null = null;
    let same = true;
    for (let j = 0; j < n && same; j++) {
      if (j === i || !live(j)) continue;
      const x = v(i, j);
      if (first === null) first = x;
      else if (x !== first) same = false;
    }
    if (same && first !== null && Number.isFinite(first)) {
      out.push(
        finding(
          'warning',
          'constant-row',
          `${o.name(i)} has the same value (${fmt(first)}) to every other region: no signal?`,
          [i, i === 0 ? 1 : 0],
        ),
      );
    }
  }
  return { n, findings: out, dead };
}

/** Checks T × N region time series before they are correlated. */
export function checkTimeSeries(m: Matrix2D, o: CheckOptions): CheckResult {
  const { rows: t, cols: n, values } = m;
  const out: Finding[] = readerNotes(m);
  if (t < 3) {
    out.push(finding('error', 'too-few-timepoints', `only ${t} time points (rows); at least 3 are needed`));
    return { n, findings: out, dead: [] };
  }
  const dead: number[] = [];
  let nanCount = 0;
  let nanAt: [number, number] | null = null;
  let infCount = 0;
  let infAt: [number, number] | null = null;
  for (let j = 0; j < n; j++) {
    if (o.drop.has(j)) continue;
    let nans = 0;
    let constant = true;
    for (let s = 0; s < t; s++) {
      const x = values[s * n + j];
      if (Number.isNaN(x)) nans++;
      else if (!Number.isFinite(x)) {
        infCount++;
        infAt ??= [s, j];
      }
      if (x !== values[j]) constant = false;
    }
    if (nans === t || constant) {
      dead.push(j);
      out.push(
        finding(
          'error',
          nans === t ? 'nan-row' : 'constant-region',
          `${o.name(j)} ${nans === t ? 'is missing (NaN) at every time point' : `is constant (${fmt(values[j])}) over time, so it has no correlation`}: a dead region; drop it from every subject (dropRegions ${j})`,
          [0, j],
        ),
      );
    } else if (nans > 0) {
      nanCount += nans;
      if (!nanAt) for (let s = 0; s < t && !nanAt; s++) if (Number.isNaN(values[s * n + j])) nanAt = [s, j];
    }
  }
  if (nanCount > 0) {
    out.push(
      finding(
        'error',
        'nan-cells',
        `${nanCount} missing (NaN) time points, first at ${cell(...nanAt!)}`,
        nanAt!,
      ),
    );
  }
  if (infCount > 0) {
    out.push(
      finding('error', 'inf-cells', `${infCount} infinite values, first at ${cell(...infAt!)}`, infAt!),
    );
  }
  if (t <= n) {
    out.push(
      finding(
        'warning',
        'few-timepoints',
        `${t} time points for ${n} regions: the Pearson matrix is rank-deficient; Ledoit–Wolf shrinkage is advised`,
      ),
    );
  }
  return { n, findings: out, dead };
}
