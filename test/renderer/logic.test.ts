/** The views' logic, as plain functions: what each view shows for given service data. */
import Papa from 'papaparse';
import { crc32 as zlibCrc32 } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import type {
  CohortReport,
  ProgressEvent,
  RegionEffects,
  RegionValues,
  SubjectResult,
  Table,
} from '../../electron/api.ts';
import { regionName, regionNumber } from '../../electron/engine/features/columns.ts';
import {
  crc32,
  dataUrlBytes,
  fileStem,
  pngWithText,
  svgWithProvenance,
} from '../../renderer/src/lib/export.ts';
import { usesOnlySvg } from '../../renderer/src/lib/figure.ts';
import { formatCell, formatDuration, formatP } from '../../renderer/src/lib/format.ts';
import {
  curveFigure,
  defaultFeature,
  distributionFigure,
  featureByGroup,
  featureColumns,
  statsFor,
} from '../../renderer/src/lib/groups.ts';
import { anonymousNodes, circleLayout, layoutsFor, projections } from '../../renderer/src/lib/layout.ts';
import { mergeFailures, progressView } from '../../renderer/src/lib/progress.ts';
import {
  pageCount,
  pageOf,
  rankedBarFigure,
  rankingCaption,
  regionValuesFigure,
} from '../../renderer/src/lib/regions.ts';
import { settingsProblems, unplacedProblems, withInput } from '../../renderer/src/lib/settings.ts';
import {
  cohortSummary,
  covariateChoices,
  defaultGroupColumn,
  designGroupColumn,
  filterFindings,
  groupColumnChoices,
  participantRows,
  proposedDesign,
} from '../../renderer/src/lib/study.ts';
import {
  barcodeFigure,
  clickedInterval,
  cycleFigure,
  diagramFigure,
  infinityLine,
  intervals,
  nodeScoreRows,
  notableIntervals,
  representativeOf,
} from '../../renderer/src/lib/subject.ts';
import { tableText } from '../../renderer/src/lib/tables.ts';
import { createFakeApi } from '../web/fake-api.ts';

const fake = createFakeApi({ root: '/data/c' });
const report: CohortReport = await fake.openCohort({ dir: '/data/c' });
const defaults = await fake.defaultSettings();

describe('Study', () => {
  it('offers categorical columns with a few levels as the group, never an identifier', () => {
    const withId: CohortReport = {
      ...report,
      columns: [{ name: 'participant_id', kind: 'categorical', missing: 0 }, ...report.columns],
      subjects: report.subjects.map((s) => ({ ...s, covariates: { ...s.covariates, participant_id: s.id } })),
    };
    expect(groupColumnChoices(withId)).toEqual(['group', 'sex']);
    expect(defaultGroupColumn(withId)).toBe('group');
    expect(covariateChoices(withId, 'group')).toEqual(['age', 'sex']);
  });

  it('counts subjects, usable ones, findings and group sizes', () => {
    expect(cohortSummary(report, 'group')).toEqual({
      subjects: 10,
      participants: 10,
      usable: 9,
      excluded: 1,
      errors: 1,
      warnings: 1,
      groups: [
        { group: 'control', count: 5 },
        { group: 'patient', count: 4 },
      ],
    });
  });

  it('attaches each subject its findings and chosen columns', () => {
    const rows = participantRows(report, 'group', ['age']);
    expect(rows[2]).toEqual({
      id: 'sub-03',
      usable: true,
      group: 'control',
      values: [26],
      errors: 0,
      warnings: 1,
    });
    expect(rows[9]).toMatchObject({ id: 'sub-10', usable: false, errors: 1 });
  });

  it('filters the QC report by severity and by text, errors first', () => {
    expect(filterFindings(report.findings, { severity: 'all', text: '' }).map((f) => f.severity)).toEqual([
      'error',
      'warning',
    ]);
    expect(filterFindings(report.findings, { severity: 'warning', text: '' })).toHaveLength(1);
    expect(filterFindings(report.findings, { severity: 'all', text: 'SUB-10' })[0].code).toBe('not-square');
    expect(filterFindings(report.findings, { severity: 'all', text: 'asymm' })[0].subject).toBe('sub-03');
    expect(filterFindings(report.findings, { severity: 'error', text: 'sub-03' })).toEqual([]);
  });
});

