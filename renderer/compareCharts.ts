// chart.js configurations of the "Side by side" screen: up to six runs (from any sessions) on
// one Cp, wake or wall plot, and the polars of several sessions on one plot. Each run or session
// keeps one colour AND one marker shape throughout (Okabe–Ito colours; shape, not colour alone).
import type { PointStyle } from 'chart.js';
import type { PolarPoint, RunResult } from '../app/types';
import { base, cpAxisRange, points, rowsOf, type PlotConfig, type Pts } from './charts';
import { OKABE_ITO } from './palette';

export const MAX_OVERLAY = 6;

/** Colour and marker of the i-th overlaid run or session. */
export const OVERLAY_STYLE: { colour: string; marker: PointStyle; word: string }[] = [
  { colour: OKABE_ITO.blue, marker: 'circle', word: 'blue circles' },
  { colour: OKABE_ITO.vermillion, marker: 'triangle', word: 'vermillion triangles' },
  { colour: OKABE_ITO.bluishGreen, marker: 'rect', word: 'green squares' },
  { colour: OKABE_ITO.reddishPurple, marker: 'rectRot', word: 'purple diamonds' },
  { colour: OKABE_ITO.orange, marker: 'crossRot', word: 'orange crosses' },
  { colour: OKABE_ITO.black, marker: 'star', word: 'black stars' },
];

export interface OverlayRun {
  /** Legend words, e.g. "2026-11-18 run 12 (α 4.07°)". */
  label: string;
  result: RunResult;
}

const style = (i: number) => OVERLAY_STYLE[i % OVERLAY_STYLE.length];

/** Cp(x/c) of the main tap row of each run: upper surface filled markers and a solid line, lower
 *  surface open markers and a dashed line; bad or bridged taps left out. Cp axis inverted. */
export function cpOverlayConfig(runs: readonly OverlayRun[]): PlotConfig {
  const datasets: PlotConfig['data']['datasets'] = [];
  const all: number[] = [];
  runs.forEach((o, i) => {
    const s = style(i);
    const row = rowsOf(o.result)[0];
    const bad = new Set([...o.result.surface.bridged, ...o.result.taps.filter((t) => t.bad).map((t) => t.id)]);
    const side = (surf: 'upper' | 'lower'): Pts => o.result.taps
      .filter((t) => t.row === row && t.surface === surf && !bad.has(t.id) && Number.isFinite(t.cp))
      .sort((a, b) => a.x - b.x)
      .map((t) => ({ x: t.x, y: t.cp, id: t.id }));
    const up = side('upper');
    const lo = side('lower');
    all.push(...up.map((p) => p.y), ...lo.map((p) => p.y));
    datasets.push(points(`${o.label}, upper`, up, s.colour, s.marker, { showLine: true, borderWidth: 1.2 }));
    datasets.push(points(`${o.label}, lower (dashed, open)`, lo, s.colour, s.marker, { showLine: true, borderWidth: 1.2, borderDash: [5, 3], pointBackgroundColor: '#ffffff' }));
  });
  const options = base('x/c', 'Cp (negative up)', { reverseY: true, xMin: 0, xMax: 1 });
  const r = cpAxisRange(all, []);
  options.scales!.y!.min = r.min;
  options.scales!.y!.max = r.max;
  return { data: { datasets }, options };
}

/** Wake total-pressure profiles Cpt(y) of each run that has a wake. */
export function wakeOverlayConfig(runs: readonly OverlayRun[]): PlotConfig | null {
  const withWake = runs.map((o, i) => ({ o, i })).filter(({ o }) => o.result.wake);
  if (!withWake.length) return null;
  const options = base('Cpt = (H_w − p∞)/q∞', 'rake height y [mm]');
  return {
    data: {
      datasets: withWake.map(({ o, i }) => points(
        o.label,
        [...o.result.wake!.profile].sort((a, b) => a.y - b.y).map((p) => ({ x: p.cpt, y: p.y * 1000 })),
        style(i).colour, style(i).marker, { showLine: true, borderWidth: 1.2, pointRadius: 3 },
      )),
    },
    options,
  };
}

/** Floor (solid) and ceiling (dashed, open markers) Cp signatures of each run with wall taps. */
export function wallOverlayConfig(runs: readonly OverlayRun[]): PlotConfig | null {
  const withWalls = runs.map((o, i) => ({ o, i })).filter(({ o }) => o.result.walls);
  if (!withWalls.length) return null;
  const options = base('x from model c/4 [m] (downstream +)', 'Cp (negative up)', { reverseY: true });
  const pts = (a: { x: number; cp: number }[]) => [...a].sort((p, q) => p.x - q.x).map((p) => ({ x: p.x, y: p.cp }));
  return {
    data: {
      datasets: withWalls.flatMap(({ o, i }) => [
        points(`${o.label}, floor`, pts(o.result.walls!.floor), style(i).colour, style(i).marker, { showLine: true, borderWidth: 1.2, pointRadius: 3 }),
        points(`${o.label}, ceiling (dashed, open)`, pts(o.result.walls!.ceiling), style(i).colour, style(i).marker, { showLine: true, borderWidth: 1.2, borderDash: [5, 3], pointRadius: 3, pointBackgroundColor: '#ffffff' }),
      ]),
    },
    options,
  };
}

export interface OverlaySession {
  label: string;
  /** Polar points without runs on hold (reject flag). */
  polar: readonly PolarPoint[];
}

/** cl(α) (pressure integration, corrected) of several sessions, points in time order joined. */
export function polarOverlayConfig(sessions: readonly OverlaySession[], which: 'lift' | 'drag'): PlotConfig {
  const options = which === 'lift' ? base('α corrected [°]', 'cl (surface pressures)') : base('cd (wake rake)', 'cl (surface pressures)');
  return {
    data: {
      datasets: sessions.map((s, i) => points(
        s.label,
        s.polar.map((p) => ({ x: which === 'lift' ? p.alphaDeg : p.cd, y: p.cl, run: p.run })).filter((p) => Number.isFinite(p.x) && Number.isFinite(p.y)),
        style(i).colour, style(i).marker, { showLine: which === 'lift', borderWidth: 1.2 },
      )),
    },
    options,
  };
}

