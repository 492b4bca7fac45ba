/** A small strict option parser for the CLI: --name value, --flag, and positionals. */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

export interface OptionSpec {
  /** Options that take a value. */
  values: string[];
  /** Options that are flags. */
  flags: string[];
}

export interface ParsedArgs {
  positionals: string[];
  values: Map<string, string>;
  flags: Set<string>;
}

export function parseArgs(args: string[], spec: OptionSpec): ParsedArgs {
  const out: ParsedArgs = { positionals: [], values: new Map(), flags: new Set() };
  for (let i = 0; i < args.length; i++) {
    const a = args[i];
    if (a === '--') {
      out.positionals.push(...args.slice(i + 1));
      break;
    }
    if (a.startsWith('--')) {
      const eq = a.indexOf('=');
      const name = eq > 0 ? a.slice(2, eq) : a.slice(2);
      if (spec.flags.includes(name)) {
        if (eq > 0) throw new UsageError(`--${name} takes no value`);
        out.flags.add(name);
      } else if (spec.values.includes(name)) {
        const v = eq > 0 ? a.slice(eq + 1) : args[++i];
        if (v === undefined) throw new UsageError(`--${name} needs a value`);
        if (out.values.has(name)) throw new UsageError(`--${name} given twice`);
        out.values.set(name, v);
      } else {
        throw new UsageError(`unknown option --${name}`);
      }
    } else {
      out.positionals.push(a);
    }
  }
  return out;
}

export function numberOption(
  p: ParsedArgs,
  name: string,
  check: (x: number) => boolean,
  what: string,
): number | undefined {
  const s = p.values.get(name);
  if (s === undefined) return undefined;
  const x = Number(s);
  if (s.trim() === '' || !Number.isFinite(x) || !check(x))
    throw new UsageError(`--${name} must be ${what}, got '${s}'`);
  return x;
}

export function choiceOption<T extends string>(
  p: ParsedArgs,
  name: string,
  choices: readonly T[],
): T | undefined {
  const s = p.values.get(name);
  if (s === undefined) return undefined;
  if (!(choices as readonly string[]).includes(s))
    throw new UsageError(`--${name} must be one of ${choices.join(', ')}, got '${s}'`);
  return s as T;
}