describe('Analysis settings and progress', () => {
  it('keeps the transform when it applies to the new input and takes the first one otherwise', () => {
    const s = defaults.settings;
    expect(withInput({ ...s, transform: 'sqrt' }, 'correlation').transform).toBe('sqrt');
    expect(withInput(s, 'weight').transform).toBe('inverse');
    expect(withInput(s, 'distance').transform).toBe('identity');
  });

  it('names every setting the service would refuse', () => {
    expect(settingsProblems(defaults.settings, defaults.stats, report)).toEqual([]);
    const bad = settingsProblems(
      { ...defaults.settings, cap: { kind: 'density', value: 1.5 }, gridPoints: 1, dropRegions: [99] },
      { ...defaults.stats, permutations: -1, groupColumn: 'nope' },
      report,
    );
    // The contract's problems (each naming its field and option), then the form's cohort checks.
    expect(bad.map((p) => p.field)).toEqual([
      'settings.cap',
      'settings.gridPoints',
      'stats.permutations',
      'stats.groupColumn',
      'settings.dropRegions',
    ]);
    expect(bad.map((p) => p.option)).toEqual([
      '--cap-density',
      '--grid-points',
      '--permutations',
      '--group',
      '--drop-regions',
    ]);
    expect(bad.map((p) => p.message).join(' ')).toMatch(/\(0, 1\].*\[2, 10000\].*-1.*'nope'.*99/s);
  });

  const event = (over: Partial<ProgressEvent>): ProgressEvent => ({
    runId: 'r',
    phase: 'filtrations',
    done: 3,
    total: 12,
    reused: 2,
    currentSubject: 'sub-04',
    elapsedMs: 3000,
    etaMs: 95_000,
    failures: [],
    ...over,
  });

  it('shows the fraction done, what came from the cache, and the time left', () => {
    const v = progressView(event({}));
    expect(v.fraction).toBe(0.25);
    expect(v.counts).toBe('3 / 12 (2 from cache)');
    expect(v.eta).toBe('about 1 min 35 s left');
    expect(v.running).toBe(true);
    expect(progressView(event({ etaMs: null })).eta).toBe('estimating…');
    const done = progressView(
      event({ phase: 'done', done: 12, elapsedMs: 7_200_000, failures: [{ subject: 'a', reason: 'x' }] }),
    );
    expect(done).toMatchObject({ fraction: 1, running: false, current: null, eta: 'took 2 h 00 min' });
    expect(done.counts).toContain('1 failed');
  });

  it('keeps one failure per subject, the latest reason winning', () => {
    expect(
      mergeFailures(
        [{ subject: 'a', reason: 'x' }],
        [
          { subject: 'b', reason: 'y' },
          { subject: 'a', reason: 'z' },
        ],
      ),
    ).toEqual([
      { subject: 'a', reason: 'z' },
      { subject: 'b', reason: 'y' },
    ]);
  });

  it('formats p-values and cells as the tables write them', () => {
    expect(formatP(0.0004)).toBe('< 0.001');
    expect(formatP(0.0123)).toBe('0.012');
    expect(formatCell(null)).toBe('n/a');
    expect(formatCell(Infinity)).toBe('inf');
    expect(formatCell(0.000012345)).toBe('1.23e-5');
    expect(formatDuration(59_400)).toBe('59 s');
  });
});

