/**
 * The app's flows without dead ends (Svelte 5 in jsdom over the stand-in service): an export
 * leaves the run as it ended and the next run can start; a refused export offers the explicit
 * choice to replace, in the app's words; a reload reattaches to a running run and keeps the
 * choices; earlier runs stay listed and reopen; a service that stops answering is shown.
 */
import { fireEvent, render, screen, waitFor, within } from '@testing-library/svelte';
import { describe, expect, it } from 'vitest';
import type { ProgressEvent } from '../../electron/api.ts';
import type { LoopwiseDoor } from '../../electron/web-client.ts';
import App from '../../renderer/src/App.svelte';
import { STORAGE_KEY, Session } from '../../renderer/src/lib/session.svelte.ts';
import { createFakeApi, type FakeApi } from '../web/fake-api.ts';

/** sessionStorage as the page has it, kept across "reloads" (new Sessions) of one test. */
function memoryStorage(): Pick<Storage, 'getItem' | 'setItem'> & { data: Map<string, string> } {
  const data = new Map<string, string>();
  return { data, getItem: (k) => data.get(k) ?? null, setItem: (k, v) => void data.set(k, v) };
}

function door(api: FakeApi, extra: Partial<LoopwiseDoor> = {}): LoopwiseDoor {
  return {
    ...api,
    info: async () => ({
      mode: 'web',
      version: 'test',
      sampleCohort: '/data/sample',
      defaultOutDir: '/data/out',
      roots: ['/data'],
    }),
    ...extra,
  };
}

const nav = (name: string) =>
  fireEvent.click(within(screen.getByRole('navigation')).getByRole('button', { name }));

async function runToEnd(session: Session) {
  await nav('Analysis');
  await fireEvent.click(screen.getByRole('button', { name: 'Run analysis' }));
  await waitFor(() => expect(session.summary?.status).toBe('done'), { timeout: 5000 });
  await waitFor(() => expect(session.results).not.toBeNull());
}

describe('export, then the next run', () => {
  it('keeps the run as it ended while the export reports its own progress, and the next run starts', async () => {
    const api = createFakeApi({ root: '/data/sample' });
    let release: () => void = () => undefined;
    const slowExport: LoopwiseDoor['exportRun'] = async (runId, dir, overwrite) => {
      // The service's export re-runs the statistics stage: its events are phase 'export'.
      const base = { runId, reused: 0, currentSubject: null, elapsedMs: 5, etaMs: null, failures: [] };
      api.emit({ ...base, phase: 'export', done: 18, total: 19, message: 'statistics: nodes:h1_weighted' });
      await new Promise<void>((ok) => (release = ok));
      return api.exportRun(runId, dir, overwrite);
    };
    const session = new Session(door(api, { exportRun: slowExport }));
    render(App, { session });
    await session.init();
    await fireEvent.click(screen.getByRole('button', { name: 'Open the sample cohort' }));
    await waitFor(() => expect(session.report).not.toBeNull());
    await runToEnd(session);

    await nav('Export');
    await fireEvent.input(screen.getByRole('textbox', { name: 'Output folder' }), {
      target: { value: '/data/out/first' },
    });
    await fireEvent.click(screen.getByRole('button', { name: 'Export tables' }));
    // While it writes: the button is disabled and says so, and the export's own progress shows.
    await waitFor(() =>
      expect(screen.getByRole('button', { name: 'Exporting…' })).toHaveProperty('disabled', true),
    );
    await waitFor(() =>
      expect(screen.getByTestId('export-progress').textContent).toMatch(
        /18 \/ 19.*statistics: nodes:h1_weighted/s,
      ),
    );
    // The run itself is still done: its panel does not go back to "Running statistics".
    expect(session.progress?.phase).toBe('done');
    release();
    await waitFor(() => expect(screen.getByTestId('export-done').textContent).toMatch(/Wrote 1 files/));
    expect(screen.getByRole('button', { name: 'Export tables' })).toHaveProperty('disabled', false);

    await nav('Analysis');
    expect(screen.getByRole('progressbar').getAttribute('aria-valuenow')).toBe('100');
    const run = screen.getByRole('button', { name: 'Run analysis' });
    expect(run).toHaveProperty('disabled', false);
    await fireEvent.click(run);
    await waitFor(() => expect(session.runId).toBe('run-2'));
    // The first run's results are not thrown away in silence: they stay listed and the page says so.
    expect(screen.getByTestId('notice').textContent).toMatch(/results of run-1 stay listed under Runs/);
    await waitFor(() => expect(session.summary?.status).toBe('done'), { timeout: 5000 });
  });

  it('answers a refused export in the app’s words and offers to replace, explicitly', async () => {
    const api = createFakeApi({ root: '/data/sample' });
    const session = new Session(door(api));
    render(App, { session });
    await session.init();
    await fireEvent.click(screen.getByRole('button', { name: 'Open the sample cohort' }));
    await waitFor(() => expect(session.report).not.toBeNull());
    await runToEnd(session);
    await nav('Export');
    await fireEvent.input(screen.getByRole('textbox', { name: 'Output folder' }), {
      target: { value: '/data/out/taken' },
    });
    await fireEvent.click(screen.getByRole('button', { name: 'Export tables' }));
    const message = await screen.findByTestId('export-message');
    expect(message.textContent).toMatch(/already holds results/);
    expect(message.textContent).not.toMatch(/--force|HTTP|exportRun:/);
    await fireEvent.click(
      within(message).getByRole('button', { name: 'Replace the earlier files in this folder' }),
    );
    await waitFor(() => expect(screen.getByTestId('export-done').textContent).toMatch(/Wrote 1 files/));
    expect(api.calls.filter((c) => c.method === 'exportRun').map((c) => c.args[2])).toEqual([false, true]);
  });
});

