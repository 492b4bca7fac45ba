/**
 * The design matrix of a study, built from the scans' covariate rows.
 *
 * What is tested is given as one of
 * - an effect column (`effect`, or `groupColumn`, the same with the column taken as categorical):
 *   categorical with 2 levels → the t contrast other − reference; more levels → the F test over all
 *   its dummies; numeric → the slope t. Covariates are added as nuisance terms.
 * - a model formula in Wilkinson–Rogers notation (`model`, see formula.ts) with `test` naming one
 *   term of the expanded model: F over the term's columns, or t when the term has one column.
 * Coding (Searle 1971, Linear Models; common practice): an intercept; categorical columns
 * treatment-coded against their reference level (the first in natural order, or `reference` for a
 * tested categorical column); numeric columns centred; an interaction's columns are the products
 * of its variables' columns. The contrast of a 2-level effect is other − reference.
 *
 * Exchangeability blocks (`blocks`, e.g. participant_id, for repeated scans of a participant;
 * Winkler, Ridgway, Webster, Smith & Nichols 2014, NeuroImage 92; Winkler, Webster, Vidaurre,
 * Nichols & Smith 2015, NeuroImage 123, "Multi-level block permutation"): each variable of the
 * tested term either varies within some block ("within") or is constant within every block
 * ("between"). All within → rows are permuted only within their block, and the block intercepts
 * (one dummy per block) join the nuisance so that the test is the within-block comparison (for a
 * 2-level effect with two rows per block this is the paired t, and the permutations are the sign
 * flips of the within-block differences); nuisance terms constant within blocks are absorbed by the
 * block intercepts and dropped (with a note). All between → whole blocks are permuted as wholes
 * among blocks of the same size and within-block structure. Both (an interaction of a between and
 * a within variable) → both kinds of shuffle combined, with the block intercepts in the nuisance.
 * Without blocks, a participant_id repeated among the rows is refused: its rows are not
 * exchangeable with other participants' rows.
 *
 * Rows missing any column used are left out, each with its reason.
 *
 *   buildDesign(rows, { effect: 'dx', covariates: ['age'] })
 *   // columns: (intercept), dx[patient], age;  contrasts: [patient − control]
 *   buildDesign(rows, { model: 'dx*session', test: 'dx:session', covariates: [], blocks: 'participant_id' })
 */
import type { CovariateValue } from '../../api.ts';
import { expandFormula, FormulaError, parseTerm, sameTerm, termName } from './formula.ts';
import { orthonormalize } from './linalg.ts';

/** A scan row as the design sees it: an id and its covariates (participants table, sessions table). */
export interface DesignSubject {
  id: string;
  covariates: Record<string, CovariateValue>;
}

export interface DesignSpec {
  /** Shorthand: the same as `effect` with the column taken as categorical. */
  groupColumn?: string | null;
  effect?: string | null;
  /** Wilkinson–Rogers formula, with `test` naming the tested term. */
  model?: string | null;
  test?: string | null;
  /** Reference level of the tested categorical column. */
  reference?: string | null;
  covariates: string[];
  blocks?: string | null;
  /** Order of the levels of a categorical effect; default: natural sort (reference first). */
  levels?: string[];
  /** Force a column's kind; default: numeric when every present value is a number. */
  kinds?: Record<string, 'numeric' | 'categorical'>;
  /** For a categorical effect: which contrasts to set up (default: other − reference, or the F-test). */
  contrasts?: Array<{ kind: 'pair'; a: string; b: string } | { kind: 'all-levels' }>;
  /**
   * Internal, for the calibration study only: accept repeated participant_id rows without blocks
   * (the pseudo-replicated analysis the checks must show to be invalid).
   */
  allowRepeatedParticipants?: boolean;
}

/** A hypothesis C β = 0: one row → a t statistic, several rows → an F statistic. */
export interface Contrast {
  name: string;
  /** Rows of C, each of length = number of design columns. */
  rows: number[][];
  /** For a pair contrast, the two levels compared (a − b); used for effect sizes. */
  pair?: [string, string];
}

export type ExchangeabilityScheme = 'within-blocks' | 'whole-blocks' | 'within-and-whole-blocks';

