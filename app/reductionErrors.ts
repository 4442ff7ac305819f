// The reduction's own errors (REDUCTION.md §9), estimated once per run from the nominal pass and
// entered in the uncertainty as additive errors with these standard uncertainties (JCGM 100:2008
// §3.2.3–3.2.4, Type B); all have expectation zero except the integration error, whose sign is
// estimated:
//
// - Integration of the surface pressures (tap resolution). The row is integrated whole (I₁) and as
//   its two interleaved halves (every other tap along the contour, each closed at the trailing edge
//   the same way; their mean I₂), grids of spacing h and 2h. The rule's error is of order p in h
//   (p = 2 for the linear rule: piecewise-linear interpolants, the trapezoid rule's order; p = 4
//   for the spline rule), so Richardson extrapolation (L. F. Richardson, Phil. Trans. R. Soc. A 226
//   (1927) 299) estimates the error of the whole row WITH ITS SIGN: exact ≈ I₁ + (I₁ − I₂)/(2ᵖ − 1)
//   = I₁ + shift. Measured on the exact sections of REDUCTION.md §11 (scripts/coverage-diagnose.ts,
//   docs/UNCERTAINTY.md): the linear rule's true error is −(I₁ − I₂)/3 to within 3 % (median) at
//   24, 48 and 96 taps, and the reduced cl is low in nearly every run; the earlier symmetric
//   estimate (|I₁ − I₂|/(2ᵖ − 1) with the observed order from the quarters and a GCI factor) could
//   not be right at every tap count. The shift is NOT applied to the reported values: the Monte
//   Carlo draws carry it as the mean of the integration adjustment, so the interval is the exact
//   value's, stretched to hold the reported value (app/reduce.ts holdingValue).
//   What is left after the shift is the next order of the error, which depends on how well the
//   taps resolve the nose (the suction peak and the stagnation point lie within a few nose radii):
//   the leading-edge resolution model u = min(1, 0.2·(Δs/ρ)²)·|shift|, with Δs the tap spacing at
//   the nose (the tap of least x/c and its two neighbours) and ρ the radius of the parabola
//   through those three taps (app/contourSpline.ts fitNose). The form (Δs/ρ)² and the factor 0.2:
//   common practice, no source — fitted on exact sections (other pools than the coverage test's)
//   where the relative residual was ~0.1 for Δs/ρ < 1, ~0.3 at 1.5–2 and ~0.8–1 beyond 2, and
//   checked by test/uncertainty-coverage.test.ts. The channel noise of the shift itself, from each
//   tap's own u (JCGM 100 eq. (10), a finite difference per tap), is added in quadrature.
// - Trailing-edge closure: the row closed three ways — the mean of the linear extrapolations of
//   the two surfaces (the method used), the mean of the two taps nearest the trailing edge
//   (constant extrapolation), and each surface closed at its own extrapolated value (a blunt base)
//   — and the spread of the three taken as the full width of a rectangular distribution,
//   u = range/√12 (JCGM 100 §4.3.7).
// - Wake rake: probe spacing by the same interleaved-halves estimate on the Jones integrand
//   (far-wake form √Cpt(1 − √Cpt)); truncation by the deficit left at the rake edges, the
//   integrand at each edge continued as a Gaussian tail of the wake's own spread
//   σ_w = width/4.90 (the 5 % points of a Gaussian are ±2.45σ), the tail beyond distance d from
//   the centre being ≤ g_e·min(σ√(π/2), σ²/d) (Mills' ratio bound), counted as a rectangular
//   half-width: u = tail/√3 (common practice, no source).
// - Wall integrals: the measured floor − ceiling integrals are divided by the capture fraction F
//   of a point vortex between the walls (REDUCTION.md §5); the part supplied by that shape,
//   (1 − F)/F of the result, is taken as known to 20 % (standard uncertainty; common practice, no
//   source). The fit residual: Δcp = cp_floor − cp_ceiling fitted by least squares with
//   A·sech(πx/h) (the vortex signature); the residual's integral over the instrumented range
//   relative to the fitted one, divided by √n for n wall stations, as a relative standard
//   uncertainty of cl_mom and Γ_wall (common practice, no source).
// - Correction model (REDUCTION.md §8): σ known to 10 % and ε_sb to 10 % (common practice, no
//   source); ε_wb from the two published forms (c/2h)·cd_u (Barlow, Rae & Pope) and (c/4h)·cd_u
//   (Allen & Vincenti, Thom), which REDUCTION.md §8 leaves open: their difference as the full width
//   of a rectangular distribution, u = |Δ|/√12, i.e. 14.4 % of the (c/2h) value and 28.9 % of the
//   (c/4h) value.
// Pure module.

