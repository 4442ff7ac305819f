// @vitest-environment happy-dom
// Session settings: typed values are checked against the contract's ranges (shown in the form's
// own units), only changed fields are sent, and a re-reduction is offered after saving.
import { afterEach, describe, expect, it } from 'vitest';
import { useState } from 'react';
import { DEFAULT_SETTINGS, type Settings } from '../app/types';
import { CONTOUR_RULES, checkForm, formFromSettings } from '../renderer/settingsForm';
import { SessionSettings } from '../renderer/screens/SessionSettings';
import { ApiContext, StatusProvider } from '../renderer/context';
import type { SessionData } from '../renderer/session';
import { SESSION, byText, click, mockApi, mount, reducedMini, typeInto, waitFor } from './renderer-fixtures';

const current: Settings = { ...DEFAULT_SETTINGS };

describe('settings form check', () => {
  it('sends nothing when nothing changed', () => {
    const c = checkForm(formFromSettings(current), current);
    expect(c.errors).toEqual({});
    expect(c.patch).toEqual({});
  });

  it('shows percentages in percent and stores fractions', () => {
    const v = formFromSettings(current);
    expect(v.liftTolRel).toBe('3'); // 0.03 shown as 3 %
    expect(v.zeroDriftFraction).toBe('1');
    v.liftTolRel = '4';
    expect(checkForm(v, current).patch).toEqual({ liftTolRel: 0.04 });
  });

  it('refuses what is not a number, not whole, or out of range, in words', () => {
    const v = formFromSettings(current);
    v.liftTolAbs = 'abc';
    v.mcDraws = '12.5';
    v.liftTolRel = '150';
    v.spikeK = '0.5';
    v.leakPa = '';
    v.machLimit = '0,3';
    const c = checkForm(v, current);
    expect(c.errors.liftTolAbs).toMatch(/not a number/);
    expect(c.errors.mcDraws).toBe('Enter a whole number.');
    expect(c.errors.liftTolRel).toBe('At most 100 % of |cl p|.');
    expect(c.errors.spikeK).toMatch(/^At least 1/);
    expect(c.errors.leakPa).toBe('Enter a value.');
    expect(c.errors.machLimit).toMatch(/use a point/);
  });

  it('sends a correction method change', () => {
    const v = formFromSettings(current);
    v.correction = 'allen-vincenti';
    expect(checkForm(v, current).patch).toEqual({ correction: 'allen-vincenti' });
  });

  it('offers the three contour rules, the shape rule first, and sends a change of rule', () => {
    expect(CONTOUR_RULES.map((r) => r.value)).toEqual(['shape', 'linear', 'spline']);
    const v = formFromSettings(current);
    expect(v.contourRule).toBe(current.contourRule);
    v.contourRule = 'linear';
    expect(checkForm(v, current).patch).toEqual({ contourRule: 'linear' });
  });
});

describe('Session settings screen', () => {
  let cleanup: (() => Promise<void>) | null = null;
  afterEach(async () => {
    await cleanup?.();
    cleanup = null;
  });

  it('blocks saving while a value is wrong, saves the change, then offers and runs a re-reduction', async () => {
    const mini = reducedMini();
    let stored: Settings = { ...mini.settings };
    const m = mockApi({
      'settings.update': ({ patch }) => (stored = { ...stored, ...patch } as Settings),
      'runs.reduce': () => ({ reduced: 3, summary: mini.summary }),
    });
    const data: SessionData = { session: SESSION, setup: mini.setup, settings: stored, runs: mini.rows, summary: mini.summary };
    let reloads = 0;
    // Reloading after the save brings the rows back marked stale, as runs.list does (main/stale.ts).
    const staleRows = mini.rows.map((r) => (r.result ? { ...r, stale: { reasons: ['liftTolAbs was 0.02, now 0.03'], settings: ['liftTolAbs'], taps: { nowBad: [], nowGood: [] }, zeros: [] } } : r));
    function Harness() {
      const [d, setD] = useState(data);
      return <SessionSettings data={d} reload={async () => { reloads += 1; setD((x) => ({ ...x, settings: stored, runs: reloads === 1 ? staleRows : mini.rows })); }} />;
    }
    const ui = await mount(
      <ApiContext.Provider value={m.api}>
        <StatusProvider>
          <Harness />
        </StatusProvider>
      </ApiContext.Provider>,
    );
    cleanup = ui.unmount;
    const c = ui.container;
    const save = () => byText(c, 'button', /^Save/) as HTMLButtonElement;
    expect(save().disabled).toBe(true); // nothing changed yet

    const abs = c.querySelector<HTMLInputElement>('#set-liftTolAbs')!;
    await typeInto(abs, '2');
    expect(abs.getAttribute('aria-invalid')).toBe('true');
    expect(c.querySelector('#set-liftTolAbs-help')!.textContent).toContain('At most 1');
    expect(save().disabled).toBe(true);
    expect(c.textContent).toContain('1 value needs fixing');

    await typeInto(abs, '0.03');
    expect(abs.getAttribute('aria-invalid')).toBeNull();
    expect(save().disabled).toBe(false);
    await typeInto(c.querySelector<HTMLInputElement>('#set-note')!, 'looser for the stall runs');
    await click(save());
    await waitFor(() => expect(m.calls.some((x) => x.channel === 'settings.update')).toBe(true));
    expect(m.calls.find((x) => x.channel === 'settings.update')!.payload).toEqual({ sessionId: 1, patch: { liftTolAbs: 0.03 }, note: 'looser for the stall runs' });

    const offer = await (async () => {
      let b: HTMLButtonElement | null = null;
      await waitFor(() => {
        b = byText(c, 'button', new RegExp(`Re-reduce stale runs \\(${staleRows.filter((r) => r.result).length}\\)`)) as HTMLButtonElement | null;
        expect(b).not.toBeNull();
      });
      return b!;
    })();
    await click(offer);
    await waitFor(() => expect(m.calls.some((x) => x.channel === 'runs.reduce')).toBe(true));
    const payload = m.calls.find((x) => x.channel === 'runs.reduce')!.payload as { taskId: string; stale?: boolean };
    expect(payload.taskId).toBeTruthy();
    expect(payload.stale).toBe(true);
    expect(reloads).toBeGreaterThanOrEqual(2);
  });
});
