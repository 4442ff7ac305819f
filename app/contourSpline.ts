// Higher-order contour integration of one chordwise row (REDUCTION.md §3), the 'spline' contour rule:
// cubic splines through the trailing-edge closure point, the taps in contour order and the trailing
// edge again, then the same three contour integrals as the linear rule,
//   ∮ Cp dx,  ∮ Cp dy,  ∮ Cp (x dx + y dy),
// each as ∫ Cp·x′ dt (and so on) by 6-point Gauss–Legendre quadrature on every interval.
// - Geometry: x/c and y/c as not-a-knot cubic splines of the chord-length parameter t (the
//   cumulative length of the polygon through the nodes, a discrete arc length).
// - Pressure: the signed surface speed u = ±√(C0 − Cp), C0 = max(1, the row's highest Cp), as a
//   not-a-knot cubic spline of the centripetal parameter τ (increments √Δs), Cp = C0 − u² between the
//   nodes. u passes through zero at the stagnation point almost linearly, where Cp has its sharp
//   maximum, so the stagnation region is resolved between taps; the centripetal parameter keeps the
//   spline from ringing where long and short intervals meet at the leading edge.
// Cubic splines with not-a-knot end conditions: de Boor, A Practical Guide to Splines (1978), ch. IV
// (memory); chord-length and centripetal parametrisation: E. T. Y. Lee, Computer-Aided Design 21
// (1989) 363–370 (memory). Gauss–Legendre nodes and weights: Abramowitz & Stegun, Handbook of
// Mathematical Functions, table 25.4 (n = 6). The speed transform and the choice of the side of the
// stagnation point: our own, common practice, no source.
// The spline is open, with the trailing edge at both ends, not periodic: the trailing edge is a
// corner of the contour and of Cp's slope between the surfaces.
// Since core 0.6.1 (SPLINE_DEFAULTS): the parameter is Glauert's angle φ, x/c = (1 − cos φ)/2
// (negative on the upper surface; H. Glauert, The Elements of Aerofoil and Airscrew Theory, 1926,
// ch. VII, memory), and the pressure spline carries the signed speed times ds/dφ, which is smooth
// at the leading edge as the circle speed of a conformal map is (our own reasoning, no source).
// Measured (scripts/contour-sweep.ts, test/contour-rule.test.ts, docs/TAP-JUDGEMENT.md §3): better
// than linear at 16, 24, 48 and 96 taps at worst over six Joukowski sections, but short of the
// 24-tap target, so 'linear' stays the default.

/** Gauss–Legendre, 6 points on [−1, 1] (Abramowitz & Stegun table 25.4): exact to degree 11. */
const GL_X = [
  -0.9324695142031521, -0.6612093864662645, -0.2386191860831969,
  0.2386191860831969, 0.6612093864662645, 0.9324695142031521,
];
const GL_W = [
  0.1713244923791704, 0.3607615730481386, 0.467913934572691,
  0.467913934572691, 0.3607615730481386, 0.1713244923791704,
];

/** Second derivatives M of the not-a-knot cubic spline through (t[i], f[i]), i < m (m ≥ 2), into
 *  `out`. m = 2: a straight line (M = 0); m = 3: the parabola through the three points. Scratch
 *  arrays of length ≥ m are passed in so a Monte Carlo draw allocates nothing. */
