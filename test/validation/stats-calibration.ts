/**
 * Calibration and power of Loopwise's group tests (electron/engine/stats), as a report.
 *
 *   npm run validate:stats              # full run: about 3.5 minutes on one core (see README.md)
 *   npm run validate:stats -- --quick   # fewer cohorts: about 35 seconds
 *   npm run validate:stats -- --seed 5  # another master seed
 *   npm run validate:stats -- --cohorts 10000  # more null cohorts per setting (part 1)
 *
 * Exits 1 when a calibration check fails, 2 on a usage error. Not part of `npm test`: it is a
 * statistical experiment, not a unit test.
 *
 * Part 1, null calibration (null-cohorts.ts): cohorts without a group effect, a family of 30
 * correlated Gaussian features, tested with testFamily; per cohort, whether the pre-chosen feature
 * is rejected at uncorrected p ≤ α, whether any feature has p_FWER ≤ α (max-statistic; Westfall &
 * Young 1993), and whether any has q ≤ α (Benjamini & Hochberg 1995, J. R. Stat. Soc. B 57). Under
 * the global null every rejection is false, so the last is BH's family-wise error, which for
 * positively dependent tests is at most α (Benjamini & Yekutieli 2001, Ann. Stat. 29).
 * Settings: label permutation without covariate, and Freedman–Lane (Freedman & Lane 1983; Winkler
 * et al. 2014, NeuroImage 92) with an age covariate that differs between groups and drives the
 * features — plus the same data with age left out, which the checks must flag as too liberal.
 *
 * Part 2, the node pipeline on block-model cohorts (planted-cohorts.ts): a null control (no planted
 * effect; the same checks), then the power to find each planted node at FWER and FDR 0.05 and the
 * rate of significant unplanted nodes.
 *
 * Part 3, study designs (design-cohorts.ts): a paired design (session within participant, blocks),
 * a slope with a covariate, a group × session interaction with blocks, a between-participant group
 * with two scans each and blocks — each null, with the uncorrected, FWER and BH rates — then the
 * power on a planted within-participant effect, and the pseudo-replicated analysis (the two scans
 * of a participant treated as independent rows, no blocks), which the checks must flag as too liberal.
 *
 * Every check counts one Bernoulli trial per cohort (cohorts are independent; the features of a
 * cohort are not), and its band is the Clopper–Pearson interval (Clopper & Pearson 1934,
 * Biometrika 26; binomial.ts). Verdicts use the Bonferroni-adjusted level over all checks (checks.ts).
 */
import { checkTable, formatTable, pct, type Check, type Rate } from './checks.ts';
import { clopperPearson } from './binomial.ts';
import {
  PLANTED as DESIGN_PLANTED,
  POWER_SHIFT,
  runDesignCohort,
  type DesignCohortOutcome,
  type DesignSetting,
} from './design-cohorts.ts';
import { runNullCohort, type NullCohortOutcome, type NullSetting } from './null-cohorts.ts';
import {
  DISTANT_MODULE,
  MEASURE,
  MODULE_SIZE,
  PLANTED,
  PLANTED_SHARE,
  REGIONS,
  TIME_POINTS,
  runPlantedCohort,
  type PlantedCohortOutcome,
} from './planted-cohorts.ts';

const ALPHA = 0.05;
const DEFAULT_SEED = 20261202;
const FAMILY_SIZE = 30;
const PER_GROUP_POWER = 12;

interface RunSize {
  designCohorts: number;
  designPowerCohorts: number;
  nullCohorts: number;
  nullPermutations: number;
  pipelineNullCohorts: number;
  powerCohorts: number;
  pipelinePermutations: number;
}

// B = 999: (B + 1) α = 50 is an integer, so p ≤ α has probability exactly α for an exact test; and
// BH can reject a single feature only when its p ≤ α/m, which needs 1/(B + 1) ≤ α/m, i.e. B ≥ 599 for m = 30
// (with B = 499 the smallest p, 0.002, exceeds 0.05/30 and BH finds nothing without company).
const FULL: RunSize = {
  designCohorts: 1000,
  designPowerCohorts: 200,
  nullCohorts: 2000,
  nullPermutations: 999,
  pipelineNullCohorts: 400,
  powerCohorts: 100,
  pipelinePermutations: 999,
};
const QUICK: RunSize = {
  designCohorts: 150,
  designPowerCohorts: 40,
  nullCohorts: 200,
  nullPermutations: 999,
  pipelineNullCohorts: 40,
  powerCohorts: 20,
  pipelinePermutations: 999,
};

