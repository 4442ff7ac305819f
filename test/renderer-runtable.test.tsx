// @vitest-environment happy-dom
// Run table of the Day log: sorting by column, keyboard navigation, flag badges carry text.
import { afterEach, describe, expect, it, vi } from 'vitest';
import { useState } from 'react';
import { RunTable, sortRuns, RUN_COLUMNS } from '../renderer/components/RunTable';
import type { RunRowLike } from '../main/contract';
import { LEAK, LIFT, byText, click, key, mount, row } from './renderer-fixtures';

let cleanup: (() => Promise<void>) | null = null;
afterEach(async () => {
  await cleanup?.();
  cleanup = null;
});

function Harness({ rows, onOpen }: { rows: RunRowLike[]; onOpen(run: number): void }) {
  const [sel, setSel] = useState<number | null>(null);
  return <RunTable runs={rows} selected={sel} onSelect={setSel} onOpen={onOpen} />;
}

const runOrder = (c: HTMLElement) => [...c.querySelectorAll('tbody tr')].map((tr) => Number(tr.getAttribute('data-run')));

describe('run table', () => {
  const rows = [row(1, { kind: 'zero' }), row(2, { cl: 0.3 }), row(3, { cl: 0.1 }), row(4, { cl: 0.2, flags: [LIFT, LEAK] })];

  it('sorts by a column both ways, runs without a value last, and marks aria-sort', async () => {
    const m = await mount(<Harness rows={rows} onOpen={() => undefined} />);
    cleanup = m.unmount;
    expect(runOrder(m.container)).toEqual([1, 2, 3, 4]);
    const clHead = byText(m.container, 'th', 'l p')!;
    await click(clHead.querySelector('button'));
    expect(runOrder(m.container)).toEqual([3, 4, 2, 1]);
    expect(clHead.getAttribute('aria-sort')).toBe('ascending');
    await click(clHead.querySelector('button'));
    expect(runOrder(m.container)).toEqual([2, 4, 3, 1]);
    expect(clHead.getAttribute('aria-sort')).toBe('descending');
    expect(byText(m.container, 'th', 'Run')!.getAttribute('aria-sort')).toBe('none');
  });

  it('sortRuns keeps NaN and missing values last and breaks ties by run', () => {
    const r = [row(5, { cl: NaN }), row(6, { cl: 0.5 }), row(7, { cl: 0.5 }), row(8, { kind: 'zero' }), row(9, { cl: -0.2 })];
    expect(sortRuns(r, { key: 'cl', dir: 'asc' }).map((x) => x.run)).toEqual([9, 6, 7, 5, 8]);
    expect(sortRuns(r, { key: 'cl', dir: 'desc' }).map((x) => x.run)).toEqual([6, 7, 9, 5, 8]);
  });

  it('moves the selection with the arrow keys and opens the run with Enter', async () => {
    const onOpen = vi.fn();
    const m = await mount(<Harness rows={rows} onOpen={onOpen} />);
    cleanup = m.unmount;
    const grid = m.container.querySelector('table')!;
    expect(grid.getAttribute('tabindex')).toBe('0');
    await key(grid, 'ArrowDown');
    expect(grid.querySelector('tr[aria-selected="true"]')!.getAttribute('data-run')).toBe('1');
    await key(grid, 'ArrowDown');
    await key(grid, 'ArrowDown');
    await key(grid, 'ArrowUp');
    expect(grid.querySelector('tr[aria-selected="true"]')!.getAttribute('data-run')).toBe('2');
    expect(grid.getAttribute('aria-activedescendant')).toBe('runrow-2');
    await key(grid, 'End');
    expect(grid.querySelector('tr[aria-selected="true"]')!.getAttribute('data-run')).toBe('4');
    await key(grid, 'ArrowDown'); // stays on the last row
    expect(grid.querySelector('tr[aria-selected="true"]')!.getAttribute('data-run')).toBe('4');
    await key(grid, 'Enter');
    expect(onOpen).toHaveBeenCalledWith(4);
    await key(grid, 'Home');
    expect(grid.querySelectorAll('tr[aria-selected="true"]')).toHaveLength(1);
    expect(grid.querySelector('tr[aria-selected="true"]')!.getAttribute('data-run')).toBe('1');
  });

  it('follows the sorted order when navigating', async () => {
    const m = await mount(<Harness rows={rows} onOpen={() => undefined} />);
    cleanup = m.unmount;
    await click(byText(m.container, 'th', 'l p')!.querySelector('button'));
    const grid = m.container.querySelector('table')!;
    await key(grid, 'Home');
    await key(grid, 'ArrowDown');
    expect(grid.querySelector('tr[aria-selected="true"]')!.getAttribute('data-run')).toBe('4');
  });

  it('shows flags as badges with a glyph and words, not colour alone', async () => {
    const m = await mount(<Harness rows={rows} onOpen={() => undefined} />);
    cleanup = m.unmount;
    const tr = m.container.querySelector('tr[data-run="4"]')!;
    const badges = [...tr.querySelectorAll('.badge')];
    expect(badges).toHaveLength(2);
    const lift = tr.querySelector('[data-flag="lift-mismatch"]')!;
    expect(lift.textContent).toContain('lift mismatch');
    expect(lift.textContent).toContain('hold');
    expect(lift.querySelector('.badge-glyph')!.textContent).toBe('✖');
    const leak = tr.querySelector('[data-flag="leaking-tap"]')!;
    expect(leak.textContent).toContain('leaking tap');
    expect(leak.querySelector('.badge-glyph')!.textContent).toBe('▲');
    // The two severities differ in shape (glyph) as well as in colour class.
    expect(lift.className).not.toBe(leak.className);
    expect(tr.className).toContain('row-reject');
    // A clean data run says so in words.
    expect(m.container.querySelector('tr[data-run="2"]')!.textContent).toContain('none');
  });

  it('puts real units in the column headers', async () => {
    const m = await mount(<Harness rows={rows} onOpen={() => undefined} />);
    cleanup = m.unmount;
    const head = m.container.querySelector('thead')!.textContent!;
    for (const h of ['α [°]', 'q [Pa]', 'Re [×106]', 'Γ corr. [m²/s]']) expect(head).toContain(h);
    const heads = RUN_COLUMNS.map((c) => c.title);
    expect(heads.some((t) => /degrees/.test(t))).toBe(true);
    expect(heads.some((t) => /dynamic pressure, Pa/.test(t))).toBe(true);
    expect(heads.some((t) => /Reynolds/.test(t))).toBe(true);
  });
});
