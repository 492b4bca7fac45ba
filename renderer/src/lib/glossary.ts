/**
 * The app's one glossary: a human name and a one-line explanation for every column the service
 * writes (features, node measures, statistics, whole-diagram tests) and for the effect-size kinds.
 * Keyed by the file's own column names, which stay as they are in the files; a name with a
 * homology dimension or landscape level is keyed by its pattern ({d}, {k}), as in
 * electron/engine/features/columns.ts.
 *
 *   term('h1_count')        → { name: 'H1 intervals', explain: 'Number of H1 intervals …' }
 *   term('landscape1_2_l1') → { name: 'H1 landscape 2, L¹ norm', … }
 *   label('p_fwer')         → 'p (FWER-corrected)'
 */

export interface Term {
  /** A short human name for labels, axis titles and table headers. */
  name: string;
  /** One line: what the value is, in words a reader of the paper would use. */
  explain: string;
}

/** Per-subject features (features.tsv). {d}: homology dimension; {k}: landscape level. */
export const FEATURE_TERMS: Record<string, Term> = {
  'h{d}_count': {
    name: 'H{d} intervals',
    explain: 'Number of H{d} intervals (components for H0, loops for H1), never-dying ones included.',
  },
  'h{d}_count_essential': {
    name: 'H{d} essential intervals',
    explain: 'H{d} intervals that never die within the filtration.',
  },
  'h{d}_count_finite': {
    name: 'H{d} finite intervals',
    explain: 'H{d} intervals that die within the filtration.',
  },
  'h{d}_count_finite_above_floor': {
    name: 'H{d} intervals above the floor',
    explain: 'Finite H{d} intervals at least as long as the persistence floor (shorter ones count as noise).',
  },
  'h{d}_total_persistence_finite_p1': {
    name: 'H{d} total persistence',
    explain: 'Sum of the lifetimes (death − birth) of the finite H{d} intervals.',
  },
  'h{d}_total_persistence_finite_p2': {
    name: 'H{d} total squared persistence',
    explain: 'Sum of the squared lifetimes of the finite H{d} intervals: long intervals weigh more.',
  },
  'h{d}_max_persistence_finite': {
    name: 'H{d} longest lifetime',
    explain: 'Lifetime of the most persistent finite H{d} interval (0 when there is none).',
  },
  'h{d}_mean_birth': {
    name: 'H{d} mean birth',
    explain: 'Mean filtration value at which H{d} intervals appear.',
  },
  'h{d}_median_birth': {
    name: 'H{d} median birth',
    explain: 'Median filtration value at which H{d} intervals appear.',
  },
  'h{d}_mean_death_finite': {
    name: 'H{d} mean death',
    explain: 'Mean filtration value at which finite H{d} intervals disappear.',
  },
  'h{d}_median_death_finite': {
    name: 'H{d} median death',
    explain: 'Median filtration value at which finite H{d} intervals disappear.',
  },
  'h{d}_mean_lifetime_finite': {
    name: 'H{d} mean lifetime',
    explain: 'Mean lifetime (death − birth) of the finite H{d} intervals.',
  },
  'h{d}_median_lifetime_finite': {
    name: 'H{d} median lifetime',
    explain: 'Median lifetime of the finite H{d} intervals.',
  },
  'h{d}_entropy_finite': {
    name: 'H{d} persistent entropy',
    explain: 'Shannon entropy of the finite H{d} lifetimes: high when many intervals are equally long.',
  },
  'betti{d}_area': {
    name: 'Betti-{d} curve area',
    explain: 'Area under the Betti-{d} curve (how many H{d} features are alive, summed over the grid).',
  },
  'landscape{d}_{k}_l1': {
    name: 'H{d} landscape {k}, L¹ norm',
    explain: 'Size (L¹ norm) of the k-th persistence landscape of H{d}, k = {k}.',
  },
  'landscape{d}_{k}_l2': {
    name: 'H{d} landscape {k}, L² norm',
    explain: 'Size (L² norm) of the k-th persistence landscape of H{d}, k = {k}.',
  },
  euler_area: {
    name: 'Euler curve area',
    explain: 'Area under the Euler characteristic curve over the grid (vertices − edges + triangles …).',
  },
};