/** The data seed of cohort `c` of section `s`: a fixed mix of the master seed (createRng mixes further). */
function cohortSeed(master: number, section: number, c: number): number {
  return (master ^ Math.imul(section, 0x9e3779b1) ^ Math.imul(c + 1, 0x85ebca6b)) >>> 0;
}

function parseArgs(argv: string[]): { quick: boolean; seed: number; cohorts: number | null } {
  let quick = false;
  let seed = DEFAULT_SEED;
  let cohorts: number | null = null;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === '--quick') quick = true;
    else if (a === '--seed') {
      const v = Number(argv[++i]);
      if (!Number.isInteger(v) || v < 0 || v > 0xffffffff) usage(`--seed needs an integer in 0 … 2^32 − 1`);
      seed = v;
    } else if (a === '--cohorts') {
      const v = Number(argv[++i]);
      if (!Number.isInteger(v) || v < 10) usage('--cohorts needs an integer ≥ 10');
      cohorts = v;
    } else if (a === '--help' || a === '-h') {
      console.log('usage: tsx test/validation/stats-calibration.ts [--quick] [--seed N] [--cohorts N]');
      process.exit(0);
    } else usage(`unknown argument '${a}'`);
  }
  return { quick, seed, cohorts };
}

function usage(message: string): never {
  console.error(
    `stats-calibration: ${message}\nusage: tsx test/validation/stats-calibration.ts [--quick] [--seed N] [--cohorts N]`,
  );
  process.exit(2);
}

const count = <T>(xs: T[], pred: (x: T) => boolean): Rate => ({ k: xs.filter(pred).length, n: xs.length });
const cp95 = (r: Rate): string => {
  const [a, b] = clopperPearson(r.k, r.n, 0.95);
  return `${pct(r.k / r.n)} [${pct(a)}, ${pct(b)}]`;
};
const seconds = (t0: number): string => `${((performance.now() - t0) / 1000).toFixed(1)} s`;

function nullSection(
  label: string,
  setting: NullSetting,
  section: number,
  master: number,
  size: RunSize,
): { checks: Check[]; outcomes: NullCohortOutcome[]; lines: string[] } {
  const t0 = performance.now();
  const outcomes: NullCohortOutcome[] = [];
  for (let c = 0; c < size.nullCohorts; c++) {
    outcomes.push(
      runNullCohort(setting, c, cohortSeed(master, section, c), {
        alpha: ALPHA,
        permutations: size.nullPermutations,
        features: FAMILY_SIZE,
      }),
    );
  }
  const pooled = outcomes.reduce((s, o) => s + o.rejectedCount, 0);
  const schemes = [...new Set(outcomes.map((o) => o.scheme))].join(', ');
  const lines = [
    `  ${label}: scheme ${schemes}; ${outcomes.length} cohorts in ${seconds(t0)}`,
    `    pooled uncorrected rate over all ${FAMILY_SIZE} features × cohorts: ${pct(pooled / (outcomes.length * FAMILY_SIZE))}` +
      ' (features are correlated: no binomial band; the checked rate uses one pre-chosen feature per cohort)',
  ];
  const exact = setting !== 'ignored';
  const checks: Check[] = [
    {
      setting: label,
      measure: 'uncorrected p ≤ α (feature c mod 30)',
      rate: count(outcomes, (o) => o.chosenRejected),
      expect: exact ? 'equal' : 'above',
    },
  ];
  if (exact) {
    checks.push(
      {
        setting: label,
        measure: 'FWER: any p_fwer ≤ α',
        rate: count(outcomes, (o) => o.anyFwer),
        expect: 'equal',
      },
      { setting: label, measure: 'BH: any q ≤ α', rate: count(outcomes, (o) => o.anyFdr), expect: 'at-most' },
    );
  }
  return { checks, outcomes, lines };
}

