// Spanwise rows: two-dimensionality check and span loading (common practice, no source).
//   spread = max(cl) − min(cl) over the rows;
//   CL = (1/S) ∫ cl(z) c dz over the span, S = c·b, by the trapezoidal rule over the rows' z,
//   with cl held at the end rows' values out to the span edges z = ±b/2 (the rows rarely reach
//   the walls, and the wall boundary layers are not modelled).

import { interpLinear, trapezoid } from './quadrature';
import type { Flag, RowLoads, TapCp } from './types';
import { makeFlag } from './flags';

export interface SpanLoading {
  /** max − min of the rows' section cl. */
  spread: number;
  /** Lift coefficient of the whole span. */
  CL: number;
  /** Rows' z (m from the centreline), increasing, and their cl. */
  z: number[];
  cl: number[];
  /** 'span-spread' warning when spread > tol, else null. */
  flag: Flag | null;
}

/** Span loading from the rows' section cl; chord c and span b in m, tol = Settings.spanSpreadTol. */
export function spanLoading(
  rows: readonly Pick<RowLoads, 'row' | 'z' | 'cl'>[],
  chord: number,
  span: number,
  tol: number,
): SpanLoading {
  if (rows.length === 0) throw new Error('spanLoading: no spanwise rows');
  if (!(chord > 0) || !(span > 0)) {
    throw new Error(`spanLoading: chord and span must be positive (chord ${chord} m, span ${span} m)`);
  }
  for (const r of rows) {
    if (!Number.isFinite(r.z) || !Number.isFinite(r.cl)) {
      throw new Error(`spanLoading: row ${r.row} has a non-finite z or cl (z ${r.z}, cl ${r.cl})`);
    }
    if (Math.abs(r.z) > span / 2 + 1e-9) {
      throw new Error(`spanLoading: row ${r.row} at z = ${r.z} m lies outside the span ±${span / 2} m`);
    }
  }
  const sorted = [...rows].sort((a, b) => a.z - b.z);
  const z = sorted.map((r) => r.z);
  const cl = sorted.map((r) => r.cl);
  const spread = Math.max(...cl) - Math.min(...cl);
  const n = z.length;
  // ∫ cl c dz: trapezoid over the rows, plus the end values held to ±b/2.
  const lift =
    chord *
    (trapezoid(z, cl) + cl[0] * (z[0] + span / 2) + cl[n - 1] * (span / 2 - z[n - 1]));
  const CL = lift / (chord * span);
  let flag: Flag | null = null;
  if (spread > tol) {
    const lo = sorted.reduce((a, b) => (b.cl < a.cl ? b : a));
    const hi = sorted.reduce((a, b) => (b.cl > a.cl ? b : a));
    flag = makeFlag('span-spread', { spread, rows: n, lo, hi, tol });
  }
  return { spread, CL, z, cl, flag };
}

/**
 * Completes a short spanwise row from the main row (common practice, no source). On each surface
 * the row's departure from the main row, ΔCp = Cp_row − Cp_main(x) at the row's usable taps (main
 * row interpolated linearly in x/c), is interpolated linearly along x/c (held constant beyond the
 * row's first and last taps) and added to the main row's Cp at every main-row tap. The row's
 * section loads then differ from the main row's only through what the row measured, and are not
 * spoilt by how coarsely a few taps resolve the leading-edge suction peak.
 */
export function completeRow(row: readonly TapCp[], main: readonly TapCp[]): TapCp[] {
  if (!row.length) return [];
  const name = row[0].row;
  const out: TapCp[] = [];
  for (const surface of ['upper', 'lower'] as const) {
    const ref = main.filter((t) => t.surface === surface && !t.bad).sort((a, b) => a.x - b.x);
    if (!ref.length) continue;
    const rx = ref.map((t) => t.x);
    const rcp = ref.map((t) => t.cp);
    const own = row.filter((t) => t.surface === surface && !t.bad).sort((a, b) => a.x - b.x);
    const dx = own.map((t) => t.x);
    const dcp = own.map((t) => t.cp - interpLinear(rx, rcp, t.x));
    for (const t of ref) out.push({ ...t, row: name, cp: t.cp + (own.length ? interpLinear(dx, dcp, t.x) : 0) });
  }
  return out;
}