/** Node measures (node-scores.tsv, one value per subject and region). */
export const NODE_TERMS: Record<string, Term> = {
  h1_cycle_count: {
    name: 'Loops through the region',
    explain: 'How many H1 cycle representatives pass through the region.',
  },
  h1_weighted: {
    name: 'Loop participation',
    explain: 'Sum of the lifetimes of the H1 loops that pass through the region.',
  },
  h1_weighted_norm: {
    name: 'Loop participation (share)',
    explain:
      'Loop participation divided by the subject’s total H1 lifetime: the region’s share of all loops.',
  },
  h1_cycle_count_above_floor: {
    name: 'Loops through the region, above the floor',
    explain: 'As "loops through the region", counting only loops at least as long as the persistence floor.',
  },
  h1_weighted_above_floor: {
    name: 'Loop participation, above the floor',
    explain: 'As "loop participation", counting only loops at least as long as the persistence floor.',
  },
  h1_weighted_norm_above_floor: {
    name: 'Loop participation share, above the floor',
    explain: 'As "loop participation (share)", over the loops above the persistence floor only.',
  },
  h0_join_value: {
    name: 'Joining value',
    explain:
      'Filtration value from which the region stays connected to the largest component (lower: joins earlier).',
  },
  h0_birth_component_lifetime: {
    name: 'Own component lifetime',
    explain: 'How long the component born at the region lives before merging into an older one.',
  },
};

/** Columns of stats.tsv (one row per feature, or per region of a node measure, and contrast). */
export const STATS_TERMS: Record<string, Term> = {
  family: {
    name: 'Family',
    explain:
      'The set of tests corrected together (e.g. all H1 features, or one node measure over all regions).',
  },
  feature: { name: 'Feature', explain: 'The feature or node measure tested.' },
  node_or_point: {
    name: 'Region / point',
    explain: 'The region (node measures) or grid point (curves) of the test; empty for a scalar feature.',
  },
  contrast: {
    name: 'Contrast',
    explain: 'What is compared: other − reference level, a slope, or an F over several levels.',
  },
  test: { name: 'Test', explain: 'The test statistic: t for one contrast, F for several.' },
  statistic: { name: 'Statistic', explain: 'The t or F value of the general linear model for this test.' },
  df_num: { name: 'df (numerator)', explain: 'Numerator degrees of freedom (1 for a t test).' },
  df: { name: 'df', explain: 'Residual degrees of freedom of the model.' },
  p_parametric: {
    name: 'p (parametric)',
    explain: 'p-value from the t or F distribution, where its assumptions hold; else empty.',
  },
  p_uncorrected: {
    name: 'p (uncorrected)',
    explain: 'Permutation p-value of this test alone, not corrected for the other tests of its family.',
  },
  p_fwer: {
    name: 'p (FWER-corrected)',
    explain:
      'Permutation p-value corrected for every test of the family (max-statistic, family-wise error rate).',
  },
  q_fdr: {
    name: 'q (FDR)',
    explain:
      'Benjamini–Hochberg adjusted p-value: the false discovery rate at which this test is significant.',
  },
  effect_kind: {
    name: 'Effect size kind',
    explain: 'Which effect size the row reports (adjusted d, d_z, partial r or partial η²).',
  },
  effect_size: {
    name: 'Effect size',
    explain: 'The effect size of the tested contrast, from the same model as the test.',
  },
  effect_low: {
    name: 'Effect size, lower 95% bound',
    explain: 'Lower end of the bootstrap 95% interval of the effect size.',
  },
  effect_high: {
    name: 'Effect size, upper 95% bound',
    explain: 'Upper end of the bootstrap 95% interval of the effect size.',
  },
  partial_r: {
    name: 'Partial r',
    explain:
      'Correlation of the feature with the tested effect after the other model terms are removed (t tests).',
  },
  partial_eta_squared: {
    name: 'Partial η²',
    explain: 'Share of the variance left by the other terms that the tested effect explains.',
  },
  n_per_group: { name: 'n per group', explain: 'Subjects (scans) per level of the tested effect.' },
  n_blocks: {
    name: 'Blocks',
    explain: 'Number of exchangeability blocks (e.g. participants) the permutations respected.',
  },
  scheme: {
    name: 'Permutation scheme',
    explain: 'How the data were shuffled: freely, within blocks, whole blocks, or both.',
  },
  permutation_mode: {
    name: 'Permutation mode',
    explain: 'Random permutations, or every one of them when there are few enough (exact).',
  },
  permutations: { name: 'Permutations', explain: 'How many permutations the p-values rest on.' },
  seed: {
    name: 'Seed',
    explain: 'The random seed of the permutations: the same seed gives the same p-values.',
  },
};

