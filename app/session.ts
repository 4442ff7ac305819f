// Session statistics of a polar: lift-curve slope and zero-lift angle by ordinary least squares over
// the linear range (Gauss–Legendre least squares; any statistics text), cl_max, cd_min, (l/d)_max,
// up/down-sweep hysteresis and repeat spread. The sweep and linear-range rules below are common
// practice, no source.
//
// Rules (documented here because they decide the numbers):
// - Sweeps: points are ordered by time. Consecutive points whose α differ by ≤ ALPHA_TOL_DEG are at
//   the same α; otherwise the step is up (α increasing) or down. A segment is a maximal time-ordered
//   run of steps in one direction (same-α steps stay in the current segment; a reversal starts a new
//   segment at the point reached by the reversed step). A segment with a single distinct α (all
//   points at one α) is a repeat/return, not a sweep: it keeps its direction for the repeat spread
//   but is left out of the sweep curves. A session whose points are all at one α counts as up.
// - Primary sweep = all up-sweep points (down-sweep points if there is no up sweep; all points if
//   there is no sweep at all), sorted by α and cut at the α of its own cl maximum.
// - Linear range: among contiguous (in α) windows of ≥ 3 primary points, the one with the most points
//   whose least-squares line leaves every residual ≤ linearTol (default 0.02 in cl); ties go to the
//   smaller RMS residual. If no window passes, the 3-point window with the smallest largest residual.
//   With only 2 primary points the line through them. Slope per degree; α_L0 = −intercept/slope.
// - cl_max and its α over all points; cd_min and cl there, and (l/d)_max and its α, over the points
//   with finite cd > 0 (NaN when there is none).
// - Hysteresis: the up-sweep curve (points within ALPHA_TOL_DEG averaged, linear in α) interpolated
//   at every down-sweep α inside its range; largest |cl_down − cl_up| and its α. Null without a
//   down sweep.
// - Repeat spread: points grouped by direction and by α (within ALPHA_TOL_DEG of a group's first α);
//   largest max − min of cl over groups of ≥ 2 points; null if there is no such group.
// Empty input gives NaN statistics and null hysteresis/spread.

import type { SessionStats } from './types';
import { interpLinear } from './quadrature';

export interface SessionPoint {
  run: number;
  alphaDeg: number;
  cl: number;
  cd: number;
  cmc4: number;
  /** ISO 8601. */
  time: string;
}

export interface SessionOptions {
  /** Largest residual (cl) allowed in the linear range. */
  linearTol?: number;
}

/** Two α values within this many degrees are the same α. */
export const ALPHA_TOL_DEG = 0.05;
export const DEFAULT_LINEAR_TOL = 0.02;

export interface LineFit {
  slope: number;
  intercept: number;
  /** Coefficient of determination 1 − SS_res/SS_tot (1 when SS_tot = 0 and the fit is exact). */
  r2: number;
}

/** Ordinary least-squares straight line y = slope·x + intercept. */
export function linearFit(x: ArrayLike<number>, y: ArrayLike<number>): LineFit {
  const n = x.length;
  if (n !== y.length) throw new Error(`linearFit: x has ${n} points but y has ${y.length}`);
  if (n < 2) throw new Error(`linearFit: need at least 2 points (got ${n})`);
  let mx = 0;
  let my = 0;
  for (let i = 0; i < n; i++) { mx += x[i]; my += y[i]; }
  mx /= n;
  my /= n;
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    const dx = x[i] - mx;
    const dy = y[i] - my;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  if (sxx === 0) throw new Error('linearFit: all x values are equal');
  const slope = sxy / sxx;
  const intercept = my - slope * mx;
  let ssRes = 0;
  for (let i = 0; i < n; i++) {
    const r = y[i] - (slope * x[i] + intercept);
    ssRes += r * r;
  }
  const r2 = syy === 0 ? (ssRes === 0 ? 1 : 0) : 1 - ssRes / syy;
  return { slope, intercept, r2 };
}