/** Whether B permutations let BH reject a lone feature of a family of FAMILY_SIZE (needs p = 1/(B + 1) ≤ α/m). */
function resolutionNote(b: number): string {
  const smallest = 1 / (b + 1);
  const needed = ALPHA / FAMILY_SIZE;
  return smallest <= needed
    ? `B = ${b}: smallest p ${smallest.toPrecision(3)} ≤ α/m = ${needed.toPrecision(3)}, so BH can reject a lone feature.`
    : `WARNING B = ${b}: smallest p ${smallest.toPrecision(3)} > α/m = ${needed.toPrecision(3)}: BH cannot reject a lone feature, its checks are weak.`;
}

/** Part 3: study designs with repeated scans, a slope with a covariate, an interaction (design-cohorts.ts). */
function designSection(master: number, size: RunSize): Check[] {
  const opts = { alpha: ALPHA, permutations: size.nullPermutations, features: FAMILY_SIZE };
  console.log(
    `3. Study designs: ${size.designCohorts} null cohorts per setting, ${FAMILY_SIZE} correlated features, ` +
      `participant random intercept (ICC 0.69), ${size.nullPermutations} permutations`,
  );
  const settings: Array<[string, DesignSetting, number, 'equal' | 'above']> = [
    ['(f) paired: session within participant', 'paired', 5, 'equal'],
    ['(g) slope with a covariate', 'slope', 6, 'equal'],
    ['(h) group × session, blocks', 'interaction', 7, 'equal'],
    ['(i) group between participants, 2 scans each, blocks', 'between-blocks', 8, 'equal'],
    // Section 8 again: the same cohorts as (i), analysed without blocks.
    ['(j) the same, scans as independent rows (no blocks)', 'pseudo-replicated', 8, 'above'],
  ];
  const checks: Check[] = [];
  for (const [label, setting, section, expect] of settings) {
    const t0 = performance.now();
    const out: DesignCohortOutcome[] = [];
    for (let c = 0; c < size.designCohorts; c++) {
      out.push(runDesignCohort(setting, c, cohortSeed(master, section, c), opts));
    }
    console.log(
      `  ${label}: scheme ${[...new Set(out.map((o) => o.scheme))].join(', ')}; ${out.length} cohorts in ${seconds(t0)}`,
    );
    checks.push({
      setting: label,
      measure: 'uncorrected p ≤ α (feature c mod 30)',
      rate: count(out, (o) => o.chosenRejected),
      expect,
    });
    if (expect === 'equal') {
      checks.push(
        {
          setting: label,
          measure: 'FWER: any p_fwer ≤ α',
          rate: count(out, (o) => o.anyFwer),
          expect: 'equal',
        },
        { setting: label, measure: 'BH: any q ≤ α', rate: count(out, (o) => o.anyFdr), expect: 'at-most' },
      );
    } else {
      checks.push({
        setting: label,
        measure: 'FWER: any p_fwer ≤ α',
        rate: count(out, (o) => o.anyFwer),
        expect: 'above',
      });
    }
  }
  const t0 = performance.now();
  const power: DesignCohortOutcome[] = [];
  for (let c = 0; c < size.designPowerCohorts; c++) {
    power.push(runDesignCohort('paired-power', c, cohortSeed(master, 9, c), opts));
  }
  console.log(
    `  (k) paired, planted session shift of ${POWER_SHIFT} scan-level SD on ${DESIGN_PLANTED} of ${FAMILY_SIZE} features: ` +
      `${power.length} cohorts in ${seconds(t0)}`,
  );
  const rowsOut = Array.from({ length: DESIGN_PLANTED }, (_, j) => [
    `planted feature ${j}`,
    cp95(count(power, (o) => o.pUncorrected[j] <= ALPHA)),
    cp95(count(power, (o) => o.pFwer[j] <= ALPHA)),
    cp95(count(power, (o) => o.q[j] <= ALPHA)),
  ]);
  const nullFeatures = Array.from({ length: FAMILY_SIZE - DESIGN_PLANTED }, (_, k) => k + DESIGN_PLANTED);
  rowsOut.push([
    'cohorts with any null feature significant',
    cp95(count(power, (o) => nullFeatures.some((j) => o.pUncorrected[j] <= ALPHA))),
    cp95(count(power, (o) => nullFeatures.some((j) => o.pFwer[j] <= ALPHA))),
    cp95(count(power, (o) => nullFeatures.some((j) => o.q[j] <= ALPHA))),
  ]);
  for (const l of formatTable(['', 'p ≤ 0.05 uncorrected', 'p_fwer ≤ 0.05', 'q ≤ 0.05'], rowsOut)) {
    console.log(`    ${l}`);
  }
  checks.push({
    setting: '(k) paired power',
    measure: 'FWER: any null feature p_fwer ≤ α',
    rate: count(power, (o) => nullFeatures.some((j) => o.pFwer[j] <= ALPHA)),
    expect: 'at-most',
  });
  return checks;
}