/** Columns of diagram-tests.tsv (whole persistence diagrams compared between groups). */
export const DIAGRAM_TEST_TERMS: Record<string, Term> = {
  family: STATS_TERMS.family,
  metric: {
    name: 'Distance',
    explain: 'The distance between persistence diagrams the test uses (e.g. Wasserstein-2).',
  },
  test: { name: 'Test', explain: 'The whole-diagram test (e.g. distance-based regression pseudo-F).' },
  statistic: { name: 'Statistic', explain: 'The test statistic on the diagram distances.' },
  df_num: STATS_TERMS.df_num,
  df: STATS_TERMS.df,
  p: { name: 'p (permutation)', explain: 'Permutation p-value of the whole-diagram test.' },
  n_per_group: STATS_TERMS.n_per_group,
  permutation_mode: STATS_TERMS.permutation_mode,
  permutations: STATS_TERMS.permutations,
  seed: STATS_TERMS.seed,
  warning: { name: 'Warning', explain: 'What limits the test’s validity, when anything does.' },
  scheme: STATS_TERMS.scheme,
  effect: { name: 'Effect', explain: 'The design effect the diagrams are compared by.' },
};

/** The values of stats.tsv's effect_kind column. */
export const EFFECT_KIND_TERMS: Record<string, Term> = {
  adjusted_d: {
    name: 'Adjusted d',
    explain:
      'Contrast estimate divided by the model’s residual standard deviation (a covariate-adjusted Cohen’s d).',
  },
  d_z: {
    name: 'd_z',
    explain: 'Mean within-block difference divided by its standard deviation (paired designs).',
  },
  partial_r: STATS_TERMS.partial_r,
  partial_eta_squared: STATS_TERMS.partial_eta_squared,
};

const TABLES = [FEATURE_TERMS, NODE_TERMS, STATS_TERMS, DIAGRAM_TEST_TERMS, EFFECT_KIND_TERMS];

/** A pattern as a regular expression: {d} and {k} match digits, captured in order. */
function patternRegex(pattern: string): RegExp {
  const escaped = pattern.replace(/[.*+?^$()|[\]\\]/g, '\\$&');
  return new RegExp(`^${escaped.replace(/\{[dk]\}/g, '(\\d+)')}$`);
}

const PATTERNS = TABLES.flatMap((t) =>
  Object.entries(t)
    .filter(([k]) => /\{[dk]\}/.test(k))
    .map(([k, term]) => ({
      re: patternRegex(k),
      slots: [...k.matchAll(/\{([dk])\}/g)].map((m) => m[1]),
      term,
    })),
);

/** The glossary entry of a file column name (or effect kind), or null when the app has none. */
export function term(column: string): Term | null {
  for (const t of TABLES) {
    const hit = Object.prototype.hasOwnProperty.call(t, column) ? t[column] : undefined;
    if (hit) return hit;
  }
  for (const p of PATTERNS) {
    const m = p.re.exec(column);
    if (!m) continue;
    let name = p.term.name;
    let explain = p.term.explain;
    p.slots.forEach((slot, i) => {
      name = name.replaceAll(`{${slot}}`, m[i + 1]);
      explain = explain.replaceAll(`{${slot}}`, m[i + 1]);
    });
    return { name, explain };
  }
  return null;
}

/** The human name of a column, or the column itself when the glossary has none. */
export function label(column: string): string {
  return term(column)?.name ?? column;
}

/** "Human name — explanation (file column: name)", for a tooltip; the column alone when unknown. */
export function tooltip(column: string): string {
  const t = term(column);
  return t ? `${t.name}: ${t.explain} (column ${column})` : column;
}
