// Surface-pressure integration of one chordwise row on the closed contour, with the taps' real
// (x/c, y/c) and Cp linear between taps:
//   cn = ∫₀¹ (Cp_l − Cp_u) d(x/c),  ca = ∫₀¹ (Cp_u dy_u/dx − Cp_l dy_l/dx) d(x/c),
//   cm_LE (nose-up +) = −∮ Cp [(x/c) d(x/c) + (y/c) d(y/c)] for the counter-clockwise contour
//   TE → upper → LE → lower → TE (Anderson's ∫(Cp_u − Cp_l) x dx + … form), cm_c/4 = cm_LE + cn/4,
//   cl = cn cos α − ca sin α,  cd_p = cn sin α + ca cos α.
// Anderson, Fundamentals of Aerodynamics, ch. 1 §1.5, eqs. 1.7–1.22 (memory). The trailing edge is
// closed by extrapolating each surface linearly to x/c = 1 and taking the mean (common practice,
// no source). The 'spline' contour rule is app/contourSpline.ts; bad-tap detection (leave-one-out
// prediction test, app/tapCheck.ts; wind-off leak) is common practice, no source.

import { DEFAULT_SETTINGS } from './types';
import { splineIntegrals } from './contourSpline';
import { findRowOutliers, type TapVerdict } from './tapCheck';
import { inviscidShape } from './tapShape';
import type { Geometry, Settings, Surface, SurfaceLoads, TapCp } from './types';

/** A point of the contour: what integrateContour needs of a tap. */
export interface ContourPoint {
  id: string;
  x: number;
  y: number;
  surface: Surface;
  cp: number;
}

type Placed = { id: string; x: number; y: number; surface: Surface };

/** How the trailing-edge Cp was found on each surface. */
export type TeSurfaceMethod = 'linear' | 'nearest';

/** teMethod when both surfaces were extrapolated linearly (the normal case). */
export const TE_METHOD_LINEAR = 'mean of the surfaces, each extrapolated linearly to x/c = 1';

/** The teMethod text for a pair of per-surface methods. */
export function teMethodText(upper: TeSurfaceMethod, lower: TeSurfaceMethod): string {
  if (upper === 'linear' && lower === 'linear') return TE_METHOD_LINEAR;
  const word = (m: TeSurfaceMethod) => (m === 'linear' ? 'linear extrapolation' : 'nearest tap, fewer than 2 taps');
  return `mean of the surfaces at x/c = 1 (upper: ${word(upper)}; lower: ${word(lower)})`;
}

