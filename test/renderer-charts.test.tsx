// @vitest-environment happy-dom
// chart.js configurations: the Cp axis is inverted, surfaces differ by marker and colour, bad taps
// and the inviscid overlay are their own series, clicks on a tap name the tap, sweeps split.
import { describe, expect, it, vi } from 'vitest';
import type { ActiveElement, Chart, ChartEvent } from 'chart.js';
import type { PolarPoint, RunResult } from '../app/types';
import { clAlphaConfig, cpAxisRange, dragPolarConfig, cpChartConfig, sweepDirections, wakeChartConfig, wallChartConfig, type XY } from '../renderer/charts';
import { reducedMini } from './renderer-fixtures';

const mini = reducedMini();
const base: RunResult = mini.results[0];

function withBadTap(r: RunResult, id: string): RunResult {
  return { ...r, taps: r.taps.map((t) => (t.id === id ? { ...t, bad: true, badReason: 'marked' } : t)) };
}

describe('Cp chart', () => {
  it('inverts the Cp axis (negative up) and spans x/c 0…1', () => {
    const { options } = cpChartConfig(base);
    expect(options.scales!.y!.reverse).toBe(true);
    expect(options.scales!.x!.min).toBe(0);
    expect(options.scales!.x!.max).toBe(1);
    expect(options.animation).toBe(false);
    expect(String((options.scales!.y as { title?: { text?: string } }).title?.text)).toMatch(/negative up/);
  });

  it('draws upper and lower surfaces with different markers and colours, bad taps apart, inviscid as lines', () => {
    const r = withBadTap(base, 'U02');
    const { data } = cpChartConfig(r);
    const [upper, lower, bad, invU, invL] = data.datasets as (typeof data.datasets[number] & { pointStyle: string; borderColor: string; showLine: boolean; pointRadius: number; borderDash: number[] })[];
    expect(upper.pointStyle).not.toBe(lower.pointStyle);
    expect(upper.borderColor).not.toBe(lower.borderColor);
    expect(bad.pointStyle).not.toBe(upper.pointStyle);
    expect(bad.pointStyle).not.toBe(lower.pointStyle);
    const ids = (d: { data: unknown[] }) => (d.data as XY[]).map((p) => p.id);
    expect(ids(bad)).toContain('U02');
    expect(ids(upper)).not.toContain('U02');
    const nUpper = r.taps.filter((t) => t.surface === 'upper' && !t.bad && !r.surface.bridged.includes(t.id)).length;
    expect(upper.data).toHaveLength(nUpper);
    for (const inv of [invU, invL]) {
      expect(inv.showLine).toBe(true);
      expect(inv.pointRadius).toBe(0);
    }
    expect(invU.data).toHaveLength(r.inviscid.filter((p) => p.surface === 'upper').length);
    expect(invL.borderDash.length).toBeGreaterThan(0);
  });

  it('names the clicked tap, and ignores clicks on the inviscid lines', () => {
    const onTap = vi.fn();
    const cfg = cpChartConfig(base, { onTap });
    const chart = { data: cfg.data } as unknown as Chart;
    const click = cfg.options.onClick as (e: ChartEvent, els: ActiveElement[], c: Chart) => void;
    click({} as ChartEvent, [{ datasetIndex: 1, index: 0 } as ActiveElement], chart);
    const firstLower = (cfg.data.datasets[1].data as XY[])[0].id;
    expect(onTap).toHaveBeenCalledWith(firstLower);
    onTap.mockClear();
    click({} as ChartEvent, [{ datasetIndex: 3, index: 0 } as ActiveElement], chart);
    expect(onTap).not.toHaveBeenCalled();
  });

  it('keeps measured Cp in view and clips a far inviscid suction peak', () => {
    // Stalled run: measured suction ~ −1, inviscid peak −15 → the axis stops well short of −15.
    const stalled = cpAxisRange([-1.1, -0.8, 0.2, 1], [-15, -2, 0.5, 1]);
    expect(stalled.min).toBeLessThanOrEqual(-1.1);
    expect(stalled.min).toBeGreaterThan(-3);
    expect(stalled.max).toBeGreaterThanOrEqual(1);
    // Attached flow: the inviscid peak a little beyond the data is shown whole.
    const attached = cpAxisRange([-3, -1, 0.3, 1], [-3.6, -1, 1]);
    expect(attached.min).toBeLessThanOrEqual(-3.6);
  });
});