describe('Groups', () => {
  it('draws one band and one mean per group, the band a closed polygon around the mean', async () => {
    const runId = (await fake.startRun({ cohort: { dir: '/data/c' }, ...defaults, outDir: null })).runId;
    const results = (await fake.cohortResults(runId))!;
    const fig = curveFigure(results.groupCurves, 'betti1', ['control', 'patient']);
    expect(fig.data).toHaveLength(4);
    const band = fig.data[0] as { x: number[]; y: number[]; fill: string };
    const b = results.groupCurves.find((c) => c.group === 'control' && c.curve === 'betti1')!;
    expect(band.fill).toBe('toself');
    expect(band.x).toEqual([...b.grid, ...[...b.grid].reverse()]);
    expect(band.y).toEqual([...b.upper, ...[...b.lower].reverse()]);
    expect(usesOnlySvg(fig)).toBe(true);

    expect(results.featureNames).toEqual(['h1_count', 'h1_total_persistence']);
    expect(featureColumns(results.features, results.featureNames)).toEqual([
      'h1_count',
      'h1_total_persistence',
    ]);
    const split = featureByGroup(results.features, 'h1_count', 'group');
    expect(split.map((s) => [s.group, s.values.length])).toEqual([
      ['control', 5],
      ['patient', 4],
    ]);
    const dist = distributionFigure(results.features, 'h1_count', 'group', ['control', 'patient']);
    expect(dist.data.map((t) => t.type)).toEqual(['violin', 'violin']);
    expect(dist.data[0].points).toBe('all');
    const tests = statsFor(results.featureTests, 'h1_total_persistence');
    expect(tests).toHaveLength(1);
    expect(tests[0].family).toBe('features');
    expect(statsFor(results.featureTests, 'nope')).toEqual([]);
  });
});

describe('Regions', () => {
  it('draws every region the service ranked, by the effect size of the tested model, with names as categories', async () => {
    const runId = (await fake.startRun({ cohort: { dir: '/data/c' }, ...defaults, outDir: null })).runId;
    const results = (await fake.cohortResults(runId))!;
    expect(results.nodeMeasures).toEqual(['strength', 'participation']);
    const e = (await fake.regionEffects(runId, 'strength'))!;
    // Every region of the cohort (16), tested ones ranked by |effect_size| as the service sent them.
    expect(e.regions).toHaveLength(16);
    expect(e.effect_kind).toBe('partial_r');
    const sizes = e.regions.map((r) => Math.abs(r.effect_size!));
    expect(sizes).toEqual([...sizes].sort((x, y) => y - x));
    const fig = rankedBarFigure(e, 0, 10);
    const bar = fig.data[0] as { x: number[]; y: string[]; customdata: number[] };
    // The chart draws the service's numbers, largest at the top (the last category), nothing recomputed.
    expect(bar.x).toEqual(
      e.regions
        .slice(0, 10)
        .reverse()
        .map((r) => r.effect_size),
    );
    expect(bar.customdata).toEqual(
      e.regions
        .slice(0, 10)
        .reverse()
        .map((r) => r.node),
    );
    expect(bar.y.every((y) => /^R\d+( \*)?$/.test(y))).toBe(true);
    expect((fig.layout.yaxis as { type: string }).type).toBe('category');
    expect(JSON.stringify(fig.layout)).toContain('partial r');
    // Pages reach every region and say how many there are.
    expect(pageCount(e, 10)).toBe(2);
    expect(pageOf(e, 1, 10)).toHaveLength(6);
    expect(rankingCaption(e, 1, 10)).toMatch(/^Ranks 11–16 of 16 regions · 16 tested · \d+ significant/);
  });

  it('names regions without a node table "region k" (1-based), never a bare number', () => {
    const e: RegionEffects = {
      runId: 'r',
      measure: 'h0_join_value',
      family: 'nodes:h0_join_value',
      contrast: 'patient - control',
      test: 't',
      effect_kind: 'adjusted_d',
      alpha: 0.05,
      tested: 3,
      significant: 1,
      networks: null,
      regions: [11, 0, 5].map((node, k) => ({
        node,
        number: node + 1,
        label: regionName(node, null),
        network: null,
        mean: 1,
        tested: true,
        statistic: 3 - k,
        p_uncorrected: 0.01,
        p_fwer: k === 0 ? 0.01 : 0.5,
        q_fdr: 0.02,
        effect_size: 1.5 - k * 0.5,
        effect_low: null,
        effect_high: null,
        significant: k === 0,
      })),
    };
    const bar = rankedBarFigure(e, 0).data[0] as { y: string[] };
    expect(bar.y).toEqual(['region 6', 'region 1', 'region 12 *']);
    expect(anonymousNodes(3).map((n) => n.label)).toEqual(['region 1', 'region 2', 'region 3']);
    expect(regionNumber(11)).toBe(12);
  });

  it('shows one region’s values per scan by group, and by session within group', async () => {
    const runId = (await fake.startRun({ cohort: { dir: '/data/c' }, ...defaults, outDir: null })).runId;
    const v = (await fake.regionValues(runId, 'strength', 3))!;
    expect([v.node, v.number, v.label, v.groupColumn]).toEqual([3, 4, 'R4', 'group']);
    // The nine analysed scans (sub-10 was excluded), each with its value as in its own subject result.
    expect(v.values).toHaveLength(9);
    const s1 = (await fake.subjectResult(runId, 'sub-01'))!;
    expect(v.values.find((x) => x.subject === 'sub-01')!.value).toBe(s1.nodeScores.strength[3]);
    const fig = regionValuesFigure(v, ['control', 'patient']);
    expect(fig.data.map((t) => [t.name, (t.y as number[]).length])).toEqual([
      ['control', 5],
      ['patient', 4],
    ]);
    const twice: RegionValues = {
      ...v,
      sessions: ['pre', 'post'],
      values: v.values.flatMap((x) => ['pre', 'post'].map((session) => ({ ...x, session }))),
    };
    const bySession = regionValuesFigure(twice, ['control', 'patient']);
    expect(bySession.data[0].x).toContain('post');
    expect(bySession.layout.boxmode).toBe('group');
    expect(usesOnlySvg(bySession)).toBe(true);
  });
});