import { contourIntegrals, type ContourIntegrals, type ContourRule, type RowShapeArrays } from './surface';
import { jonesIntegral, jonesTerm } from './wake';
import { trapezoid } from './quadrature';
import { fitNose } from './contourSpline';
import type { CorrectionMethod, CorrectionResult, WakeResult, WallResult } from './types';

/** Relative standard uncertainty of the vortex-shape extrapolation of the wall integrals. */
export const WALL_SHAPE_FRACTION = 0.2;
/** Relative standard uncertainties of σ and ε_sb. */
export const SIGMA_FRACTION = 0.1;
export const EPS_SB_FRACTION = 0.1;
/** ε_wb: |(c/2h) − (c/4h)|·cd_u as the full width of a rectangular distribution, relative to the
 *  method's own ε_wb. */
export function epsWbFraction(method: CorrectionMethod): number {
  if (method === 'allen-vincenti') return 1 / Math.sqrt(12); // Δ = (c/4h)cd = ε_wb itself
  if (method === 'none') return 0;
  return 0.5 / Math.sqrt(12); // Δ = ½ of (c/2h)cd
}

/** Standard uncertainties of the reduction's own errors (additive on the uncorrected outputs, or
 *  relative where the name says so). */
export interface ReductionErrors {
  /** Standard uncertainty of the integration (tap resolution) error left after `integrationShift`. */
  integration: { cl: number; cdp: number; cmc4: number };
  /** The estimated integration error with its sign, on the uncorrected cl, cd_p, cm_c/4: the exact
   *  value ≈ reduced + shift. Not applied to the reported values; the intervals are placed with it. */
  integrationShift: { cl: number; cdp: number; cmc4: number };
  trailingEdge: { cl: number; cdp: number; cmc4: number };
  rakeSpacing: number;
  rakeTruncation: number;
  /** Relative, on cl_mom and Γ_wall. */
  wallShape: number;
  wallFit: number;
  /** Relative, on σ, ε_sb, ε_wb. */
  sigma: number;
  epsSb: number;
  epsWb: number;
}

/** The main row's good taps in contour order (upper TE → LE, then lower LE → TE). */
export interface RowArrays {
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  cp: ArrayLike<number>;
  n: number;
  nUpper: number;
  /** Standard uncertainty of each tap's Cp from its own channel (independent errors), if known:
   *  the integration estimate takes its expected noise out of the halves' disagreement. */
  ucp?: ArrayLike<number>;
  /** The 'shape' rule's shape at these taps and its own integrals (app/shapeRule.ts). */
  shape?: RowShapeArrays;
}

type Loads = Pick<ContourIntegrals, 'cl' | 'cdp' | 'cmc4'>;

function loadsOf(r: RowArrays, alphaDeg: number, rule: ContourRule = 'linear'): Loads {
  return contourIntegrals(r.x, r.y, r.cp, r.n, r.nUpper, alphaDeg, rule, r.shape);
}

/** Every `step`-th point along the contour from `start` (the interleaved subsets), or null when a
 *  surface would keep fewer than 2 points. */