/** The restricted set of permutations of a blocked design. */
export interface Exchangeability {
  scheme: ExchangeabilityScheme;
  column: string;
  /** Block index of each row. */
  block: Int32Array;
  names: string[];
  /** Rows of each block, in within-block order (rows at the same position correspond under whole-block moves). */
  members: number[][];
  /** Class of each block: blocks of a class have the same size and structure and may be exchanged as wholes. */
  classes: Int32Array;
}

export interface Design {
  /** Included rows, in design-row order. */
  ids: string[];
  /** For a categorical effect: level index of each row; empty otherwise. */
  group: Int32Array;
  /** For a categorical effect: its levels, reference first; empty otherwise. */
  levels: string[];
  /** Rows per level, aligned with `levels`. */
  groupSizes: number[];
  columnNames: string[];
  /** Design columns, each of length ids.length. */
  columns: Float64Array[];
  contrasts: Contrast[];
  excluded: Array<{ id: string; reason: string }>;
  /** The effect column, or the tested term's name. */
  groupColumn: string;
  covariates: string[];
  effect: {
    term: string;
    variables: string[];
    kind: 'categorical' | 'numeric' | 'interaction';
    /** Indices of the tested term's columns. */
    columns: number[];
  };
  /** Null: rows exchangeable freely. */
  exchangeability: Exchangeability | null;
  /** Indices of the block-intercept columns (within-block schemes). */
  blockColumns: number[];
  /** A 2-level within-block contrast with at most two rows per block: d_z applies. */
  paired: boolean;
  /** What the builder did beyond the obvious (terms absorbed by blocks, blocks that stay in place). */
  notes: string[];
}

/** A design that cannot be fitted; the message says which column or level is at fault. */
export class DesignError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'DesignError';
  }
}

export const collator = new Intl.Collator('en', { numeric: true });

function isMissing(v: CovariateValue | undefined): boolean {
  return v === null || v === undefined || (typeof v === 'string' && v.trim() === '') || Number.isNaN(v);
}

interface Coded {
  kind: 'numeric' | 'categorical';
  columns: Float64Array[];
  names: string[];
  levels: string[];
  text: string[];
}