type Dir = 'up' | 'down';
interface Segment { dir: Dir | null; pts: SessionPoint[] }

function distinctAlphaCount(pts: SessionPoint[]): number {
  return clusterByAlpha(pts).length;
}

/** Groups points (any order) whose α lie within ALPHA_TOL_DEG of the group's first (lowest) α. */
function clusterByAlpha(pts: SessionPoint[]): SessionPoint[][] {
  const s = [...pts].sort((a, b) => a.alphaDeg - b.alphaDeg);
  const groups: SessionPoint[][] = [];
  for (const p of s) {
    const g = groups[groups.length - 1];
    if (g && p.alphaDeg - g[0].alphaDeg <= ALPHA_TOL_DEG) g.push(p);
    else groups.push([p]);
  }
  return groups;
}

function segmentsOf(ordered: SessionPoint[]): Segment[] {
  const segs: Segment[] = [];
  let cur: Segment | null = null;
  for (let i = 0; i < ordered.length; i++) {
    const p = ordered[i];
    if (!cur) { cur = { dir: null, pts: [p] }; segs.push(cur); continue; }
    const d = p.alphaDeg - ordered[i - 1].alphaDeg;
    if (Math.abs(d) <= ALPHA_TOL_DEG) { cur.pts.push(p); continue; }
    const dir: Dir = d > 0 ? 'up' : 'down';
    if (cur.dir === null || cur.dir === dir) { cur.dir = dir; cur.pts.push(p); continue; }
    cur = { dir, pts: [p] };
    segs.push(cur);
  }
  return segs;
}

function maxAbsResidual(a: ArrayLike<number>, c: ArrayLike<number>, fit: LineFit): { max: number; rms: number } {
  let max = 0;
  let ss = 0;
  for (let i = 0; i < a.length; i++) {
    const r = Math.abs(c[i] - (fit.slope * a[i] + fit.intercept));
    if (r > max) max = r;
    ss += r * r;
  }
  return { max, rms: Math.sqrt(ss / a.length) };
}

function linearRange(primary: SessionPoint[], tol: number): { fit: LineFit; range: [number, number] } | null {
  const pts = [...primary].sort((a, b) => a.alphaDeg - b.alphaDeg);
  if (pts.length < 2) return null;
  // Cut at the primary sweep's own cl maximum (first occurrence).
  let iMax = 0;
  for (let i = 1; i < pts.length; i++) if (pts[i].cl > pts[iMax].cl) iMax = i;
  const use = pts.slice(0, iMax + 1).length >= 2 ? pts.slice(0, iMax + 1) : pts;
  // Typed arrays: the windows below are views (subarray), not copies — O(n²) windows of O(n).
  const a = Float64Array.from(use, (p) => p.alphaDeg);
  const c = Float64Array.from(use, (p) => p.cl);
  const fitOf = (i: number, j: number): LineFit | null => {
    if (a[j] - a[i] <= ALPHA_TOL_DEG) return null; // window at one α: no line
    return linearFit(a.subarray(i, j + 1), c.subarray(i, j + 1));
  };
  if (use.length === 2) {
    const fit = fitOf(0, 1);
    return fit ? { fit, range: [a[0], a[1]] } : null;
  }
  let best: { n: number; rms: number; i: number; j: number; fit: LineFit } | null = null;
  let fallback: { max: number; i: number; j: number; fit: LineFit } | null = null;
  for (let i = 0; i < use.length; i++) {
    for (let j = i + 2; j < use.length; j++) {
      const fit = fitOf(i, j);
      if (!fit) continue;
      const r = maxAbsResidual(a.subarray(i, j + 1), c.subarray(i, j + 1), fit);
      const n = j - i + 1;
      if (r.max <= tol && (!best || n > best.n || (n === best.n && r.rms < best.rms))) {
        best = { n, rms: r.rms, i, j, fit };
      }
      if (n === 3 && (!fallback || r.max < fallback.max)) fallback = { max: r.max, i, j, fit };
    }
  }
  const pick = best ?? fallback;
  if (!pick) return null;
  return { fit: pick.fit, range: [a[pick.i], a[pick.j]] };
}