function subset(r: RowArrays, step: number, start: number): RowArrays | null {
  const x: number[] = [];
  const y: number[] = [];
  const cp: number[] = [];
  const v: number[] = [];
  let nUpper = 0;
  for (let k = start; k < r.n; k += step) {
    x.push(r.x[k]);
    y.push(r.y[k]);
    cp.push(r.cp[k]);
    if (r.shape) v.push(r.shape.v[k]);
    if (k < r.nUpper) nUpper++;
  }
  if (nUpper < 2 || x.length - nUpper < 2) return null;
  // The 'shape' rule on a half: its own departure (RowShape.halves), the shape at its taps.
  const h = r.shape && step === 2 && r.shape.halves ? r.shape.halves[start] : null;
  return { x, y, cp, n: x.length, nUpper, ...(r.shape && h ? { shape: { ...r.shape, ...h, v, halves: undefined, u: undefined } } : {}) };
}

/** The order of each contour rule's integration error in the tap spacing h: the linear rule
 *  integrates piecewise-linear interpolants, O(h²) (the trapezoid rule's order); the spline rule
 *  cubic-spline interpolants, O(h⁴) (de Boor 1978 ch. IV, memory). Measured for the linear rule on
 *  the exact sections of REDUCTION.md §11 (scripts/coverage-diagnose.ts, docs/UNCERTAINTY.md): the
 *  true error is −(I₁ − I₂)/3 to within 3 % (median) at 24, 48 and 96 taps. */
export const RULE_ORDER: Record<ContourRule, number> = { linear: 2, spline: 4, shape: 2 };

/** The integration estimate of one row: `shift`, the estimated error of the reduced value with its
 *  sign (exact ≈ reduced + shift), and `u`, the standard uncertainty left after it. */
export interface IntegrationEstimate {
  shift: Loads;
  u: Loads;
}

/** Integration (tap resolution) estimate (see the module comment): the whole row I₁ against the
 *  mean I₂ of its two interleaved halves. */
export function integrationError(r: RowArrays, alphaDeg: number, rule: ContourRule = 'linear'): IntegrationEstimate {
  const zero = { shift: { cl: 0, cdp: 0, cmc4: 0 }, u: { cl: 0, cdp: 0, cmc4: 0 } };
  const half = [subset(r, 2, 0), subset(r, 2, 1)];
  if (!half[0] || !half[1]) return zero;
  const h0 = half[0];
  const h1 = half[1];
  const whole = loadsOf(r, alphaDeg, rule);
  const l0 = loadsOf(h0, alphaDeg, rule);
  const l1 = loadsOf(h1, alphaDeg, rule);
  const f = 1 / (2 ** RULE_ORDER[rule] - 1);
  // The channel noise in D = I₁ − I₂ (JCGM 100 eq. (10), uncorrelated tap errors): each tap's Cp
  // moved by its own u, a finite difference (exact for the linear rule, which is linear in the
  // Cp); a tap moves the whole row and its own half only.
  const vD = { cl: 0, cdp: 0, cmc4: 0 };
  if (r.ucp) {
    const cp = Array.from(r.cp);
    const hc = [Array.from(h0.cp), Array.from(h1.cp)];
    for (let k = 0; k < r.n; k++) {
      const du = r.ucp[k];
      if (!(du > 0)) continue;
      const side = k % 2;
      const j = k >> 1;
      cp[k] += du;
      hc[side][j] += du;
      const a = loadsOf({ ...r, cp }, alphaDeg, rule);
      const b = loadsOf({ ...(side ? h1 : h0), cp: hc[side] }, alphaDeg, rule);
      cp[k] -= du;
      hc[side][j] -= du;
      const lb = side ? l1 : l0;
      for (const q of ['cl', 'cdp', 'cmc4'] as const) vD[q] += (a[q] - whole[q] - 0.5 * (b[q] - lb[q])) ** 2;
    }
  }
  const rel = noseResolution(r).relative;
  const shift = { cl: 0, cdp: 0, cmc4: 0 };
  const u = { cl: 0, cdp: 0, cmc4: 0 };
  for (const k of ['cl', 'cdp', 'cmc4'] as const) {
    shift[k] = f * (whole[k] - 0.5 * (l0[k] + l1[k]));
    u[k] = Math.hypot(rel * shift[k], f * Math.sqrt(vD[k]), r.shape?.u ? r.shape.u[k] : 0);
  }
  return { shift, u };
}

