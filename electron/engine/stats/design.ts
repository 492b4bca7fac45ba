/**
 * The design matrix of a group comparison, built from the participants table: an intercept,
 * treatment-coded dummies for the grouping column (first level is the reference), then the
 * covariates (numeric ones centred, categorical ones dummy-coded against their first level).
 * Contrasts are written on the coefficients: A − B between two levels, or the F-test that all
 * group levels share one mean (Searle 1971, Linear Models; common practice).
 *
 * Subjects missing the group or any covariate are left out, each with its reason.
 *
 *   buildDesign(subjects, { groupColumn: 'dx', covariates: ['age'] })
 *   // columns: (intercept), dx[patient], age;  contrasts: [control − patient]
 */
import type { CovariateValue } from '../../api.ts';
import { orthonormalize } from './linalg.ts';

/** A subject as the design sees it: an id and its participants-table row. */
export interface DesignSubject {
  id: string;
  covariates: Record<string, CovariateValue>;
}

export interface DesignSpec {
  groupColumn: string;
  covariates: string[];
  /** Order of the group levels; default: natural sort of the levels present. */
  levels?: string[];
  /** Force a covariate's kind; default: numeric when every present value is a number. */
  kinds?: Record<string, 'numeric' | 'categorical'>;
  /** Which contrasts to set up; default: A − B for two levels, the F-test for three or more. */
  contrasts?: Array<{ kind: 'pair'; a: string; b: string } | { kind: 'all-levels' }>;
}

/** A hypothesis C β = 0: one row → a t statistic, several rows → an F statistic. */
export interface Contrast {
  name: string;
  /** Rows of C, each of length = number of design columns. */
  rows: number[][];
  /** For a pair contrast, the two levels compared (a − b); used for effect sizes. */
  pair?: [string, string];
}

export interface Design {
  /** Included subjects, in design-row order. */
  ids: string[];
  /** Group label index of each included subject. */
  group: Int32Array;
  levels: string[];
  /** Subjects per level, aligned with `levels`. */
  groupSizes: number[];
  columnNames: string[];
  /** Design columns, each of length ids.length. */
  columns: Float64Array[];
  contrasts: Contrast[];
  excluded: Array<{ id: string; reason: string }>;
  groupColumn: string;
  covariates: string[];
}

/** A design that cannot be fitted; the message says which column or level is at fault. */
export class DesignError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'DesignError';
  }
}

const collator = new Intl.Collator('en', { numeric: true });

function isMissing(v: CovariateValue | undefined): boolean {
  return v === null || v === undefined || (typeof v === 'string' && v.trim() === '') || Number.isNaN(v);
}

