/**
 * `loopwise diagram FILE... [options]`: the persistence diagrams of each matrix file, one JSON
 * object per line on stdout, in the order given. A file that cannot be read or analysed gets one
 * line on stderr naming it and the problem; the others are still computed; the exit code is then 2.
 */
import { computePersistence, estimatePersistence } from '../engine/persistence.ts';
import type { PersistenceEstimate, PersistenceProgress } from '../engine/persistence.ts';
import { MatrixError, toDistances } from '../engine/transform.ts';
import type { InputKind, TransformName } from '../engine/transform.ts';
import type { CapSetting, DistanceMatrix, PersistenceResult } from '../engine/types.ts';
import { ENGINE_VERSION } from '../engine/version.ts';
import { readMatrixFile } from '../io/read-matrix.ts';
import type { CliIO } from '../cli.ts';
import { UsageError, parseArgs } from './args.ts';
import { validateMatrixPick } from '../contract.ts';
import {
  FILTRATION_VALUE_OPTIONS,
  filtrationOptions,
  numberText,
  refuseProblems,
} from './filtration-options.ts';

export const DIAGRAM_HELP = `usage: loopwise diagram FILE... [options]

Prints one JSON object per FILE and line:
  {"file", "diagrams": {"0": [[birth, death], ...], "1": [...]}, "representatives": {"1": [...]}, "settings": {...}}
death is null for an interval that never dies; node indices are 0-based in file order.

options:
  --input correlation|weight|distance   what the matrix holds (default correlation)
  --transform NAME      correlation: one-minus (default), one-minus-abs, sqrt
                        weight: inverse (default), neg-log; distance: identity
  --max-dim 1|2         highest homology dimension (default 1)
  --cap-distance X      stop the filtration at distance X
  --cap-density P       stop at the distance below which a fraction P of all edges lie (0 < P ≤ 1)
  --representatives     add a cycle representative for every H1 interval
  --h0-representatives  add the merge tree with the nodes of each absorbed component
  --keep-zero           keep intervals of zero length
  --variable NAME       the variable to read from a .mat file (needed when it holds several)
  --stack-index K       pick matrix K of a 3-D stack (.npy or .mat, K × N × N), 0-based: the
                        first matrix is 0
  --progress            report progress on stderr (always on for a matrix far beyond the usual size)
`;

export interface DiagramSettings {
  input: InputKind;
  transform: TransformName;
  maxDim: 1 | 2;
  cap: CapSetting;
  representatives: boolean;
  h0Representatives: boolean;
  keepZeroLength: boolean;
  /** The .mat variable read (--variable), when one was named. */
  variable?: string;
  /** The matrix picked from a 3-D stack (--stack-index), 0-based. */
  stackIndex?: number;
}

export function parseDiagramArgs(args: string[]): {
  files: string[];
  settings: DiagramSettings;
  progress: boolean;
} {
  const p = parseArgs(args, {
    values: [...FILTRATION_VALUE_OPTIONS, 'variable', 'stack-index'],
    flags: ['representatives', 'h0-representatives', 'keep-zero', 'progress', 'help'],
  });
  if (p.flags.has('help')) {
    return { files: [], settings: null as unknown as DiagramSettings, progress: false };
  }
  if (p.positionals.length === 0) throw new UsageError('no FILE given');
  const { input, transform, maxDim, cap } = filtrationOptions(p);
  const variable = p.values.get('variable');
  const stackIndex = numberText(p, 'stack-index');
  refuseProblems(validateMatrixPick({ variable, stackIndex }));
  return {
    files: p.positionals,
    settings: {
      input,
      transform,
      maxDim,
      cap,
      representatives: p.flags.has('representatives'),
      h0Representatives: p.flags.has('h0-representatives'),
      keepZeroLength: p.flags.has('keep-zero'),
      ...(variable !== undefined ? { variable } : {}),
      ...(stackIndex !== undefined ? { stackIndex } : {}),
    },
    progress: p.flags.has('progress'),
  };
}

const mega = (x: number): string => (x >= 1e6 ? `${(x / 1e6).toPrecision(3)} million` : String(x));

