// Inviscid theory for the overlay:
// - Linear-strength vortex panel method with the Kutta condition γ_TE,upper + γ_TE,lower = 0:
//   N straight panels, vortex strength linear on each panel and continuous at the N + 1 nodes,
//   zero normal velocity at the panel midpoints (Katz & Plotkin, Low-Speed Aerodynamics, 2nd ed.,
//   §11.4 (memory); Anderson, Fundamentals of Aerodynamics, ch. 4 (memory)). Our one change: at the
//   two trailing-edge panels, whose midpoints nearly coincide on a thin or cusped trailing edge (an
//   ill-conditioned pair of equations there), the normal-velocity equations are replaced by a zero
//   second difference of γ along each surface next to the trailing edge. Checked against the exact
//   Joukowski and Kármán–Trefftz solutions in test/panel.test.ts. cl from the circulation,
//   cl = −2Γ_ccw/(V c); Cp = 1 − (V_t/V)² at the midpoints, where V_t equals the local sheet
//   strength γ because the flow inside the closed contour is at rest (this converges at second
//   order in the panel size; the sum of induced tangential velocities converges only at first).
// - NACA 4-digit sections: thickness y_t = 5t(0.2969√x − 0.1260x − 0.3516x² + 0.2843x³ − 0.1036x⁴)
//   (the closed-trailing-edge variant of the last coefficient, −0.1015 in the original) and the
//   two-parabola mean line (Abbott & von Doenhoff, Theory of Wing Sections, 1959, §6.4 (memory)).
// - Thin-airfoil theory: cl = 2π(α − α_L0), α_L0 = −(1/π)∫₀^π (dy_c/dx)(cos θ − 1) dθ with
//   x = (1 − cos θ)/2 (Abbott & von Doenhoff §4.3; Anderson §4.8, eq. 4.61 (memory)).
// Coordinates are x/c, y/c (chord 1, leading edge at the origin), ordered trailing edge → upper
// surface → leading edge → lower surface → trailing edge. Superposition: the vortex strengths for
// any α are cos α·γ(0°) + sin α·γ(90°), so one factorisation per geometry serves every α.

import type { Geometry, Surface } from './types';
import { bracket } from './quadrature';

const DEG = Math.PI / 180;

// ---------------------------------------------------------------- NACA 4-digit geometry

interface Naca4 {
  m: number;
  p: number;
  t: number;
}

function parseNaca4(code: string): Naca4 {
  const c = code.trim();
  if (!/^\d{4}$/.test(c)) throw new Error(`NACA 4-digit code must be four digits (got '${code}')`);
  const m = Number(c[0]) / 100;
  const p = Number(c[1]) / 10;
  const t = Number(c.slice(2)) / 100;
  if (t <= 0) throw new Error(`NACA ${c}: thickness must be greater than zero`);
  if ((m > 0) !== (p > 0)) {
    throw new Error(`NACA ${c}: camber and its position must both be zero or both non-zero`);
  }
  return { m, p, t };
}

function naca4Thickness(t: number, x: number): number {
  return 5 * t * (0.2969 * Math.sqrt(x) - 0.126 * x - 0.3516 * x * x + 0.2843 * x ** 3 - 0.1036 * x ** 4);
}

/** Mean line y_c and slope dy_c/dx at x. */
function naca4Camber(m: number, p: number, x: number): { yc: number; slope: number } {
  if (m === 0) return { yc: 0, slope: 0 };
  if (x < p) return { yc: (m / (p * p)) * (2 * p * x - x * x), slope: ((2 * m) / (p * p)) * (p - x) };
  const q = (1 - p) * (1 - p);
  return { yc: (m / q) * (1 - 2 * p + 2 * p * x - x * x), slope: ((2 * m) / q) * (p - x) };
}

/** The surface point of a NACA 4-digit section at chord station xc (0…1): the thickness is laid
 *  off normal to the mean line, so the point's x differs slightly from xc on a cambered section. */
export function naca4Point(code: string, xc: number, surface: Surface): { x: number; y: number } {
  const { m, p, t } = parseNaca4(code);
  if (!(xc >= 0 && xc <= 1)) throw new Error(`NACA ${code}: chord station must be in [0, 1] (got ${xc})`);
  const yt = naca4Thickness(t, xc);
  const { yc, slope } = naca4Camber(m, p, xc);
  const th = Math.atan(slope);
  const sgn = surface === 'upper' ? 1 : -1;
  return { x: xc - sgn * yt * Math.sin(th), y: yc + sgn * yt * Math.cos(th) };
}