/** Leading-edge resolution model (see the module comment): relative standard uncertainty of the
 *  shift = min(1, NOSE_C·(Δs/ρ)²). */
export const NOSE_C = 0.2;

/** The tap spacing at the nose Δs (mean distance of the tap of least x/c to its two contour
 *  neighbours), the nose radius ρ of the parabola through those three taps (app/contourSpline.ts
 *  fitNose), and the relative uncertainty of the integration shift they give (1 when no parabola
 *  fits). */
export function noseResolution(r: RowArrays): { ds: number; radius: number; relative: number } {
  let j = 0;
  for (let k = 1; k < r.n; k++) if (r.x[k] < r.x[j]) j = k;
  if (j === 0 || j === r.n - 1) return { ds: NaN, radius: NaN, relative: 1 };
  const ds = 0.5 * (Math.hypot(r.x[j] - r.x[j - 1], r.y[j] - r.y[j - 1]) + Math.hypot(r.x[j + 1] - r.x[j], r.y[j + 1] - r.y[j]));
  const nose = fitNose(r.x, r.y, r.n);
  if (!nose.fitted) return { ds, radius: NaN, relative: 1 };
  return { ds, radius: nose.r, relative: Math.min(1, NOSE_C * (ds / nose.r) ** 2) };
}

/** The row with a point exactly at x/c = 1 on one or both surfaces, which contourIntegrals then
 *  takes as that surface's trailing-edge value (its extrapolation from x/c = 1 has t = 0). */
function closedWith(r: RowArrays, teU: number | null, teL: number | null, yU: number, yL: number): RowArrays {
  const x = Array.from(r.x);
  const y = Array.from(r.y);
  const cp = Array.from(r.cp);
  let nUpper = r.nUpper;
  if (teU !== null) {
    x.unshift(1);
    y.unshift(yU);
    cp.unshift(teU);
    nUpper++;
  }
  if (teL !== null) {
    x.push(1);
    y.push(yL);
    cp.push(teL);
  }
  return { x, y, cp, n: x.length, nUpper };
}

/** Linear extrapolation of one surface to x/c = 1 through points a (nearest the TE) and b. */
function extrapolate(r: RowArrays, a: number, b: number): { cp: number; y: number } {
  if (!(Math.abs(r.x[a] - r.x[b]) > 1e-9)) return { cp: r.cp[a], y: r.y[a] };
  const t = (1 - r.x[a]) / (r.x[a] - r.x[b]);
  return { cp: r.cp[a] + t * (r.cp[a] - r.cp[b]), y: r.y[a] + t * (r.y[a] - r.y[b]) };
}

/** Spread of the trailing-edge closures (see the module comment). */
export function trailingEdgeError(r: RowArrays, alphaDeg: number): Loads {
  if (r.nUpper < 2 || r.n - r.nUpper < 2) return { cl: 0, cdp: 0, cmc4: 0 };
  const nominal = loadsOf(r, alphaDeg);
  const last = r.n - 1;
  const up = extrapolate(r, 0, 1);
  const lo = extrapolate(r, last, last - 1);
  const yTe = 0.5 * (up.y + lo.y);
  const constant = 0.5 * (r.cp[0] + r.cp[last]);
  const flat = loadsOf(closedWith(r, constant, constant, yTe, yTe), alphaDeg);
  const base = loadsOf(closedWith(r, up.cp, lo.cp, up.y, lo.y), alphaDeg);
  const u = (k: keyof Loads) => {
    const v = [nominal[k], flat[k], base[k]];
    return (Math.max(...v) - Math.min(...v)) / Math.sqrt(12);
  };
  return { cl: u('cl'), cdp: u('cdp'), cmc4: u('cmc4') };
}

