// @vitest-environment happy-dom
// The whole window through renderer/main.tsx with getApi() mocked: Day log → keyboard → Run
// inspector; a click on a tap in the Cp chart re-reduces the run (worker code, here on the UI
// thread as happy-dom has no Worker), shows the change, stores the override and the result; the
// tap list restores it; the day sheet sits in a script-less sandboxed frame; the caution shows.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { act } from 'react';
import type { ActiveElement, Chart, ChartEvent, ChartOptions } from 'chart.js';
import type { RunResult, Settings } from '../app/types';
import { averageRuns, prepareRuns } from '../app/reduce';
import { SESSION, byText, click, key, mockApi, reducedMini, resultOf, typeInto, waitFor } from './renderer-fixtures';

const mini = reducedMini();
let rows = [...mini.rows];
const reviews: unknown[] = [];
let settings: Settings = { ...mini.settings };
const saved: RunResult[] = [];
const m = mockApi({
  'app.info': () => ({ version: '0.1.0', coreVersion: '0.1.0', mode: 'browser', demoSessionId: 1, dbFile: '/tmp/x.sqlite', reviewer: 'M. Okonkwo' }),
  'sessions.list': () => [SESSION],
  'watch.status': () => ({ folder: null, watching: false }),
  'sessions.get': () => ({ session: SESSION, setup: mini.setup, settings }),
  'runs.list': () => rows,
  'session.summary': () => mini.summary,
  'runs.get': ({ run }) => ({
    row: mini.rows.find((r) => r.run === run)!,
    result: saved.filter((r) => r.run === run).at(-1) ?? resultOf(mini.results, run),
    history: [],
  }),
  'runs.reductionInput': ({ run }) => ({
    setup: mini.setup,
    settings,
    zeroed: prepareRuns(mini.setup, averageRuns(mini.raws, settings)).find((z) => z.info.run === run)!,
  }),
  'taps.setBad': ({ tapId, bad }) => {
    settings = { ...settings, badTaps: bad ? [...settings.badTaps, tapId] : settings.badTaps.filter((t) => t !== tapId) };
    return { settings };
  },
  'runs.saveResults': ({ results }) => {
    saved.push(...(results as unknown as RunResult[]));
    return { saved: results.map((_, i) => i + 1) };
  },
  'runs.review': (p) => {
    reviews.push(p);
    return { ok: true };
  },
  'daysheet.html': ({ paper }) => ({ html: `<!doctype html><html><body><h1>Sheet ${paper}</h1></body></html>` }),
});

vi.mock('../renderer/bridge', () => ({ getApi: () => m.api }));

// chart.js needs a real canvas; keep the props each chart was given instead.
const charts: { options: ChartOptions<'scatter'>; data: Chart['data'] }[] = [];
vi.mock('react-chartjs-2', () => ({
  Scatter: (props: { options: ChartOptions<'scatter'>; data: Chart['data'] }) => {
    charts.push(props);
    return null;
  },
}));

beforeAll(async () => {
  const root = document.createElement('div');
  root.id = 'root';
  document.body.appendChild(root);
  await act(async () => {
    await import('../renderer/main');
  });
});
afterAll(() => {
  document.body.innerHTML = '';
});