/** NACA 4-digit section with cosine spacing of the chord stations, nPanels + 1 points ordered
 *  TE → upper → LE → lower → TE; the first and last points are both the (closed) trailing edge. */
export function naca4(code: string, nPanels: number): { x: number[]; y: number[] } {
  parseNaca4(code);
  if (!Number.isInteger(nPanels) || nPanels < 4) {
    throw new Error(`naca4: number of panels must be an integer ≥ 4 (got ${nPanels})`);
  }
  const nU = Math.floor(nPanels / 2);
  const nL = nPanels - nU;
  const x: number[] = [];
  const y: number[] = [];
  for (let k = nU; k >= 0; k--) {
    const pt = naca4Point(code, 0.5 * (1 - Math.cos((Math.PI * k) / nU)), 'upper');
    x.push(pt.x);
    y.push(pt.y);
  }
  for (let k = 1; k <= nL; k++) {
    const pt = naca4Point(code, 0.5 * (1 - Math.cos((Math.PI * k) / nL)), 'lower');
    x.push(pt.x);
    y.push(pt.y);
  }
  // The closed trailing edge is exactly (1, 0) on both ends (y_t(1) = 0 up to rounding, y_c(1) = 0).
  x[0] = x[nPanels] = 1;
  y[0] = y[nPanels] = 0;
  return { x, y };
}

// ---------------------------------------------------------------- user coordinates

/** Natural cubic spline through (s_i, v_i); returns an evaluator. */
function naturalSpline(s: number[], v: number[]): (t: number) => number {
  const n = s.length;
  const m = new Float64Array(n); // second derivatives
  const c = new Float64Array(n);
  const d = new Float64Array(n);
  // Tridiagonal system (Thomas algorithm), natural ends m0 = m_{n−1} = 0.
  for (let i = 1; i < n - 1; i++) {
    const h0 = s[i] - s[i - 1];
    const h1 = s[i + 1] - s[i];
    const a = h0 / 6;
    const b = (h0 + h1) / 3;
    const cc = h1 / 6;
    const r = (v[i + 1] - v[i]) / h1 - (v[i] - v[i - 1]) / h0;
    const denom = b - a * (i > 1 ? c[i - 1] : 0);
    c[i] = cc / denom;
    d[i] = (r - a * (i > 1 ? d[i - 1] : 0)) / denom;
  }
  for (let i = n - 2; i >= 1; i--) m[i] = d[i] - c[i] * (i + 1 < n - 1 ? m[i + 1] : 0);
  return (t: number) => {
    const lo = bracket(s, t);
    const hi = lo + 1;
    const h = s[hi] - s[lo];
    const A = (s[hi] - t) / h;
    const B = (t - s[lo]) / h;
    return A * v[lo] + B * v[hi] + (((A ** 3 - A) * m[lo] + (B ** 3 - B) * m[hi]) * h * h) / 6;
  };
}

/** Re-panels user coordinates: a cubic spline in arc length through the given points, then
 *  nPanels + 1 points, cosine-spaced in arc length on each surface (dense at both edges). */
function repanel(xIn: readonly number[], yIn: readonly number[], nPanels: number): { x: number[]; y: number[] } {
  if (xIn.length !== yIn.length) {
    throw new Error(`Airfoil coordinates: x has ${xIn.length} values but y has ${yIn.length}`);
  }
  const xs: number[] = [];
  const ys: number[] = [];
  for (let i = 0; i < xIn.length; i++) {
    if (!Number.isFinite(xIn[i]) || !Number.isFinite(yIn[i])) {
      throw new Error(`Airfoil coordinates: point ${i + 1} is not a finite number (${xIn[i]}, ${yIn[i]})`);
    }
    const n = xs.length;
    if (n > 0 && Math.hypot(xIn[i] - xs[n - 1], yIn[i] - ys[n - 1]) < 1e-12) continue; // duplicate
    xs.push(xIn[i]);
    ys.push(yIn[i]);
  }
  if (xs.length < 5) throw new Error(`Airfoil coordinates: need at least 5 distinct points (got ${xs.length})`);
  let area2 = 0;
  for (let i = 0; i < xs.length; i++) {
    const j = (i + 1) % xs.length;
    area2 += xs[i] * ys[j] - xs[j] * ys[i];
  }
  if (area2 <= 0) {
    throw new Error('Airfoil coordinates must run trailing edge → upper surface → leading edge → lower surface → trailing edge');
  }
  const s = [0];
  for (let i = 1; i < xs.length; i++) s.push(s[i - 1] + Math.hypot(xs[i] - xs[i - 1], ys[i] - ys[i - 1]));
  const fx = naturalSpline(s, xs);
  const fy = naturalSpline(s, ys);
  const total = s[s.length - 1];
  // Leading edge: minimum x of the spline, located near the minimum-x input point, refined by
  // golden-section search.
  let iMin = 0;
  for (let i = 1; i < xs.length; i++) if (xs[i] < xs[iMin]) iMin = i;
  let a = s[Math.max(0, iMin - 1)];
  let b = s[Math.min(xs.length - 1, iMin + 1)];
  const g = (Math.sqrt(5) - 1) / 2;
  for (let it = 0; it < 80; it++) {
    const c1 = b - g * (b - a);
    const c2 = a + g * (b - a);
    if (fx(c1) < fx(c2)) b = c2;
    else a = c1;
  }
  const sLE = 0.5 * (a + b);
  const nU = Math.floor(nPanels / 2);
  const nL = nPanels - nU;
  const x: number[] = [];
  const y: number[] = [];
  for (let k = 0; k <= nU; k++) {
    const t = (sLE * (1 - Math.cos((Math.PI * k) / nU))) / 2;
    x.push(fx(t));
    y.push(fy(t));
  }
  for (let k = 1; k <= nL; k++) {
    const t = sLE + ((total - sLE) * (1 - Math.cos((Math.PI * k) / nL))) / 2;
    x.push(fx(t));
    y.push(fy(t));
  }
  return { x, y };
}