describe('Node layouts', () => {
  it('projects coordinates onto two orthogonal planes', () => {
    const [axial, sagittal] = projections(report.nodes!);
    const n = report.nodes![3];
    expect([axial.nodes[3].x, axial.nodes[3].y]).toEqual([n.x, n.y]);
    expect([sagittal.nodes[3].x, sagittal.nodes[3].y]).toEqual([n.y, n.z]);
    expect(layoutsFor(report.nodes!).map((l) => l.kind)).toEqual(['axial', 'sagittal']);
  });

  it('without coordinates puts nodes on the unit circle, networks on contiguous arcs with gaps between', () => {
    const nodes = ['a', 'b', 'a', 'b'].map((net, i) => ({
      index: i,
      label: `n${i}`,
      network: net,
      x: null,
      y: null,
      z: null,
    }));
    const c = circleLayout(nodes);
    expect(layoutsFor(nodes)[0].kind).toBe('circle');
    // 4 nodes + 2 gaps = 6 slots of 60°: a-nodes 0, 2 at 90° and 30°; gap; b-nodes 1, 3 at −90° and −150°.
    const deg = (i: number) => Math.round((Math.atan2(c.nodes[i].y, c.nodes[i].x) * 180) / Math.PI);
    expect([deg(0), deg(2), deg(1), deg(3)]).toEqual([90, 30, -90, -150]);
    for (const p of c.nodes) expect(Math.hypot(p.x, p.y)).toBeCloseTo(1, 12);
  });
});

