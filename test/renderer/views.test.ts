/** The views rendered (Svelte 5 in jsdom) over the renderer's Session and a stand-in service. */
import { fireEvent, render, screen, waitFor, within } from '@testing-library/svelte';
import { describe, expect, it } from 'vitest';
import type { LoopwiseDoor } from '../../electron/web-client.ts';
import App from '../../renderer/src/App.svelte';
import { Session } from '../../renderer/src/lib/session.svelte.ts';
import { createFakeApi, type FakeApi } from '../web/fake-api.ts';

function door(api: FakeApi): LoopwiseDoor {
  return {
    ...api,
    info: async () => ({
      mode: 'web',
      version: 'test',
      sampleCohort: '/data/sample',
      defaultOutDir: '/data/out',
      roots: ['/data'],
    }),
  };
}

async function openApp() {
  const api = createFakeApi({ root: '/data/sample' });
  const session = new Session(door(api));
  render(App, { session });
  await session.init();
  return { api, session };
}

describe('the app shell', () => {
  it('says it is a research tool, not a diagnostic device, and keeps result views disabled until a run', async () => {
    await openApp();
    expect(screen.getByRole('note').textContent).toMatch(/research tool, not a diagnostic device/);
    const nav = within(screen.getByRole('navigation'));
    expect(nav.getByRole('button', { name: 'Study' })).toHaveProperty('disabled', false);
    for (const name of ['Analysis', 'Groups', 'Regions', 'Subject', 'Export']) {
      expect(nav.getByRole('button', { name })).toHaveProperty('disabled', true);
    }
  });
});

describe('Study', () => {
  it('opens the sample cohort in one click and shows N, the QC report and the participants', async () => {
    const { api, session } = await openApp();
    await fireEvent.click(screen.getByRole('button', { name: 'Open the sample cohort' }));
    await waitFor(() => expect(session.report).not.toBeNull());
    expect(api.calls.find((c) => c.method === 'openCohort')?.args).toEqual([{ dir: '/data/sample' }]);
    const summary = screen.getByTestId('cohort-summary').textContent!;
    expect(summary).toMatch(/10\s*subjects/);
    expect(summary).toMatch(/16\s*regions \(N\)/);
    expect(summary).toMatch(/5\s*control/);
    const qc = within(screen.getByTestId('qc-report'));
    expect(qc.getAllByRole('row')).toHaveLength(3);
    expect(qc.getByText('sub-10.tsv: 16 rows but 15 columns').closest('tr')?.className).toContain(
      'error-row',
    );

    await fireEvent.change(screen.getByRole('combobox', { name: 'Show' }), { target: { value: 'warning' } });
    expect(within(screen.getByTestId('qc-report')).getAllByRole('row')).toHaveLength(2);
    await fireEvent.input(screen.getByPlaceholderText('Filter by subject, file or text'), {
      target: { value: 'sub-10' },
    });
    expect(screen.queryByTestId('qc-report')!.querySelectorAll('tbody tr')).toHaveLength(0);
  });

  it('chooses the group column and covariates into the statistics settings', async () => {
    const { session } = await openApp();
    await fireEvent.click(screen.getByRole('button', { name: 'Open the sample cohort' }));
    await waitFor(() => expect(session.report).not.toBeNull());
    expect(session.stats?.groupColumn).toBe('group');
    await fireEvent.click(screen.getByRole('checkbox', { name: 'age' }));
    expect(session.stats?.covariates).toEqual(['age']);
    await fireEvent.change(screen.getByRole('combobox', { name: 'Group column' }), {
      target: { value: 'sex' },
    });
    expect(session.stats?.groupColumn).toBe('sex');
    expect(screen.queryByRole('checkbox', { name: 'sex' })).toBeNull();
  });
});