/** Panel nodes (nPanels + 1 points, TE → upper → LE → lower → TE) of a geometry: the NACA formulas,
 *  or the user's coordinates re-panelled through a cubic spline in arc length. */
export function geometryPoints(g: Geometry, nPanels = 160): { x: number[]; y: number[] } {
  if (!Number.isInteger(nPanels) || nPanels < 4) {
    throw new Error(`geometryPoints: number of panels must be an integer ≥ 4 (got ${nPanels})`);
  }
  if (g.kind === 'naca4') return naca4(g.code, nPanels);
  return repanel(g.x, g.y, nPanels);
}

// ---------------------------------------------------------------- panel solution

interface Basis {
  n: number;
  xm: Float64Array;
  ym: Float64Array;
  len: Float64Array;
  nx: Float64Array;
  ny: Float64Array;
  surface: Surface[];
  /** Node vortex strengths for α = 0° and α = 90°. */
  g0: Float64Array;
  g90: Float64Array;
}

/** LU decomposition with partial pivoting, in place; returns the pivot order. */
function luFactor(a: Float64Array[], n: number): Int32Array {
  const piv = new Int32Array(n);
  for (let i = 0; i < n; i++) piv[i] = i;
  for (let k = 0; k < n; k++) {
    let p = k;
    let best = Math.abs(a[k][k]);
    for (let i = k + 1; i < n; i++) {
      const v = Math.abs(a[i][k]);
      if (v > best) {
        best = v;
        p = i;
      }
    }
    if (best === 0) throw new Error('panelSolve: singular influence matrix (check the coordinates)');
    if (p !== k) {
      [a[p], a[k]] = [a[k], a[p]];
      [piv[p], piv[k]] = [piv[k], piv[p]];
    }
    const rk = a[k];
    for (let i = k + 1; i < n; i++) {
      const ri = a[i];
      const f = ri[k] / rk[k];
      ri[k] = f;
      if (f !== 0) for (let j = k + 1; j < n; j++) ri[j] -= f * rk[j];
    }
  }
  return piv;
}

function luSolve(a: Float64Array[], piv: Int32Array, b: Float64Array): Float64Array {
  const n = b.length;
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = b[piv[i]];
    const ri = a[i];
    for (let j = 0; j < i; j++) s -= ri[j] * x[j];
    x[i] = s;
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = x[i];
    const ri = a[i];
    for (let j = i + 1; j < n; j++) s -= ri[j] * x[j];
    x[i] = s / ri[i];
  }
  return x;
}