/** Rake probe spacing and truncation (see the module comment); cd units. */
export function rakeErrors(wake: WakeResult, chord: number): { spacing: number; truncation: number } {
  const p = wake.profile;
  const n = p.length;
  if (n < 3) return { spacing: 0, truncation: 0 };
  const y = p.map((q) => q.y);
  const g = p.map((q) => jonesTerm(q.cpt, q.cpt));
  let spacing = 0;
  if (n >= 5) {
    const pick = (par: number) => {
      const idx = y.map((_, i) => i).filter((i) => i % 2 === par || i === 0 || i === n - 1);
      return jonesIntegral(idx.map((i) => y[i]), idx.map((i) => g[i]), chord);
    };
    const whole = jonesIntegral(y, g, chord);
    spacing = 0.5 * Math.abs(whole - 0.5 * (pick(0) + pick(1)));
  }
  let truncation = 0;
  const sigma = wake.width / 4.9;
  if (Number.isFinite(sigma) && sigma > 0) {
    const centre = Number.isFinite(wake.centre) ? wake.centre : 0.5 * (y[0] + y[n - 1]);
    const tail = (ge: number, d: number) => Math.max(0, ge) * Math.min(sigma * Math.sqrt(Math.PI / 2), d > 0 ? (sigma * sigma) / d : Infinity);
    truncation = ((2 / chord) * (tail(g[0], centre - y[0]) + tail(g[n - 1], y[n - 1] - centre))) / Math.sqrt(3);
  }
  return { spacing, truncation };
}

/** Wall-integral shape (1 − F) and fit residual, relative (see the module comment). */
export function wallErrors(walls: WallResult, height: number): { shape: number; fit: number } {
  const F = walls.FMom ?? walls.F;
  const shape = F > 0 ? (WALL_SHAPE_FRACTION * (1 - F)) / F : 0;
  const xs = [...new Set([...walls.floor.map((t) => t.x), ...walls.ceiling.map((t) => t.x)])].sort((a, b) => a - b);
  const x1 = Math.max(walls.floor[0].x, walls.ceiling[0].x);
  const x2 = Math.min(walls.floor[walls.floor.length - 1].x, walls.ceiling[walls.ceiling.length - 1].x);
  const grid = xs.filter((x) => x >= x1 && x <= x2);
  if (grid.length < 3) return { shape, fit: 0 };
  const at = (list: { x: number; cp: number }[], x: number) => {
    let i = 0;
    while (i < list.length - 2 && list[i + 1].x < x) i++;
    const a = list[i];
    const b = list[i + 1];
    return b.x === a.x ? a.cp : a.cp + ((b.cp - a.cp) * (x - a.x)) / (b.x - a.x);
  };
  const d = grid.map((x) => at(walls.floor, x) - at(walls.ceiling, x));
  const s = grid.map((x) => 1 / Math.cosh((Math.PI * x) / height));
  let num = 0;
  let den = 0;
  for (let i = 0; i < grid.length; i++) {
    num += d[i] * s[i];
    den += s[i] * s[i];
  }
  const A = den > 0 ? num / den : 0;
  const fitted = trapezoid(grid, s.map((v) => A * v));
  const resid = trapezoid(grid, d.map((v, i) => Math.abs(v - A * s[i])));
  const fit = Math.abs(fitted) > 0 ? resid / Math.abs(fitted) / Math.sqrt(grid.length) : 0;
  return { shape, fit };
}

/** Every reduction error of one run. */
export function reductionErrors(args: {
  row: RowArrays;
  alphaDeg: number;
  wake: WakeResult | null;
  walls: WallResult | null;
  chord: number;
  height: number;
  correction: CorrectionResult;
  /** The contour rule of the reduction (Settings.contourRule): the integration estimate compares
   *  that rule's whole row with its two interleaved halves. */
  rule?: ContourRule;
}): ReductionErrors {
  const rake = args.wake ? rakeErrors(args.wake, args.chord) : { spacing: 0, truncation: 0 };
  const walls = args.walls ? wallErrors(args.walls, args.height) : { shape: 0, fit: 0 };
  const on = args.correction.method !== 'none';
  const int = integrationError(args.row, args.alphaDeg, args.rule ?? 'linear');
  return {
    integration: int.u,
    integrationShift: int.shift,
    trailingEdge: trailingEdgeError(args.row, args.alphaDeg),
    rakeSpacing: rake.spacing,
    rakeTruncation: rake.truncation,
    wallShape: walls.shape,
    wallFit: walls.fit,
    sigma: on ? SIGMA_FRACTION : 0,
    epsSb: on ? EPS_SB_FRACTION : 0,
    epsWb: epsWbFraction(args.correction.method),
  };
}