function cmpId(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

/** Contour order of two upper-surface taps: decreasing x, then higher y, then id. */
export function compareUpper(a: Placed, b: Placed): number {
  return b.x - a.x || b.y - a.y || cmpId(a.id, b.id);
}

/** Contour order of two lower-surface taps: increasing x, then higher y, then id. */
export function compareLower(a: Placed, b: Placed): number {
  return a.x - b.x || b.y - a.y || cmpId(a.id, b.id);
}

/** Orders taps around the closed contour: trailing edge → upper surface (decreasing x) → leading
 *  edge → lower surface (increasing x) → trailing edge. A leading-edge tap belongs to whichever
 *  surface the tap says. Ties in x are broken by y (higher first, which is the contour order near
 *  the leading edge on both surfaces), then by id, so the result never depends on input order. */
export function orderContour<T extends Placed>(taps: readonly T[]): T[] {
  const upper = taps.filter((t) => t.surface === 'upper');
  const lower = taps.filter((t) => t.surface === 'lower');
  // Array.prototype.sort is stable, so input that is already in order needs no sort (checked only
  // with finite positions, where the comparators are consistent).
  const finite = taps.every((t) => Number.isFinite(t.x) && Number.isFinite(t.y));
  if (!finite || !isSorted(upper, compareUpper)) upper.sort(compareUpper);
  if (!finite || !isSorted(lower, compareLower)) lower.sort(compareLower);
  return upper.concat(lower);
}

function isSorted<T>(list: readonly T[], cmp: (a: T, b: T) => number): boolean {
  for (let i = 1; i < list.length; i++) if (!(cmp(list[i - 1], list[i]) <= 0)) return false;
  return true;
}

function validatePoints(points: readonly ContourPoint[], what: string): void {
  for (const p of points) {
    if (p.surface !== 'upper' && p.surface !== 'lower') {
      throw new Error(`${what}: tap ${p.id} has surface '${String(p.surface)}' (expected 'upper' or 'lower')`);
    }
    if (!Number.isFinite(p.x) || !Number.isFinite(p.y) || !Number.isFinite(p.cp)) {
      for (const key of ['x', 'y', 'cp'] as const) {
        if (!Number.isFinite(p[key])) {
          throw new Error(`${what}: tap ${p.id} has a non-finite ${key} (${p[key]})`);
        }
      }
    }
  }
}

/** Loads of one row from its points already in contour order, without checks (the arithmetic of
 *  integrateContour, shared with the Monte Carlo plan of app/mcPlan.ts): x, y, cp of `nUpper`
 *  upper-surface points (trailing edge → leading edge) followed by `n − nUpper` lower-surface points
 *  (leading edge → trailing edge); 1 ≤ nUpper < n. */
export type ContourIntegrals = Pick<SurfaceLoads, 'cn' | 'ca' | 'cl' | 'cdp' | 'cmLE' | 'cmc4' | 'teCp'> & {
  teUpper: TeSurfaceMethod;
  teLower: TeSurfaceMethod;
  /** The 'shape' rule's slope b as applied (0: the linear rule's integrals, no shape or b ≤ 0). */
  shapeB: number;
};

/** How Cp (and the contour between taps) is interpolated for the integrals: 'linear' — straight
 *  segments between taps, Cp linear along each; 'spline' — cubic splines of the contour and the
 *  surface speed in the square-root plane of the nose, through the taps (app/contourSpline.ts).
 *  'linear' is the default here and in Settings.contourRule. */
export type ContourRule = 'shape' | 'spline' | 'linear';

/** The words a result uses for each rule. */
export const CONTOUR_RULE_TEXT: Record<ContourRule, string> = {
  shape: 'Cp linear between taps plus the fitted inviscid shape\'s own departure from linear (panel solution of the model at the fitted α_eff and the run\'s Mach number, scaled by the fitted b)',
  spline: 'cubic splines of the contour and the surface speed in the square-root plane of the nose (not-a-knot, trailing edge at both ends)',
  linear: 'Cp linear between taps on straight segments',
};

/** The inviscid shape of one row for the 'shape' rule (app/shapeRule.ts): its Cp at each tap, in
 *  the order of the taps integrated, and its own integrals over the whole contour. The rule adds
 *  b·(shape integrals − the linear rule's integrals of the shape at the taps) to the linear rule's
 *  integrals of the measured Cp, b being the slope of the least-squares fit Cp ≈ a + b·shape over
 *  the taps: the integral of a + b·shape(s) plus the measured departure from it, linear between
 *  taps (the constant a integrates to nothing round a closed contour). Linear in the measured Cp. */
/** A row's shape for the 'shape' rule, by tap id (app/shapeRule.ts rowShape): fitted once in the
 *  nominal pass and kept for the Monte Carlo draws. `rms`: of the nominal fit's residuals. */
export interface RowShape {
  v: ReadonlyMap<string, number>;
  cn: number;
  ca: number;
  cmLE: number;
  alphaEffDeg: number;
  rms: number;
  /** Standard uncertainty of the rule's correction from the shape's own discretisation (on the
   *  uncorrected cl, cd_p, cm_c/4). */
  u: { cl: number; cdp: number; cmc4: number };
  /** Taps at x/c ≤ fitX are fitted (app/shapeRule.ts SHAPE_FIT_X). */
  fitX: number;
  /** The departure (cn, ca, cm_LE) for the row's two interleaved halves, in contour order. */
  halves: [ShapeDeparture, ShapeDeparture];
}

export type ShapeDeparture = { cn: number; ca: number; cmLE: number };

export interface RowShapeArrays {
  v: ArrayLike<number>;
  cn: number;
  ca: number;
  cmLE: number;
  fitX: number;
  /** RowShape.u and .halves, carried for the integration estimate (app/reductionErrors.ts). */
  u?: { cl: number; cdp: number; cmc4: number };
  halves?: [ShapeDeparture, ShapeDeparture];
}

let nodeX = new Float64Array(256);
let nodeY = new Float64Array(256);
let nodeCp = new Float64Array(256);

/** See ContourIntegrals. */
export function contourIntegrals(
  x: ArrayLike<number>, y: ArrayLike<number>, cp: ArrayLike<number>, n: number, nUpper: number, alphaDeg: number,
  rule: ContourRule = 'linear', shape?: RowShapeArrays,
): ContourIntegrals {
  // Trailing-edge value of each surface at x/c = 1: linear through the tap nearest the trailing
  // edge and the next one with a distinct x (by more than 1e-9), else the nearest tap.
  let teUy: number;
  let teUcp: number;
  let teUpper: TeSurfaceMethod = 'nearest';
  {
    const a = 0;
    let b = -1;
    for (let k = 1; k < nUpper; k++) if (x[a] - x[k] > 1e-9) { b = k; break; }
    if (b < 0) {
      teUcp = cp[a];
      teUy = y[a];
    } else {
      const t = (1 - x[a]) / (x[a] - x[b]);
      teUcp = cp[a] + t * (cp[a] - cp[b]);
      teUy = y[a] + t * (y[a] - y[b]);
      teUpper = 'linear';
    }
  }
  let teLy: number;
  let teLcp: number;
  let teLower: TeSurfaceMethod = 'nearest';
  {
    const a = n - 1;
    let b = -1;
    for (let k = n - 2; k >= nUpper; k--) if (x[a] - x[k] > 1e-9) { b = k; break; }
    if (b < 0) {
      teLcp = cp[a];
      teLy = y[a];
    } else {
      const t = (1 - x[a]) / (x[a] - x[b]);
      teLcp = cp[a] + t * (cp[a] - cp[b]);
      teLy = y[a] + t * (y[a] - y[b]);
      teLower = 'linear';
    }
  }
  const teX = 1;
  const teY = 0.5 * (teUy + teLy);
  const teCp = 0.5 * (teUcp + teLcp);

  let sCpDx = 0;
  let sCpDy = 0;
  let sMom = 0;
  if (rule === 'spline' && n >= 2) {
    // Nodes te → points → te for the splines of app/contourSpline.ts.
    const m = n + 2;
    if (nodeX.length < m) {
      nodeX = new Float64Array(2 * m);
      nodeY = new Float64Array(2 * m);
      nodeCp = new Float64Array(2 * m);
    }
    nodeX[0] = teX;
    nodeY[0] = teY;
    nodeCp[0] = teCp;
    for (let k = 0; k < n; k++) {
      nodeX[k + 1] = x[k];
      nodeY[k + 1] = y[k];
      nodeCp[k + 1] = cp[k];
    }
    nodeX[n + 1] = teX;
    nodeY[n + 1] = teY;
    nodeCp[n + 1] = teCp;
    const r = splineIntegrals(nodeX, nodeY, nodeCp, m);
    sCpDx = r.sCpDx;
    sCpDy = r.sCpDy;
    sMom = r.sMom;
  } else {
    // Polygon te → points → te; linear Cp along straight segments: exact integrals of the
    // piecewise-linear integrands.
    let px = teX;
    let py = teY;
    let pcp = teCp;
    for (let k = 0; k <= n; k++) {
      const qx = k < n ? x[k] : teX;
      const qy = k < n ? y[k] : teY;
      const qcp = k < n ? cp[k] : teCp;
      const dx = qx - px;
      const dy = qy - py;
      sCpDx += 0.5 * (pcp + qcp) * dx;
      sCpDy += 0.5 * (pcp + qcp) * dy;
      // ∫ Cp x dx with Cp and x linear in the segment parameter = dx/6 [Cp_p(2x_p + x_q) + Cp_q(x_p + 2x_q)].
      sMom += (dx / 6) * (pcp * (2 * px + qx) + qcp * (px + 2 * qx));
      sMom += (dy / 6) * (pcp * (2 * py + qy) + qcp * (py + 2 * qy));
      px = qx;
      py = qy;
      pcp = qcp;
    }
  }
  // Outward normal of the counter-clockwise contour is (dy, −dx)/ds; force = −∮ Cp n ds.
  let cn = sCpDx;
  let ca = -sCpDy;
  let cmLE = -sMom;
  let shapeB = 0;
  if (rule === 'shape' && shape && n >= 3) {
    const b = shapeSlope(cp, shape.v, n, x, shape.fitX);
    if (b > 0) {
      shapeB = b;
      cn += b * shape.cn;
      ca += b * shape.ca;
      cmLE += b * shape.cmLE;
    }
  }
  const a = (alphaDeg * Math.PI) / 180;
  return {
    cn,
    ca,
    cl: cn * Math.cos(a) - ca * Math.sin(a),
    cdp: cn * Math.sin(a) + ca * Math.cos(a),
    cmLE,
    cmc4: cmLE + cn / 4,
    teCp,
    teUpper,
    teLower,
    shapeB,
  };
}

/** The slope b of the least-squares line cp ≈ a + b·v over the taps at x/c ≤ fitX (0 when v does
 *  not vary or fewer than 3 taps are fitted). */
export function shapeSlope(cp: ArrayLike<number>, v: ArrayLike<number>, n: number, x: ArrayLike<number>, fitX: number): number {
  let sv = 0;
  let sc = 0;
  let m = 0;
  for (let i = 0; i < n; i++) {
    if (!(x[i] <= fitX)) continue;
    sv += v[i];
    sc += cp[i];
    m++;
  }
  if (m < 3) return 0;
  const mv = sv / m;
  const mc = sc / m;
  let svv = 0;
  let svc = 0;
  for (let i = 0; i < n; i++) {
    if (!(x[i] <= fitX)) continue;
    const dv = v[i] - mv;
    svv += dv * dv;
    svc += dv * (cp[i] - mc);
  }
  return svv > 0 ? svc / svv : 0;
}

/** Integrates Cp around the closed contour of one row (see the module comment). The points are
 *  ordered here, so the result does not depend on their order. Needs at least one tap on each
 *  surface. `bridged` is always empty: the caller passes only good taps (see reduceSurface). */
export function integrateContour(points: readonly ContourPoint[], alphaDeg: number, rule: ContourRule = 'linear', shape?: RowShape | null): SurfaceLoads {
  validatePoints(points, 'integrateContour');
  if (!Number.isFinite(alphaDeg)) throw new Error(`integrateContour: angle of attack is not finite (${alphaDeg})`);
  const ordered = orderContour(points);
  const n = ordered.length;
  let nUpper = 0;
  while (nUpper < n && ordered[nUpper].surface === 'upper') nUpper++;
  if (nUpper === 0 || nUpper === n) {
    throw new Error(
      `integrateContour: need at least one tap on each surface (upper ${nUpper}, lower ${n - nUpper})`,
    );
  }
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  const cp = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    x[k] = ordered[k].x;
    y[k] = ordered[k].y;
    cp[k] = ordered[k].cp;
  }
  let arrays: RowShapeArrays | undefined;
  if (rule === 'shape' && shape) {
    const v = new Float64Array(n);
    let all = true;
    for (let k = 0; k < n; k++) {
      const f = shape.v.get(ordered[k].id);
      if (f === undefined) all = false;
      else v[k] = f;
    }
    if (all) arrays = { v, cn: shape.cn, ca: shape.ca, cmLE: shape.cmLE, fitX: shape.fitX };
  }
  const r = contourIntegrals(x, y, cp, n, nUpper, alphaDeg, rule, arrays);
  // The rule named is the one applied: 'shape' without a shape (or with b ≤ 0) is the linear rule.
  const used: ContourRule = rule === 'shape' && !(r.shapeB > 0) ? 'linear' : rule;
  return {
    rule: used,
    ...(used === 'shape' && shape ? { shapeFit: { alphaEffDeg: shape.alphaEffDeg, b: r.shapeB, rms: shape.rms } } : {}),
    cn: r.cn,
    ca: r.ca,
    cl: r.cl,
    cdp: r.cdp,
    cmLE: r.cmLE,
    cmc4: r.cmc4,
    teCp: r.teCp,
    teMethod: teMethodText(r.teUpper, r.teLower),
    bridged: [],
  };
}