describe('Analysis and Export', () => {
  it('runs with a progress bar, lists the failures, then exports the tables to the chosen folder', async () => {
    const { api, session } = await openApp();
    await fireEvent.click(screen.getByRole('button', { name: 'Open the sample cohort' }));
    await waitFor(() => expect(session.report).not.toBeNull());
    await fireEvent.click(within(screen.getByRole('navigation')).getByRole('button', { name: 'Analysis' }));

    const seed = screen.getByRole('spinbutton', { name: 'Seed' });
    await fireEvent.change(seed, { target: { value: '42' } });
    await fireEvent.click(screen.getByRole('button', { name: 'Run analysis' }));
    await waitFor(
      () => expect(screen.getByTestId('run-summary').textContent).toMatch(/Run done: 9 computed/),
      {
        timeout: 5000,
      },
    );
    const started = api.calls.find((c) => c.method === 'startRun')!.args[0] as { stats: { seed: number } };
    expect(started.stats.seed).toBe(42);
    expect(screen.getByRole('progressbar').getAttribute('aria-valuenow')).toBe('100');
    expect(within(screen.getByTestId('run-failures')).getByText('not square')).toBeTruthy();

    await fireEvent.click(within(screen.getByRole('navigation')).getByRole('button', { name: 'Export' }));
    const out = screen.getByRole('textbox', { name: 'Output folder' }) as HTMLInputElement;
    expect(out.value).toBe('/data/out');
    await fireEvent.input(out, { target: { value: '/data/out/run1' } });
    await fireEvent.click(screen.getByRole('button', { name: 'Export tables' }));
    await waitFor(() =>
      expect(screen.getByTestId('export-files').textContent).toContain('/data/out/run1/features.tsv'),
    );
    expect(api.calls.at(-1)).toEqual({ method: 'exportRun', args: ['run-1', '/data/out/run1', false] });
  });

  it('cancels a run: the bar stops, the summary says so and no results appear', async () => {
    const { api, session } = await openApp();
    await fireEvent.click(screen.getByRole('button', { name: 'Open the sample cohort' }));
    await waitFor(() => expect(session.report).not.toBeNull());
    await fireEvent.click(within(screen.getByRole('navigation')).getByRole('button', { name: 'Analysis' }));
    await fireEvent.click(screen.getByRole('button', { name: 'Run analysis' }));
    const cancel = screen.getByRole('button', { name: 'Cancel' });
    await waitFor(() => expect(cancel).toHaveProperty('disabled', false));
    await fireEvent.click(cancel);
    await waitFor(() => expect(screen.getByTestId('run-summary').textContent).toMatch(/Run cancelled/));
    expect(api.calls.some((c) => c.method === 'cancelRun')).toBe(true);
    expect(session.results).toBeNull();
    expect(within(screen.getByRole('navigation')).getByRole('button', { name: 'Groups' })).toHaveProperty(
      'disabled',
      true,
    );
  });

  it('refuses to start with settings the service would reject, and says why', async () => {
    const { session } = await openApp();
    await fireEvent.click(screen.getByRole('button', { name: 'Open the sample cohort' }));
    await waitFor(() => expect(session.report).not.toBeNull());
    await fireEvent.click(within(screen.getByRole('navigation')).getByRole('button', { name: 'Analysis' }));
    await fireEvent.change(screen.getByRole('spinbutton', { name: 'Grid points' }), {
      target: { value: '1' },
    });
    expect(screen.getByRole('button', { name: 'Run analysis' })).toHaveProperty('disabled', true);
    // The contract's message, under the field it concerns.
    const problem = screen.getByText('must be an integer in [2, 10000], got 1');
    expect(problem.getAttribute('data-field')).toBe('settings.gridPoints');
  });

  it('refuses a seed of -1 under the Seed field, as every door does', async () => {
    const { api, session } = await openApp();
    await fireEvent.click(screen.getByRole('button', { name: 'Open the sample cohort' }));
    await waitFor(() => expect(session.report).not.toBeNull());
    await fireEvent.click(within(screen.getByRole('navigation')).getByRole('button', { name: 'Analysis' }));
    await fireEvent.change(screen.getByRole('spinbutton', { name: 'Seed' }), { target: { value: '-1' } });
    expect(screen.getByRole('button', { name: 'Run analysis' })).toHaveProperty('disabled', true);
    const shown = [...document.querySelectorAll('[data-field="stats.seed"]')].map((e) => e.textContent);
    expect(shown).toEqual(['must be an integer in [0, 4294967295], got -1']);
    expect(api.calls.some((c) => c.method === 'startRun')).toBe(false);
  });
});

