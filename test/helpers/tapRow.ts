// Test helper: a row of ~60 chordwise taps on a NACA 4412 section with inviscid Cp from the panel
// method (app/panel.ts). Each tap is placed on a panel midpoint of a fine (320-panel) solution
// nearest a chord station, so its Cp is the panel method's own value there (no interpolation).
// The stations follow the usual practice of clustering taps near the leading edge (no source).
import { panelSolve, naca4 } from '../../app/panel';
import type { Surface, TapCp } from '../../app/types';

export const UPPER_STATIONS = [
  0, 0.0025, 0.005, 0.0075, 0.0125, 0.02, 0.03, 0.04, 0.05, 0.075, 0.1, 0.125, 0.15, 0.2, 0.25, 0.3,
  0.35, 0.4, 0.45, 0.5, 0.55, 0.6, 0.65, 0.7, 0.75, 0.8, 0.85, 0.9, 0.95, 0.98,
];
export const LOWER_STATIONS = UPPER_STATIONS.slice(1);

export function cleanTapRow(alphaDeg: number, code = '4412', row = 'C', nPanels = 320): TapCp[] {
  const g = naca4(code, nPanels);
  const sol = panelSolve(g.x, g.y, alphaDeg);
  const taps: TapCp[] = [];
  const place = (stations: number[], surface: Surface, prefix: string) => {
    stations.forEach((xs, k) => {
      let best = -1;
      for (let i = 0; i < sol.xm.length; i++) {
        if (sol.surface[i] !== surface) continue;
        if (best < 0 || Math.abs(sol.xm[i] - xs) < Math.abs(sol.xm[best] - xs)) best = i;
      }
      taps.push({
        id: `${row}${prefix}${String(k + 1).padStart(2, '0')}`,
        x: sol.xm[best],
        y: sol.ym[best],
        surface,
        row,
        cp: sol.cp[best],
        bad: false,
      });
    });
  };
  place(UPPER_STATIONS, 'upper', 'U');
  place(LOWER_STATIONS, 'lower', 'L');
  return taps;
}