export type BadTapReason = 'marked' | 'outlier' | 'leak';

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const n = s.length;
  return n % 2 ? s[(n - 1) >> 1] : 0.5 * (s[n / 2 - 1] + s[n / 2]);
}

/** A bad tap found by detectBadTaps; outliers carry the verdict of the test that found them. */
export interface BadTap {
  id: string;
  reason: BadTapReason;
  /** Outliers: Cp predicted from the neighbours, residual Cp − prediction, combined standard
   *  uncertainty and |residual|/u (app/tapCheck.ts). */
  verdict?: Pick<TapVerdict, 'predicted' | 'residual' | 'u' | 'score'>;
}

/** What the bad-tap test knows of the taps beyond their Cp. */
export interface TapCheckContext {
  /** Standard uncertainty of each tap's own Cp (its channel), by id; below settings.tapCheckMinU
   *  (or missing) the floor is used. */
  uCp?: Record<string, number>;
  /** Standard uncertainty of the tap positions along the contour, in chords. */
  positionU?: number;
  /** Taps the engineer kept against the automatic test in this run (Settings.keptTaps): never
   *  dropped as leaking or as outliers. A tap marked bad is dropped all the same. */
  keep?: ReadonlySet<string>;
  /** The model's geometry and the run's α: rows of SHAPE_MIN_ROW taps or more are also judged
   *  against the fitted inviscid shape (app/tapShape.ts, tapCheck.ts findRowOutliers `shape`). */
  inviscid?: { geometry: Geometry; alphaDeg: number; mach?: number };
}