describe('Subject', () => {
  const s: SubjectResult = {
    id: 's',
    group: null,
    n: 4,
    matrix: new Array(16).fill(0),
    diagrams: [
      [
        [0, 1],
        [0, 2],
        [0, null],
      ],
      [
        [1, 2],
        [1.5, 1.75],
      ],
    ],
    representatives: [
      {
        birth: 1,
        death: 2,
        edges: [
          [1, 0],
          [2, 1],
          [3, 2],
          [3, 0],
        ],
        nodes: [0, 1, 2, 3],
      },
      { birth: 1.5, death: 1.75, edges: [], nodes: [] },
    ],
    nodeScores: {},
  };

  it('lists intervals with ids shared by barcode and diagram, and pairs H1 ones with their cycle', () => {
    const rows = intervals(s);
    expect(rows.map((r) => r.id)).toEqual(['0:0', '0:1', '0:2', '1:0', '1:1']);
    expect(infinityLine(rows)).toBeCloseTo(2 * 1.08, 12);
    expect(notableIntervals(rows).map((r) => r.id)).toEqual(['1:0', '1:1']);
    expect(representativeOf(s, rows[3])?.nodes).toEqual([0, 1, 2, 3]);
    expect(representativeOf(s, rows[0])).toBeNull();
  });

  it('links the selection: both plots mark the selected interval and report clicks by its id', () => {
    const rows = intervals(s);
    const bar = barcodeFigure(rows, '1:0');
    const dia = diagramFigure(rows, '1:0');
    expect(bar.data.at(-1)).toMatchObject({ name: 'selected', x: [1, 2] });
    expect(dia.data.at(-1)).toMatchObject({ name: 'selected', x: [1], y: [2] });
    // The essential H0 class sits on the ∞ line.
    const h0 = dia.data[1] as { y: number[] };
    expect(h0.y[2]).toBeCloseTo(infinityLine(rows), 12);
    expect(clickedInterval({ customdata: '1:1' })).toBe('1:1');
    expect(clickedInterval({ customdata: 'sub-01' })).toBeNull();
    expect(usesOnlySvg(bar) && usesOnlySvg(dia)).toBe(true);
  });

  it('draws the cycle’s edges between the nodes’ layout positions', () => {
    const layout = circleLayout(
      s.diagrams.length
        ? [0, 1, 2, 3].map((i) => ({ index: i, label: `n${i}`, network: null, x: null, y: null, z: null }))
        : [],
    );
    const fig = cycleFigure(layout, s.representatives[0], 'Cycle');
    const edges = fig.data[1] as { x: Array<number | null> };
    expect(edges.x).toHaveLength(12);
    expect(edges.x[0]).toBeCloseTo(layout.nodes[1].x, 12);
    expect(edges.x[2]).toBeNull();
  });
});

describe('Exports', () => {
  it('writes TSV that a CSV/TSV parser (papaparse) reads back, missing values as NA', () => {
    const t: Table = {
      columns: ['id', 'x', 'note'],
      rows: [
        ['a', 1.5, 'tab\there'],
        ['b', null, 'ok'],
      ],
    };
    const text = tableText(t);
    const parsed = Papa.parse<string[]>(text.trimEnd(), { delimiter: '\t' }).data;
    expect(parsed).toEqual([
      ['id', 'x', 'note'],
      ['a', '1.5', 'tab here'],
      ['b', 'NA', 'ok'],
    ]);
    const csv = Papa.parse<string[]>(tableText({ columns: ['a'], rows: [['x, "y"']] }, 'csv').trimEnd()).data;
    expect(csv).toEqual([['a'], ['x, "y"']]);
  });

  it('computes the PNG CRC-32 exactly as zlib does', () => {
    for (const text of ['', 'IEND', 'a longer chunk of text ✓ with UTF-8']) {
      const bytes = new TextEncoder().encode(text);
      expect(crc32(bytes)).toBe(zlibCrc32(bytes));
    }
  });

  it('puts the provenance into a PNG as a valid iTXt chunk after IHDR, and into an SVG as metadata', () => {
    // A 1×1 PNG: signature, IHDR, IDAT, IEND, with CRCs from zlib.
    const chunk = (type: string, data: number[]) => {
      const td = Buffer.from([...Buffer.from(type, 'latin1'), ...data]);
      const out = Buffer.alloc(12 + data.length);
      out.writeUInt32BE(data.length, 0);
      td.copy(out, 4);
      out.writeUInt32BE(zlibCrc32(td), 8 + data.length);
      return out;
    };
    const png = Buffer.concat([
      Buffer.from([137, 80, 78, 71, 13, 10, 26, 10]),
      chunk('IHDR', [0, 0, 0, 1, 0, 0, 0, 1, 8, 0, 0, 0, 0]),
      chunk('IDAT', [120, 156, 99, 96, 0, 0, 0, 2, 0, 1]),
      chunk('IEND', []),
    ]);
    const out = Buffer.from(
      pngWithText(new Uint8Array(png), 'loopwise:provenance', '{"tool":"loopwise","π":1}'),
    );
    expect(out.length).toBe(
      png.length + 12 + 'loopwise:provenance'.length + 5 + Buffer.byteLength('{"tool":"loopwise","π":1}'),
    );
    const type = out.subarray(33 + 4, 33 + 8).toString('latin1');
    expect(type).toBe('iTXt');
    const len = out.readUInt32BE(33);
    expect(out.readUInt32BE(33 + 8 + len)).toBe(zlibCrc32(out.subarray(33 + 4, 33 + 8 + len)));
    expect(out.subarray(33 + 8, 33 + 8 + len).toString('utf8')).toBe(
      'loopwise:provenance\0\0\0\0\0{"tool":"loopwise","π":1}',
    );
    expect(out.subarray(33 + 12 + len).equals(png.subarray(33))).toBe(true);
    expect(() => pngWithText(new Uint8Array([1, 2, 3]), 'k', 't')).toThrow(/not a PNG/);

    const prov = { tool: 'loopwise', note: '<a & b>' } as unknown as Parameters<typeof svgWithProvenance>[1];
    const svg = svgWithProvenance('<svg xmlns="http://www.w3.org/2000/svg" width="10"><g/></svg>', prov);
    expect(svg).toBe(
      '<svg xmlns="http://www.w3.org/2000/svg" width="10"><metadata id="loopwise:provenance">{"tool":"loopwise","note":"&lt;a &amp; b&gt;"}</metadata><g/></svg>',
    );
    const doc = new DOMParser().parseFromString(svg, 'image/svg+xml');
    expect(JSON.parse(doc.querySelector('metadata')!.textContent!)).toEqual(prov);
  });

  it('decodes data URLs and makes safe file names', () => {
    expect(new TextDecoder().decode(dataUrlBytes('data:image/svg+xml,%3Csvg%3E'))).toBe('<svg>');
    expect([...dataUrlBytes('data:image/png;base64,AQID')]).toEqual([1, 2, 3]);
    expect(fileStem('regions-strength/axial: x')).toBe('regions-strength-axial-x');
  });
});

