/**
 * report.html: what a run did and found, written for the paper — the data, a methods paragraph
 * generated from the run's own settings (with the references of every method it used), the
 * results of the whole-diagram tests and of every feature family (how many tested, how many
 * significant after correction, the significant rows with their effect sizes), and the run's
 * provenance. Self-contained: one file, inline style, no scripts, no external resources.
 * Everything in it is read from the run's results: it computes no statistic of its own.
 */
import type { CohortReport, Provenance, Table } from '../api.ts';

/** What the report is written from: the run's provenance and its statistics tables as the files hold them. */
export interface ReportResults {
  provenance: Provenance;
  diagramMetric?: string;
  /** As stats.tsv (null: no statistics). */
  stats: Table | null;
  /** As diagram-tests.tsv. */
  diagramTests: Table | null;
}

export interface ReportInput {
  results: ReportResults;
  cohort: CohortReport;
  /** Scans left out of the analysis (excluded by the cohort check or failed), with the reason. */
  leftOut: Array<{ subject: string; reason: string }>;
  /** The output folder's table files (to name them), e.g. 'stats.tsv'. */
  files: string[];
}

/** The report's file name in the output folder. */
export const REPORT_FILE = 'report.html';

/** The significance level the report's counts and lists use (FWER p and FDR q). */
export const REPORT_ALPHA = 0.05;

const TRANSFORM_TEXT: Record<string, string> = {
  'one-minus': 'd = 1 − r',
  'one-minus-abs': 'd = 1 − |r|',
  sqrt: 'd = √(2(1 − r))',
  inverse: 'd = 1/w',
  'neg-log': 'd = −log(w / max w)',
  identity: 'the distances as given',
};

const REFERENCES: Record<string, string> = {
  bauer:
    'Bauer U (2021). Ripser: efficient computation of Vietoris–Rips persistence barcodes. J Appl Comput Topol 5:391–423.',
  desilva:
    'de Silva V, Morozov D, Vejdemo-Johansson M (2011). Dualities in persistent (co)homology. Inverse Problems 27:124003.',
  bubenik:
    'Bubenik P (2015). Statistical topological data analysis using persistence landscapes. J Mach Learn Res 16:77–102.',
  wilkinson:
    'Wilkinson GN, Rogers CE (1973). Symbolic description of factorial models for analysis of variance. Appl Stat 22:392–399.',
  freedman:
    'Freedman D, Lane D (1983). A nonstochastic interpretation of reported significance levels. J Bus Econ Stat 1:292–298.',
  winkler2014:
    'Winkler AM, Ridgway GR, Webster MA, Smith SM, Nichols TE (2014). Permutation inference for the general linear model. NeuroImage 92:381–397.',
  winkler2015:
    'Winkler AM, Webster MA, Vidaurre D, Nichols TE, Smith SM (2015). Multi-level block permutation. NeuroImage 123:253–268.',
  westfall: 'Westfall PH, Young SS (1993). Resampling-Based Multiple Testing. Wiley.',
  bh: 'Benjamini Y, Hochberg Y (1995). Controlling the false discovery rate. J R Stat Soc B 57:289–300.',
  mcardle:
    'McArdle BH, Anderson MJ (2001). Fitting multivariate models to community data: a comment on distance-based redundancy analysis. Ecology 82:290–297.',
  anderson:
    'Anderson MJ (2001). A new method for non-parametric multivariate analysis of variance. Austral Ecol 26:32–46.',
  carriere:
    'Carrière M, Cuturi M, Oudot S (2017). Sliced Wasserstein kernel for persistence diagrams. Proc ICML, PMLR 70:664–673.',
  cohensteiner:
    'Cohen-Steiner D, Edelsbrunner H, Harer J, Mileyko Y (2010). Lipschitz functions have Lp-stable persistence. Found Comput Math 10:127–139.',
  robinson:
    'Robinson A, Turner K (2017). Hypothesis testing for topological data analysis. J Appl Comput Topol 1:241–261.',
  ledoit:
    'Ledoit O, Wolf M (2004). A well-conditioned estimator for large-dimensional covariance matrices. J Multivar Anal 88:365–411.',
};

