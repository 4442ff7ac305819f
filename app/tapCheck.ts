// Tap judgement on one chordwise row: which taps to trust (REDUCTION.md §3, "Bad taps" and
// "Stagnation"). Two tests, documented with their settings in docs/TAP-JUDGEMENT.md:
//
// 1. Leave-one-out prediction (common practice, no source; the interpolation error estimate is the
//    usual one of numerical analysis, e.g. Press et al., Numerical Recipes, 3rd ed., §3.2 (memory)).
//    Each tap is predicted from its neighbours along the contour arc length (the polygon through the
//    row's taps, upper trailing edge → leading edge → lower trailing edge), never from itself:
//    - inside the row, the cubic through the two nearest neighbours on each side (where one side has
//      only one neighbour, the other side gives three);
//    - at either end of the row (the taps nearest the trailing edge), one-sided: the quadratic
//      through the three nearest neighbours.
//    The prediction's own uncertainty has three parts: the neighbours' channel uncertainties
//    propagated through the interpolation weights (Σ wᵢ² uᵢ²); the interpolation error, estimated as
//    the largest difference between the prediction and the lower-order predictions that leave out
//    its outermost node on either side (large where Cp curves sharply or the taps are sparse: the
//    suction peak and the stagnation point of a sparse leading edge); and the tap-position
//    uncertainty times the local slope dCp/ds; and a cross-validation term, the larger residual of
//    the nearest neighbour on either side predicted by the same rule without itself and without
//    the tap judged (where the neighbours cannot be predicted from theirs, as at a sparse leading
//    edge, neither can the tap; a bad tap does not enter these predictions, so it cannot hide
//    behind them). A tap is suspect when
//        |Cp − prediction| > k · √(u_tap² + u_prediction²),
//    k = Settings.tapCheckK. The worst suspect is dropped and the row judged again (a bad tap drags
//    its neighbours' predictions, and inflates their uncertainty, but never as far as itself), at
//    most a quarter of the row.
// 2. Stagnation and the references. No tap can read more than the isentropic stagnation value
//    Cp_stag = (2/(γM²))[(1 + (γ−1)M²/2)^{γ/(γ−1)} − 1] (the isentropic total-to-static
//    pressure ratio of NACA Report 1135 with Cp's definition, memory; ≈ 1 + M²/4 + M⁴/40). A row's highest reading above Cp_stag by more than
//    Settings.stagnationK times its uncertainty (channel and references) points at the references,
//    not at the tap: q_u low by about 1 − Cp_stag/Cp, or the static reference p∞ reading
//    (Cp − Cp_stag)·q low. The tap is kept; the run gets a reference flag. Only a tap that stands out
//    from its own neighbours (test 1) is a tap problem.

import { spdInverse } from './quadrature';

/** γ of air (REDUCTION.md §1). */
const GAMMA = 1.4;

/** Isentropic stagnation pressure coefficient at free-stream Mach number M (NACA Report 1135,
 *  memory): (2/(γM²))[(1 + (γ−1)M²/2)^{γ/(γ−1)} − 1]; 1 at M = 0 (the incompressible limit). */
export function cpStagnation(M: number, gamma = GAMMA): number {
  if (!Number.isFinite(M) || M < 0) throw new Error(`cpStagnation: Mach number must be finite and ≥ 0 (got ${M})`);
  if (M < 1e-6) return 1 + (M * M) / 4;
  const m2 = M * M;
  return (2 / (gamma * m2)) * ((1 + ((gamma - 1) / 2) * m2) ** (gamma / (gamma - 1)) - 1);
}

/** A tap as the judgement needs it: position on the row's contour, Cp and the standard
 *  uncertainty of its own Cp (its channel; the references are common to the row). */
export interface JudgedTap {
  id: string;
  x: number;
  y: number;
  cp: number;
  u: number;
}

/** The leave-one-out verdict on one tap. */
export interface TapVerdict {
  id: string;
  cp: number;
  /** Cp predicted from the neighbours. */
  predicted: number;
  /** cp − predicted. */
  residual: number;
  /** Combined standard uncertainty √(u_tap² + u_prediction²). */
  u: number;
  /** |residual| / u. */
  score: number;
}

