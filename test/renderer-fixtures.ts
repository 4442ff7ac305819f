// Fixtures for the renderer component tests: hand-made run rows (values chosen to exercise
// sorting, not physics), a real reduced mini session (test/helpers/mini-session + app/reduce), and
// a mock of the contract API (what getApi() returns) that records calls and can emit events.
import { vi } from 'vitest';
import type { Channel, EventName, Events, Payload, RakelineApi, Results, RunRowLike, SessionRowLike } from '../main/contract';
import type { Flag, RunResult, Settings } from '../app/types';
import { reduceRawSession, resolveSettings } from '../app/reduce';
import { miniRuns, miniSetup } from './helpers/mini-session';

export const LIFT: Flag = { code: 'lift-mismatch', severity: 'reject', reason: 'Lift methods disagree: surface pressures give cl = 1.100, wall momentum gives 1.300.' };
export const LEAK: Flag = { code: 'leaking-tap', severity: 'warn', reason: 'Leaking tap C19.' };

export function row(run: number, o: { kind?: 'zero' | 'data'; alpha?: number; cl?: number | null; q?: number; flags?: Flag[] } = {}): RunRowLike {
  const kind = o.kind ?? 'data';
  const cl = o.cl === undefined ? 0.1 * run : o.cl;
  return {
    sessionId: 1, run, kind, alphaDeg: o.alpha ?? (kind === 'zero' ? 0 : run), time: `2026-11-18T09:${String(run).padStart(2, '0')}:00Z`,
    baro: 100500, temperatureC: 18, humidity: 50, file: `runs/run-${run}.csv`,
    result: kind === 'zero' || cl === null ? null : {
      resultId: run, reducedAt: '2026-11-18T12:00:00Z', q: o.q ?? 1200, Re: 7.4e5, V: 45, cl, clMom: cl + 0.001, clWall: cl,
      cd: 0.01, cdp: 0.004, cmc4: -0.08, gammaPressure: 5 * cl, gammaMomentum: 5 * cl, flags: o.flags ?? [], alphaCorrDeg: (o.alpha ?? run) * 1.01,
    },
    review: null,
  };
}

export const SESSION: SessionRowLike = {
  id: 1, title: 'HAL-S4412 α sweep', date: '2026-11-18', facility: 'Harrowgate Aeronautical Laboratory', model: 'HAL-S4412',
  folder: null, runCount: 4, dataRunCount: 3, flaggedCount: 1, importedAt: '2026-11-18T12:00:00Z',
};

/** A mini session reduced by the real core: setup, zeroed runs, results, summary. */
export function reducedMini() {
  const setup = miniSetup({ taps: 8 });
  const { index, runs } = miniRuns(setup, { dataRuns: 3 });
  const { results, summary } = reduceRawSession(setup, runs);
  const settings: Settings = resolveSettings(setup);
  const rows: RunRowLike[] = index.map((info) => {
    const r = results.find((x) => x.run === info.run);
    return {
      sessionId: 1, run: info.run, kind: info.kind, alphaDeg: info.alphaDeg, time: info.time, baro: info.baro,
      temperatureC: info.temperatureC, humidity: info.humidity, file: info.file ?? null,
      result: r ? {
        resultId: r.run, reducedAt: '2026-11-18T12:00:00Z', q: r.corrected.q, Re: r.corrected.Re, V: r.corrected.V,
        cl: r.corrected.cl, clMom: r.clMomentum, clWall: r.walls?.clWall ?? NaN, cd: r.corrected.cd, cdp: r.corrected.cdp,
        cmc4: r.corrected.cmc4, gammaPressure: r.circulation.pressure, gammaMomentum: r.circulation.momentum, flags: r.flags,
        alphaCorrDeg: r.corrected.alphaDeg,
      } : null,
      review: null,
    };
  });
  return { setup, index, raws: runs, results, summary, settings, rows };
}

type Handler<C extends Channel> = (payload: Payload<C>) => Results[C] | Promise<Results[C]>;
export type Handlers = { [C in Channel]?: Handler<C> };

/** A mock RakelineApi: answers from `handlers`, records every call, and can emit events. */
export function mockApi(handlers: Handlers) {
  const listeners = new Map<string, Set<(d: unknown) => void>>();
  const calls: { channel: Channel; payload: unknown }[] = [];
  const call = vi.fn(async (channel: Channel, payload: unknown) => {
    calls.push({ channel, payload });
    const h = handlers[channel] as ((p: unknown) => unknown) | undefined;
    if (!h) throw new Error(`mock api: no handler for ${channel}`);
    return h(payload);
  });
  const api: RakelineApi = {
    call: call as unknown as RakelineApi['call'],
    on<E extends EventName>(event: E, listener: (data: Events[E]) => void) {
      const set = listeners.get(event) ?? new Set();
      set.add(listener as (d: unknown) => void);
      listeners.set(event, set);
      return () => set.delete(listener as (d: unknown) => void);
    },
  };
  const emit = <E extends EventName>(event: E, data: Events[E]) => {
    for (const l of listeners.get(event) ?? []) l(data);
  };
  return { api, calls, call, emit };
}

export function resultOf(results: RunResult[], run: number): RunResult {
  const r = results.find((x) => x.run === run);
  if (!r) throw new Error(`no result for run ${run}`);
  return r;
}

// ---------------------------------------------------------------------------------------------
// Mounting React trees in happy-dom without a testing library.
import { act, type ReactNode } from 'react';
import { createRoot } from 'react-dom/client';

(globalThis as { IS_REACT_ACT_ENVIRONMENT?: boolean }).IS_REACT_ACT_ENVIRONMENT = true;

export async function mount(ui: ReactNode): Promise<{ container: HTMLElement; unmount(): Promise<void> }> {
  const container = document.createElement('div');
  document.body.appendChild(container);
  const root = createRoot(container);
  await act(async () => {
    root.render(ui);
  });
  return {
    container,
    async unmount() {
      await act(async () => root.unmount());
      container.remove();
    },
  };
}

/** Let effects, promises and timers run until `check` passes (throws with the last error). */
export async function waitFor(check: () => void, ms = 4000): Promise<void> {
  const end = Date.now() + ms;
  let last: unknown;
  for (;;) {
    try {
      check();
      return;
    } catch (e) {
      last = e;
    }
    if (Date.now() > end) throw last;
    await act(async () => {
      await new Promise((r) => setTimeout(r, 10));
    });
  }
}

/** Type into an input or select the way a user does (React listens to 'input'/'change'). */
export async function typeInto(el: HTMLInputElement | HTMLTextAreaElement, value: string): Promise<void> {
  const proto = el instanceof HTMLTextAreaElement ? HTMLTextAreaElement.prototype : HTMLInputElement.prototype;
  await act(async () => {
    Object.getOwnPropertyDescriptor(proto, 'value')!.set!.call(el, value);
    el.dispatchEvent(new Event('input', { bubbles: true }));
  });
}

export async function click(el: Element | null): Promise<void> {
  if (!el) throw new Error('click: no element');
  await act(async () => {
    (el as HTMLElement).click();
  });
}

export async function key(el: Element, k: string): Promise<void> {
  await act(async () => {
    el.dispatchEvent(new KeyboardEvent('keydown', { key: k, bubbles: true, cancelable: true }));
  });
}

/** The first element whose text contains `text` among those matching `selector`. */
export function byText(root: ParentNode, selector: string, text: string | RegExp): HTMLElement | null {
  for (const el of root.querySelectorAll<HTMLElement>(selector)) {
    const t = el.textContent ?? '';
    if (typeof text === 'string' ? t.includes(text) : text.test(t)) return el;
  }
  return null;
}