describe('a refused export in the desktop app', () => {
  it('reads the refusal’s code from the end of an IPC message and offers to replace', async () => {
    const api = createFakeApi({ root: '/data/sample' });
    const ipcExport: LoopwiseDoor['exportRun'] = async (runId, dir, overwrite) => {
      if (!overwrite)
        throw new Error(
          `Error invoking remote method 'loopwise:call': Error: ${dir} already holds the tables of an earlier Loopwise run. Replace them, or choose another folder. [finished-run]`,
        );
      return api.exportRun(runId, dir, overwrite);
    };
    const session = new Session(door(api, { exportRun: ipcExport }));
    await session.init();
    await session.openCohort('/data/sample');
    await session.startRun();
    await waitFor(() => expect(session.results).not.toBeNull(), { timeout: 5000 });
    await session.exportRun('/data/out/x', false);
    expect(session.exportProblem).toEqual({
      dir: '/data/out/x',
      message:
        '/data/out/x already holds the tables of an earlier Loopwise run. Replace them, or choose another folder.',
      replace: true,
    });
    await session.exportRun('/data/out/x', true);
    expect(session.exported?.files).toEqual(['/data/out/x/features.tsv']);
  });
});

describe('reload, earlier runs and disconnection', () => {
  it('a reload mid-run reattaches to the run with its progress and keeps the choices', async () => {
    const api = createFakeApi({ root: '/data/sample' });
    const storage = memoryStorage();
    const first = new Session(door(api), storage);
    await first.init();
    await first.openCohort('/data/sample');
    first.stats = { ...first.stats!, seed: 77 };
    first.choose('groups.feature', 'h1_count');
    first.view = 'analysis';
    await first.startRun();
    await waitFor(() => expect(first.progress?.done).toBeGreaterThan(1));
    // Saved for this tab: the choices, not the results.
    await waitFor(() => expect(JSON.parse(storage.data.get(STORAGE_KEY)!).runId).toBe('run-1'));

    // The page reloads: a new session over the same service and the same tab storage.
    const second = new Session(door(api), storage);
    render(App, { session: second });
    await second.init();
    expect(second.runId).toBe('run-1');
    expect(second.view).toBe('analysis');
    expect(second.report?.root).toBe('/data/sample');
    expect(second.stats?.seed).toBe(77);
    expect(second.choice('groups.feature')).toBe('h1_count');
    // Its progress, not an empty start screen; and it ends as the run ends.
    expect(screen.getByTestId('run-progress').textContent).toMatch(/Computing filtrations/);
    await waitFor(() => expect(second.summary?.status).toBe('done'), { timeout: 5000 });
    expect(second.results).not.toBeNull();
  });

  it('reattaches to a run still going on the service even without saved choices (another tab)', async () => {
    const api = createFakeApi({ root: '/data/sample' });
    const first = new Session(door(api));
    await first.init();
    await first.openCohort('/data/sample');
    await first.startRun();
    const other = new Session(door(api), memoryStorage());
    await other.init();
    expect(other.runId).toBe('run-1');
    await waitFor(() => expect(other.summary?.status).toBe('done'), { timeout: 5000 });
  });

  it('lists earlier runs and reopens one with its results and settings', async () => {
    const api = createFakeApi({ root: '/data/sample' });
    const session = new Session(door(api));
    render(App, { session });
    await session.init();
    await fireEvent.click(screen.getByRole('button', { name: 'Open the sample cohort' }));
    await waitFor(() => expect(session.report).not.toBeNull());
    await runToEnd(session);
    session.stats = { ...session.stats!, seed: 5 };
    await runToEnd(session);
    expect(session.runId).toBe('run-2');
    await nav('Analysis');
    const runs = screen.getByTestId('runs');
    expect(within(runs).getAllByRole('row')).toHaveLength(3);
    await fireEvent.click(within(runs).getByRole('button', { name: 'Open run-1' }));
    await waitFor(() => expect(session.view).toBe('groups'));
    expect(session.runId).toBe('run-1');
    expect(session.results?.runId).toBe('run-1');
    // The run's own settings come back with it (run-1 had the default seed).
    expect(session.stats?.seed).not.toBe(5);
  });

  it('shows a notice while the service does not answer, and picks the run up again after', async () => {
    const api = createFakeApi({ root: '/data/sample' });
    const connection = new Set<(up: boolean) => void>();
    const session = new Session(
      door(api, {
        onConnection: (l) => {
          connection.add(l);
          return () => connection.delete(l);
        },
      }),
    );
    render(App, { session });
    await session.init();
    expect(screen.queryByTestId('disconnected')).toBeNull();
    connection.forEach((l) => l(false));
    await waitFor(() => expect(screen.getByTestId('disconnected').textContent).toMatch(/does not answer/));
    const before = api.calls.filter((c) => c.method === 'listRuns').length;
    connection.forEach((l) => l(true));
    await waitFor(() => expect(screen.queryByTestId('disconnected')).toBeNull());
    await waitFor(() => expect(api.calls.filter((c) => c.method === 'listRuns').length).toBe(before + 1));
  });

  it('opens the study named at start (npm start -- --cohort DIR) at once, unless a reload restores another', async () => {
    const api = createFakeApi({ root: '/data/study' });
    const withStart = (): LoopwiseDoor => ({
      ...door(api),
      info: async () => ({
        mode: 'web',
        version: 'test',
        sampleCohort: '/data/sample',
        startCohort: '/data/study',
        defaultOutDir: '/data/out',
        roots: ['/data'],
      }),
    });
    const session = new Session(withStart(), memoryStorage());
    await session.init();
    expect(api.calls.find((c) => c.method === 'openCohort')?.args).toEqual([{ dir: '/data/study' }]);
    expect(session.report?.root).toBe('/data/study');
    expect(session.cohortDir).toBe('/data/study');
  });

  it('ignores export events of another run and never lets them move the run panel', () => {
    const api = createFakeApi({ root: '/data/sample' });
    const session = new Session(door(api));
    const e: ProgressEvent = {
      runId: 'run-9',
      phase: 'export',
      done: 1,
      total: 2,
      reused: 0,
      currentSubject: null,
      elapsedMs: 1,
      etaMs: null,
      failures: [],
    };
    api.emit(e);
    expect(session.progress).toBeNull();
    expect(session.exportProgress).toBeNull();
  });
});

