// @vitest-environment happy-dom
// Progress: the bar's ARIA values, the phase weighting of main's progress events, and the Intake
// import flow (files checked in the worker code, sent with relative names, progress to 100 %,
// errors with file and line).
import { afterEach, describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { ProgressBar } from '../renderer/components/ProgressBar';
import { progressFraction } from '../renderer/hooks';
import { Intake } from '../renderer/screens/Intake';
import { ApiContext, StatusProvider } from '../renderer/context';
import { LIVE_IDLE } from '../renderer/live';
import type { Payload, Results } from '../main/contract';
import { miniFolder, tempDir, cleanupTempDirs } from './helpers/store-fixtures';
import { byText, mockApi, mount, waitFor } from './renderer-fixtures';
import { act } from 'react';

let cleanup: (() => Promise<void>) | null = null;
afterEach(async () => {
  await cleanup?.();
  cleanup = null;
  cleanupTempDirs();
});

const bar = (c: HTMLElement) => c.querySelector('[role="progressbar"]')!;

describe('progress bar', () => {
  it('reports percent in aria-valuenow with the label in aria-valuetext', async () => {
    const m = await mount(<ProgressBar fraction={0.423} label="Reading runs/run-0007.csv" />);
    cleanup = m.unmount;
    const b = bar(m.container);
    expect(b.getAttribute('aria-valuemin')).toBe('0');
    expect(b.getAttribute('aria-valuemax')).toBe('100');
    expect(b.getAttribute('aria-valuenow')).toBe('42');
    expect(b.getAttribute('aria-valuetext')).toContain('Reading runs/run-0007.csv');
    expect(m.container.textContent).toContain('42 %');
  });

  it('has no aria-valuenow while indeterminate and clamps past the ends', async () => {
    const a = await mount(<ProgressBar fraction={null} label="Opening" />);
    expect(bar(a.container).hasAttribute('aria-valuenow')).toBe(false);
    await a.unmount();
    const b = await mount(<ProgressBar fraction={1.7} label="done" />);
    cleanup = b.unmount;
    expect(bar(b.container).getAttribute('aria-valuenow')).toBe('100');
  });

  it('weights the phases so the bar only moves forward', () => {
    const e = (phase: 'scan' | 'parse' | 'store' | 'reduce', done: number, total: number) => progressFraction({ taskId: 't', phase, done, total, label: '' })!;
    const seq = [e('scan', 1, 1), e('parse', 0, 10), e('parse', 10, 10), e('store', 5, 10), e('store', 10, 10), e('reduce', 1, 4), e('reduce', 4, 4)];
    for (let i = 1; i < seq.length; i++) expect(seq[i]).toBeGreaterThanOrEqual(seq[i - 1]);
    expect(seq[seq.length - 1]).toBe(1);
    expect(progressFraction({ taskId: 't', phase: 'parse', done: 0, total: 0, label: '' })).toBeNull();
  });
});

function filesOf(dir: string): File[] {
  const walk = (d: string): string[] => readdirSync(d).flatMap((n) => (statSync(path.join(d, n)).isDirectory() ? walk(path.join(d, n)) : [path.join(d, n)]));
  // A flat multi-file pick: the browser gives base names only (no runs/ folder).
  return walk(dir).map((p) => new File([readFileSync(p, 'utf8')], path.basename(p)));
}

async function choose(input: HTMLInputElement, files: File[]): Promise<void> {
  await act(async () => {
    Object.defineProperty(input, 'files', { configurable: true, value: files });
    input.dispatchEvent(new Event('change', { bubbles: true }));
  });
}

describe('Intake import', () => {
  it('checks the chosen files, sends them with session-relative names and follows main\'s progress to 100 %', async () => {
    const folder = miniFolder(tempDir('rk-intake-'));
    let release: (() => void) | null = null;
    let sent: Payload<'sessions.importFiles'> | null = null;
    const report: Results['sessions.importFiles'] = {
      report: { sessionId: 7, created: true, importedRuns: folder.index.map((r) => r.run), unchangedFiles: [], changedFiles: [], skippedRuns: [], warnings: [] },
      reduced: 3,
    };
    const m = mockApi({
      'sessions.importFiles': (p) => {
        sent = p;
        return new Promise((res) => { release = () => res(report); });
      },
    });
    let imported: number | null = null;
    const ui = await mount(
      <ApiContext.Provider value={m.api}>
        <StatusProvider>
          <Intake mode="browser" live={LIVE_IDLE} setLive={() => undefined} onImported={(id) => { imported = id; }} onOpenSession={() => undefined} />
        </StatusProvider>
      </ApiContext.Provider>,
    );
    cleanup = ui.unmount;
    const c = ui.container;
    await choose(c.querySelector<HTMLInputElement>('[data-testid="files-input"]')!, filesOf(folder.dir));
    await waitFor(() => expect(sent).not.toBeNull(), 15_000);
    const names = sent!.files.map((f) => f.name).sort();
    expect(names).toContain('setup.json');
    expect(names).toContain('runs.csv');
    for (const r of folder.index) expect(names).toContain(r.file);
    const taskId = sent!.taskId!;

    // Main reports half the parse: the bar sits between the check (35 %) and the end.
    await act(async () => m.emit('progress', { taskId, phase: 'parse', done: 50, total: 100, label: 'Reading runs/run-0002.csv' }));
    const mid = Number(bar(c).getAttribute('aria-valuenow'));
    expect(mid).toBeGreaterThan(35);
    expect(mid).toBeLessThan(100);
    expect(bar(c).getAttribute('aria-valuetext')).toContain('Reading runs/run-0002.csv');
    // Someone else's task does not move our bar.
    await act(async () => m.emit('progress', { taskId: 'other', phase: 'reduce', done: 1, total: 1, label: 'x' }));
    expect(Number(bar(c).getAttribute('aria-valuenow'))).toBe(mid);

    await act(async () => release!());
    await waitFor(() => expect(bar(c).getAttribute('aria-valuenow')).toBe('100'));
    expect(c.textContent).toContain(`${folder.index.length} runs imported`);
    expect(imported).toBe(7);
    expect(byText(c, 'button', 'Open the Day log')).not.toBeNull();
  });

  it('shows a bad run index line with file and line at once and sends nothing', async () => {
    const folder = miniFolder(tempDir('rk-intake-'));
    const m = mockApi({});
    const ui = await mount(
      <ApiContext.Provider value={m.api}>
        <StatusProvider>
          <Intake mode="browser" live={LIVE_IDLE} setLive={() => undefined} onImported={() => undefined} onOpenSession={() => undefined} />
        </StatusProvider>
      </ApiContext.Provider>,
    );
    cleanup = ui.unmount;
    const files = filesOf(folder.dir).map((f) => {
      if (f.name !== 'runs.csv') return f;
      return new File([readFileSync(path.join(folder.dir, 'runs.csv'), 'utf8').replace(/\n(\d+),data,([^,]*),([^,]*),/, '\n$1,data,$2,not-an-angle,')], 'runs.csv');
    });
    await choose(ui.container.querySelector<HTMLInputElement>('[data-testid="files-input"]')!, files);
    await waitFor(() => expect(ui.container.querySelector('.errors')).not.toBeNull(), 15_000);
    const where = ui.container.querySelector('.errors .err-where')!.textContent!;
    expect(where).toMatch(/^runs\.csv, line \d+/);
    expect(ui.container.querySelector('.errors')!.textContent).toContain('not-an-angle');
    // the place is said once: the reason beside it does not repeat the file and line
    expect(where).toMatch(/^runs\.csv, line \d+, channel alpha_deg$/);
    const msg = ui.container.querySelector('.errors .err-msg')!.textContent!;
    expect(msg).toContain('not-an-angle');
    expect(msg).not.toContain('runs.csv');
    expect(m.calls.some((x) => x.channel === 'sessions.importFiles')).toBe(false);
  });
});