/**
 * The Kármán–Tsien rule: the compressible Cp at free-stream Mach number M from the incompressible
 * Cp₀ of the same section, Cp = Cp₀ / (β + M²/(1 + β)·Cp₀/2), β = √(1 − M²) (Tsien, J. Aero. Sci.
 * 6, 1939; von Kármán, J. Aero. Sci. 8, 1941; as in Anderson, Fundamentals of Aerodynamics, ch. 11,
 * from memory). Unlike a factor 1/β it grows with the suction: at M 0.3 a Cp₀ of −3.5 becomes
 * −4.0 (−3.67 by Prandtl–Glauert), the difference a linear fit a + b·Cp₀ cannot take up at a
 * suction peak. Also returns dCp/dCp₀ = β/(β + M²/(1 + β)·Cp₀/2)², for the shape's uncertainty.
 * Where the denominator would fall below β/4 (Cp₀ far below any subsonic peak) Cp₀ is held there.
 */
export function karmanTsien(cp0: number, M: number): { cp: number; slope: number } {
  if (!(M > 0)) return { cp: cp0, slope: 1 };
  const beta = Math.sqrt(1 - M * M);
  const c = (M * M) / (1 + beta) / 2;
  const den = Math.max(beta / 4, beta + c * cp0);
  return { cp: cp0 / den, slope: beta / (den * den) };
}