describe('wake and wall charts', () => {
  it('plots the wake profile against rake height in mm and inverts the wall Cp axis', () => {
    const wake = wakeChartConfig(base)!;
    const prof = base.wake!.profile;
    const pts = wake.data.datasets[0].data as XY[];
    expect(pts).toHaveLength(prof.length);
    expect(Math.max(...pts.map((p) => p.y))).toBeCloseTo(Math.max(...prof.map((p) => p.y)) * 1000, 6);
    const walls = wallChartConfig(base)!;
    expect(walls.options.scales!.y!.reverse).toBe(true);
    expect((walls.data.datasets[0] as { pointStyle: string }).pointStyle).not.toBe((walls.data.datasets[1] as { pointStyle: string }).pointStyle);
  });
});

describe('polars', () => {
  const pt = (run: number, alphaDeg: number, cl: number): PolarPoint => ({ run, alphaDeg, cl, clMom: cl, cd: 0.01, cdp: 0.004, cmc4: -0.08, time: '', flagged: false });
  const sweep = [pt(1, -2, -0.1), pt(2, 0, 0.1), pt(3, 2, 0.3), pt(4, 4, 0.5), pt(5, 4, 0.5), pt(6, 2, 0.32), pt(7, 0, 0.12), pt(8, 2, 0.3)];

  it('tells up- from down-sweep points by the α step in time order', () => {
    expect(sweepDirections(sweep)).toEqual(['up', 'up', 'up', 'up', 'up', 'down', 'down', 'up']);
    expect(sweepDirections([pt(1, 5, 0), pt(2, 3, 0)])).toEqual(['down', 'down']);
  });

  it('draws the sweeps as separate series with different line styles, broken between segments', () => {
    const cfg = clAlphaConfig(sweep, null, new Set([6]));
    const ds = cfg.data.datasets as { label: string; data: XY[]; borderDash: number[] }[];
    const up = ds.find((d) => /pressures, up-sweep/.test(d.label))!;
    const down = ds.find((d) => /pressures, down-sweep/.test(d.label))!;
    expect(up.borderDash).toEqual([]);
    expect(down.borderDash.length).toBeGreaterThan(0);
    expect(up.data.filter((p) => Number.isFinite(p.x)).map((p) => p.run)).toEqual([1, 2, 3, 4, 5, 8]);
    expect(up.data.some((p) => Number.isNaN(p.x))).toBe(true); // the gap before run 8
    expect(down.data.filter((p) => Number.isFinite(p.x)).map((p) => p.run)).toEqual([6, 7]);
    // Run 6 is on hold: its marker stays, but a gap follows it, so no line joins it to run 7.
    expect(Number.isNaN(down.data[1].x)).toBe(true);
    // Both lift methods are on the same axes.
    expect(ds.some((d) => /wall momentum, up-sweep/.test(d.label))).toBe(true);
    // Held runs get the ✕ overlay.
    expect(ds.find((d) => /on hold/.test(d.label))!.data.map((p) => p.run)).toEqual([6]);
  });

  it('never joins a held run into the drag polar line: each line segment joins two runs not on hold', () => {
    const cfg = dragPolarConfig(sweep, new Set([3]));
    const ds = cfg.data.datasets as { label: string; data: XY[] }[];
    const up = ds.find((d) => /wake rake, up-sweep/.test(d.label))!;
    expect(up.data.filter((p) => Number.isFinite(p.x)).map((p) => p.run)).toEqual([1, 2, 3, 4, 5, 8]);
    for (let i = 1; i < up.data.length; i++) {
      const a = up.data[i - 1], b = up.data[i];
      if (Number.isFinite(a.x) && Number.isFinite(b.x)) expect([a.run, b.run]).not.toContain(3);
    }
  });
});