describe('tables on screen', () => {
  it('sort by a column (numbers by value, missing last), filter by text, and name columns from the glossary', async () => {
    const { default: DataTable } = await import('../../renderer/src/components/DataTable.svelte');
    const rows = [
      ['sub-10', 0.5, 0.04],
      ['sub-2', null, 0.2],
      ['sub-1', 12, 0.001],
      ['sub-3', -3, null],
      ['sub-20', 2, 0.5],
      ['sub-4', 0.25, 0.03],
    ];
    render(DataTable, { columns: ['participant_id', 'h1_count', 'p_fwer'], rows });
    const header = screen.getByRole('columnheader', { name: /p \(FWER-corrected\)/ });
    // The file's column name stays reachable in the tooltip.
    expect(header.getAttribute('title')).toMatch(/\(column p_fwer\)$/);
    const firstColumn = () =>
      screen
        .getAllByRole('row')
        .slice(1)
        .map((r) => within(r).getAllByRole('cell')[0].textContent);
    await fireEvent.click(
      within(screen.getByRole('columnheader', { name: /H1 intervals/ })).getByRole('button'),
    );
    expect(firstColumn()).toEqual(['sub-3', 'sub-4', 'sub-10', 'sub-20', 'sub-1', 'sub-2']);
    expect(screen.getByRole('columnheader', { name: /H1 intervals/ }).getAttribute('aria-sort')).toBe(
      'ascending',
    );
    await fireEvent.click(
      within(screen.getByRole('columnheader', { name: /H1 intervals/ })).getByRole('button'),
    );
    expect(firstColumn()).toEqual(['sub-1', 'sub-20', 'sub-10', 'sub-4', 'sub-3', 'sub-2']);
    // Text sorts in natural order: sub-2 before sub-10.
    await fireEvent.click(
      within(screen.getByRole('columnheader', { name: /participant_id/ })).getByRole('button'),
    );
    expect(firstColumn()).toEqual(['sub-1', 'sub-2', 'sub-3', 'sub-4', 'sub-10', 'sub-20']);
    await fireEvent.input(screen.getByRole('searchbox', { name: 'Filter rows' }), {
      target: { value: 'sub-2' },
    });
    expect(firstColumn()).toEqual(['sub-2', 'sub-20']);
    expect(screen.getByText('2 of 6 rows')).toBeTruthy();
  });
});

