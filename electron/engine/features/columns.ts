/**
 * The names of every exported feature and node measure, with what each means — the one list the
 * README quotes. {d} is a homology dimension (0 … maxDim), {k} a landscape level (1 … levels).
 * Names are stable: tables written by one version are read by the next.
 */

export interface ColumnDoc {
  pattern: string;
  description: string;
}

/** Per-subject scalar features (features.tsv), in column order. */
export const FEATURE_COLUMNS: ColumnDoc[] = [
  { pattern: 'h{d}_count', description: 'intervals in the H_d diagram, essential (infinite) ones included' },
  { pattern: 'h{d}_count_essential', description: 'intervals that never die within the filtration' },
  { pattern: 'h{d}_count_finite', description: 'intervals with a finite death' },
  {
    pattern: 'h{d}_count_finite_above_floor',
    description: 'finite intervals with lifetime ≥ the persistence floor setting',
  },
  { pattern: 'h{d}_total_persistence_finite_p1', description: 'Σ (death − birth) over finite intervals' },
  { pattern: 'h{d}_total_persistence_finite_p2', description: 'Σ (death − birth)² over finite intervals' },
  { pattern: 'h{d}_max_persistence_finite', description: 'longest finite lifetime (0 when none)' },
  { pattern: 'h{d}_mean_birth', description: 'mean birth over all intervals' },
  { pattern: 'h{d}_median_birth', description: 'median birth over all intervals' },
  { pattern: 'h{d}_mean_death_finite', description: 'mean death over finite intervals' },
  { pattern: 'h{d}_median_death_finite', description: 'median death over finite intervals' },
  { pattern: 'h{d}_mean_lifetime_finite', description: 'mean lifetime over finite intervals' },
  { pattern: 'h{d}_median_lifetime_finite', description: 'median lifetime over finite intervals' },
  {
    pattern: 'h{d}_entropy_finite',
    description: 'persistent entropy −Σ pᵢ ln pᵢ, pᵢ = lᵢ / Σ l, over finite intervals of positive length',
  },
  {
    pattern: 'betti{d}_area',
    description:
      'exact integral of the Betti curve β_d(t) over the cohort grid range (essential intervals run to its end)',
  },
  {
    pattern: 'landscape{d}_{k}_l1',
    description:
      'L¹ norm of the k-th persistence landscape of H_d (finite intervals; trapezoid rule on the grid)',
  },
  {
    pattern: 'landscape{d}_{k}_l2',
    description:
      'L² norm of the k-th persistence landscape of H_d (finite intervals; trapezoid rule on the grid)',
  },
  {
    pattern: 'euler_area',
    description:
      'exact integral over the grid range of the Euler characteristic of the (maxDim+1)-skeleton of the clique complex',
  },
];

/** Per-node measures (node-scores.tsv, long form), in output order. */
export const NODE_MEASURES: ColumnDoc[] = [
  { pattern: 'h1_cycle_count', description: 'number of H1 cycle representatives containing the node' },
  { pattern: 'h1_weighted', description: 'Σ lifetimes of the H1 cycles containing the node' },
  { pattern: 'h1_weighted_norm', description: 'h1_weighted / Σ lifetimes of all H1 cycles of the subject' },
  {
    pattern: 'h1_cycle_count_above_floor',
    description: 'as h1_cycle_count, cycles with lifetime ≥ the persistence floor only',
  },
  { pattern: 'h1_weighted_above_floor', description: 'as h1_weighted, cycles above the floor only' },
  {
    pattern: 'h1_weighted_norm_above_floor',
    description: 'as h1_weighted_norm, cycles above the floor only (normalised by their total)',
  },
  {
    pattern: 'h0_join_value',
    description: 'filtration value from which the node stays in the largest connected component',
  },
  {
    pattern: 'h0_birth_component_lifetime',
    description:
      'death of the H0 class born at the node (elder rule, ties by node index); survivors get the threshold',
  },
];