export interface OutlierOptions {
  /** Coverage factor k: suspect when |residual| > k·u. */
  k: number;
  /** Standard uncertainty of a tap's position along the contour (in chords). */
  positionU?: number;
  /** At most this fraction of the row is dropped (default ¼). */
  maxFraction?: number;
  /** Taps the engineer kept against the test (Settings.keptTaps): judged and used to predict their
   *  neighbours as any tap, never dropped. */
  keep?: ReadonlySet<string>;
  /** The inviscid shape at the chain's taps (app/tapShape.ts, in chain order) and the run's α:
   *  the prediction is then also made on the difference from the fitted shape (withShape). */
  shape?: { alphaDeg: number; cp(alphaDeg: number): ArrayLike<number>; u(alphaDeg: number): ArrayLike<number> };
}

/** Fewest taps a row needs to be judged (the test is built and checked for 12–200 taps a row). */
export const TAP_CHECK_MIN_ROW = 12;

function lagrange(s: ArrayLike<number>, f: ArrayLike<number>, idx: readonly number[], at: number, w?: number[]): number {
  let sum = 0;
  for (let a = 0; a < idx.length; a++) {
    let l = 1;
    for (let b = 0; b < idx.length; b++) if (b !== a) l *= (at - s[idx[b]]) / (s[idx[a]] - s[idx[b]]);
    if (w) w[a] = l;
    sum += l * f[idx[a]];
  }
  return sum;
}

/** Arc length along the polygon through the chain. */
function arcLength(chain: readonly JudgedTap[]): Float64Array {
  const s = new Float64Array(chain.length);
  for (let i = 1; i < chain.length; i++) {
    s[i] = s[i - 1] + Math.hypot(chain[i].x - chain[i - 1].x, chain[i].y - chain[i - 1].y);
  }
  return s;
}

/** The verdict on chain[k] from its neighbours (see the module comment); null when the tap has too
 *  few distinct neighbours to be predicted. */
export function predictTap(
  chain: readonly JudgedTap[], k: number, positionU = 0, s: ArrayLike<number> = arcLength(chain),
  cp: ArrayLike<number> = chain.map((t) => t.cp), uOf: ArrayLike<number> = chain.map((t) => t.u),
): TapVerdict | null {
  return predictWithCv(chain, k, positionU, s, cp, uOf, 0)?.verdict ?? null;
}

/** predictTap's verdict from the given side(s), with its cross-validation term on its own. */
function predictWithCv(
  chain: readonly JudgedTap[], k: number, positionU: number, s: ArrayLike<number>, cp: ArrayLike<number>, uOf: ArrayLike<number>, side: Side,
): { verdict: TapVerdict; cv: number } | null {
  const own = predictCore(chain, k, positionU, s, -1, cp, uOf, side);
  if (!own) return null;
  // Cross-validation: how well the nearest neighbour on each side is predicted by the same rule
  // without itself and without tap k. Where the neighbours cannot be predicted (a sparse leading
  // edge), tap k cannot be either; a bad tap k does not enter these predictions.
  let cv = 0;
  for (const j of [own.left, own.right]) {
    if (j < 0) continue;
    const vj = predictCore(chain, j, positionU, s, k, cp, uOf, side);
    if (vj) cv = Math.max(cv, Math.abs(vj.residual));
  }
  const u = Math.sqrt(own.u * own.u + cv * cv);
  return { verdict: { id: own.id, cp: own.cp, predicted: own.predicted, residual: own.residual, u, score: u > 0 ? Math.abs(own.residual) / u : Infinity }, cv };
}

/** Which neighbours a prediction uses: both sides (0), or only those before (−1) or after (+1)
 *  the tap in contour order (the one-sided rule of the row's ends). */
type Side = -1 | 0 | 1;

