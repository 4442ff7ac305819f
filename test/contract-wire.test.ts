// The browser-mode wire encoding (main/wire.ts) keeps what plain JSON loses, and the native menu
// (main/menu.ts) only sends contract 'menu' events (electron mocked: nothing real is loaded).
import { describe, expect, it, vi } from 'vitest';

vi.mock('electron', () => ({ Menu: { buildFromTemplate: vi.fn(), setApplicationMenu: vi.fn() } }));

import { decodeWire, encodeWire } from '../main/wire';
import { menuTemplate, type MenuCommand } from '../main/menu';
import type { MenuItemConstructorOptions } from 'electron';

describe('wire encoding', () => {
  it('round-trips NaN, ±Infinity and nested values', () => {
    const v = { cd: NaN, a: [1, Infinity, -Infinity, -0.5], s: 'NaN', n: null, o: { x: { y: NaN } } };
    const back = decodeWire(encodeWire(v)) as typeof v;
    expect(Number.isNaN(back.cd)).toBe(true);
    expect(back.a).toEqual([1, Infinity, -Infinity, -0.5]);
    expect(back.s).toBe('NaN');
    expect(back.n).toBeNull();
    expect(Number.isNaN(back.o.x.y)).toBe(true);
  });
  it('turns typed arrays into plain arrays (plain JSON would give index-keyed objects)', () => {
    const back = decodeWire(encodeWire({ samples: new Float64Array([1.5, NaN, 3]) })) as { samples: number[] };
    expect(Array.isArray(back.samples)).toBe(true);
    expect(back.samples[0]).toBe(1.5);
    expect(Number.isNaN(back.samples[1])).toBe(true);
  });
  it('leaves look-alike objects with other keys alone', () => {
    expect(decodeWire(encodeWire({ v: { '~num': 'NaN', other: 1 } }))).toEqual({ v: { '~num': 'NaN', other: 1 } });
  });
});

describe('native menu', () => {
  const flat = (items: MenuItemConstructorOptions[]): MenuItemConstructorOptions[] =>
    items.flatMap((i) => [i, ...(Array.isArray(i.submenu) ? flat(i.submenu as MenuItemConstructorOptions[]) : [])]);
  const click = (i: MenuItemConstructorOptions) => (i.click as unknown as () => void)();

  it('sends one menu command per Rakeline item, and lists recent sessions newest first', () => {
    const sent: [MenuCommand, string | undefined][] = [];
    const items = flat(menuTemplate({
      send: (c, a) => sent.push([c, a]),
      recent: [
        { id: 1, title: 'Older', date: '2026-11-17', facility: '', model: '', folder: null, runCount: 1, dataRunCount: 1, flaggedCount: 0, importedAt: '2026-11-17T10:00:00Z' },
        { id: 2, title: 'Newer', date: '2026-11-18', facility: '', model: '', folder: null, runCount: 1, dataRunCount: 1, flaggedCount: 0, importedAt: '2026-11-18T10:00:00Z' },
      ],
      watching: true, watchFolder: '/data/live', isMac: false, appName: 'Rakeline',
    }));
    const byLabel = (re: RegExp) => items.find((i) => re.test(String(i.label ?? '')))!;
    for (const [re, cmd] of [[/^Open Session Folder/, 'open-folder'], [/^Import Runs/, 'import'], [/^Watch Folder/, 'toggle-watch'],
      [/^Print Day Sheet/, 'print-sheet'], [/as CSV/, 'export-csv'], [/as JSON/, 'export-json']] as const) {
      click(byLabel(re));
      expect(sent.pop()).toEqual([cmd, undefined]);
    }
    expect(byLabel(/^Watch Folder/).checked).toBe(true);
    const recent = byLabel(/^Recent Sessions/).submenu as MenuItemConstructorOptions[];
    expect(recent.map((r) => r.label)).toEqual(['Newer — 2026-11-18', 'Older — 2026-11-17']);
    click(recent[0]);
    expect(sent.pop()).toEqual(['open-recent', '2']);
    for (const role of ['editMenu', 'windowMenu', 'quit']) expect(items.some((i) => i.role === role)).toBe(true);
    // DevTools only in a development build (issue 12): not without devTools, there with it.
    expect(items.some((i) => i.role === 'toggleDevTools')).toBe(false);
    const dev = flat(menuTemplate({ send: () => undefined, recent: [], watching: false, watchFolder: null, isMac: false, appName: 'Rakeline', devTools: true }));
    expect(dev.some((i) => i.role === 'toggleDevTools')).toBe(true);
  });
});