describe('defaults chosen for the user', () => {
  it('leaves out constant features and shows first the one with the smallest FWER-corrected p', async () => {
    const features: Table = {
      columns: ['participant_id', 'group', 'h0_count', 'h1_count', 'h1_entropy', 'h1_count_z'],
      rows: [
        ['s1', 'a', 60, 3, 1.2, -1],
        ['s2', 'b', 60, 5, 1.1, 1],
      ],
    };
    // Every feature column the run names flows through, a new family (…_z) included.
    const names = featureColumns(features, ['h0_count', 'h1_count', 'h1_entropy', 'h1_count_z']);
    expect(names).toEqual(['h1_count', 'h1_entropy', 'h1_count_z']);
    const runId = (await fake.startRun({ cohort: { dir: '/data/c' }, ...defaults, outDir: null })).runId;
    const tests = (await fake.cohortResults(runId))!.featureTests!;
    const best = [...tests].sort((x, y) => x.p_fwer! - y.p_fwer!)[0].feature;
    expect(defaultFeature(['h1_count', 'h1_total_persistence'], tests)).toBe(best);
    expect(defaultFeature(names, null)).toBe('h1_count');
  });

  it('lists a subject’s node scores (the service fills them) by 1-based region number', async () => {
    const runId = (await fake.startRun({ cohort: { dir: '/data/c' }, ...defaults, outDir: null })).runId;
    const s = (await fake.subjectResult(runId, 'sub-02'))!;
    const rows = nodeScoreRows(s, []);
    expect(rows.columns).toEqual(['region', 'label', 'network', 'strength', 'participation']);
    expect(rows.rows[1]).toEqual([
      2,
      'region 2',
      null,
      s.nodeScores.strength[1],
      s.nodeScores.participation[1],
    ]);
  });
});

describe('group comparisons the data cannot support', () => {
  it('refuses a group column with a group of fewer than two usable subjects', () => {
    const few: CohortReport = {
      ...report,
      subjects: report.subjects.map((s, i) => ({ ...s, usable: i < 3 })),
    };
    // sub-01, sub-03 are control, sub-02 patient.
    expect(settingsProblems(defaults.settings, defaults.stats, few).map((p) => p.message)).toEqual([
      'Group patient of group has fewer than 2 usable subjects; choose no group column instead.',
    ]);
    expect(settingsProblems(defaults.settings, { ...defaults.stats, groupColumn: null }, few)).toEqual([]);
  });
});