/** Builds the design; throws DesignError with a specific message when it cannot be fitted. */
export function buildDesign(subjects: DesignSubject[], spec: DesignSpec): Design {
  const { groupColumn, covariates } = spec;
  if (covariates.includes(groupColumn)) {
    throw new DesignError(`covariate '${groupColumn}' is the grouping column itself`);
  }
  const excluded: Array<{ id: string; reason: string }> = [];
  const rows: DesignSubject[] = [];
  for (const s of subjects) {
    if (isMissing(s.covariates[groupColumn])) {
      excluded.push({ id: s.id, reason: `missing '${groupColumn}'` });
      continue;
    }
    const missing = covariates.filter((c) => isMissing(s.covariates[c]));
    if (missing.length > 0) {
      excluded.push({ id: s.id, reason: `missing ${missing.map((c) => `'${c}'`).join(', ')}` });
      continue;
    }
    rows.push(s);
  }
  const n = rows.length;
  const labels = rows.map((s) => String(s.covariates[groupColumn]));
  const present = [...new Set(labels)].sort(collator.compare);
  let levels = present;
  if (spec.levels) {
    const unknown = present.filter((l) => !spec.levels!.includes(l));
    if (unknown.length > 0) {
      throw new DesignError(
        `group '${groupColumn}' has level(s) ${unknown.join(', ')} not in the given level order`,
      );
    }
    levels = spec.levels.filter((l) => present.includes(l));
  }
  if (levels.length < 2) {
    throw new DesignError(
      `group '${groupColumn}' needs at least 2 levels among usable subjects; found ${levels.length === 0 ? 'none' : `only '${levels[0]}'`}`,
    );
  }
  const group = Int32Array.from(labels, (l) => levels.indexOf(l));
  const groupSizes = levels.map((_, g) => group.filter((x) => x === g).length);
  levels.forEach((l, g) => {
    if (groupSizes[g] < 2) {
      throw new DesignError(
        `group '${l}' of '${groupColumn}' has ${groupSizes[g]} usable subject${groupSizes[g] === 1 ? '' : 's'}; at least 2 are needed`,
      );
    }
  });

  const columnNames: string[] = ['(intercept)'];
  const columns: Float64Array[] = [new Float64Array(n).fill(1)];
  for (let g = 1; g < levels.length; g++) {
    columnNames.push(`${groupColumn}[${levels[g]}]`);
    columns.push(Float64Array.from(group, (x) => (x === g ? 1 : 0)));
  }
  const groupColumns = columns.length;
  const covariateColumns: Array<{ name: string; from: number; to: number }> = [];
  for (const c of covariates) {
    const values = rows.map((s) => s.covariates[c] as string | number);
    const numeric = values.every((v) => typeof v === 'number');
    const kind = spec.kinds?.[c] ?? (numeric ? 'numeric' : 'categorical');
    const from = columns.length;
    if (kind === 'numeric') {
      if (!numeric) throw new DesignError(`covariate '${c}' is declared numeric but holds text values`);
      const x = Float64Array.from(values as number[]);
      const mean = x.reduce((a, b) => a + b, 0) / n;
      // Centring leaves every group contrast unchanged and keeps the columns well conditioned.
      for (let i = 0; i < n; i++) x[i] -= mean;
      if (x.every((v) => Math.abs(v) <= 1e-12 * Math.max(1, Math.abs(mean)))) {
        throw new DesignError(`covariate '${c}' takes a single value (${mean}) among usable subjects`);
      }
      columnNames.push(c);
      columns.push(x);
    } else {
      const text = values.map((v) => String(v));
      const lv = [...new Set(text)].sort(collator.compare);
      if (lv.length < 2)
        throw new DesignError(`covariate '${c}' takes a single value ('${lv[0]}') among usable subjects`);
      for (let k = 1; k < lv.length; k++) {
        columnNames.push(`${c}[${lv[k]}]`);
        columns.push(Float64Array.from(text, (t) => (t === lv[k] ? 1 : 0)));
      }
    }
    covariateColumns.push({ name: c, from, to: columns.length });
  }

  checkCollinearity(columns, columnNames, groupColumns, covariateColumns, groupColumn);
  if (n - columns.length < 1) {
    throw new DesignError(
      `design has ${columns.length} columns but only ${n} usable subjects: no degrees of freedom are left for the error`,
    );
  }

  const contrastSpecs =
    spec.contrasts ??
    (levels.length === 2
      ? [{ kind: 'pair' as const, a: levels[0], b: levels[1] }]
      : [{ kind: 'all-levels' as const }]);
  const p = columns.length;
  const contrasts: Contrast[] = contrastSpecs.map((cs) => {
    if (cs.kind === 'all-levels') {
      const rowsC: number[][] = [];
      for (let g = 1; g < levels.length; g++) {
        const r = new Array<number>(p).fill(0);
        r[g] = 1;
        rowsC.push(r);
      }
      return { name: `${groupColumn} (all levels)`, rows: rowsC };
    }
    const a = levels.indexOf(cs.a);
    const b = levels.indexOf(cs.b);
    if (a < 0 || b < 0) {
      throw new DesignError(
        `contrast ${cs.a} − ${cs.b}: level '${a < 0 ? cs.a : cs.b}' is not in '${groupColumn}'`,
      );
    }
    if (a === b) throw new DesignError(`contrast ${cs.a} − ${cs.b} compares a level with itself`);
    // With treatment coding, the mean of level g is β0 + β_g (β_0 for the reference).
    const r = new Array<number>(p).fill(0);
    if (a > 0) r[a] += 1;
    if (b > 0) r[b] -= 1;
    return { name: `${cs.a} - ${cs.b}`, rows: [r], pair: [cs.a, cs.b] as [string, string] };
  });

  return {
    ids: rows.map((s) => s.id),
    group,
    levels,
    groupSizes,
    columnNames,
    columns,
    contrasts,
    excluded,
    groupColumn,
    covariates: [...covariates],
  };
}

/** Names the covariate that makes the design singular, preferring the most specific diagnosis. */
function checkCollinearity(
  columns: Float64Array[],
  names: string[],
  groupColumns: number,
  covs: Array<{ name: string; from: number; to: number }>,
  groupColumn: string,
): void {
  const base = columns.slice(0, groupColumns);
  for (const c of covs) {
    const own = columns.slice(c.from, c.to);
    // Dependence of the set {1, group dummies, covariate columns} covers both a covariate that carries
    // nothing beyond group membership and one that determines it (e.g. a site nested within group).
    if (orthonormalize([...base, ...own]).dropped.length > 0) {
      throw new DesignError(`covariate '${c.name}' is collinear with group '${groupColumn}'`);
    }
  }
  const all = orthonormalize(columns);
  if (all.dropped.length > 0) {
    const j = all.dropped[0];
    const covariatesIndependent =
      orthonormalize([columns[0], ...columns.slice(groupColumns)]).dropped.length === 0;
    if (!covariatesIndependent) {
      throw new DesignError(
        `design is rank-deficient: column '${names[j]}' is a linear combination of earlier columns`,
      );
    }
    const involved = covs.map((c) => `'${c.name}'`).join(', ');
    throw new DesignError(`covariates ${involved} together are collinear with group '${groupColumn}'`);
  }
}
