// Comparing the polars of two sessions (the "Side by side" screen): differences at matched
// conditions, by piecewise-linear interpolation in the reference session's points (common
// practice, no source). Nothing is extrapolated: a point outside the reference's range has no
// difference. Runs with a hold (reject) flag are left out on both sides by the caller.
//   Δcl at matched α:  Δcl(α_i) = cl_other(α_i) − cl_ref(α_i), cl_ref interpolated in α.
//   Δcd at matched cl: Δcd(cl_i) = cd_other(cl_i) − cd_ref(cl_i), cd_ref interpolated in cl on the
//   reference's attached branch (α up to its cl_max), where cl rises with α and cd(cl) is one-valued;
//   the other session's points beyond its own cl_max are not matched either.
import type { PolarPoint } from './types';

export type ComparePoint = Pick<PolarPoint, 'run' | 'alphaDeg' | 'cl' | 'cd'>;

/** x → y pairs sorted by x, repeated x averaged, non-finite pairs dropped. */
export function monotoneTable(pairs: readonly [number, number][]): [number, number][] {
  const groups = new Map<number, number[]>();
  for (const [x, y] of pairs) {
    if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
    const key = Math.round(x * 1e9) / 1e9;
    groups.set(key, [...(groups.get(key) ?? []), y]);
  }
  return [...groups].sort((a, b) => a[0] - b[0]).map(([x, ys]) => [x, ys.reduce((s, v) => s + v, 0) / ys.length]);
}

/** Linear interpolation in a table sorted by x; null outside its range (no extrapolation). */
export function interpolate(table: readonly [number, number][], x: number): number | null {
  if (!table.length || !Number.isFinite(x)) return null;
  if (x < table[0][0] - 1e-12 || x > table[table.length - 1][0] + 1e-12) return null;
  for (let i = 1; i < table.length; i++) {
    const [x0, y0] = table[i - 1];
    const [x1, y1] = table[i];
    if (x <= x1 + 1e-12) return x1 === x0 ? y1 : y0 + ((x - x0) / (x1 - x0)) * (y1 - y0);
  }
  return table[table.length - 1][1];
}

/** The attached branch: the points up to (and with) the largest cl, by α. */
export function attachedBranch<T extends ComparePoint>(pts: readonly T[]): T[] {
  const ok = pts.filter((p) => Number.isFinite(p.alphaDeg) && Number.isFinite(p.cl));
  if (!ok.length) return [];
  const top = ok.reduce((a, b) => (b.cl > a.cl ? b : a));
  return ok.filter((p) => p.alphaDeg <= top.alphaDeg + 1e-9);
}

export interface PolarDifference {
  run: number;
  alphaDeg: number;
  cl: number;
  cd: number;
  /** cl − cl_ref at this α; null outside the reference's α range. */
  dCl: number | null;
  /** cd − cd_ref at this cl on the attached branches; null where not matched. */
  dCd: number | null;
}

/** Differences of each point of `other` against `ref`. */
export function polarDifferences(ref: readonly ComparePoint[], other: readonly ComparePoint[]): PolarDifference[] {
  const clOfAlpha = monotoneTable(ref.map((p) => [p.alphaDeg, p.cl]));
  const cdOfCl = monotoneTable(attachedBranch(ref).map((p) => [p.cl, p.cd]));
  const attached = new Set(attachedBranch(other).map((p) => p.run));
  return [...other].sort((a, b) => a.alphaDeg - b.alphaDeg).map((p) => {
    const clRef = interpolate(clOfAlpha, p.alphaDeg);
    const cdRef = attached.has(p.run) && Number.isFinite(p.cd) ? interpolate(cdOfCl, p.cl) : null;
    return {
      run: p.run, alphaDeg: p.alphaDeg, cl: p.cl, cd: p.cd,
      dCl: clRef === null || !Number.isFinite(p.cl) ? null : p.cl - clRef,
      dCd: cdRef === null ? null : p.cd - cdRef,
    };
  });
}