export function splineSecondDerivatives(
  t: ArrayLike<number>, f: ArrayLike<number>, m: number, out: Float64Array,
  a: Float64Array, b: Float64Array, c: Float64Array, d: Float64Array,
): void {
  if (m < 3) {
    for (let i = 0; i < m; i++) out[i] = 0;
    return;
  }
  if (m === 3) {
    const h0 = t[1] - t[0];
    const h1 = t[2] - t[1];
    const s = (2 * ((f[2] - f[1]) / h1 - (f[1] - f[0]) / h0)) / (h0 + h1);
    out[0] = s;
    out[1] = s;
    out[2] = s;
    return;
  }
  // Interior equations h_{i−1} M_{i−1} + 2(h_{i−1} + h_i) M_i + h_i M_{i+1} = 6(δ_i − δ_{i−1}),
  // i = 1 … m−2; the not-a-knot conditions (M continuous in slope at t[1] and t[m−2]) eliminate
  // M_0 and M_{m−1}:  M_0 = M_1 + (h_0/h_1)(M_1 − M_2),  M_{m−1} = M_{m−2} + (h_{m−2}/h_{m−3})(M_{m−2} − M_{m−3}).
  const n = m - 2; // unknowns M_1 … M_{m−2}, stored at index i − 1
  for (let i = 1; i <= m - 2; i++) {
    const h0 = t[i] - t[i - 1];
    const h1 = t[i + 1] - t[i];
    a[i - 1] = h0;
    b[i - 1] = 2 * (h0 + h1);
    c[i - 1] = h1;
    d[i - 1] = 6 * ((f[i + 1] - f[i]) / h1 - (f[i] - f[i - 1]) / h0);
  }
  {
    const h0 = t[1] - t[0];
    const h1 = t[2] - t[1];
    // Row 1: h0·M0 + 2(h0+h1)M1 + h1·M2 with M0 = (1 + h0/h1)M1 − (h0/h1)M2.
    b[0] += h0 * (1 + h0 / h1);
    c[0] -= (h0 * h0) / h1;
  }
  {
    const hl = t[m - 1] - t[m - 2];
    const hp = t[m - 2] - t[m - 3];
    // Row m−2: h_{m−3}M_{m−3} + 2(h_{m−3}+h_{m−2})M_{m−2} + h_{m−2}M_{m−1}, M_{m−1} = (1 + hl/hp)M_{m−2} − (hl/hp)M_{m−3}.
    b[n - 1] += hl * (1 + hl / hp);
    a[n - 1] -= (hl * hl) / hp;
  }
  if (n === 1) {
    out[1] = d[0] / b[0];
  } else {
    // Thomas algorithm (the system is diagonally dominant for the chord-length parameter).
    for (let i = 1; i < n; i++) {
      const w = a[i] / b[i - 1];
      b[i] -= w * c[i - 1];
      d[i] -= w * d[i - 1];
    }
    out[n] = d[n - 1] / b[n - 1];
    for (let i = n - 2; i >= 0; i--) out[i + 1] = (d[i] - c[i] * out[i + 2]) / b[i];
  }
  const h0 = t[1] - t[0];
  const h1 = t[2] - t[1];
  out[0] = out[1] + (h0 / h1) * (out[1] - out[2]);
  const hl = t[m - 1] - t[m - 2];
  const hp = t[m - 2] - t[m - 3];
  out[m - 1] = out[m - 2] + (hl / hp) * (out[m - 2] - out[m - 3]);
}

/** Scratch for splineIntegrals, sized for up to `capacity` nodes. */
export class SplineScratch {
  t: Float64Array;
  mx: Float64Array;
  my: Float64Array;
  mc: Float64Array;
  a: Float64Array;
  b: Float64Array;
  c: Float64Array;
  d: Float64Array;
  x: Float64Array;
  y: Float64Array;
  p: Float64Array;
  tau: Float64Array;
  constructor(public capacity: number) {
    this.tau = new Float64Array(capacity);
    this.x = new Float64Array(capacity);
    this.y = new Float64Array(capacity);
    this.p = new Float64Array(capacity);
    this.t = new Float64Array(capacity);
    this.mx = new Float64Array(capacity);
    this.my = new Float64Array(capacity);
    this.mc = new Float64Array(capacity);
    this.a = new Float64Array(capacity);
    this.b = new Float64Array(capacity);
    this.c = new Float64Array(capacity);
    this.d = new Float64Array(capacity);
  }
}

let shared = new SplineScratch(256);

