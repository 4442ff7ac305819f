// @vitest-environment happy-dom
// Issue 9, item 4: a flag a session finding explains (the demo's tap leaking in every wind-off
// zero) is a note on its run, not a decision. In the Day log it is a muted note badge, it does not
// count the run as flagged, give the row a stripe or pass the "flagged only" filter, and the side
// panel lists it after the run's own flags as a note; the header counts the runs needing a
// decision. Common practice, no source. The sessions' list says the same count.
import { afterEach, describe, expect, it } from 'vitest';
import type { SessionSummary } from '../app/types';
import type { RunRowLike } from '../main/contract';
import { DayLog } from '../renderer/screens/DayLog';
import { ApiContext, StatusProvider } from '../renderer/context';
import { LEAK, LIFT, SESSION, byText, click, mockApi, mount, reducedMini, row } from './renderer-fixtures';

let cleanup: (() => Promise<void>) | null = null;
afterEach(async () => {
  await cleanup?.();
  cleanup = null;
});

const mini = reducedMini();
// Runs 2–4 carry the leak, which a session finding explains; run 3 also a lift mismatch.
const rows: RunRowLike[] = [row(1, { kind: 'zero' }), row(2, { flags: [LEAK] }), row(3, { flags: [LIFT, LEAK] }), row(4, { flags: [LEAK] })];
const summary: SessionSummary = {
  ...mini.summary,
  flagged: [{ run: 2, flags: [LEAK] }, { run: 3, flags: [LIFT, LEAK] }, { run: 4, flags: [LEAK] }],
  findings: [{ code: 'leaking-tap', tap: 'C19', runs: [2, 3, 4], of: 3, text: 'C19 leaks in the wind-off zeros of every data run, runs 2–4; dropped from all those runs.' }],
  needsDecision: [3],
  noted: [{ run: 2, flags: [0] }, { run: 3, flags: [1] }, { run: 4, flags: [0] }],
};

async function dayLog(sel: number | null) {
  const m = mockApi({});
  const ui = (
    <ApiContext.Provider value={m.api}>
      <StatusProvider>
        <DayLog
          data={{ session: { ...SESSION, runCount: 4, dataRunCount: 3, flaggedCount: 3 }, setup: mini.setup, settings: mini.settings, runs: rows, summary }}
          selected={sel} onSelect={() => undefined} onOpen={() => undefined} reload={async () => undefined}
          live={{ watching: false, folder: null, lastRun: null }}
        />
      </StatusProvider>
    </ApiContext.Provider>
  );
  const mounted = await mount(ui);
  cleanup = mounted.unmount;
  return mounted.container;
}

const tr = (c: HTMLElement, run: number) => c.querySelector<HTMLElement>(`tbody tr[data-run="${run}"]`)!;

describe('Day log: the notes of the session findings', () => {
  it('shows an explained flag as a note badge and counts only the runs needing a decision', async () => {
    const c = await dayLog(null);
    expect(c.querySelector('[data-testid="flagged-count"]')!.textContent).toBe('1');
    expect(c.querySelector('[data-testid="notes-only-count"]')!.textContent).toBe('2');
    // run 2: the leak only, as a note, no stripe
    expect(tr(c, 2).querySelector('[data-note="leaking-tap"]')).not.toBeNull();
    expect(tr(c, 2).querySelector('[data-flag]')).toBeNull();
    expect(tr(c, 2).className).not.toMatch(/row-(warn|reject)/);
    // run 3: its own hold, and the leak as a note beside it
    expect(tr(c, 3).querySelector('[data-flag="lift-mismatch"]')).not.toBeNull();
    expect(tr(c, 3).querySelector('[data-note="leaking-tap"]')).not.toBeNull();
    expect(tr(c, 3).className).toMatch(/row-reject/);
  });

  it('"flagged only" keeps the runs with a flag of their own', async () => {
    const c = await dayLog(null);
    const box = byText(c, 'label', 'flagged only')!.querySelector('input')!;
    await click(box);
    expect([...c.querySelectorAll('tbody tr')].map((r) => Number(r.getAttribute('data-run')))).toEqual([3]);
  });

  it('the side panel lists the note after the run\'s own flags, and a run with notes only has nothing to decide', async () => {
    const c3 = await dayLog(3);
    const items = [...c3.querySelectorAll('.side-panel li.flag-reason')].map((li) => li.className);
    expect(items).toEqual(['flag-reason flag-reject', 'flag-reason flag-note']);
    expect(c3.querySelector('.side-panel li.flag-note')!.textContent).toMatch(/note \(session finding, not a decision on this run\):.*Leaking tap C19/);
    await cleanup!();
    cleanup = null;
    const c2 = await dayLog(2);
    expect(c2.querySelector('.side-panel .ok-line')!.textContent).toMatch(/No flag of its own: nothing to decide/);
    expect(c2.querySelector('.side-panel li.flag-note')).not.toBeNull();
  });
});