/** Statistics of one session's polar (see the rules at the top of this module). */
export function sessionStats(points: SessionPoint[], opts: SessionOptions = {}): SessionStats {
  const tol = opts.linearTol ?? DEFAULT_LINEAR_TOL;
  const timed = points.map((p) => {
    const t = Date.parse(p.time);
    if (!Number.isFinite(t)) throw new Error(`Session statistics: run ${p.run} has an unreadable time "${p.time}"`);
    return { p, t };
  });
  const ordered = timed
    .filter(({ p }) => Number.isFinite(p.alphaDeg) && Number.isFinite(p.cl))
    .sort((a, b) => a.t - b.t || a.p.run - b.p.run)
    .map(({ p }) => p);

  const segs = segmentsOf(ordered).map((s) => ({ dir: (s.dir ?? 'up') as Dir, pts: s.pts }));
  const sweeps = segs.filter((s) => distinctAlphaCount(s.pts) >= 2);
  const upPts = sweeps.filter((s) => s.dir === 'up').flatMap((s) => s.pts);
  const downPts = sweeps.filter((s) => s.dir === 'down').flatMap((s) => s.pts);
  const primary = upPts.length ? upPts : downPts.length ? downPts : ordered;

  const lin = linearRange(primary, tol);
  const slope = lin ? lin.fit.slope : NaN;
  const alphaL0 = lin ? -lin.fit.intercept / lin.fit.slope : NaN;

  let clMax = NaN;
  let alphaClMax = NaN;
  for (const p of ordered) if (!(p.cl <= clMax)) { clMax = p.cl; alphaClMax = p.alphaDeg; }

  let cdMin = NaN;
  let clAtCdMin = NaN;
  let ldMax = NaN;
  let alphaLdMax = NaN;
  for (const p of ordered) {
    if (!(Number.isFinite(p.cd) && p.cd > 0)) continue;
    if (!(p.cd >= cdMin)) { cdMin = p.cd; clAtCdMin = p.cl; }
    const ld = p.cl / p.cd;
    if (!(ld <= ldMax)) { ldMax = ld; alphaLdMax = p.alphaDeg; }
  }

  let hysteresis: SessionStats['hysteresis'] = null;
  if (upPts.length && downPts.length) {
    const curve = clusterByAlpha(upPts).map((g) => ({
      a: g.reduce((s, p) => s + p.alphaDeg, 0) / g.length,
      cl: g.reduce((s, p) => s + p.cl, 0) / g.length,
    }));
    const ca = curve.map((q) => q.a);
    const cc = curve.map((q) => q.cl);
    for (const p of downPts) {
      if (p.alphaDeg < ca[0] - ALPHA_TOL_DEG || p.alphaDeg > ca[ca.length - 1] + ALPHA_TOL_DEG) continue;
      const d = Math.abs(p.cl - interpLinear(ca, cc, p.alphaDeg));
      if (!hysteresis || d > hysteresis.maxDeltaCl) hysteresis = { maxDeltaCl: d, alphaDeg: p.alphaDeg };
    }
  }

  let repeatSpread: number | null = null;
  for (const dir of ['up', 'down'] as const) {
    const pts = segs.filter((s) => s.dir === dir).flatMap((s) => s.pts);
    for (const g of clusterByAlpha(pts)) {
      if (g.length < 2) continue;
      const cls = g.map((p) => p.cl);
      const spread = Math.max(...cls) - Math.min(...cls);
      if (repeatSpread === null || spread > repeatSpread) repeatSpread = spread;
    }
  }

  return {
    liftSlopePerDeg: slope,
    linearRange: lin ? lin.range : [NaN, NaN],
    alphaL0Deg: alphaL0,
    clMax,
    alphaClMaxDeg: alphaClMax,
    cdMin,
    clAtCdMin,
    ldMax,
    alphaLdMaxDeg: alphaLdMax,
    hysteresis,
    repeatSpread,
  };
}