function main(): void {
  const { quick, seed, cohorts } = parseArgs(process.argv.slice(2));
  const size = { ...(quick ? QUICK : FULL), ...(cohorts ? { nullCohorts: cohorts } : {}) };
  const tAll = performance.now();
  console.log(`Loopwise statistics calibration (${quick ? 'quick' : 'full'} run)`);
  console.log(
    `master seed ${seed}; cohort c of section s draws from createRng(seed ^ imul(s, 0x9e3779b1) ^ imul(c + 1, 0x85ebca6b));`,
  );
  console.log("each cohort's permutation seed is the next draw of that generator. α = 0.05.");
  for (const b of new Set([size.nullPermutations, size.pipelinePermutations])) console.log(resolutionNote(b));
  console.log('');

  // Part 1.
  console.log(
    `1. Null calibration: ${size.nullCohorts} cohorts per setting, 2 groups of ${12}–${20} subjects, ` +
      `${FAMILY_SIZE} Gaussian features (corr 0.6 within blocks of 10, 0.2 across), ${size.nullPermutations} permutations`,
  );
  const plain = nullSection('(a) no covariate', 'plain', 1, seed, size);
  const covariate = nullSection('(b) age covariate', 'covariate', 2, seed, size);
  // Section 2 again: the same cohorts as (b), analysed without age.
  const ignored = nullSection('(c) age ignored', 'ignored', 2, seed, size);
  for (const s of [plain, covariate, ignored]) for (const l of s.lines) console.log(l);
  console.log('');

  // Part 2.
  const pipeline = {
    alpha: ALPHA,
    permutations: size.pipelinePermutations,
    perGroup: PER_GROUP_POWER,
  };
  console.log(
    `2. Node pipeline on block-model cohorts: ${REGIONS} regions (modules of ${MODULE_SIZE}), 2 × ${PER_GROUP_POWER} subjects, ` +
      `${TIME_POINTS} time points, measure ${MEASURE}, ${size.pipelinePermutations} permutations`,
  );
  let t0 = performance.now();
  const nullRuns: PlantedCohortOutcome[] = [];
  for (let c = 0; c < size.pipelineNullCohorts; c++) {
    nullRuns.push(runPlantedCohort(cohortSeed(seed, 3, c), { ...pipeline, planted: false }));
  }
  console.log(`  (d) null control, no planted effect: ${nullRuns.length} cohorts in ${seconds(t0)}`);
  // The pre-chosen node: the first testable node from c mod 30 on (testability does not depend on the labels).
  const chosen = (o: PlantedCohortOutcome, c: number): number => {
    for (let k = 0; k < REGIONS; k++) {
      const v = (c + k) % REGIONS;
      if (!Number.isNaN(o.pUncorrected[v])) return v;
    }
    return -1;
  };
  const leftOut = nullRuns.reduce((s, o) => s + o.leftOut, 0);
  console.log(
    `    nodes without variation (left out of the test): ${leftOut} of ${nullRuns.length * REGIONS}`,
  );
  // h1_weighted is 0 for every node outside all cycles: ties make the test conservative, so '≤ α'.
  const pipelineChecks: Check[] = [
    {
      setting: '(d) pipeline null',
      measure: 'uncorrected p ≤ α (node c mod 30)',
      rate: {
        k: nullRuns.filter((o, c) => o.pUncorrected[chosen(o, c)] <= ALPHA).length,
        n: nullRuns.length,
      },
      expect: 'at-most',
    },
    {
      setting: '(d) pipeline null',
      measure: 'FWER: any p_fwer ≤ α',
      rate: count(nullRuns, (o) => o.pFwer.some((p) => p <= ALPHA)),
      expect: 'at-most',
    },
    {
      setting: '(d) pipeline null',
      measure: 'BH: any q ≤ α',
      rate: count(nullRuns, (o) => o.q.some((q) => q <= ALPHA)),
      expect: 'at-most',
    },
  ];

  t0 = performance.now();
  const powerRuns: PlantedCohortOutcome[] = [];
  for (let c = 0; c < size.powerCohorts; c++) {
    powerRuns.push(runPlantedCohort(cohortSeed(seed, 4, c), { ...pipeline, planted: true }));
  }
  console.log(
    `  (e) planted effect in group A (bridge share ≈ ${PLANTED_SHARE}): ${powerRuns.length} cohorts in ${seconds(t0)}`,
  );
  const moduleOf = (v: number) => Math.floor(v / MODULE_SIZE);
  const powerRows = PLANTED.map(({ node, target }) => [
    `node ${node} (module ${moduleOf(node)} → ${target})`,
    cp95(count(powerRuns, (o) => o.pUncorrected[node] <= ALPHA)),
    cp95(count(powerRuns, (o) => o.pFwer[node] <= ALPHA)),
    cp95(count(powerRuns, (o) => o.q[node] <= ALPHA)),
  ]);
  const isPlanted = new Set(PLANTED.map((p) => p.node));
  const unplanted = Array.from({ length: REGIONS }, (_, v) => v).filter((v) => !isPlanted.has(v));
  const nodeRate = (nodes: number[], sig: (o: PlantedCohortOutcome, v: number) => boolean): string => {
    let k = 0;
    for (const o of powerRuns) for (const v of nodes) if (sig(o, v)) k++;
    return pct(k / (nodes.length * powerRuns.length));
  };
  const distant = unplanted.filter((v) => moduleOf(v) === DISTANT_MODULE);
  const near = unplanted.filter((v) => moduleOf(v) !== DISTANT_MODULE);
  for (const [name, nodes] of [
    [`unplanted nodes, all (${unplanted.length})`, unplanted],
    [`  in modules touched by a bridge (${near.length})`, near],
    [`  in module ${DISTANT_MODULE}, untouched (${distant.length})`, distant],
  ] as Array<[string, number[]]>) {
    powerRows.push([
      name,
      nodeRate(nodes, (o, v) => o.pUncorrected[v] <= ALPHA),
      nodeRate(nodes, (o, v) => o.pFwer[v] <= ALPHA),
      nodeRate(nodes, (o, v) => o.q[v] <= ALPHA),
    ]);
  }
  powerRows.push([
    'cohorts with any unplanted node significant',
    cp95(count(powerRuns, (o) => unplanted.some((v) => o.pUncorrected[v] <= ALPHA))),
    cp95(count(powerRuns, (o) => unplanted.some((v) => o.pFwer[v] <= ALPHA))),
    cp95(count(powerRuns, (o) => unplanted.some((v) => o.q[v] <= ALPHA))),
  ]);
  console.log(
    '    power per planted node (fraction of cohorts, 95% Clopper–Pearson band), and significant unplanted nodes:',
  );
  for (const l of formatTable(['', 'p ≤ 0.05 uncorrected', 'p_fwer ≤ 0.05', 'q ≤ 0.05'], powerRows)) {
    console.log(`    ${l}`);
  }
  console.log(
    '    Unplanted nodes are not null nodes: a bridge changes distances to its target module and so the cycles' +
      ' other nodes take part in; their rates describe how far the effect spreads, they are not error rates.',
  );
  console.log('');

  // Part 3.
  const design = designSection(seed, size);
  console.log('');

  // Verdicts.
  const checks = [...plain.checks, ...covariate.checks, ...ignored.checks, ...pipelineChecks, ...design];
  const { lines, allPass } = checkTable(checks, ALPHA);
  console.log(
    `4. Calibration checks (one trial per cohort; verdict from the Bonferroni-adjusted band over ${checks.length} checks):`,
  );
  for (const l of lines) console.log(`  ${l}`);
  console.log('');
  console.log(
    `${allPass ? 'ALL CHECKS PASS' : 'SOME CHECKS FAIL'} (total ${seconds(tAll)}; master seed ${seed}${quick ? ', --quick' : ''})`,
  );
  process.exitCode = allPass ? 0 : 1;
}

main();