/** The order of the additive/relative adjustments of one Monte Carlo draw (Float64Array `adj`):
 *  uncorrected cl, cd_p, cm_c/4 and wake cd (additive), cl_mom and Γ_wall (relative), σ, ε_sb,
 *  ε_wb (relative). */
export const ADJ = { cl: 0, cdp: 1, cmc4: 2, cd: 3, walls: 4, sigma: 5, epsSb: 6, epsWb: 7 } as const;
export const ADJ_LENGTH = 8;

/** Standard uncertainties of the adjustments, in ADJ order (each source combined in quadrature). */
export function adjustmentSd(e: ReductionErrors): Float64Array {
  const a = new Float64Array(ADJ_LENGTH);
  a[ADJ.cl] = Math.hypot(e.integration.cl, e.trailingEdge.cl);
  a[ADJ.cdp] = Math.hypot(e.integration.cdp, e.trailingEdge.cdp);
  a[ADJ.cmc4] = Math.hypot(e.integration.cmc4, e.trailingEdge.cmc4);
  a[ADJ.cd] = Math.hypot(e.rakeSpacing, e.rakeTruncation);
  a[ADJ.walls] = Math.hypot(e.wallShape, e.wallFit);
  a[ADJ.sigma] = e.sigma;
  a[ADJ.epsSb] = e.epsSb;
  a[ADJ.epsWb] = e.epsWb;
  return a;
}

/** The means of the adjustments, in ADJ order: the estimated integration error (the rest 0). */
export function adjustmentMean(e: ReductionErrors): Float64Array {
  const a = new Float64Array(ADJ_LENGTH);
  a[ADJ.cl] = e.integrationShift.cl;
  a[ADJ.cdp] = e.integrationShift.cdp;
  a[ADJ.cmc4] = e.integrationShift.cmc4;
  return a;
}

/** The wall correction with σ, ε_sb and ε_wb scaled by (1 + adj) (adj: relative deviates). */
export function adjustedCorrection(c: CorrectionResult, adj: ArrayLike<number> | undefined): CorrectionResult {
  if (!adj) return c;
  const sigma = c.sigma * (1 + adj[ADJ.sigma]);
  const epsSb = c.epsSb * (1 + adj[ADJ.epsSb]);
  const epsWb = c.epsWb * (1 + adj[ADJ.epsWb]);
  return { ...c, sigma, epsSb, epsWb, eps: epsSb + epsWb };
}

/** Corrected momentum cl and corrected circulations of one pass (nominal or a draw; the same
 *  arithmetic in app/reduce.ts and app/mcPlan.ts): cl on the corrected basis is cl_u·(1 − σ − 2ε)
 *  (REDUCTION.md §8), Γ = ½·V·c·cl with V and cl corrected (Kutta–Joukowski), and the wall line
 *  integral scaled by the same factor (1 + ε)(1 − σ − 2ε) as V·cl. */
export function correctedLift(
  corrected: { cl: number; V: number }, c: CorrectionResult, Vu: number, clMom: number, gammaWall: number, chord: number,
): { clMom: number; pressure: number; momentum: number; wall: number } {
  const f = 1 - c.sigma - 2 * c.eps;
  const clMomC = clMom * f;
  const V = corrected.V;
  return {
    clMom: clMomC,
    pressure: 0.5 * V * chord * corrected.cl,
    momentum: 0.5 * V * chord * clMomC,
    wall: gammaWall * (V / Vu) * f,
  };
}
