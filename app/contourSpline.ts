// Higher-order contour integration of one chordwise row (REDUCTION.md §3), the 'spline' contour rule
// (a setting; rebuilt in core 0.7.0): the same three contour integrals as the linear rule,
//   ∮ Cp dx,  ∮ Cp dy,  ∮ Cp (x dx + y dy),
// over the closed contour trailing-edge closure point → taps in contour order → trailing edge, with
// the contour and Cp interpolated in a square-root plane that straightens the leading edge:
// - The nose: a parabola x = x0 + (y − y0)²/(2r) through the tap of least x and its two contour
//   neighbours; its focus z_f = (x0 + r/2, y0) lies inside the nose (r clamped to 0.001…0.1 c).
// - The map ζ = √(z − z_f), the branch cut along the chord towards the trailing edge, takes the
//   parabola to a straight line and the whole contour to an open arc from the upper trailing edge
//   to the lower one; |dz/dζ| = 2|ζ| is never zero on the contour. Flow round a parabola is
//   uniform flow in the ζ-plane (the leading-edge solution behind Riegels' factor and Lighthill's
//   leading-edge rule: M. J. Lighthill, J. Fluid Mech. 16 (1963) 161–171 (memory); Van Dyke,
//   Perturbation Methods in Fluid Mechanics (1975) §4.8 (memory)), so there the surface speed
//   q = |dW/dζ|/|dz/dζ| has a ζ-plane speed G = q·2|ζ| that is linear along the line, and the
//   thin-airfoil 1/√x suction term is bounded. The suction peak and the stagnation point, sharp in
//   arc length, are smooth in ζ.
// - Splines: Re ζ, Im ζ and the signed ζ-plane speed G = ±2|ζ|√(C0 − Cp) (C0 = the larger of 1 and
//   the row's highest Cp; G changes sign at the stagnation point, on the side that leaves the
//   nodes around the row maximum the smoother) as not-a-knot cubic splines of the chord length
//   of the ζ-polygon. Between the nodes z = z_f + ζ², dz = 2ζ dζ and Cp = C0 − G²/(4|ζ|²); the
//   interpolated contour passes through every tap.
// - Quadrature: 6-point Gauss–Legendre on every interval (Abramowitz & Stegun table 25.4).
// The spline is open, the trailing edge at both ends, not periodic: the trailing edge is a corner
// of the contour and of Cp's slope between the surfaces. If the fitted focus is not inside the
// contour (the ζ-arc would not wind once round it), the midpoint of the nose tap's two neighbours
// is tried, then the mean of all nodes.
// Cubic splines with not-a-knot end conditions: de Boor, A Practical Guide to Splines (1978),
// ch. IV (memory). The choice of the map's focus from three taps, the sign rule at the stagnation
// point and the fallbacks: our own (common practice, no source).
// Measured on exact Joukowski sections (test/contour-rule.test.ts, docs/TAP-JUDGEMENT.md §3): worst
// |Δcl| α −8…12° within 0.003 at 24 taps and 0.0006 at 48 on 9–15 % thick sections with 0–4 %
// camber, better than the linear rule at 16, 24 and 48 taps in cl and cm_c/4, not worse at 96.
// It is not the default: Cp enters through √(C0 − Cp), so the result is not linear in the taps'
// Cp (a common 1 % gain is not exactly 1 % of cl), and with it as the default the uncertainty
// coverage of test/uncertainty-coverage.test.ts fell to 0.83–0.88 for cl (docs/TAP-JUDGEMENT.md §3).

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
  rho: Float64Array;
  nx: Float64Array;
  ny: Float64Array;
  constructor(public capacity: number) {
    this.nx = new Float64Array(capacity);
    this.ny = new Float64Array(capacity);
    this.rho = new Float64Array(capacity);
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

/** The nose parabola x = x0 + (y − y0)²/(2r) of a contour and the focus (xf, yf) of the map. */
export interface NoseFit {
  x0: number;
  y0: number;
  r: number;
  xf: number;
  yf: number;
  /** False when the three nose nodes give no parabola open towards +x (r is then 0.01, assumed). */
  fitted: boolean;
}

/** Nose parabola through the node of least x (not an end node) and its two contour neighbours. */
export function fitNose(x: ArrayLike<number>, y: ArrayLike<number>, k: number): NoseFit {
  let j = 0;
  for (let i = 1; i < k; i++) if (x[i] < x[j]) j = i;
  const fallback = (): NoseFit => ({ x0: x[j], y0: y[j], r: 0.01, xf: x[j] + 0.005, yf: y[j], fitted: false });
  if (j === 0 || j === k - 1) return fallback();
  // x = A + B y + C y² through three points, by divided differences in y.
  const ya = y[j - 1];
  const yb = y[j];
  const yc = y[j + 1];
  const d1 = (x[j] - x[j - 1]) / (yb - ya);
  const d2 = (x[j + 1] - x[j]) / (yc - yb);
  const C = (d2 - d1) / (yc - ya);
  if (!(C > 0) || !Number.isFinite(C)) return fallback();
  const B = d1 - C * (ya + yb);
  const y0 = -B / (2 * C);
  const x0 = x[j] + B * (y0 - yb) + C * (y0 * y0 - yb * yb);
  const r = Math.min(0.1, Math.max(0.001, 1 / (2 * C)));
  if (!Number.isFinite(x0) || !Number.isFinite(y0)) return fallback();
  return { x0, y0, r, xf: x0 + r / 2, yf: y0, fitted: true };
}

/** Maps the k nodes to ζ = √(z − z_f) into S.x (Re ζ), S.y (Im ζ), S.rho (|z − z_f|), the argument
 *  of z − z_f unwrapped along the contour from (−π, π] at the first node; false when the contour
 *  does not wind once round z_f (then the focus is not inside it). */
function mapNodes(x: ArrayLike<number>, y: ArrayLike<number>, k: number, fx: number, fy: number, S: SplineScratch): boolean {
  let prev = 0;
  let first = 0;
  for (let i = 0; i < k; i++) {
    const dx = x[i] - fx;
    const dy = y[i] - fy;
    const rr = Math.hypot(dx, dy);
    if (!(rr > 1e-12)) return false;
    let ph = Math.atan2(dy, dx);
    if (i === 0) first = ph;
    else {
      while (ph < prev - Math.PI) ph += 2 * Math.PI;
      while (ph > prev + Math.PI) ph -= 2 * Math.PI;
    }
    prev = ph;
    const sr = Math.sqrt(rr);
    S.x[i] = sr * Math.cos(ph / 2);
    S.y[i] = sr * Math.sin(ph / 2);
    S.rho[i] = rr;
  }
  // Counter-clockwise once round: the end node (the trailing edge again) at first + 2π.
  return Math.abs(prev - first - 2 * Math.PI) < 1e-6;
}

/** Taps closer to the trailing-edge closure point than this fraction of the mean node spacing are
 *  left out of the splines. Such a tap and the closure point (extrapolated from it and its
 *  neighbour) make an interval of almost no length in the spline parameter, and the not-a-knot
 *  cubics through it swing far between the neighbouring nodes. Measured on the exact sections of
 *  test/uncertainty-coverage.test.ts (random tap phase; docs/UNCERTAINTY.md §4): before, the
 *  spline's cl error exceeded 5× the linear rule's (and 0.001) in 12 % of the rows at 24 and 48
 *  taps and 17 % at 96, up to 0.06 in cl; with 0.05, in 6 % at 24 taps and none at 48 and 96. The
 *  value 0.05 is our choice (0.2 gave the same at 24 taps and a larger median error at 48 and 96):
 *  common practice, no source. */
export const TE_MERGE = 0.05;

/** The three contour integrals ∮ Cp dx, ∮ Cp dy, ∮ Cp (x dx + y dy) over the closed contour through
 *  nodes (x[i], y[i], cp[i]), i < m, counter-clockwise, the last node equal to the first (the
 *  trailing edge), by the splines of the module comment. Nodes that coincide with the one before
 *  are skipped: two taps at one point carry no length of contour between them; so are taps next to
 *  the trailing edge (TE_MERGE). */
export function splineIntegrals(
  x: ArrayLike<number>, y: ArrayLike<number>, cp: ArrayLike<number>, m: number,
): { sCpDx: number; sCpDy: number; sMom: number } {
  if (shared.capacity < m) shared = new SplineScratch(Math.max(m, 2 * shared.capacity));
  const S = shared;
  const { t } = S;
  // Distinct nodes (keep the first of each run of coincident ones).
  const NX = S.nx;
  const NY = S.ny;
  const P = S.p;
  let k = 0;
  // A tap within TE_MERGE of the mean node spacing of the trailing-edge closure point (the first
  // and last node) is left out: see TE_MERGE.
  let perim = 0;
  for (let i = 1; i < m; i++) perim += Math.hypot(x[i] - x[i - 1], y[i] - y[i - 1]);
  const tol = TE_MERGE * (perim / Math.max(1, m - 1));
  for (let i = 0; i < m; i++) {
    if (k > 0 && !(Math.hypot(x[i] - NX[k - 1], y[i] - NY[k - 1]) > 1e-12)) continue;
    if (i > 0 && i < m - 1 && (Math.hypot(x[i] - x[0], y[i] - y[0]) < tol || Math.hypot(x[i] - x[m - 1], y[i] - y[m - 1]) < tol)) continue;
    NX[k] = x[i];
    NY[k] = y[i];
    P[k] = cp[i];
    k++;
  }
  if (k < 3) return { sCpDx: 0, sCpDy: 0, sMom: 0 };
  // The focus: the nose parabola's, else the midpoint of the nose node's neighbours, else the mean.
  const nose = fitNose(NX, NY, k);
  let fx = nose.xf;
  let fy = nose.yf;
  if (!mapNodes(NX, NY, k, fx, fy, S)) {
    let j = 0;
    for (let i = 1; i < k; i++) if (NX[i] < NX[j]) j = i;
    const a = Math.max(0, j - 1);
    const b = Math.min(k - 1, j + 1);
    fx = 0.5 * (NX[a] + NX[b]);
    fy = 0.5 * (NY[a] + NY[b]);
    if (!mapNodes(NX, NY, k, fx, fy, S)) {
      fx = 0;
      fy = 0;
      for (let i = 0; i < k - 1; i++) {
        fx += NX[i] / (k - 1);
        fy += NY[i] / (k - 1);
      }
      if (!mapNodes(NX, NY, k, fx, fy, S)) {
        throw new Error('splineIntegrals: the contour does not wind once round any point tried inside the nose');
      }
    }
  }
  const X = S.x;
  const Y = S.y;
  t[0] = 0;
  for (let i = 1; i < k; i++) t[i] = t[i - 1] + Math.hypot(X[i] - X[i - 1], Y[i] - Y[i - 1]);
  // Signed ζ-plane speed; the sign flips at the row maximum (the stagnation point).
  let j = 0;
  for (let i = 1; i < k; i++) if (P[i] > P[j]) j = i;
  const c0 = Math.max(1, P[j]);
  const inner = j > 0 && j < k - 1;
  for (let i = 0; i < k; i++) {
    P[i] = (inner && i < j ? -2 : 2) * Math.sqrt(S.rho[i]) * Math.sqrt(Math.max(0, c0 - P[i]));
  }
  if (inner) {
    // Which side of the stagnation point node j is on: the sign that leaves the speeds of nodes
    // j − 2 … j + 2 the smoother (smaller squared second divided differences).
    const rough = (): number => {
      let r = 0;
      for (let i = Math.max(1, j - 1); i <= Math.min(k - 2, j + 1); i++) {
        const d2 = (P[i + 1] - P[i]) / (t[i + 1] - t[i]) - (P[i] - P[i - 1]) / (t[i] - t[i - 1]);
        r += (d2 / (t[i + 1] - t[i - 1])) ** 2;
      }
      return r;
    };
    const plus = rough();
    P[j] = -P[j];
    if (rough() >= plus) P[j] = -P[j];
  }
  splineSecondDerivatives(t, X, k, S.mx, S.a, S.b, S.c, S.d);
  splineSecondDerivatives(t, Y, k, S.my, S.a, S.b, S.c, S.d);
  splineSecondDerivatives(t, P, k, S.mc, S.a, S.b, S.c, S.d);
  const { mx, my, mc } = S;
  let sCpDx = 0;
  let sCpDy = 0;
  let sMom = 0;
  for (let i = 0; i + 1 < k; i++) {
    const h = t[i + 1] - t[i];
    const h2 = (h * h) / 6;
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
      const zr = v * X[i] + u * X[i + 1] - h2 * (cub0 * mx[i] + cub1 * mx[i + 1]);
      const zi = v * Y[i] + u * Y[i + 1] - h2 * (cub0 * my[i] + cub1 * my[i + 1]);
      const gv = v * P[i] + u * P[i + 1] - h2 * (cub0 * mc[i] + cub1 * mc[i + 1]);
      const zrd = (X[i + 1] - X[i]) / h - (h / 6) * (d0 * mx[i] + d1 * mx[i + 1]);
      const zid = (Y[i + 1] - Y[i]) / h - (h / 6) * (d0 * my[i] + d1 * my[i + 1]);
      // z = z_f + ζ², dz/dt = 2ζ dζ/dt, |dz/dζ|² = 4|ζ|².
      const xv = fx + zr * zr - zi * zi;
      const yv = fy + 2 * zr * zi;
      const xd = 2 * (zr * zrd - zi * zid);
      const yd = 2 * (zr * zid + zi * zrd);
      const cv = c0 - (gv * gv) / (4 * (zr * zr + zi * zi));
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