/** Variants of the spline rule, for the measurements of scripts/contour-sweep.ts: `speed` — spline
 *  the signed surface speed (true) or Cp itself; `param` — the Cp (or speed) spline's parameter,
 *  centripetal (increments √Δs) or chord length. */
export interface SplineOptions {
  speed: boolean;
  param: 'centripetal' | 'chord' | 'glauert';
  metric?: boolean;
}
export const SPLINE_DEFAULTS: SplineOptions = { speed: true, param: 'glauert', metric: true };

/** The three contour integrals ∮ Cp dx, ∮ Cp dy, ∮ Cp (x dx + y dy) over the closed contour through
 *  nodes (x[i], y[i], cp[i]), i < m, the last node equal to the first (the trailing edge), by the
 *  splines of the module comment. Nodes that coincide with the one before (zero chord length) are
 *  skipped: two taps at one point carry no length of contour between them. */
export function splineIntegrals(
  x: ArrayLike<number>, y: ArrayLike<number>, cp: ArrayLike<number>, m: number,
  opts: SplineOptions = SPLINE_DEFAULTS, nUpper = -1,
): { sCpDx: number; sCpDy: number; sMom: number } {
  if (shared.capacity < m) shared = new SplineScratch(Math.max(m, 2 * shared.capacity));
  const S = shared;
  const { t } = S;
  // Chord-length parameter; coincident nodes collapse (keep the first of each).
  const X = S.x;
  const Y = S.y;
  const P = S.p;
  let k = 0;
  const glauert = opts.param === 'glauert' && nUpper >= 0;
  for (let i = 0; i < m; i++) {
    if (glauert) {
      // Glauert's angle: x/c = (1 − cos φ)/2, φ from −π (trailing edge, upper) through 0 (leading
      // edge) to π (trailing edge, lower); nodes 1 … nUpper are the upper surface.
      const side = i === 0 || (i >= 1 && i <= nUpper) ? -1 : 1;
      const phi = i === 0 ? -Math.PI : i === m - 1 ? Math.PI : side * Math.acos(Math.min(1, Math.max(-1, 1 - 2 * x[i])));
      if (k > 0 && !(phi - t[k - 1] > 1e-12)) continue;
      t[k] = phi;
      S.tau[k] = phi;
    } else if (k > 0) {
      const ds = Math.hypot(x[i] - X[k - 1], y[i] - Y[k - 1]);
      if (!(ds > 1e-12)) continue;
      t[k] = t[k - 1] + ds;
      S.tau[k] = S.tau[k - 1] + (opts.param === 'chord' ? ds : Math.sqrt(ds));
    } else {
      t[0] = 0;
      S.tau[0] = 0;
    }
    X[k] = x[i];
    Y[k] = y[i];
    P[k] = cp[i];
    k++;
  }
  if (k < 2) return { sCpDx: 0, sCpDy: 0, sMom: 0 };
  // Stagnation region: the spline interpolates the signed surface speed u = ±√(C0 − Cp) (C0 = the
  // larger of 1 and the row's highest Cp), which passes through zero at the stagnation point
  // almost linearly, where Cp itself has a sharp maximum; Cp = C0 − u² between the nodes.
  let j = 0;
  for (let i = 1; i < k; i++) if (P[i] > P[j]) j = i;
  const speed = opts.speed && j > 0 && j < k - 1;
  let c0 = 1;
  if (speed) {
    c0 = Math.max(1, P[j]);
    for (let i = 0; i < k; i++) P[i] = (i < j ? -1 : 1) * Math.sqrt(Math.max(0, c0 - P[i]));
    // Which side of the stagnation point node j is on: the sign that leaves the speeds of nodes
    // j − 2 … j + 2 the smoother (smaller squared second divided differences).
    const rough = (): number => {
      let r = 0;
      for (let i = Math.max(1, j - 1); i <= Math.min(k - 2, j + 1); i++) {
        const T = S.tau;
        const d2 = (P[i + 1] - P[i]) / (T[i + 1] - T[i]) - (P[i] - P[i - 1]) / (T[i] - T[i - 1]);
        r += (d2 / (T[i + 1] - T[i - 1])) ** 2;
      }
      return r;
    };
    const plus = rough();
    P[j] = -P[j];
    if (rough() >= plus) P[j] = -P[j];
  }
  splineSecondDerivatives(t, X, k, S.mx, S.a, S.b, S.c, S.d);
  splineSecondDerivatives(t, Y, k, S.my, S.a, S.b, S.c, S.d);
  const tau = S.tau;
  // 'metric': the spline carries the signed speed times the contour's stretch ds/dt (smooth in a
  // parameter that is regular at the leading edge, as the circle speed is in the conformal map).
  const metric = speed && opts.metric === true;
  const stretch = (i: number): number => {
    const last = i === k - 1;
    const l = last ? i - 1 : i;
    const h = t[l + 1] - t[l];
    const xd = (X[l + 1] - X[l]) / h + (last ? (h / 6) * (S.mx[l] + 2 * S.mx[l + 1]) : -(h / 6) * (2 * S.mx[l] + S.mx[l + 1]));
    const yd = (Y[l + 1] - Y[l]) / h + (last ? (h / 6) * (S.my[l] + 2 * S.my[l + 1]) : -(h / 6) * (2 * S.my[l] + S.my[l + 1]));
    return Math.hypot(xd, yd);
  };
  if (metric) for (let i = 0; i < k; i++) P[i] *= stretch(i);
  splineSecondDerivatives(tau, P, k, S.mc, S.a, S.b, S.c, S.d);
  const { mx, my, mc } = S;
  let sCpDx = 0;
  let sCpDy = 0;
  let sMom = 0;
  for (let i = 0; i + 1 < k; i++) {
    const h = t[i + 1] - t[i];
    const h2 = (h * h) / 6;
    const hc = tau[i + 1] - tau[i];
    const hc2 = (hc * hc) / 6;
    let ix = 0;
    let iy = 0;
    let im = 0;
    for (let g = 0; g < 6; g++) {
      // Local u ∈ [0, 1]; spline value f = (1−u) f_i + u f_{i+1} − h²/6 · u(1−u)[(2−u) M_i + (1+u) M_{i+1}],
      // derivative f′ = (f_{i+1} − f_i)/h − h/6 · [(2 − 6u + 3u²) M_i + (1 − 3u²) M_{i+1}].
      const u = 0.5 * (GL_X[g] + 1);
      const v = 1 - u;
      const cub0 = u * v * (2 - u);
      const cub1 = u * v * (1 + u);
      const d0 = 2 - 6 * u + 3 * u * u;
      const d1 = 1 - 3 * u * u;
      const xv = v * X[i] + u * X[i + 1] - h2 * (cub0 * mx[i] + cub1 * mx[i + 1]);
      const yv = v * Y[i] + u * Y[i + 1] - h2 * (cub0 * my[i] + cub1 * my[i + 1]);
      const sv = v * P[i] + u * P[i + 1] - hc2 * (cub0 * mc[i] + cub1 * mc[i + 1]);
      const xd = (X[i + 1] - X[i]) / h - (h / 6) * (d0 * mx[i] + d1 * mx[i + 1]);
      const yd = (Y[i + 1] - Y[i]) / h - (h / 6) * (d0 * my[i] + d1 * my[i + 1]);
      const sp = metric ? sv / Math.hypot(xd, yd) : sv;
      const cv = speed ? c0 - sp * sp : sv;
      const w = GL_W[g];
      ix += w * cv * xd;
      iy += w * cv * yd;
      im += w * cv * (xv * xd + yv * yd);
    }
    // dt = (h/2) du on [−1, 1].
    sCpDx += 0.5 * h * ix;
    sCpDy += 0.5 * h * iy;
    sMom += 0.5 * h * im;
  }
  return { sCpDx, sCpDy, sMom };
}