function predictCore(
  chain: readonly JudgedTap[], k: number, positionU: number, s: ArrayLike<number>, skip: number, cp: ArrayLike<number>, uOf: ArrayLike<number>,
  side: Side = 0,
): (TapVerdict & { left: number; right: number }) | null {
  const n = chain.length;
  const distinct = (i: number) => i !== skip && Math.abs(s[i] - s[k]) > 1e-9;
  const left: number[] = [];
  const right: number[] = [];
  if (side <= 0) for (let i = k - 1; i >= 0 && left.length < 3; i--) if (distinct(i)) left.push(i);
  if (side >= 0) for (let i = k + 1; i < n && right.length < 3; i++) if (distinct(i)) right.push(i);
  let nodes: number[];
  let alternatives: number[][];
  if (!left.length || !right.length) {
    const side = left.length ? left : right; // nearest first
    if (side.length < 3) return null;
    nodes = side.slice(0, 3);
    alternatives = [side.slice(0, 2)];
  } else {
    let nl = Math.min(2, left.length);
    let nr = Math.min(2, right.length);
    if (nl + nr < 4) {
      if (nl < 2) nr = Math.min(4 - nl, right.length);
      else nl = Math.min(4 - nr, left.length);
    }
    if (nl + nr < 3) return null;
    const l = left.slice(0, nl);
    const r = right.slice(0, nr);
    nodes = [...l, ...r];
    // Lower-order predictions without the outermost node on either side.
    alternatives = [[...l.slice(0, -1), ...r], [...l, ...r.slice(0, -1)]].filter((set) => set.length >= 2);
  }
  // Nodes of equal arc length (taps at one point) would make the polynomial singular.
  for (let a = 0; a < nodes.length; a++) {
    for (let b = a + 1; b < nodes.length; b++) if (Math.abs(s[nodes[a]] - s[nodes[b]]) < 1e-9) return null;
  }
  const w: number[] = [];
  const predicted = lagrange(s, cp, nodes, s[k], w);
  let noise = 0;
  for (let a = 0; a < nodes.length; a++) noise += w[a] * w[a] * uOf[nodes[a]] ** 2;
  let model = 0;
  for (const set of alternatives) model = Math.max(model, Math.abs(lagrange(s, cp, set, s[k]) - predicted));
  let pos = 0;
  if (positionU > 0) {
    const h = 1e-4 * Math.max(1e-6, Math.abs(s[nodes[0]] - s[k]));
    const slope = (lagrange(s, cp, nodes, s[k] + h) - lagrange(s, cp, nodes, s[k] - h)) / (2 * h);
    pos = slope * positionU;
  }
  const u = Math.sqrt(uOf[k] ** 2 + noise + model * model + pos * pos);
  const residual = cp[k] - predicted;
  return {
    id: chain[k].id, cp: cp[k], predicted, residual, u, score: u > 0 ? Math.abs(residual) / u : Infinity,
    left: left.length ? left[0] : -1, right: right.length ? right[0] : -1,
  };
}

/** Every tap's verdict on a chain in contour order (null where a tap cannot be predicted). */
export function judgeChain(chain: readonly JudgedTap[], positionU = 0): (TapVerdict | null)[] {
  const s = arcLength(chain);
  const cp = chain.map((t) => t.cp);
  const u = chain.map((t) => t.u);
  return chain.map((_, k) => predictTap(chain, k, positionU, s, cp, u));
}

/** A row's highest Cp at or above this is taken for a stagnation-region reading (ours, no
 *  source: below the 1 a tap at the stagnation point reads, and below what the tap nearest the
 *  stagnation point of a sparse row reads: 0.64–0.67 on exact 16-tap rows, where 0.8 dropped it;
 *  docs/TAP-JUDGEMENT.md §1). */
export const STAGNATION_REGION_CP = 0.5;
/** … and at most this (ours, no source: a q reading 20 % low; a higher reading is a tap fault,
 *  not a stagnation reading) … */
export const STAGNATION_REGION_MAX = 1.25;
/** … at a tap within this fraction of the row's chordwise extent from its foremost tap (the
 *  stagnation point of an attached section stays within a few per cent of the chord of the
 *  leading edge; ours, no source). */
export const STAGNATION_REGION_X = 0.1;

/** The outliers of one row, in the order they were found (worst first), each with its verdict at
 *  the moment it was dropped. `chain` is the row's judged taps in contour order. */