/** Fewest taps a row needs for the shape-aided prediction: the fit takes three parameters (α_eff,
 *  a, b) from the row, and on 16-tap rows it dropped good taps of a viscous-like row more often
 *  than the plain test (docs/TAP-JUDGEMENT.md §1). */
export const SHAPE_MIN_ROW = 20;

/** Finds bad taps in any number of rows. Each tap gets at most one reason, in this order:
 *  'marked' (in settings.badTaps), 'leak' (its wind-off zero departs from the median zero of all
 *  taps with a zero by more than leakPa, default DEFAULT_SETTINGS.leakPa; only when zeroRaw is
 *  given), 'outlier' (the leave-one-out prediction test of app/tapCheck.ts on its own row, rows of
 *  TAP_CHECK_MIN_ROW taps or more, taps already found bad left out). A tap above stagnation is not
 *  bad for that alone (see referenceCheck in app/tapCheck.ts). The `bad` field of the input taps is
 *  not read. Result in input order. */
export function detectBadTaps(
  taps: readonly TapCp[],
  settings: Pick<Settings, 'tapCheckK' | 'tapCheckMinU' | 'badTaps'>,
  zeroRaw?: Record<string, number>,
  leakPa?: number,
  context: TapCheckContext = {},
): BadTap[] {
  validatePoints(taps, 'detectBadTaps');
  const reason = new Map<string, BadTapReason>();
  const verdicts = new Map<string, BadTap['verdict']>();
  const marked = new Set(settings.badTaps);
  for (const t of taps) if (marked.has(t.id)) reason.set(t.id, 'marked');

  if (zeroRaw) {
    const limit = leakPa ?? DEFAULT_SETTINGS.leakPa;
    const withZero = taps.filter((t) => Number.isFinite(zeroRaw[t.id]));
    if (withZero.length >= 3) {
      const med = median(withZero.map((t) => zeroRaw[t.id]));
      for (const t of withZero) {
        if (!reason.has(t.id) && !context.keep?.has(t.id) && Math.abs(zeroRaw[t.id] - med) > limit) reason.set(t.id, 'leak');
      }
    }
  }
  const rows = new Map<string, TapCp[]>();
  for (const t of taps) {
    if (reason.has(t.id)) continue;
    const list = rows.get(t.row) ?? [];
    list.push(t);
    rows.set(t.row, list);
  }
  const floor = settings.tapCheckMinU;
  for (const list of rows.values()) {
    const chain = orderContour(list).map((t) => ({
      id: t.id, x: t.x, y: t.y, cp: t.cp, u: Math.max(floor, context.uCp?.[t.id] ?? 0),
    }));
    let shape: NonNullable<Parameters<typeof findRowOutliers>[1]['shape']> | undefined;
    if (context.inviscid && chain.length >= SHAPE_MIN_ROW) {
      try {
        const sh = inviscidShape(context.inviscid.geometry, chain);
        const M = context.inviscid.mach ?? 0;
        const cp = M > 0 && M < 1 ? (a: number) => sh.cp(a).map((v) => karmanTsien(v, M).cp) : sh.cp;
        const u = M > 0 && M < 1
          ? (a: number) => {
            const cp0 = sh.cp(a);
            return sh.u(a).map((v, i) => v * karmanTsien(cp0[i], M).slope);
          }
          : sh.u;
        // The test asks for the same α_eff grid in every pass over the row: each computed once.
        const cpAt = new Map<number, Float64Array>();
        const uAt = new Map<number, Float64Array>();
        const once = (cache: Map<number, Float64Array>, f: (a: number) => Float64Array) => (a: number) => {
          let v = cache.get(a);
          if (!v) cache.set(a, (v = f(a)));
          return v;
        };
        shape = { alphaDeg: context.inviscid.alphaDeg, cp: once(cpAt, cp), u: once(uAt, u) };
      } catch {
        shape = undefined; // a geometry the panel method cannot solve: the plain test alone
      }
    }
    for (const v of findRowOutliers(chain, { k: settings.tapCheckK, positionU: context.positionU, keep: context.keep, shape })) {
      reason.set(v.id, 'outlier');
      verdicts.set(v.id, { predicted: v.predicted, residual: v.residual, u: v.u, score: v.score });
    }
  }
  return taps
    .filter((t) => reason.has(t.id))
    .map((t) => {
      const v = verdicts.get(t.id);
      return v ? { id: t.id, reason: reason.get(t.id)!, verdict: v } : { id: t.id, reason: reason.get(t.id)! };
    });
}