describe('the Study view builds what the CLI’s reader and design options build', () => {
  it('sends the node table and column kinds (--nodes, --numeric/--categorical) and names each option as the contract does', async () => {
    const { OPTIONS } = await import('../../electron/contract.ts');
    const api = createFakeApi({ root: '/data/sample' });
    const session = new Session(door(api));
    render(App, { session });
    await session.init();
    await fireEvent.click(screen.getByRole('button', { name: 'Open the sample cohort' }));
    await waitFor(() => expect(session.report).not.toBeNull());
    await fireEvent.change(screen.getByRole('textbox', { name: 'Node table' }), {
      target: { value: 'atlas/nodes.tsv' },
    });
    await fireEvent.change(screen.getByRole('combobox', { name: /^age/ }), {
      target: { value: 'categorical' },
    });
    expect(session.cohortOptions).toEqual({ nodes: 'atlas/nodes.tsv', columnKinds: { age: 'categorical' } });
    // The field's tooltip is the contract's help for the option, with its CLI flag.
    const nodes = OPTIONS.find((o) => o.field === 'cohort.nodes')!;
    const tip = screen.getByRole('textbox', { name: 'Node table' }).closest('label')!.getAttribute('title');
    expect(tip).toContain(nodes.help);
    expect(tip).toContain('--nodes');
    await fireEvent.change(screen.getByRole('combobox', { name: /^age/ }), { target: { value: '' } });
    expect(session.cohortOptions).toEqual({ nodes: 'atlas/nodes.tsv' });
    await session.openCohort('/data/sample');
    expect(api.calls.filter((c) => c.method === 'openCohort').at(-1)?.args).toEqual([
      { dir: '/data/sample', nodes: 'atlas/nodes.tsv' },
    ]);
  });
});