/** Node measures that need H1 representatives. */
export const H1_NODE_MEASURES = NODE_MEASURES.map((c) => c.pattern).filter((p) => p.startsWith('h1_'));

/**
 * The concrete feature column names for a setting, in order.
 *
 *   featureColumnNames(1, 1) → ['h0_count', …, 'landscape0_1_l2', 'h1_count', …, 'landscape1_1_l2', 'euler_area']
 */
export function featureColumnNames(maxDim: number, levels: number): string[] {
  const names: string[] = [];
  for (let d = 0; d <= maxDim; d++) {
    for (const { pattern } of FEATURE_COLUMNS) {
      if (!pattern.includes('{d}')) continue;
      const withDim = pattern.replace('{d}', String(d));
      if (!withDim.includes('{k}')) names.push(withDim);
      else for (let k = 1; k <= levels; k++) names.push(withDim.replace('{k}', String(k)));
    }
  }
  for (const { pattern } of FEATURE_COLUMNS) if (!pattern.includes('{d}')) names.push(pattern);
  return names;
}

/**
 * Both lists as Markdown tables, for the README and the export folder's column notes.
 *
 *   columnsMarkdown() → '| feature column | meaning |\n| --- | --- |\n| `h{d}_count` | … |…'
 */
export function columnsMarkdown(): string {
  const table = (head: string, rows: ColumnDoc[]): string =>
    [
      `| ${head} | meaning |`,
      '| --- | --- |',
      ...rows.map((r) => `| \`${r.pattern}\` | ${r.description} |`),
    ].join('\n');
  return `${table('feature column', FEATURE_COLUMNS)}\n\n${table('node measure', NODE_MEASURES)}\n`;
}

/**
 * The columns of stats.tsv, in file order: one row per tested feature and contrast. The service's
 * typed rows (`StatsRow` in api.ts) carry exactly these names.
 */
export const STATS_COLUMNS = [
  'family',
  'feature',
  'node_or_point',
  'contrast',
  'test',
  'statistic',
  'df_num',
  'df',
  'p_parametric',
  'p_uncorrected',
  'p_fwer',
  'q_fdr',
  'effect_kind',
  'effect_size',
  'effect_low',
  'effect_high',
  'partial_r',
  'partial_eta_squared',
  'n_per_group',
  'n_blocks',
  'scheme',
  'permutation_mode',
  'permutations',
  'seed',
] as const;

/** The columns of diagram-tests.tsv, in file order (`DiagramTestRow` in api.ts). */
export const DIAGRAM_TEST_COLUMNS = [
  'family',
  'metric',
  'test',
  'statistic',
  'df_num',
  'df',
  'p',
  'n_per_group',
  'permutation_mode',
  'permutations',
  'seed',
  'warning',
  'scheme',
  'effect',
] as const;

/** The columns of nodes.tsv after the scan's columns (participant_id, and session in a cohort with sessions). */
export const NODE_TABLE_COLUMNS = ['node', 'label', 'network', 'measure', 'value'] as const;

/** The statistics family of a node measure in stats.tsv: `nodes:MEASURE`. */
export function nodeFamily(measure: string): string {
  return `nodes:${measure}`;
}

/**
 * Region numbering. Files keep the 0-based index of a region in file order (nodes.tsv's `node`,
 * `--drop-regions`, and stats.tsv's `node_or_point` when the cohort has no node table); what the app
 * shows is 1-based: region k is index k − 1. A region without a node table is named `region k`.
 *
 *   regionNumber(0) → 1;  regionName(11, null) → 'region 12';  regionName(11, 'L_V1') → 'L_V1'
 */
export function regionNumber(index: number): number {
  return index + 1;
}

export function regionName(index: number, label: string | null | undefined): string {
  return label !== null && label !== undefined && label !== '' ? label : `region ${regionNumber(index)}`;
}