function buildBasis(x: readonly number[], y: readonly number[]): Basis {
  if (x.length !== y.length) throw new Error(`panelSolve: x has ${x.length} points but y has ${y.length}`);
  const n = x.length - 1;
  if (n < 6) throw new Error(`panelSolve: need at least 7 points (6 panels), got ${x.length}`);
  for (let i = 0; i <= n; i++) {
    if (!Number.isFinite(x[i]) || !Number.isFinite(y[i])) {
      throw new Error(`panelSolve: point ${i + 1} is not finite (${x[i]}, ${y[i]})`);
    }
  }
  const xm = new Float64Array(n);
  const ym = new Float64Array(n);
  const len = new Float64Array(n);
  const cs = new Float64Array(n);
  const sn = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    const dx = x[j + 1] - x[j];
    const dy = y[j + 1] - y[j];
    len[j] = Math.hypot(dx, dy);
    if (!(len[j] > 0)) throw new Error(`panelSolve: points ${j + 1} and ${j + 2} coincide`);
    cs[j] = dx / len[j];
    sn[j] = dy / len[j];
    xm[j] = 0.5 * (x[j] + x[j + 1]);
    ym[j] = 0.5 * (y[j] + y[j + 1]);
  }
  // Outward normal of the counter-clockwise contour: (sin φ, −cos φ).
  const nx = sn;
  const ny = cs.map((c) => -c);
  let iLE = 0;
  for (let i = 1; i <= n; i++) if (x[i] < x[iLE]) iLE = i;
  const surface: Surface[] = [];
  for (let j = 0; j < n; j++) surface.push(j < iLE ? 'upper' : 'lower');

  // Influence of panel j's two node strengths on the velocity at midpoint i. Panel-local frame:
  // ξ along the panel from node j, ζ to its left (into the body for a counter-clockwise contour).
  // For a linear vortex sheet γ(ξ) (counter-clockwise positive) the local velocities are
  //   u = −(1/2π) ∫ γ ζ / r² dξ,  w = (1/2π) ∫ γ (x − ξ) / r² dξ, integrated in closed form.
  const m = n + 1;
  const A: Float64Array[] = [];
  for (let i = 0; i < n; i++) A.push(new Float64Array(m));
  const inv2pi = 1 / (2 * Math.PI);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const L = len[j];
      const dx = xm[i] - x[j];
      const dy = ym[i] - y[j];
      let xl = dx * cs[j] + dy * sn[j];
      let zl = -dx * sn[j] + dy * cs[j];
      let dth: number;
      let lnr: number;
      if (i === j) {
        xl = L / 2;
        zl = 0;
        dth = -Math.PI; // outer side of the sheet (ζ → 0⁻); only w is used, which is continuous
        lnr = 0;
      } else {
        dth = Math.atan2(zl, xl - L) - Math.atan2(zl, xl);
        lnr = 0.5 * Math.log((xl * xl + zl * zl) / ((xl - L) * (xl - L) + zl * zl));
      }
      const i1u = xl * dth - zl * lnr;
      const i1w = xl * lnr - L + zl * dth;
      const ua = -(dth - i1u / L) * inv2pi;
      const ub = -(i1u / L) * inv2pi;
      const wa = (lnr - i1w / L) * inv2pi;
      const wb = (i1w / L) * inv2pi;
      // Back to global axes.
      const vxa = ua * cs[j] - wa * sn[j];
      const vya = ua * sn[j] + wa * cs[j];
      const vxb = ub * cs[j] - wb * sn[j];
      const vyb = ub * sn[j] + wb * cs[j];
      A[i][j] += vxa * nx[i] + vya * ny[i];
      A[i][j + 1] += vxb * nx[i] + vyb * ny[i];
    }
  }
  const kutta = new Float64Array(m);
  kutta[0] = 1;
  kutta[n] = 1;
  A.push(kutta);
  const upperTe = new Float64Array(m);
  upperTe.set([1, -2, 1], 0);
  A[0] = upperTe;
  const lowerTe = new Float64Array(m);
  lowerTe.set([1, -2, 1], n - 2);
  A[n - 1] = lowerTe;
  const piv = luFactor(A, m);
  const solveFor = (ux: number, uy: number) => {
    const b = new Float64Array(m);
    for (let i = 1; i < n - 1; i++) b[i] = -(ux * nx[i] + uy * ny[i]);
    return luSolve(A, piv, b);
  };
  return { n, xm, ym, len, nx, ny, surface, g0: solveFor(1, 0), g90: solveFor(0, 1) };
}

const basisCache = new Map<string, Basis>();
const BASIS_CACHE_SIZE = 128;

function cachedBasis(x: readonly number[], y: readonly number[]): Basis {
  const key = `${x.join(',')}|${y.join(',')}`;
  let b = basisCache.get(key);
  if (b) {
    basisCache.delete(key); // refresh recency
  } else {
    b = buildBasis(x, y);
    if (basisCache.size >= BASIS_CACHE_SIZE) basisCache.delete(basisCache.keys().next().value!);
  }
  basisCache.set(key, b);
  return b;
}

export interface PanelSolution {
  /** Lift coefficient from the circulation, cl = −2Γ_ccw/(V c). */
  cl: number;
  /** Lift coefficient from integrating the midpoint Cp over the panels (a consistency check). */
  clPressure: number;
  /** Quarter-chord pitching moment (about (0.25, 0)), nose-up positive, from the panel Cp. */
  cmc4: number;
  xm: number[];
  ym: number[];
  cp: number[];
  surface: Surface[];
}