describe('Rakeline window (renderer/main.tsx, mocked getApi)', () => {
  it('opens on the Day log of the demo session with the caution in the footer', async () => {
    await waitFor(() => expect(document.querySelector('table[role="grid"] tbody tr')).not.toBeNull());
    expect(document.querySelector('footer')!.textContent).toContain('Reduced data are for review by a qualified engineer');
    expect(document.querySelector('footer')!.textContent).toContain('facility safety rules and local practice come first');
    expect(document.querySelector('.session-head')!.textContent).toContain(mini.setup.facility.name);
  });

  it('opens a run from the keyboard and shows its flag reasons in words', async () => {
    const grid = document.querySelector('table[role="grid"]')!;
    await key(grid, 'ArrowDown'); // run 1 (wind-off zero)
    await key(grid, 'ArrowDown'); // run 2
    expect(document.querySelector('.side-panel')!.textContent).toContain('Run 2');
    await key(grid, 'Enter');
    await waitFor(() => expect(byText(document, 'h2', /^Run 2$/)).not.toBeNull());
    const r2 = resultOf(mini.results, 2);
    expect(r2.flags.length).toBeGreaterThan(0);
    const reasons = document.querySelector('.flags-box')!.textContent!;
    for (const f of r2.flags) expect(reasons).toContain(f.reason);
    expect(document.querySelector('.panel-coef')!.textContent).toContain('95 % interval');
    // The taps panel names the contour rule the shown row was integrated by (the result's own).
    const ruleLine = document.querySelector('[data-testid="contour-rule"]')!.textContent!;
    const shownRow = /Loads of row (\S+) integrated by/.exec(ruleLine)![1];
    const loads = r2.rows.find((r) => r.row === shownRow)!;
    expect(ruleLine).toContain(loads.rule === 'shape' ? 'the shape rule' : loads.rule === 'spline' ? 'the spline rule' : 'the linear rule');
    if (loads.shapeFit) expect(ruleLine).toContain(`b ${loads.shapeFit.b.toFixed(3)}`);
  });

  it('toggles a tap from the Cp chart: re-reduced at once, change shown, then stored', async () => {
    await waitFor(() => expect(charts.some((c) => c.options.scales?.x?.max === 1)).toBe(true));
    const cp = [...charts].reverse().find((c) => c.options.scales?.x?.max === 1)!;
    expect(cp.options.scales!.y!.reverse).toBe(true);
    const tapId = (cp.data.datasets[0].data[1] as unknown as { id: string }).id;
    await act(async () => {
      (cp.options.onClick as (e: ChartEvent, els: ActiveElement[], c: Chart) => void)({} as ChartEvent, [{ datasetIndex: 0, index: 1 } as ActiveElement], { data: cp.data } as Chart);
    });
    await waitFor(() => expect(document.querySelector('.change-line')?.textContent).toContain('stored'));
    expect(document.querySelector('.change-text')!.textContent).toMatch(/^cl [−\d.]+ → [−\d.]+, cd .+ → .+, cm .+ → .+$/);
    const setBad = m.calls.find((c) => c.channel === 'taps.setBad')!.payload;
    expect(setBad).toMatchObject({ sessionId: 1, tapId, bad: true });
    expect(saved).toHaveLength(1);
    expect(saved[0].run).toBe(2);
    expect(saved[0].settings.badTaps).toContain(tapId);
    expect(saved[0].taps.find((t) => t.id === tapId)!.bad).toBe(true);
    // The store call order: the override, then the result.
    const order = m.calls.map((c) => c.channel).filter((c) => c === 'taps.setBad' || c === 'runs.saveResults');
    expect(order).toEqual(['taps.setBad', 'runs.saveResults']);

    // The accessible tap list does the same: restore it.
    let restore: HTMLButtonElement | null = null;
    await waitFor(() => {
      restore = document.querySelector<HTMLButtonElement>(`button[aria-label="Restore tap ${tapId}"]`);
      expect(restore).not.toBeNull();
      expect(restore!.disabled).toBe(false);
    });
    await click(restore);
    await waitFor(() => expect(saved).toHaveLength(2));
    expect(m.calls.filter((c) => c.channel === 'taps.setBad').at(-1)!.payload).toMatchObject({ tapId, bad: false });
    expect(saved[1].settings.badTaps).not.toContain(tapId);
  });

  it('shows the day sheet in a sandboxed frame without scripts', async () => {
    await click(byText(document, 'nav button', 'Day sheet'));
    await waitFor(() => expect(document.querySelector('iframe.sheet-frame')).not.toBeNull());
    const f = document.querySelector('iframe.sheet-frame')!;
    expect(f.getAttribute('sandbox')).toBe('');
    expect(f.getAttribute('srcdoc')).toContain('Sheet A4');
    await click(document.querySelector('input[value="Letter"]'));
    await waitFor(() => expect(document.querySelector('iframe.sheet-frame')?.getAttribute('srcdoc')).toContain('Sheet Letter'));
  });

  it('records a reviewer rejection with its comment from the Day log', async () => {
    await click(byText(document, 'nav button', 'Day log'));
    await waitFor(() => expect(document.querySelector('table[role="grid"]')).not.toBeNull());
    await click(document.querySelector('tr[data-run="3"]'));
    const reject = () => byText(document, '.side-panel button', 'Reject') as HTMLButtonElement;
    await waitFor(() => expect(reject()).not.toBeNull());
    expect(reject().disabled).toBe(true); // a rejection needs a reason
    await typeInto(document.querySelector<HTMLTextAreaElement>('#review-comment-3')!, 'stall cell, see notes');
    expect(reject().disabled).toBe(false);
    await click(reject());
    await waitFor(() => expect(reviews).toHaveLength(1));
    expect(reviews[0]).toEqual({ sessionId: 1, run: 3, verdict: 'rejected', comment: 'stall cell, see notes' });
  });

  it('shows a run that live mode reports in the table', async () => {
    expect(document.querySelector('tr[data-run="6"]')).toBeNull();
    const last = mini.rows[mini.rows.length - 1];
    rows = [...mini.rows, { ...last, run: 6, time: '2026-11-18T09:20:00Z' }];
    await act(async () => m.emit('watch.run', { sessionId: 1, run: 6, ok: true, message: 'Run 6 (wind-off zero) arrived.' }));
    await waitFor(() => expect(document.querySelector('tr[data-run="6"]')).not.toBeNull());
  });
});