/** The report as one HTML document. */
export function buildReport(input: ReportInput): string {
  const { results, cohort } = input;
  const p = results.provenance;
  const cited = new Set<string>(['bauer', 'desilva']);
  const sections = [
    dataSection(input),
    methodsSection(input, cited),
    resultsSection(results),
    referencesSection(cited),
    provenanceSection(results, input.files),
  ];
  const title = `Loopwise report: ${basename(p.cohortRoot ?? cohort.root)}`;
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="generator" content="Loopwise ${esc(p.version)} (engine ${esc(p.engineVersion)})">
<title>${esc(title)}</title>
<style>
body{font:15px/1.5 system-ui,sans-serif;max-width:60rem;margin:2rem auto;padding:0 1rem;color:#1d2430}
h1{font-size:1.5rem}h2{font-size:1.2rem;margin-top:2rem;border-bottom:1px solid #ccd}h3{font-size:1rem}
table{border-collapse:collapse;margin:.5rem 0 1rem;font-size:13px}th,td{border:1px solid #ccd;padding:2px 6px;text-align:left}
td.num{text-align:right;font-variant-numeric:tabular-nums}.note{background:#fff7e0;padding:.5rem .8rem;border-left:4px solid #e0a000}
pre{background:#f4f5f7;padding:.5rem;overflow-x:auto;font-size:12px}
</style>
</head>
<body>
<h1>${esc(title)}</h1>
<p>Written by Loopwise ${esc(p.version)} (engine ${esc(p.engineVersion)}) on <time datetime="${esc(p.createdAt)}">${esc(p.createdAt)}</time>.</p>
<p class="note" role="note">Loopwise is a research tool, not a diagnostic device. The results below describe
groups of scans in this study; they are not a clinical assessment of any person.</p>
${sections.join('\n')}
</body>
</html>
`;
}

function dataSection(input: ReportInput): string {
  const { results, cohort } = input;
  const p = results.provenance;
  const c = p.counts;
  const participants = new Set(cohort.subjects.map((s) => s.participant)).size;
  const parts = [
    `<p>${c ? `${c.analysed} of ${c.subjects} scans were analysed` : `${cohort.subjects.length} scans were found`}`,
    cohort.sessions
      ? ` (${participants} participants, sessions ${cohort.sessions.map((s) => `ses-${esc(s)}`).join(', ')})`
      : ` (${participants} participants)`,
    cohort.n !== null ? `, ${cohort.n} regions each` : '',
    cohort.nodes
      ? ', with a node table naming the regions'
      : ', without a node table (regions are numbered from 1)',
    `. Input: ${p.correlation ? `region time series, correlated per scan (${p.correlation === 'ledoit-wolf' ? 'Ledoit–Wolf shrinkage' : 'Pearson'})` : esc(p.settings.input) + ' matrices'}.</p>`,
  ];
  const lost = input.leftOut;
  const lostList = lost.length
    ? `<p>Left out (${lost.length}):</p><ul>${lost.map((f) => `<li>${esc(f.subject)}: ${esc(f.reason)}</li>`).join('')}</ul>`
    : '<p>No scan was left out.</p>';
  return `<h2>Data</h2>\n${parts.join('')}\n${lostList}`;
}

function methodsSection(input: ReportInput, cited: Set<string>): string {
  const p = input.results.provenance;
  const s = p.settings;
  const st = p.stats;
  const out: string[] = [];
  if (p.correlation === 'ledoit-wolf') cited.add('ledoit');
  const cap =
    s.cap.kind === 'none'
      ? 'up to the enclosing radius (the full diagram)'
      : s.cap.kind === 'distance'
        ? `up to distance ${fmt(s.cap.value)}`
        : `up to the distance at which ${fmt(100 * s.cap.value)}% of the edges are present`;
  out.push(
    `Each scan's matrix was turned into distances (${TRANSFORM_TEXT[s.transform] ?? esc(s.transform)})` +
      (s.dropRegions.length
        ? `, after dropping region(s) ${s.dropRegions.map((i) => i + 1).join(', ')}`
        : '') +
      `. Persistent homology of the Vietoris–Rips (clique) filtration, ${cap}, was computed in dimensions 0–${s.maxDim} ` +
      `with coefficients in Z/2 by persistent cohomology with clearing and apparent pairs (de Silva et al. 2011; Bauer 2021)` +
      (s.representatives
        ? ', with a cycle representative for every H1 interval, from which each region’s participation in cycles was counted'
        : '') +
      '.',
  );
  cited.add('bubenik');
  const grid = p.grid;
  out.push(
    `Curves (Betti curves, persistence landscapes with ${s.landscapeLevels} levels (Bubenik 2015), and the Euler characteristic curve) were sampled on ` +
      (grid && grid.length
        ? `${grid.length} points from ${fmt(grid[0])} to ${fmt(grid[grid.length - 1])} (${p.gridSource === 'fixed' ? 'a fixed range, so features are comparable across runs' : "the cohort's filtration range, so features are comparable within this run only"})`
        : `${s.gridPoints} points`) +
      `; interval statistics "above floor" count intervals of lifetime ≥ ${fmt(s.persistenceFloor)}.`,
  );
  if (st && (st.groupColumn || st.effect || st.model)) {
    cited.add('freedman');
    cited.add('winkler2014');
    cited.add('westfall');
    cited.add('bh');
    const design = st.model
      ? `the model ${esc(st.model)} (Wilkinson–Rogers notation; Wilkinson & Rogers 1973), testing the term ${esc(st.test ?? '')}`
      : `the effect of ${esc(st.effect ?? st.groupColumn ?? '')}${st.reference ? ` (reference level ${esc(st.reference)})` : ''}`;
    if (st.model) cited.add('wilkinson');
    const covs = st.covariates.length ? `, adjusted for ${st.covariates.map(esc).join(', ')}` : '';
    const blocks = st.blocks
      ? ` Permutations respected exchangeability blocks defined by ${esc(st.blocks)} (within-block, whole-block, or both, according to the tested term; Winkler et al. 2015).`
      : '';
    if (st.blocks) cited.add('winkler2015');
    out.push(
      `Every scalar feature, every region's node measure and every curve's grid point was fitted with a general linear model of ${design}${covs}. ` +
        `p-values came from ${st.permutations} permutations (Freedman–Lane when the model had nuisance terms; Freedman & Lane 1983; Winkler et al. 2014), seed ${st.seed}.${blocks} ` +
        `Within each family (the scalar features; one node measure over all regions; one curve over its grid), the family-wise error was controlled by the maximum statistic (Westfall & Young 1993) and the false discovery rate by Benjamini–Hochberg (1995). ` +
        `Effect sizes come from the same model as the test (see the effect_kind column of stats.tsv).`,
    );
    if (input.results.diagramTests && input.results.diagramTests.rows.length) {
      const metric = input.results.diagramMetric ?? '';
      cited.add('mcardle');
      cited.add('anderson');
      if (metric.startsWith('sliced')) cited.add('carriere');
      else cited.add('cohensteiner');
      const permanova = testsOf(input.results.diagramTests).includes('permanova');
      out.push(
        `Whole diagrams were compared by ${permanova ? 'PERMANOVA (Anderson 2001; distance-based regression without covariates or blocks, McArdle & Anderson 2001)' : 'distance-based regression conditional on the covariates and block intercepts (McArdle & Anderson 2001; without them it is PERMANOVA, Anderson 2001)'} on the matrix of ${metric.startsWith('sliced') ? 'sliced Wasserstein distances (Carrière et al. 2017)' : '2-Wasserstein distances (Cohen-Steiner et al. 2010)'} between the scans' diagrams, under the same permutations.` +
          (hasJointLoss(input.results.diagramTests)
            ? ' The joint-loss test of Robinson & Turner (2017) was run as well.'
            : ''),
      );
      if (hasJointLoss(input.results.diagramTests)) cited.add('robinson');
    }
  } else {
    out.push('No statistical test was asked for in this run.');
  }
  return `<h2>Methods</h2>\n${out.map((t) => `<p>${t}</p>`).join('\n')}`;
}

function testsOf(t: Table): string[] {
  const k = t.columns.indexOf('test');
  return k < 0 ? [] : t.rows.map((r) => String(r[k]));
}

function hasJointLoss(t: Table): boolean {
  return testsOf(t).includes('joint-loss');
}

function resultsSection(results: ReportResults): string {
  const out: string[] = ['<h2>Results</h2>'];
  const dt = results.diagramTests;
  if (dt && dt.rows.length) {
    out.push('<h3>Whole-diagram tests</h3>');
    const cols = pick(dt, ['family', 'test', 'metric', 'statistic', 'df_num', 'df', 'p']);
    out.push(
      htmlTable(
        cols,
        dt.rows.map((r) => cols.map((c) => r[dt.columns.indexOf(c)])),
        'diagram-tests',
      ),
    );
  }
  const stats = results.stats;
  if (!stats || stats.rows.length === 0) {
    out.push('<p>No feature was tested.</p>');
    return out.join('\n');
  }
  const col = (name: string) => stats.columns.indexOf(name);
  const [fam, pf, qf] = [col('family'), col('p_fwer'), col('q_fdr')];
  const families = [...new Set(stats.rows.map((r) => String(r[fam])))];
  out.push(
    `<h3>Families</h3><p>Counts of tests with family-wise error p ≤ ${REPORT_ALPHA} and with FDR q ≤ ${REPORT_ALPHA}, per family.</p>`,
  );
  out.push(
    htmlTable(
      ['family', 'tests', `p_fwer ≤ ${REPORT_ALPHA}`, `q_fdr ≤ ${REPORT_ALPHA}`],
      families.map((f) => {
        const rows = stats.rows.filter((r) => r[fam] === f);
        return [
          f,
          rows.length,
          rows.filter((r) => isAtMost(r[pf], REPORT_ALPHA)).length,
          rows.filter((r) => isAtMost(r[qf], REPORT_ALPHA)).length,
        ];
      }),
      'family-counts',
    ),
  );
  const shown = [
    'feature',
    'node_or_point',
    'contrast',
    'test',
    'statistic',
    'df',
    'p_uncorrected',
    'p_fwer',
    'q_fdr',
    'effect_kind',
    'effect_size',
    'effect_low',
    'effect_high',
  ];
  const features = stats.rows.filter((r) => r[fam] === 'features');
  const significant = features.filter((r) => isAtMost(r[pf], REPORT_ALPHA));
  out.push('<h3>Scalar features</h3>');
  if (significant.length) {
    out.push(
      `<p>${significant.length} of ${features.length} scalar features had p_fwer ≤ ${REPORT_ALPHA}:</p>`,
    );
    out.push(
      htmlTable(
        shown,
        significant.map((r) => shown.map((c) => r[col(c)])),
        'significant-features',
      ),
    );
  } else {
    const top = [...features]
      .sort((a, b) => num(a[col('p_uncorrected')]) - num(b[col('p_uncorrected')]))
      .slice(0, 10);
    out.push(
      `<p>No scalar feature had p_fwer ≤ ${REPORT_ALPHA} (${features.length} tested). The ${top.length} smallest uncorrected p-values, for orientation only:</p>`,
    );
    out.push(
      htmlTable(
        shown,
        top.map((r) => shown.map((c) => r[col(c)])),
        'top-features',
      ),
    );
  }
  for (const f of families.filter((x) => x.startsWith('nodes:'))) {
    const rows = stats.rows.filter((r) => r[fam] === f && isAtMost(r[pf], REPORT_ALPHA));
    if (!rows.length) continue;
    const listed = rows.sort((a, b) => num(a[pf]) - num(b[pf])).slice(0, 20);
    out.push(
      `<h3>${esc(f.slice(6))} by region</h3><p>${rows.length} region(s) with p_fwer ≤ ${REPORT_ALPHA}${rows.length > listed.length ? `; the ${listed.length} smallest shown (all in stats.tsv)` : ''}:</p>`,
    );
    out.push(
      htmlTable(
        shown,
        listed.map((r) => shown.map((c) => r[col(c)])),
      ),
    );
  }
  return out.join('\n');
}

function referencesSection(cited: Set<string>): string {
  const items = [...cited].map((k) => REFERENCES[k]).sort();
  return `<h2>References</h2>\n<ol>${items.map((r) => `<li>${esc(r)}</li>`).join('')}</ol>`;
}

function provenanceSection(results: ReportResults, files: string[]): string {
  const p = results.provenance;
  const inputs = p.inputFiles ?? [];
  return `<h2>Provenance</h2>
<p>Tables written beside this report: ${
    files
      .filter((f) => f !== 'report.html')
      .map((f) => `<code>${esc(f)}</code>`)
      .join(', ') || 'none'
  }.
Every setting, the grid and the SHA-256 of every input file are in <code>provenance.json</code>.</p>
<details><summary>Settings</summary><pre>${esc(JSON.stringify({ settings: p.settings, stats: p.stats ?? null }, null, 2))}</pre></details>
<details><summary>Input files (${inputs.length})</summary><pre>${esc(inputs.map((f) => `${f.sha256 ?? 'unread'}  ${f.file}`).join('\n'))}</pre></details>`;
}

function pick(t: Table, names: string[]): string[] {
  return names.filter((n) => t.columns.includes(n));
}

function htmlTable(columns: string[], rows: Table['rows'], id?: string): string {
  const head = `<tr>${columns.map((c) => `<th scope="col">${esc(c)}</th>`).join('')}</tr>`;
  const body = rows
    .map(
      (r) =>
        `<tr>${r
          .slice(0, columns.length)
          .map((v) =>
            typeof v === 'number'
              ? `<td class="num">${fmt(v)}</td>`
              : `<td>${v === null ? 'NA' : esc(String(v))}</td>`,
          )
          .join('')}</tr>`,
    )
    .join('\n');
  return `<table${id ? ` id="${id}"` : ''}>\n<thead>${head}</thead>\n<tbody>\n${body}\n</tbody>\n</table>`;
}

function isAtMost(v: unknown, alpha: number): boolean {
  return typeof v === 'number' && v <= alpha;
}

function num(v: unknown): number {
  return typeof v === 'number' && Number.isFinite(v) ? v : Infinity;
}

/** Four significant digits; small p-values in exponent form. */
function fmt(v: number): string {
  if (!Number.isFinite(v)) return v > 0 ? 'inf' : v < 0 ? '-inf' : 'NA';
  if (Number.isInteger(v)) return String(v);
  const a = Math.abs(v);
  return a !== 0 && (a < 1e-3 || a >= 1e6) ? v.toExponential(3) : String(Number(v.toPrecision(4)));
}

function esc(s: string): string {
  return s.replace(
    /[&<>"']/g,
    (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c,
  );
}

function basename(path: string): string {
  return (
    path
      .replace(/[\\/]+$/, '')
      .split(/[\\/]/)
      .pop() ?? path
  );
}