/** Solves the linear-vortex panel problem for nodes (x, y) in x/c, y/c ordered TE → upper → LE →
 *  lower → TE (the first and last node are the trailing edge; a small gap is allowed), free stream
 *  at alphaDeg to the x axis. Cp at the panel midpoints; a midpoint belongs to the upper surface
 *  when its panel lies before the minimum-x node. The factorisation is cached per geometry. */
export function panelSolve(x: readonly number[], y: readonly number[], alphaDeg: number): PanelSolution {
  if (!Number.isFinite(alphaDeg)) throw new Error(`panelSolve: angle of attack is not finite (${alphaDeg})`);
  const b = cachedBasis(x, y);
  const a = alphaDeg * DEG;
  const ca = Math.cos(a);
  const sa = Math.sin(a);
  const node = (j: number) => ca * b.g0[j] + sa * b.g90[j];
  let gamma = 0;
  const cp: number[] = [];
  let fx = 0;
  let fy = 0;
  let mz = 0; // counter-clockwise moment about (0.25, 0)
  for (let i = 0; i < b.n; i++) {
    const vt = 0.5 * (node(i) + node(i + 1)); // sheet strength at the midpoint
    gamma += b.len[i] * vt;
    const c = 1 - vt * vt;
    cp.push(c);
    const dfx = -c * b.nx[i] * b.len[i];
    const dfy = -c * b.ny[i] * b.len[i];
    fx += dfx;
    fy += dfy;
    mz += (b.xm[i] - 0.25) * dfy - b.ym[i] * dfx;
  }
  return {
    cl: -2 * gamma,
    clPressure: fy * ca - fx * sa,
    cmc4: -mz,
    xm: Array.from(b.xm),
    ym: Array.from(b.ym),
    cp,
    surface: [...b.surface],
  };
}

const cpCache = new Map<string, readonly Readonly<{ x: number; cp: number; surface: Surface }>[]>();
const CP_CACHE_SIZE = 256;

function geometryKey(g: Geometry): string {
  return g.kind === 'naca4' ? `naca4:${g.code.trim()}` : `xy:${g.x.join(',')}|${g.y.join(',')}`;
}

/** Inviscid Cp at the panel midpoints of a geometry at alphaDeg (x/c, Cp, surface), cached by
 *  geometry, α and panel count. Returns a fresh array of shared, frozen points. */
export function inviscidCp(
  g: Geometry,
  alphaDeg: number,
  nPanels = 160,
): { x: number; cp: number; surface: Surface }[] {
  const key = `${geometryKey(g)}|${alphaDeg}|${nPanels}`;
  let pts = cpCache.get(key);
  if (pts) {
    cpCache.delete(key);
  } else {
    const { x, y } = geometryPoints(g, nPanels);
    const sol = panelSolve(x, y, alphaDeg);
    pts = sol.xm.map((xm, i) => Object.freeze({ x: xm, cp: sol.cp[i], surface: sol.surface[i] }));
    if (cpCache.size >= CP_CACHE_SIZE) cpCache.delete(cpCache.keys().next().value!);
  }
  cpCache.set(key, pts);
  return pts.slice();
}

// ---------------------------------------------------------------- thin-airfoil theory

/** Thin-airfoil lift coefficient 2π(α − α_L0), angles in degrees. */
export function thinAirfoilCl(alphaDeg: number, alphaL0Deg: number): number {
  return 2 * Math.PI * (alphaDeg - alphaL0Deg) * DEG;
}

/** Zero-lift angle of a NACA 4-digit mean line by thin-airfoil theory, degrees: composite Simpson
 *  rule on each side of the camber-slope kink at x = p. */
export function naca4AlphaL0Deg(code: string): number {
  const { m, p } = parseNaca4(code);
  if (m === 0) return 0;
  const f = (th: number) => naca4Camber(m, p, 0.5 * (1 - Math.cos(th))).slope * (Math.cos(th) - 1);
  const simpson = (a: number, b: number, n: number) => {
    const h = (b - a) / n;
    let s = f(a) + f(b);
    for (let i = 1; i < n; i++) s += f(a + i * h) * (i % 2 ? 4 : 2);
    return (s * h) / 3;
  };
  const thp = Math.acos(1 - 2 * p);
  const integral = simpson(0, thp, 2000) + simpson(thp, Math.PI, 2000);
  return -integral / Math.PI / DEG;
}