/** Builds the design; throws DesignError with a specific message when it cannot be fitted. */
export function buildDesign(subjects: DesignSubject[], spec: DesignSpec): Design {
  const covariates = [...spec.covariates];
  const given = [spec.groupColumn, spec.effect, spec.model].filter((x) => x);
  if (given.length !== 1) {
    throw new DesignError(
      given.length === 0
        ? 'nothing to test: give a group column, an effect or a model'
        : 'give only one of group column, effect and model',
    );
  }
  if (spec.test && !spec.model) throw new DesignError('a tested term (--test) needs a model (--model)');
  const kinds: Record<string, 'numeric' | 'categorical'> = { ...spec.kinds };

  // The terms of the model and the tested one.
  let terms: string[][];
  let tested: string[];
  const effectMode = !spec.model;
  if (effectMode) {
    const col = (spec.groupColumn ?? spec.effect)!;
    if (spec.groupColumn) kinds[col] = 'categorical';
    if (covariates.includes(col)) {
      throw new DesignError(
        `covariate '${col}' is the ${spec.groupColumn ? 'grouping column' : 'effect'} itself`,
      );
    }
    tested = [col];
    terms = [tested, ...covariates.map((c) => [c])];
  } else {
    try {
      terms = expandFormula(spec.model!);
    } catch (e) {
      if (e instanceof FormulaError) throw new DesignError(e.message);
      throw e;
    }
    for (const c of covariates) {
      if (terms.some((t) => t.includes(c))) throw new DesignError(`covariate '${c}' is already in the model`);
      terms.push([c]);
    }
    if (!spec.test) {
      if (terms.length !== 1) {
        throw new DesignError(
          `the model has several terms: name the one to test with --test (${terms.map(termName).join(', ')})`,
        );
      }
      tested = terms[0];
    } else {
      let t: string[];
      try {
        t = parseTerm(spec.test);
      } catch (e) {
        if (e instanceof FormulaError) throw new DesignError(e.message);
        throw e;
      }
      const found = terms.find((u) => sameTerm(u, t));
      if (!found) {
        throw new DesignError(
          `tested term '${spec.test}' is not a term of the model '${spec.model}' (terms: ${terms.map(termName).join(', ')})`,
        );
      }
      tested = found;
    }
  }
  const variables = [...new Set(terms.flat())];
  const blockColumn = spec.blocks ?? null;
  if (blockColumn && variables.includes(blockColumn)) {
    throw new DesignError(`block column '${blockColumn}' cannot also be a term of the model`);
  }
  const used = blockColumn ? [...variables, blockColumn] : variables;
  if (subjects.length > 0) {
    for (const c of used) {
      if (!subjects.some((s) => c in s.covariates)) throw new DesignError(`unknown column '${c}'`);
    }
  }

  // Rows with every column used.
  const excluded: Array<{ id: string; reason: string }> = [];
  const rows: DesignSubject[] = [];
  for (const s of subjects) {
    const missing = used.filter((c) => isMissing(s.covariates[c]));
    if (missing.length > 0) {
      excluded.push({ id: s.id, reason: `missing ${missing.map((c) => `'${c}'`).join(', ')}` });
      continue;
    }
    rows.push(s);
  }
  const n = rows.length;
  const groupWord = spec.groupColumn ? 'group' : 'effect';
  const noun = blockColumn || spec.allowRepeatedParticipants ? 'row' : 'subject';

  if (!blockColumn && !spec.allowRepeatedParticipants) {
    const count = new Map<string, number>();
    for (const s of rows) {
      const p = s.covariates.participant_id;
      if (p === null || p === undefined) continue;
      count.set(String(p), (count.get(String(p)) ?? 0) + 1);
    }
    for (const [p, k] of count) {
      if (k > 1) {
        throw new DesignError(
          `participant '${p}' has ${k} rows (sessions): declare the exchangeability blocks with --blocks participant_id`,
        );
      }
    }
  }

  // Code each variable.
  const testedCategorical = tested.filter((v) => kindOf(v) === 'categorical');
  function kindOf(v: string): 'numeric' | 'categorical' {
    return kinds[v] ?? (rows.every((s) => typeof s.covariates[v] === 'number') ? 'numeric' : 'categorical');
  }
  if (spec.reference) {
    const holder = testedCategorical.find((v) =>
      rows.some((s) => String(s.covariates[v]) === spec.reference),
    );
    if (!holder) {
      const where =
        testedCategorical.length > 0
          ? testedCategorical.map((v) => `'${v}'`).join(', ')
          : 'no categorical column';
      throw new DesignError(`reference level '${spec.reference}' is not a level of the tested ${where}`);
    }
  }
  const isEffect = (v: string) => effectMode && v === tested[0];
  const coded = new Map<string, Coded>();
  for (const v of variables) {
    const kind = kindOf(v);
    const values = rows.map((s) => s.covariates[v] as string | number);
    const role = isEffect(v) ? groupWord : covariates.includes(v) ? 'covariate' : 'column';
    if (kind === 'numeric') {
      if (!values.every((x) => typeof x === 'number')) {
        throw new DesignError(`${role} '${v}' is declared numeric but holds text values`);
      }
      const x = Float64Array.from(values as number[]);
      const mean = x.reduce((a, b) => a + b, 0) / Math.max(1, n);
      // Centring leaves every group contrast unchanged and keeps the columns well conditioned.
      for (let i = 0; i < n; i++) x[i] -= mean;
      if (x.every((y) => Math.abs(y) <= 1e-12 * Math.max(1, Math.abs(mean)))) {
        throw new DesignError(`${role} '${v}' takes a single value (${mean}) among usable ${noun}s`);
      }
      coded.set(v, { kind, columns: [x], names: [v], levels: [], text: values.map(String) });
      continue;
    }
    const text = values.map((x) => String(x));
    const present = [...new Set(text)].sort(collator.compare);
    let levels = present;
    if (isEffect(v) && spec.levels) {
      const unknown = present.filter((l) => !spec.levels!.includes(l));
      if (unknown.length > 0) {
        throw new DesignError(`group '${v}' has level(s) ${unknown.join(', ')} not in the given level order`);
      }
      levels = spec.levels.filter((l) => present.includes(l));
    }
    if (spec.reference && tested.includes(v) && levels.includes(spec.reference)) {
      levels = [spec.reference, ...levels.filter((l) => l !== spec.reference)];
    }
    if (levels.length < 2) {
      if (isEffect(v)) {
        throw new DesignError(
          `${groupWord} '${v}' needs at least 2 levels among usable ${noun}s; found ${levels.length === 0 ? 'none' : `only '${levels[0]}'`}`,
        );
      }
      throw new DesignError(`${role} '${v}' takes a single value ('${levels[0]}') among usable ${noun}s`);
    }
    if (isEffect(v)) {
      for (const l of levels) {
        const k = text.filter((t) => t === l).length;
        if (k < 2) {
          throw new DesignError(
            `group '${l}' of '${v}' has ${k} usable ${noun}${k === 1 ? '' : 's'}; at least 2 are needed`,
          );
        }
      }
    }
    const cols: Float64Array[] = [];
    const names: string[] = [];
    for (let k = 1; k < levels.length; k++) {
      names.push(`${v}[${levels[k]}]`);
      cols.push(Float64Array.from(text, (t) => (t === levels[k] ? 1 : 0)));
    }
    coded.set(v, { kind, columns: cols, names, levels, text });
  }

  // Blocks and the exchangeability scheme.
  const notes: string[] = [];
  let exchangeability: Exchangeability | null = null;
  let keptTerms = terms;
  let withinVars: string[] = [];
  let blockIndex: Int32Array | null = null;
  let blockNames: string[] = [];
  if (blockColumn) {
    const labels = rows.map((s) => String(s.covariates[blockColumn]));
    blockNames = [...new Set(labels)].sort(collator.compare);
    const at = new Map(blockNames.map((b, k) => [b, k]));
    blockIndex = Int32Array.from(labels, (l) => at.get(l)!);
    const varies = (v: string): boolean => {
      const first = new Map<number, string>();
      const text = coded.get(v)!.text;
      for (let i = 0; i < n; i++) {
        const f = first.get(blockIndex![i]);
        if (f === undefined) first.set(blockIndex![i], text[i]);
        else if (f !== text[i]) return true;
      }
      return false;
    };
    withinVars = variables.filter(varies);
    const testedWithin = tested.filter((v) => withinVars.includes(v));
    const scheme: ExchangeabilityScheme =
      testedWithin.length === 0
        ? 'whole-blocks'
        : testedWithin.length === tested.length
          ? 'within-blocks'
          : 'within-and-whole-blocks';
    if (scheme !== 'whole-blocks') {
      keptTerms = terms.filter((t) => t === tested || t.some((v) => withinVars.includes(v)));
      const absorbed = terms.filter((t) => !keptTerms.includes(t));
      if (absorbed.length > 0) {
        notes.push(
          `${absorbed.map((t) => `'${termName(t)}'`).join(', ')} ${absorbed.length === 1 ? 'is' : 'are'} constant within the blocks of '${blockColumn}' and absorbed by the block intercepts`,
        );
      }
    }
    // Within-block order and block structure: by the values of the categorical variables that vary
    // within blocks (e.g. session); numeric ones (e.g. motion) are data, not structure.
    const layout = withinVars.filter((v) => coded.get(v)!.kind === 'categorical');
    const keyOf = (i: number) => layout.map((v) => coded.get(v)!.text[i]).join('\u0000');
    const members: number[][] = blockNames.map(() => []);
    for (let i = 0; i < n; i++) members[blockIndex[i]].push(i);
    for (const m of members) m.sort((a, b) => collator.compare(keyOf(a), keyOf(b)) || a - b);
    const signatures = members.map((m) => m.map(keyOf).join('\u0001') + `#${m.length}`);
    const classOf = new Map<string, number>();
    const classes = Int32Array.from(signatures, (sig) => {
      if (!classOf.has(sig)) classOf.set(sig, classOf.size);
      return classOf.get(sig)!;
    });
    if (scheme !== 'within-blocks') {
      const sizes = new Map<number, number>();
      classes.forEach((c) => sizes.set(c, (sizes.get(c) ?? 0) + 1));
      const alone = [...classes].filter((c) => sizes.get(c) === 1).length;
      if (alone === classes.length) {
        const a = members[0]?.length ?? 0;
        const other = members.findIndex((m) => m.length !== a);
        const detail =
          other >= 0
            ? `'${blockNames[0]}' has ${a} row(s), '${blockNames[other]}' has ${members[other].length}`
            : `no two blocks have the same ${layout.map((v) => `'${v}'`).join(', ')} values`;
        throw new DesignError(
          `the tested term '${termName(tested)}' is constant within the blocks of '${blockColumn}', so whole blocks must be exchanged, but no two blocks have the same size and structure (${detail})`,
        );
      }
      if (alone > 0) {
        notes.push(
          `${alone} block(s) of '${blockColumn}' have a size or structure no other block shares; they stay in place under whole-block permutation`,
        );
      }
    }
    exchangeability = { scheme, column: blockColumn, block: blockIndex, names: blockNames, members, classes };
  }

  // Marginality (Nelder 1977, "A reformulation of linear models", J. R. Stat. Soc. A 140): an
  // interaction without its lower-order terms is coded against the reference levels and does not
  // test the usual interaction; say so rather than guess another coding.
  for (const t of terms) {
    if (t.length < 2) continue;
    const lower = t
      .map((_, k) => t.filter((__, j) => j !== k))
      .filter((sub) => !terms.some((u) => sameTerm(u, sub)));
    if (lower.length > 0) {
      notes.push(
        `model term '${termName(t)}' lacks its lower-order term(s) ${lower.map((x) => `'${termName(x)}'`).join(', ')}: its columns are products of treatment-coded columns and its test is not the usual interaction test`,
      );
    }
  }

  // Columns: intercept, the kept terms in order, then block intercepts.
  const columnNames: string[] = ['(intercept)'];
  const columns: Float64Array[] = [new Float64Array(n).fill(1)];
  const termColumns = new Map<string[], number[]>();
  for (const t of keptTerms) {
    const parts = t.map((v) => coded.get(v)!);
    let cols: Float64Array[] = [new Float64Array(n).fill(1)];
    let names: string[] = [''];
    for (const p of parts) {
      const nextCols: Float64Array[] = [];
      const nextNames: string[] = [];
      cols.forEach((c, a) =>
        p.columns.forEach((d, b) => {
          nextCols.push(Float64Array.from(c, (x, i) => x * d[i]));
          nextNames.push(names[a] ? `${names[a]}:${p.names[b]}` : p.names[b]);
        }),
      );
      cols = nextCols;
      names = nextNames;
    }
    const idx: number[] = [];
    cols.forEach((c, k) => {
      idx.push(columns.length);
      columns.push(c);
      columnNames.push(names[k]);
    });
    termColumns.set(t, idx);
  }
  const blockColumns: number[] = [];
  if (exchangeability && exchangeability.scheme !== 'whole-blocks') {
    for (let b = 1; b < blockNames.length; b++) {
      blockColumns.push(columns.length);
      columnNames.push(`${blockColumn}[${blockNames[b]}]`);
      columns.push(Float64Array.from(blockIndex!, (x) => (x === b ? 1 : 0)));
    }
  }

  const testedIdx = termColumns.get(tested)!;
  if (effectMode) {
    const base = columns.slice(0, 1 + testedIdx.length);
    const covs = keptTerms.slice(1).map((t) => {
      const idx = termColumns.get(t)!;
      return { name: termName(t), from: idx[0], to: idx[idx.length - 1] + 1 };
    });
    checkCollinearity(columns, columnNames, base.length, covs, `${groupWord} '${tested[0]}'`);
  } else {
    const all = orthonormalize(columns);
    if (all.dropped.length > 0) {
      throw new DesignError(
        `design is rank-deficient: column '${columnNames[all.dropped[0]]}' is a linear combination of earlier columns`,
      );
    }
  }
  if (n - columns.length < 1) {
    throw new DesignError(
      `design has ${columns.length} columns but only ${n} usable ${noun}s: no degrees of freedom are left for the error`,
    );
  }

  // Contrasts.
  const p = columns.length;
  const unit = (k: number) => {
    const r = new Array<number>(p).fill(0);
    r[k] = 1;
    return r;
  };
  const kind: Design['effect']['kind'] =
    tested.length > 1 ? 'interaction' : coded.get(tested[0])!.kind === 'numeric' ? 'numeric' : 'categorical';
  let levels: string[] = [];
  let group = new Int32Array(0);
  let groupSizes: number[] = [];
  let contrasts: Contrast[];
  const name = termName(tested);
  if (kind === 'categorical') {
    const c = coded.get(tested[0])!;
    levels = c.levels;
    group = Int32Array.from(c.text, (t) => levels.indexOf(t));
    groupSizes = levels.map((_, g) => group.filter((x) => x === g).length);
    const specs =
      spec.contrasts ??
      (levels.length === 2
        ? [{ kind: 'pair' as const, a: levels[1], b: levels[0] }]
        : [{ kind: 'all-levels' as const }]);
    contrasts = specs.map((cs) => {
      if (cs.kind === 'all-levels') return { name: `${name} (all levels)`, rows: testedIdx.map(unit) };
      const a = levels.indexOf(cs.a);
      const b = levels.indexOf(cs.b);
      if (a < 0 || b < 0) {
        throw new DesignError(
          `contrast ${cs.a} − ${cs.b}: level '${a < 0 ? cs.a : cs.b}' is not in '${name}'`,
        );
      }
      if (a === b) throw new DesignError(`contrast ${cs.a} − ${cs.b} compares a level with itself`);
      // With treatment coding, the mean of level g is β0 + β_g (β_0 for the reference).
      const r = new Array<number>(p).fill(0);
      if (a > 0) r[testedIdx[a - 1]] += 1;
      if (b > 0) r[testedIdx[b - 1]] -= 1;
      return { name: `${cs.a} - ${cs.b}`, rows: [r], pair: [cs.a, cs.b] as [string, string] };
    });
  } else {
    contrasts = [
      { name: testedIdx.length === 1 ? name : `${name} (all columns)`, rows: testedIdx.map(unit) },
    ];
  }

  let paired = false;
  if (exchangeability?.scheme === 'within-blocks' && kind === 'categorical' && levels.length === 2) {
    const m = exchangeability.members;
    paired =
      m.every((rowsOf) => rowsOf.length <= 2) &&
      m.filter((rowsOf) => rowsOf.length === 2 && group[rowsOf[0]] !== group[rowsOf[1]]).length >= 2 &&
      m.every((rowsOf) => rowsOf.length < 2 || group[rowsOf[0]] !== group[rowsOf[1]]);
  }

  return {
    ids: rows.map((s) => s.id),
    group,
    levels,
    groupSizes,
    columnNames,
    columns,
    contrasts,
    excluded,
    groupColumn: name,
    covariates,
    effect: { term: name, variables: [...tested], kind, columns: testedIdx },
    exchangeability,
    blockColumns,
    paired,
    notes,
  };
}