describe('Study design and readers', () => {
  it('sends the effect, reference level, blocks, covariates, time series and estimator to the service', async () => {
    const { api, session } = await openApp();
    await fireEvent.click(screen.getByRole('checkbox', { name: /region time series/ }));
    await fireEvent.change(screen.getByRole('combobox', { name: 'Correlation estimator' }), {
      target: { value: 'ledoit-wolf' },
    });
    await fireEvent.click(screen.getByRole('button', { name: 'Open the sample cohort' }));
    await waitFor(() => expect(session.report).not.toBeNull());
    expect(api.calls.find((c) => c.method === 'openCohort')?.args).toEqual([
      { dir: '/data/sample', timeSeries: true, correlation: 'ledoit-wolf' },
    ]);
    await fireEvent.change(screen.getByRole('combobox', { name: 'Design' }), { target: { value: 'effect' } });
    await fireEvent.change(screen.getByRole('combobox', { name: 'Effect' }), { target: { value: 'group' } });
    await fireEvent.change(screen.getByRole('combobox', { name: 'Reference level' }), {
      target: { value: 'patient' },
    });
    await fireEvent.change(screen.getByRole('combobox', { name: 'Exchangeability blocks' }), {
      target: { value: 'sex' },
    });
    await fireEvent.click(screen.getByRole('checkbox', { name: 'age' }));
    expect(session.stats).toMatchObject({
      groupColumn: null,
      effect: 'group',
      reference: 'patient',
      blocks: 'sex',
      covariates: ['age'],
    });
    await fireEvent.click(within(screen.getByRole('navigation')).getByRole('button', { name: 'Analysis' }));
    await fireEvent.click(screen.getByRole('button', { name: 'Run analysis' }));
    await waitFor(() => expect(api.calls.some((c) => c.method === 'startRun')).toBe(true));
    const req = api.calls.find((c) => c.method === 'startRun')!.args[0] as {
      cohort: unknown;
      stats: unknown;
    };
    expect(req.cohort).toEqual({ dir: '/data/sample', timeSeries: true, correlation: 'ledoit-wolf' });
    expect(req.stats).toMatchObject({
      effect: 'group',
      reference: 'patient',
      blocks: 'sex',
      covariates: ['age'],
    });
  });

  it('names a model column the cohort lacks under the Model field, listing the columns there are', async () => {
    const { session } = await openApp();
    await fireEvent.click(screen.getByRole('button', { name: 'Open the sample cohort' }));
    await waitFor(() => expect(session.report).not.toBeNull());
    await fireEvent.change(screen.getByRole('combobox', { name: 'Design' }), { target: { value: 'model' } });
    await fireEvent.change(screen.getByRole('textbox', { name: 'Model' }), {
      target: { value: 'group + agee' },
    });
    const shown = [...document.querySelectorAll('[data-field="stats.model"]')].map((e) => e.textContent);
    expect(shown).toEqual(["no column 'agee' in the participants table; available: group, age, sex"]);
  });
});

describe('a run whose events arrive before its id', () => {
  it('keeps every event the service sent before startRun answered (a run from the cache can finish first)', async () => {
    const api = createFakeApi({ root: '/data/sample' });
    const base = door(api);
    const listeners: Array<(e: import('../../electron/api.ts').ProgressEvent) => void> = [];
    // As the service does: the run starts (here: runs to the end) before the call returns its id.
    const early: LoopwiseDoor = {
      ...base,
      onProgress: (l) => {
        listeners.push(l);
        return base.onProgress(l);
      },
      startRun: async (req) => {
        const { runId } = await base.startRun(req);
        await api.cancelRun(runId); // the fake's own timed events stay out of the way
        const ids = ['sub-01', 'sub-02', 'sub-03'];
        const event = { runId, total: 3, elapsedMs: 1, etaMs: 0, failures: [] };
        ids.forEach((id, i) =>
          listeners.forEach((l) =>
            l({ ...event, phase: 'filtrations', done: i + 1, reused: i + 1, currentSubject: id }),
          ),
        );
        listeners.forEach((l) => l({ ...event, phase: 'done', done: 3, reused: 3, currentSubject: null }));
        return { runId };
      },
    };
    const session = new Session(early);
    await session.init();
    await session.openCohort('/data/sample');
    await session.startRun();
    await waitFor(() => expect(session.summary).not.toBeNull());
    // The second run: its events come while the session still holds the first run's id.
    await session.startRun();
    expect(session.runId).toBe('run-2');
    expect(session.seen).toEqual([
      { subject: 'sub-01', cached: true },
      { subject: 'sub-02', cached: true },
      { subject: 'sub-03', cached: true },
    ]);
    expect(session.progress?.phase).toBe('done');
    await waitFor(() => expect(session.summary).not.toBeNull());
  });
});