export function findRowOutliers(chain: readonly JudgedTap[], o: OutlierOptions): TapVerdict[] {
  if (chain.length < TAP_CHECK_MIN_ROW) return [];
  const active = [...chain];
  const at = chain.map((_, i) => i); // index in `chain` of each active tap
  const found: TapVerdict[] = [];
  const most = Math.floor(chain.length * (o.maxFraction ?? 0.25));
  while (active.length >= TAP_CHECK_MIN_ROW - 2 && found.length < most) {
    const raw = judgeChain(active, o.positionU ?? 0);
    const verdicts = o.shape ? withShape(active, at, raw, o.shape, o.positionU ?? 0) : raw;
    // The row's highest reading, when it is a stagnation-region value, is beyond what a
    // polynomial through two neighbours on each side can predict (the peak is narrower than the
    // tap spacing): judged by its neighbours alone it is never dropped; a reading above
    // stagnation is the references' matter (referenceCheck). The fitted shape, which resolves the
    // peak, may still find it.
    let peak = 0;
    let xMin = Infinity;
    let xMax = -Infinity;
    for (let k = 0; k < active.length; k++) {
      if (active[k].cp > active[peak].cp) peak = k;
      xMin = Math.min(xMin, active[k].x);
      xMax = Math.max(xMax, active[k].x);
    }
    const top = active[peak];
    const peakShielded = top.cp >= STAGNATION_REGION_CP && top.cp <= STAGNATION_REGION_MAX
      && top.x - xMin <= STAGNATION_REGION_X * (xMax - xMin);
    // The same for the suction peak: the row's lowest reading, when it is at the nose, is a peak
    // narrower than a sparse row's spacing (on exact 12-tap rows the neighbours' cubic missed it
    // by 0.8–16 Cp and dropped it).
    let low = 0;
    for (let k = 0; k < active.length; k++) if (active[k].cp < active[low].cp) low = k;
    const lowShielded = active[low].x - xMin <= STAGNATION_REGION_X * (xMax - xMin);
    let worst = -1;
    for (let k = 0; k < verdicts.length; k++) {
      const v = verdicts[k];
      if (k === peak && peakShielded && v === raw[k]) continue;
      if (k === low && lowShielded && v === raw[k]) continue;
      if (v && !o.keep?.has(v.id) && v.score > o.k && (worst < 0 || v.score > verdicts[worst]!.score)) worst = k;
    }
    if (worst < 0) break;
    found.push(verdicts[worst]!);
    active.splice(worst, 1);
    at.splice(worst, 1);
  }
  return found;
}

/** Effective angles tried when the inviscid shape is fitted to a row: the run's α ± this, … */
export const SHAPE_ALPHA_SPAN = 6;
/** … in steps of this (degrees). */
export const SHAPE_ALPHA_STEP = 0.25;

/** A tap whose leverage on the fitted shape (the hat-matrix diagonal of the fit's linearised
 *  parameters a, b, α_eff) exceeds this is judged with the fit that includes it: the taps at the
 *  leading edge fix α_eff, and the others alone predict them poorly where the row is not the
 *  inviscid shape (docs/TAP-JUDGEMENT.md §1). */
export const SHAPE_LOO_LEVERAGE = 0.35;

/** The leverage the fit's prediction uncertainty s²·h/(1 − h) is taken at, at most (a tap that
 *  alone fixes a parameter, h → 1, would make it infinite). */
const SHAPE_LEVERAGE_CAP = 0.95;

interface ShapeFit { sse: number; a: number; b: number; alpha: number; cp: ArrayLike<number> }

/** The result of the last lineFit (one scratch object: the fit runs for every tap at every α_eff). */
const LINE = { a: 0, b: 0, sse: 0 };
/** Least squares y = a + b·x from the sums of cnt points (Σx, Σy, Σx², Σxy, Σy²), into LINE;
 *  false when the x do not vary. The residual sum of squares from the same sums. */
function lineFit(cnt: number, sx: number, sy: number, sxx: number, sxy: number, syy: number): boolean {
  const den = cnt * sxx - sx * sx;
  if (!(den > 0)) return false;
  const b = (cnt * sxy - sx * sy) / den;
  const a = (sy - b * sx) / cnt;
  LINE.a = a;
  LINE.b = b;
  LINE.sse = syy - 2 * a * sy - 2 * b * sxy + cnt * a * a + 2 * a * b * sx + b * b * sxx;
  return true;
}