/** Names the covariate that makes the design singular, preferring the most specific diagnosis. */
function checkCollinearity(
  columns: Float64Array[],
  names: string[],
  effectColumns: number,
  covs: Array<{ name: string; from: number; to: number }>,
  effect: string,
): void {
  const base = columns.slice(0, effectColumns);
  for (const c of covs) {
    const own = columns.slice(c.from, c.to);
    // Dependence of the set {1, effect columns, covariate columns} covers both a covariate that carries
    // nothing beyond group membership and one that determines it (e.g. a site nested within group).
    if (orthonormalize([...base, ...own]).dropped.length > 0) {
      throw new DesignError(`covariate '${c.name}' is collinear with ${effect}`);
    }
  }
  const all = orthonormalize(columns);
  if (all.dropped.length > 0) {
    const j = all.dropped[0];
    const covariatesIndependent =
      orthonormalize([columns[0], ...columns.slice(effectColumns)]).dropped.length === 0;
    if (!covariatesIndependent || covs.length === 0) {
      throw new DesignError(
        `design is rank-deficient: column '${names[j]}' is a linear combination of earlier columns`,
      );
    }
    const involved = covs.map((c) => `'${c.name}'`).join(', ');
    throw new DesignError(`covariates ${involved} together are collinear with ${effect}`);
  }
}
