/**
 * Model formulas in Wilkinson–Rogers notation (Wilkinson & Rogers 1973, "Symbolic description of
 * factorial models for analysis of variance", J. R. Stat. Soc. C 22): `a + b` adds terms, `a:b` is
 * the interaction of a and b, `a*b` is a + b + a:b (and `a*b*c` every non-empty product of the
 * three). `:` binds tighter than `*`, which binds tighter than `+`. Parentheses are not supported.
 * A term is a set of variables: `b:a` is the same term as `a:b`, and repeated terms count once.
 * Terms come out ordered by degree (main effects first), then by first appearance.
 *
 *   expandFormula('group*session + age')
 *   // [['group'], ['session'], ['age'], ['group', 'session']]
 */

/** A formula that cannot be read; the message names the bad token. */
export class FormulaError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'FormulaError';
  }
}

/** The tokens of a formula: variable names and the operators + * :. */
function tokenize(formula: string): string[] {
  const tokens: string[] = [];
  const re = /\s*([+*:]|[^\s+*:]+)/gy;
  let m: RegExpExecArray | null;
  let at = 0;
  while (at < formula.length && (m = re.exec(formula)) !== null) {
    tokens.push(m[1]);
    at = re.lastIndex;
  }
  if (formula.slice(at).trim() !== '') throw new FormulaError(`cannot read '${formula.slice(at).trim()}'`);
  for (const t of tokens) {
    if (/[()~^/|]/.test(t)) {
      throw new FormulaError(
        `unsupported token '${t}' in model '${formula}': only column names joined by '+', ':' and '*'`,
      );
    }
  }
  return tokens;
}

/** Parses a single term such as "a:b" (or "a"). */
export function parseTerm(text: string): string[] {
  const tokens = tokenize(text);
  const vars: string[] = [];
  tokens.forEach((t, i) => {
    const operand = i % 2 === 0;
    if (operand && (t === ':' || t === '+' || t === '*'))
      throw new FormulaError(`term '${text}': unexpected '${t}'`);
    if (!operand && t !== ':') throw new FormulaError(`term '${text}': expected ':' but found '${t}'`);
    if (operand && !vars.includes(t)) vars.push(t);
  });
  if (tokens.length === 0 || tokens.length % 2 === 0) throw new FormulaError(`term '${text}' is incomplete`);
  return vars;
}

/** Expands a formula into its terms (each a list of variable names). */
export function expandFormula(formula: string): string[][] {
  const tokens = tokenize(formula);
  if (tokens.length === 0) throw new FormulaError('the model formula is empty');
  const terms: string[][] = [];
  const add = (t: string[]) => {
    if (!terms.some((u) => sameTerm(u, t))) terms.push(t);
  };
  // Summands separated by '+'; each a '*'-product of ':'-interactions.
  let i = 0;
  const operand = (): string => {
    const t = tokens[i];
    if (t === undefined) throw new FormulaError(`model '${formula}' ends with an operator`);
    if (t === '+' || t === '*' || t === ':') {
      throw new FormulaError(`model '${formula}': unexpected '${t}' where a column name was expected`);
    }
    i++;
    return t;
  };
  while (i < tokens.length) {
    const factors: string[][] = [];
    let current = [operand()];
    while (i < tokens.length && tokens[i] !== '+') {
      const op = tokens[i++];
      if (op === ':') {
        const v = operand();
        if (!current.includes(v)) current.push(v);
      } else if (op === '*') {
        factors.push(current);
        current = [operand()];
      } else throw new FormulaError(`model '${formula}': expected an operator but found '${op}'`);
    }
    factors.push(current);
    // Every non-empty subset of the factors, as the union of their variables.
    const products: string[][] = [];
    for (let mask = 1; mask < 1 << factors.length; mask++) {
      const vars: string[] = [];
      factors.forEach((f, k) => {
        if (mask & (1 << k)) for (const v of f) if (!vars.includes(v)) vars.push(v);
      });
      products.push(vars);
    }
    products.sort((a, b) => a.length - b.length);
    products.forEach(add);
    if (i < tokens.length) {
      i++; // '+'
      if (i >= tokens.length) throw new FormulaError(`model '${formula}' ends with '+'`);
    }
  }
  return terms
    .map((t, k) => ({ t, k }))
    .sort((a, b) => a.t.length - b.t.length || a.k - b.k)
    .map((x) => x.t);
}

export function sameTerm(a: string[], b: string[]): boolean {
  return a.length === b.length && a.every((v) => b.includes(v));
}

export function termName(t: string[]): string {
  return t.join(':');
}