/** The stderr line said before a computation far beyond the usual size (see estimatePersistence). */
export function largeRunNotice(file: string, est: PersistenceEstimate): string {
  const cols = est.columns
    .slice(1)
    .map((c, i) => `~${mega(c)} H${i + 1} columns`)
    .join(', ');
  return (
    `loopwise diagram: ${file}: large filtration: ${est.n} nodes, ${mega(est.edges)} edges up to ` +
    `${est.threshold}, ${cols}, at least ~${Math.ceil(est.bytes / 2 ** 20)} MiB of working memory; ` +
    `this can take many minutes (Ctrl-C stops it)\n`
  );
}

/**
 * Progress lines on stderr: one when a phase starts and one each time it passes a tenth of its
 * work. The engine calls this synchronously; stderr writes to a pipe or terminal are synchronous on Linux.
 */
function progressReporter(file: string, io: CliIO): (p: PersistenceProgress) => void {
  const what = {
    edges: 'sorting edges',
    columns: 'listing',
    reduction: 'reducing',
    representatives: 'representatives',
  };
  let key = '';
  let tenth = -1;
  return (p) => {
    const k = `${p.phase}${p.dim}`;
    const t = p.total > 0 ? Math.floor((10 * p.done) / p.total) : 0;
    if (k === key && t === tenth) return;
    key = k;
    tenth = t;
    const unit =
      p.phase === 'edges'
        ? 'node pairs'
        : p.phase === 'columns'
          ? 'top nodes'
          : p.phase === 'reduction'
            ? 'columns'
            : 'intervals';
    const dim = p.phase === 'edges' ? '' : ` H${p.dim}`;
    io.err(
      `loopwise diagram: ${file}: ${what[p.phase]}${dim} ${10 * t}% (${p.done} of ${p.total} ${unit})\n`,
    );
  };
}

/** Reads and transforms one file; the square matrix is garbage once this returns. */
async function readDistances(file: string, settings: DiagramSettings): Promise<DistanceMatrix> {
  const matrix = await readMatrixFile(file, {
    variable: settings.variable,
    stackIndex: settings.stackIndex,
  });
  return toDistances(matrix, { input: settings.input, transform: settings.transform });
}

/** The JSON object printed for one file (Infinity → null). */
export function diagramJson(
  file: string,
  result: PersistenceResult,
  settings: DiagramSettings,
): Record<string, unknown> {
  const diagrams: Record<string, Array<[number, number | null]>> = {};
  result.diagrams.forEach((dg, d) => {
    diagrams[String(d)] = dg.map((iv) => [iv.birth, Number.isFinite(iv.death) ? iv.death : null]);
  });
  const out: Record<string, unknown> = { file, diagrams };
  if (result.representatives) {
    out.representatives = {
      '1': result.representatives.map((r) => ({
        birth: r.birth,
        death: Number.isFinite(r.death) ? r.death : null,
        edges: r.edges,
        nodes: r.nodes,
      })),
    };
  }
  if (settings.h0Representatives) out.mergeTree = result.mergeTree;
  out.settings = {
    ...settings,
    threshold: Number.isFinite(result.threshold) ? result.threshold : null,
    thresholdSource: result.thresholdSource,
    n: result.n,
    engineVersion: ENGINE_VERSION,
  };
  return out;
}

export async function diagramCommand(args: string[], io: CliIO): Promise<number> {
  let parsed;
  try {
    parsed = parseDiagramArgs(args);
  } catch (e) {
    if (e instanceof UsageError) {
      io.err(`loopwise diagram: ${e.message} (see loopwise diagram --help)\n`);
      return 2;
    }
    throw e;
  }
  if (parsed.files.length === 0) {
    io.out(DIAGRAM_HELP);
    return 0;
  }
  const { files, settings } = parsed;
  let code = 0;
  for (const file of files) {
    try {
      const distances = await readDistances(file, settings);
      const estimate = estimatePersistence(distances, settings);
      if (estimate.large) io.err(largeRunNotice(file, estimate));
      const onProgress = parsed.progress || estimate.large ? progressReporter(file, io) : undefined;
      const result = computePersistence(distances, settings, { onProgress });
      io.out(JSON.stringify(diagramJson(file, result, settings)) + '\n');
    } catch (e) {
      const msg =
        e instanceof MatrixError ? `${file}: ${e.message}` : e instanceof Error ? e.message : String(e);
      io.err(`loopwise diagram: ${msg.startsWith(file) ? msg : `${file}: ${msg}`}\n`);
      code = 2;
    }
  }
  return code;
}