/**
 * The fake cohort scanned twice (ses-pre, ses-post) as a BIDS longitudinal study: scan ids
 * `${participant}_ses-${session}`, participant_id and session columns, as the readers report them.
 */
const longitudinal: CohortReport = {
  ...report,
  subjects: report.subjects.flatMap((s) =>
    ['pre', 'post'].map((ses) => ({
      ...s,
      id: `${s.id}_ses-${ses}`,
      participant: s.id,
      session: ses,
      usable: true,
      covariates: { participant_id: s.id, session: ses, ...s.covariates },
    })),
  ),
  columns: [
    { name: 'participant_id', kind: 'categorical', levels: report.subjects.map((s) => s.id), missing: 0 },
    { name: 'session', kind: 'categorical', levels: ['post', 'pre'], missing: 0 },
    ...report.columns,
  ],
  findings: [],
  sessions: ['post', 'pre'],
};

describe('designs for a cohort with sessions', () => {
  // Before any choice: the contract's defaults ask for no statistics.
  const none = { ...defaults.stats, groupColumn: null };
  it('proposes the group × session interaction with participant blocks, which the form accepts', () => {
    const st = proposedDesign(longitudinal, none);
    expect(st).toMatchObject({
      groupColumn: null,
      effect: null,
      model: 'group*session',
      test: 'group:session',
      blocks: 'participant_id',
      reference: null,
    });
    expect(settingsProblems(defaults.settings, st, longitudinal)).toEqual([]);
    // The scans are split by group (the first categorical column of the tested term but the blocks).
    expect(designGroupColumn(st, longitudinal)).toBe('group');
    // Columns the formula names are in the model already: not offered as covariates.
    expect(covariateChoices(longitudinal, null, st.model)).toEqual(['age', 'sex']);
  });

  it('proposes the effect of session where there is no group column', () => {
    const noGroup: CohortReport = {
      ...longitudinal,
      columns: longitudinal.columns.filter((c) => c.name !== 'group' && c.name !== 'sex'),
    };
    expect(proposedDesign(noGroup, none)).toMatchObject({
      effect: 'session',
      model: null,
      blocks: 'participant_id',
    });
  });

  it('keeps a design that fits the cohort, adding the blocks repeated scans need', () => {
    const st = proposedDesign(longitudinal, {
      ...defaults.stats,
      groupColumn: 'group',
      covariates: ['age', 'iq'],
    });
    expect(st).toMatchObject({
      groupColumn: 'group',
      model: null,
      blocks: 'participant_id',
      covariates: ['age'],
    });
  });

  it('replaces a design naming columns the new cohort lacks (session in a cohort without sessions)', () => {
    const st = proposedDesign(report, {
      ...defaults.stats,
      model: 'group*session',
      test: 'group:session',
      blocks: 'participant_id',
    });
    expect(st).toMatchObject({ groupColumn: 'group', model: null, test: null, blocks: null });
  });

  it('says under the blocks field that repeated scans need blocks (the design would refuse them)', () => {
    const problems = settingsProblems(
      defaults.settings,
      { ...defaults.stats, groupColumn: 'group' },
      longitudinal,
    );
    expect(problems).toHaveLength(1);
    expect(problems[0]).toMatchObject({ field: 'stats.blocks', option: '--blocks' });
    expect(problems[0].message).toMatch(/10 participants have several scans \(sub-01: 2, one per session\)/);
    expect(problems[0].message).toContain('participant_id');
    // No statistics: nothing to exchange, nothing to declare.
    expect(settingsProblems(defaults.settings, none, longitudinal)).toEqual([]);
  });

  it('lists only the problems a view has no field for', () => {
    const problems = [
      { field: 'stats.groupColumn', option: '--group', message: 'a' },
      { field: 'stats.blocks', option: '--blocks', message: 'b' },
      { field: 'settings.cap', option: '--cap-distance', message: 'c' },
    ];
    expect(unplacedProblems(problems, ['stats.groupColumn', 'settings'])).toEqual([problems[1]]);
  });
});
