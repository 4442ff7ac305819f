// The "Side by side" screen's pure parts: the run filter, the overlay chart configurations and
// their conversion into the SVG/PNG export's plot description (our own rules, no source).
import { describe, expect, it } from 'vitest';
import { Window } from 'happy-dom';
import { filterRuns } from '../renderer/screens/SideBySide';
import { notesByRun } from '../app/sessionFaults';
import { parseRuns } from '../renderer/screens/DaySheet';
import { cpOverlayConfig, OVERLAY_STYLE, polarOverlayConfig, wakeOverlayConfig } from '../renderer/compareCharts';
import { exportName, specFromConfig, svgDocument } from '../renderer/plotExport';
import { LEAK, LIFT, reducedMini, row } from './renderer-fixtures';

const mini = reducedMini();

describe('side by side', () => {
  it('filters runs by flag code, by "on hold", by no flags and by corrected α', () => {
    const rows = [row(1, { kind: 'zero' }), row(2, { alpha: -2 }), row(3, { alpha: 4, flags: [LEAK] }), row(4, { alpha: 12, flags: [LIFT, LEAK] }), row(5, { cl: null })];
    const runs = (f: string, a: number | null = null, b: number | null = null) => filterRuns(rows, f, a, b).map((r) => r.run);
    expect(runs('any')).toEqual([2, 3, 4]); // zeros and unreduced runs cannot be overlaid
    expect(runs('none')).toEqual([2]);
    expect(runs('hold')).toEqual([4]);
    expect(runs('leaking-tap')).toEqual([3, 4]);
    expect(runs('any', 0, 5)).toEqual([3]); // corrected α: 4 × 1.01
    expect(runs('any', null, 4.03)).toEqual([2]); // 4.04 is above 4.03
    // with the leak a note of the session findings (a finding explains it), run 3 has no flag of its own
    const noted = notesByRun({ flagged: [{ run: 3, flags: [LEAK] }, { run: 4, flags: [LIFT, LEAK] }], noted: [{ run: 3, flags: [0] }, { run: 4, flags: [1] }] });
    expect(filterRuns(rows, 'none', null, null, noted).map((r) => r.run)).toEqual([2, 3]);
    expect(filterRuns(rows, 'leaking-tap', null, null, noted).map((r) => r.run)).toEqual([3, 4]);
  });

  it('Cp overlay: each run one colour and one marker, upper filled, lower open and dashed, axis inverted', () => {
    const overlay = mini.results.slice(0, 2).map((r, i) => ({ label: `day ${i + 1} run ${r.run}`, result: r }));
    const cfg = cpOverlayConfig(overlay);
    expect(cfg.options.scales!.y!.reverse).toBe(true);
    const ds = cfg.data.datasets as unknown as { label: string; borderColor: string; pointStyle: string; pointBackgroundColor?: string; borderDash?: number[]; data: { x: number }[] }[];
    expect(ds.map((d) => d.label)).toEqual([
      `day 1 run ${overlay[0].result.run}, upper`, `day 1 run ${overlay[0].result.run}, lower (dashed, open)`,
      `day 2 run ${overlay[1].result.run}, upper`, `day 2 run ${overlay[1].result.run}, lower (dashed, open)`,
    ]);
    expect(ds[0].borderColor).toBe(OVERLAY_STYLE[0].colour);
    expect(ds[2].borderColor).toBe(OVERLAY_STYLE[1].colour);
    expect(ds[2].pointStyle).not.toBe(ds[0].pointStyle);
    expect(ds[1].pointBackgroundColor).toBe('#ffffff');
    expect(ds[1].borderDash).toEqual([5, 3]);
    const taps = mini.setup.taps.filter((t) => t.surface === 'upper').length;
    expect(ds[0].data.length).toBeLessThanOrEqual(taps);
    expect(ds[0].data.length).toBeGreaterThan(0);
    // x ascending: a line joins the taps from the leading to the trailing edge
    expect(ds[0].data.map((p) => p.x)).toEqual([...ds[0].data.map((p) => p.x)].sort((a, b) => a - b));
  });

  it('exports what the plot shows: same series, markers, open/filled, inverted axis, as a standalone SVG', () => {
    const overlay = mini.results.slice(0, 2).map((r, i) => ({ label: `day ${i + 1} run ${r.run}`, result: r }));
    const spec = specFromConfig(cpOverlayConfig(overlay), 'Cp side by side');
    expect(spec.yReverse).toBe(true);
    expect(spec.xRange).toEqual([0, 1]);
    expect(spec.xLabel).toBe('x/c');
    expect(spec.series.map((s) => [s.marker, s.filled, s.line])).toEqual([
      ['circle', true, 'solid'], ['circle', false, 'dashed'], ['triangle', true, 'solid'], ['triangle', false, 'dashed'],
    ]);
    const svg = svgDocument(spec);
    expect(svg.startsWith('<?xml')).toBe(true);
    const win = new Window();
    const doc = new win.DOMParser().parseFromString(svg, 'image/svg+xml');
    const root = doc.documentElement;
    expect(root.getAttribute('xmlns')).toBe('http://www.w3.org/2000/svg');
    expect(root.querySelector('title')!.textContent).toBe('Cp side by side');
    const legend = root.querySelector('g.legend')!.textContent!;
    for (const o of overlay) expect(legend).toContain(o.label);
    expect(exportName('Cp side by side', 'png')).toBe('cp-side-by-side.png');
    expect(exportName('Drag polar c_l(c_d) — 18 Nov', 'svg')).toBe('drag-polar-c-l-c-d-18-nov.svg');
  });

  it('the day sheet\'s run picker reads "9, 14-16" and refuses anything else', () => {
    expect(parseRuns('9, 14-16')).toEqual([9, 14, 15, 16]);
    expect(parseRuns(' 3;3 4–5 ')).toEqual([3, 4, 5]);
    expect(parseRuns('')).toEqual([]);
    expect(parseRuns('9-7')).toBeNull();
    expect(parseRuns('run 9')).toBeNull();
    expect(parseRuns('1-5000')).toBeNull();
  });

  it('wake overlay only for runs with a wake; polar overlay one series per session', () => {
    const overlay = mini.results.slice(0, 1).map((r) => ({ label: `run ${r.run}`, result: { ...r, wake: null } }));
    expect(wakeOverlayConfig(overlay)).toBeNull();
    const p = polarOverlayConfig([{ label: 'day 1', polar: mini.summary.polar }, { label: 'day 2', polar: mini.summary.polar.slice(0, 2) }], 'lift');
    expect(p.data.datasets.map((d) => d.label)).toEqual(['day 1', 'day 2']);
    expect(p.data.datasets[1].data.length).toBe(2);
  });
});