/** Loads of one row: drops the taps listed in `bad` (and any tap whose `bad` field is set),
 *  integrates the rest and lists the dropped ones, in contour order, in `bridged`. */
export function reduceSurface(
  taps: readonly TapCp[],
  alphaDeg: number,
  bad: readonly { id: string; reason?: string }[],
  rule: ContourRule = 'linear',
  shape?: RowShape | null,
): SurfaceLoads {
  const rowNames = [...new Set(taps.map((t) => t.row))];
  if (rowNames.length > 1) {
    throw new Error(`reduceSurface: taps of one row expected, got rows ${rowNames.join(', ')}`);
  }
  const badIds = new Set(bad.map((b) => b.id));
  const isBad = (t: TapCp) => t.bad || badIds.has(t.id);
  const good = taps.filter((t) => !isBad(t));
  for (const s of ['upper', 'lower'] as const) {
    if (!good.some((t) => t.surface === s) && taps.some((t) => t.surface === s)) {
      throw new Error(
        `reduceSurface: row ${rowNames[0]} has no usable ${s}-surface tap left after dropping bad taps`,
      );
    }
  }
  const loads = integrateContour(good, alphaDeg, rule, shape);
  return { ...loads, bridged: orderContour(taps.filter(isBad)).map((t) => t.id) };
}