/**
 * The verdicts of the shape-aided prediction (OutlierOptions.shape): the inviscid Cp at the
 * run's α, fitted to the row's taps as a + b·Cp_inv(α_eff) (least squares over α_eff within
 * ±SHAPE_ALPHA_SPAN of the run's α, a and b free: the viscous loss of circulation and suction
 * peak, an offset in the references), and the same leave-one-out prediction applied to the
 * difference Cp − fit (two-sided, or one-sided where that is the less uncertain:
 * differencePrediction), which is smooth where Cp itself is steep (behind the leading edge). The
 * fit that judges a tap leaves that tap out, so a glitch cannot tilt the shape towards itself;
 * only taps of high leverage (SHAPE_LOO_LEVERAGE) are judged with the fit of the whole row. The
 * difference's taps carry the channel uncertainty and b times the shape's own (app/tapShape.ts);
 * the prediction adds the fit's own uncertainty at the tap (s²·h/(1 − h)).
 * Tap by tap, the verdict of the two (on Cp itself or on the difference) with the smaller combined
 * uncertainty is taken: the choice is made on the uncertainty, never on the residual.
 */
function withShape(
  active: readonly JudgedTap[], at: readonly number[], raw: (TapVerdict | null)[], shape: NonNullable<OutlierOptions['shape']>, positionU: number,
): (TapVerdict | null)[] {
  const n = active.length;
  const m = n - 1;
  const y = active.map((t) => t.cp);
  const none = (): ShapeFit => ({ sse: Infinity, a: 0, b: 0, alpha: shape.alphaDeg, cp: [] });
  let whole = none();
  // The best fit without each tap, kept in columns while the α_eff grid is searched.
  const bestSse = new Float64Array(n).fill(Infinity);
  const bestA = new Float64Array(n);
  const bestB = new Float64Array(n);
  const bestAlpha = new Float64Array(n);
  const bestCp: ArrayLike<number>[] = new Array(n);
  for (let ae = shape.alphaDeg - SHAPE_ALPHA_SPAN; ae <= shape.alphaDeg + SHAPE_ALPHA_SPAN + 1e-9; ae += SHAPE_ALPHA_STEP) {
    const all = shape.cp(ae);
    let sx = 0; let sy = 0; let sxx = 0; let sxy = 0; let syy = 0;
    for (let i = 0; i < n; i++) {
      const v = all[at[i]];
      sx += v; sy += y[i]; sxx += v * v; sxy += v * y[i]; syy += y[i] * y[i];
    }
    if (lineFit(n, sx, sy, sxx, sxy, syy) && LINE.sse < whole.sse) whole = { ...LINE, alpha: ae, cp: all };
    // Without tap k: the sums less its own term.
    for (let k = 0; k < n; k++) {
      const xk = all[at[k]];
      if (!lineFit(m, sx - xk, sy - y[k], sxx - xk * xk, sxy - xk * y[k], syy - y[k] * y[k]) || !(LINE.sse < bestSse[k])) continue;
      bestSse[k] = LINE.sse; bestA[k] = LINE.a; bestB[k] = LINE.b; bestAlpha[k] = ae; bestCp[k] = all;
    }
  }
  const without = (k: number): ShapeFit => (Number.isFinite(bestSse[k])
    ? { sse: bestSse[k], a: bestA[k], b: bestB[k], alpha: bestAlpha[k], cp: bestCp[k] }
    : none());
  // A shape that does not even rise with the measured Cp (b ≤ 0) says nothing about the row.
  if (!(whole.b > 0) || !Number.isFinite(whole.sse)) return raw;
  const s = arcLength(active);
  // A tap's position error moves it along the whole Cp, not along the difference: the fitted
  // shape is read at the nominal position while the tap measures at the true one, so each tap of
  // the difference carries |d(b·Cp_inv)/ds|·positionU, and the difference's own slope adds nothing.
  // The shape's own uncertainty and its slope along the row at each α_eff, once: the fits without
  // one tap mostly share an α_eff (b > 0, so |d(b·Cp_inv)/ds| = b·|dCp_inv/ds|).
  const perAlpha = new Map<number, { u: ArrayLike<number>; slope: Float64Array | null }>();
  const differenceFrom = (f: ShapeFit) => {
    let pa = perAlpha.get(f.alpha);
    if (!pa) {
      pa = { u: shape.u(f.alpha), slope: positionU > 0 ? slopeAlong(s, at.map((j) => f.cp[j])) : null };
      perAlpha.set(f.alpha, pa);
    }
    const { u: uShape, slope } = pa;
    for (let i = 0; i < n; i++) {
      dCp[i] = active[i].cp - f.a - f.b * f.cp[at[i]];
      dU[i] = Math.hypot(active[i].u, f.b * uShape[at[i]], slope ? f.b * slope[i] * positionU : 0);
    }
  };
  // The difference's Cp and u, filled for one fit at a time (no arrays made per tap).
  const dCp = new Float64Array(n);
  const dU = new Float64Array(n);
  const leverage = shapeLeverage(whole, shape, at);
  return raw.map((r, k) => {
    const own = without(k);
    const f = leverage[k] <= SHAPE_LOO_LEVERAGE && own.b > 0 && Number.isFinite(own.sse) ? own : whole;
    differenceFrom(f);
    let v = differencePrediction(active, k, s, dCp, dU);
    if (!v) return r;
    // The fit's own uncertainty at the tap: the prediction variance s²·h/(1 − h) of a least-squares
    // fit at a point left out of it (s² the fit's residual variance, h the tap's leverage; any
    // regression text, e.g. Draper & Smith, Applied Regression Analysis, ch. 8 on deleted
    // residuals, memory). Near zero where the row is the inviscid shape (exact rows); at the nose
    // of a row whose peak the shape does not have, where the fitted α_eff places the shape's
    // stagnation point, large: there the fitted shape predicts the nose taps poorly.
    {
      const h = Math.min(leverage[k], SHAPE_LEVERAGE_CAP);
      const dof = (f === whole ? n : m) - 3;
      const uFit = dof > 0 ? Math.sqrt(((Math.max(0, f.sse) / dof) * h) / (1 - h)) : 0;
      const u = Math.hypot(v.u, uFit);
      v = { ...v, u, score: u > 0 ? Math.abs(v.residual) / u : Infinity };
    }
    if (r && !(v.u < r.u)) return r;
    const predicted = v.predicted + f.a + f.b * f.cp[at[k]];
    const residual = active[k].cp - predicted;
    return { id: v.id, cp: active[k].cp, predicted, residual, u: v.u, score: v.u > 0 ? Math.abs(residual) / v.u : Infinity };
  });
}

