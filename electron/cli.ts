/**
 * The `loopwise` command-line door. Each command lives in electron/cli/<name>.ts and returns
 * an exit code: 0 success, 1 the job failed (e.g. no usable subject), 2 a usage or input error
 * (an option the contract refuses, a column the cohort lacks), 3 (analyze, merge) the tables are
 * written but the statistics asked for could not run, 130 cancelled.
 * Commands are imported only when run, so `--help` and `--version` never load the service.
 */
import pkg from '../package.json' with { type: 'json' };
import { ENGINE_VERSION } from './engine/version.ts';

export interface CliIO {
  out: (text: string) => void;
  err: (text: string) => void;
}

export type Command = (args: string[], io: CliIO) => Promise<number>;

const COMMANDS: Record<string, { run: Command; summary: string }> = {
  diagram: {
    run: (a, io) => import('./cli/diagram.ts').then((m) => m.diagramCommand(a, io)),
    summary: 'persistence diagrams (and cycle representatives) of matrix files, as JSON',
  },
  analyze: {
    run: (a, io) => import('./cli/analyze.ts').then((m) => m.analyzeCommand(a, io)),
    summary: 'persistence of every subject of a cohort, cached and resumable',
  },
  merge: {
    run: (a, io) => import('./cli/merge.ts').then((m) => m.mergeCommand(a, io)),
    summary: 'combine the shards of a cohort run (analyze --shard K/M)',
  },
  validate: {
    run: (a, io) => import('./cli/validate.ts').then((m) => m.validateCommand(a, io)),
    summary: 'check a cohort and print its QC report',
  },
};

export const USAGE = `usage: loopwise <command> [options]

commands:
${Object.entries(COMMANDS)
  .map(([name, c]) => `  ${name.padEnd(10)} ${c.summary}`)
  .join('\n')}

Run 'loopwise <command> --help' for a command's options; 'loopwise --version' prints the version.`;

/** `loopwise X.Y.Z (engine N)`: the package's version and the engine's (part of every cache key). */
export const VERSION_LINE = `loopwise ${pkg.version} (engine ${ENGINE_VERSION})`;

const closed = { out: false, err: false };

const stdio: CliIO = {
  out: (t) => {
    if (!closed.out) process.stdout.write(t);
  },
  err: (t) => {
    if (!closed.err) process.stderr.write(t);
  },
};

/** Commands whose product is what they print: once the reader has gone, nothing is left to do. */
const PRINTING = new Set(['diagram', 'validate']);

/**
 * A reader that stops early (`loopwise validate … | head -1`) closes the pipe, and the next write
 * fails with EPIPE. That is no error of the command. A printing command (diagram, validate, help)
 * ends at once, quietly, with exit code 0, as filters commonly do; analyze and merge, whose product
 * is files, stop writing to the closed stream and finish their job.
 */
export function endQuietlyOnClosedPipe(
  command: string | undefined,
  streams: { out: NodeJS.EventEmitter; err: NodeJS.EventEmitter } = {
    out: process.stdout,
    err: process.stderr,
  },
  exit: (code: number) => void = (code) => process.exit(code),
): void {
  for (const which of ['out', 'err'] as const) {
    streams[which].on('error', (e: NodeJS.ErrnoException) => {
      if (e.code !== 'EPIPE') throw e;
      closed[which] = true;
      if (which === 'out' && (command === undefined || PRINTING.has(command) || !(command in COMMANDS)))
        exit(0);
    });
  }
}

export async function main(argv: string[], io: CliIO = stdio): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === '--help' || name === '-h') {
    io.out(USAGE + '\n');
    return name ? 0 : 2;
  }
  if (name === '--version') {
    io.out(VERSION_LINE + '\n');
    return 0;
  }
  const command = COMMANDS[name];
  if (!command) {
    io.err(`loopwise: unknown command '${name}'\n${USAGE}\n`);
    return 2;
  }
  return command.run(rest, io);
}