/**
 * The prediction of tap k on the shape difference: the two-sided one (predictTap), or a one-sided
 * one (the quadratic through the three nearest taps on one side) when that has the smaller
 * uncertainty. Behind a sparse leading edge the two-sided stencil reaches the nose taps, whose
 * difference carries the steep shape's position term (|d(b·Cp_inv)/ds|·u_pos, up to 0.1–0.3 at
 * the nose of a 24-tap row), and its prediction is then too uncertain to find a glitch of 0.3;
 * the taps on the other side predict the smooth difference with less. A one-sided prediction
 * extrapolates, so its uncertainty carries, besides its own terms, its disagreement with the
 * two-sided prediction and the two-sided cross-validation term (where the difference has
 * structure near the nose, as on a row whose suction peak is softer than the inviscid one, both
 * are large and the one-sided rule is not taken). As everywhere in the test, the choice is made on
 * the uncertainty, never on the residual.
 */
function differencePrediction(
  active: readonly JudgedTap[], k: number, s: ArrayLike<number>, dCp: ArrayLike<number>, dU: ArrayLike<number>,
): TapVerdict | null {
  const two = predictWithCv(active, k, 0, s, dCp, dU, 0);
  if (!two) return null;
  let best = two.verdict;
  for (const side of [-1, 1] as const) {
    const one = predictWithCv(active, k, 0, s, dCp, dU, side);
    if (!one) continue;
    const u = Math.hypot(one.verdict.u, one.verdict.predicted - two.verdict.predicted, two.cv);
    if (u < best.u) best = { ...one.verdict, u, score: u > 0 ? Math.abs(one.verdict.residual) / u : Infinity };
  }
  return best;
}

/** |df/ds| at each point of a polygon's samples: the derivative of the parabola through each
 *  point and its two neighbours (one-sided at the ends). */
function slopeAlong(s: ArrayLike<number>, f: ArrayLike<number>): Float64Array {
  const n = f.length;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const a = Math.max(0, Math.min(n - 3, i - 1));
    const [i0, i1, i2] = [a, a + 1, a + 2];
    const h0 = s[i1] - s[i0];
    const h1 = s[i2] - s[i1];
    if (!(h0 > 0) || !(h1 > 0)) continue;
    const d0 = (f[i1] - f[i0]) / h0;
    const d1 = (f[i2] - f[i1]) / h1;
    const c = (d1 - d0) / (h0 + h1); // second divided difference
    out[i] = Math.abs(d0 + c * (2 * s[i] - s[i0] - s[i1]));
  }
  return out;
}

/** Each tap's leverage on the fit a + b·Cp_inv(α_eff): the diagonal of J(JᵀJ)⁻¹Jᵀ with the rows
 *  J_i = [1, Cp_inv,i, b·∂Cp_inv,i/∂α] at the fitted α_eff (the derivative by central difference
 *  over one α step). A singular fit gives every tap leverage 1 (all judged with the whole fit). */
function shapeLeverage(f: ShapeFit, shape: NonNullable<OutlierOptions['shape']>, at: readonly number[]): Float64Array {
  const n = at.length;
  const up = shape.cp(f.alpha + SHAPE_ALPHA_STEP);
  const dn = shape.cp(f.alpha - SHAPE_ALPHA_STEP);
  const J = at.map((j) => [1, f.cp[j], (f.b * (up[j] - dn[j])) / (2 * SHAPE_ALPHA_STEP)]);
  const M = new Float64Array(9);
  for (const row of J) for (let p = 0; p < 3; p++) for (let q = 0; q < 3; q++) M[p * 3 + q] += row[p] * row[q];
  const C = spdInverse(M, 3);
  const h = new Float64Array(n).fill(1);
  if (!C) return h;
  for (let i = 0; i < n; i++) {
    let v = 0;
    for (let p = 0; p < 3; p++) for (let q = 0; q < 3; q++) v += J[i][p] * C[p * 3 + q] * J[i][q];
    h[i] = v;
  }
  return h;
}

/** A keep decision (Settings.keptTaps): "C07@12" keeps tap C07 in run 12 against the automatic
 *  test. The tap id is everything before the last '@'. */
export function keptKey(tapId: string, run: number): string {
  return `${tapId}@${run}`;
}

/** The taps kept against the automatic test in one run (entries "tap@run" of that run). */
export function keptFor(keptTaps: readonly string[] | undefined, run: number): Set<string> {
  const out = new Set<string>();
  for (const e of keptTaps ?? []) {
    const at = e.lastIndexOf('@');
    if (at > 0 && Number(e.slice(at + 1)) === run) out.add(e.slice(0, at));
  }
  return out;
}

/** What a row's highest reading says about the references. */
export interface ReferenceFinding {
  row: string;
  id: string;
  cp: number;
  cpStag: number;
  M: number;
  /** Standard uncertainty of that Cp (channel and references). */
  u: number;
  /** If q alone is wrong: the measured q is low by this fraction, 1 − Cp_stag/Cp. */
  qLow: number;
  /** If p∞ alone is wrong: it reads low by this much, Pa, (Cp − Cp_stag)·q. */
  staticLowPa: number;
}

/** The reference check on one row's good taps (see the module comment): the highest reading
 *  against Cp_stag(M). `uOf` gives the standard uncertainty of a tap's Cp, channel and references. */
export function referenceCheck(
  row: string,
  taps: readonly { id: string; cp: number }[],
  uOf: (id: string, cp: number) => number,
  M: number,
  q: number,
  k: number,
): ReferenceFinding | null {
  if (!taps.length) return null;
  let top = taps[0];
  for (const t of taps) if (t.cp > top.cp) top = t;
  const cpStag = cpStagnation(M);
  const u = uOf(top.id, top.cp);
  if (!(top.cp - cpStag > k * u)) return null;
  return {
    row,
    id: top.id,
    cp: top.cp,
    cpStag,
    M,
    u,
    qLow: 1 - cpStag / top.cp,
    staticLowPa: (top.cp - cpStag) * q,
  };
}
