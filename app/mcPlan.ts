// Monte Carlo plan of one run (REDUCTION.md §9): the outputs of the uncertainty — corrected cl, cd,
// cd_p, cm_c/4, the wall-momentum cl_mom on the corrected basis and the corrected circulations
// (surface pressures and wall momentum by Kutta–Joukowski Γ = ½ V c cl, and the wall line
// integral), with the reduction's own errors of the draw (app/reductionErrors.ts `adj`) — by
// the SAME model as runCore in app/reduce.ts, through the same formula functions (freeStream,
// contourIntegrals, jonesTerm/jonesIntegral, angleFluxTerm/angleFluxIntegral, momentumCl,
// speedRatio, wallCorrections, adjustedCorrection, applyCorrections, correctedLift) and the same
// interpolation arithmetic
// (linearStencil/applyStencil reproduce interpLinear). What does not change between draws is found
// once per run: the channel index of every input in one Float64Array of drawn values, the main-row
// taps in nominal contour order, the rake probes sorted by y with their static- and cpt-interpolation
// stencils, the wall grid with its stencils into each wall. A draw is then plain arithmetic on typed
// arrays, with no sorting of anything fixed and no per-tap objects.
// - Tap x/c are perturbed per draw, so taps closer together than the perturbation (at the leading
//   edge) can change places. Each surface of the main row is re-sorted every draw by orderContour's
//   own comparison (compareUpper/compareLower: x, then y, then id; the remaining ties, which
//   orderContour's stable sort leaves in input order, in input order here too), by insertion sort
//   from the nominal order, so the contour is always the one runCore integrates.
// - Only the main row enters these outputs: the other spanwise rows (completeRow) feed only the
//   span loading, which the Monte Carlo does not report. With finite, bounded inputs they cannot
//   make runCore fail (their structure — surfaces, bad taps — is that of the nominal pass).
// - evalMcPlan returns false for a draw the plan does not cover (a non-finite or huge value,
//   p ≤ 0, q∞ ≤ 0, V∞ not positive, a non-finite output); the caller then runs runCore for that
//   draw, which gives its value or its error by the model's own definition.
// Equivalence with runCore draw by draw is checked in test/mc-fast.test.ts (common practice, no
// source).

import { freeStream } from './air';
import { applyCorrections } from './corrections';
import { correctionOf, type CorrectionPlan } from './correctionChoice';
import type { SignaturePlan } from './wallSignature';
import { ADJ, adjustedCorrection, correctedLift } from './reductionErrors';
import { applyStencil, linearStencil, trapezoid } from './quadrature';
import { compareUpper, contourIntegrals, type ContourRule } from './surface';
import type { Coefficients, RunInfo, Setup, Surface } from './types';
import { jonesIntegral, jonesTerm } from './wake';
import { angleFluxIntegral, angleFluxTerm, momentumCl, speedRatio, wallGrid } from './walls';

/** What the plan needs of the run's channel layout (app/reduce.ts Layout), by channel name. */
export interface PlanLayout {
  dpRef: string;
  pStatic: string;
  /** The free-stream total-pressure reference, when the setup has one (the wake's q∞ = H∞ − p∞). */
  pTotal?: string;
  taps: { id: string; x: number; y: number; surface: Surface; row: string; ch: string }[];
  rakeTotal: { y: number; ch: string }[];
  rakeStatic: { y: number; ch: string }[];
  rakeAngle: { y: number; ch: string }[];
  floor: { x: number; ch: string }[];
  ceiling: { x: number; ch: string }[];
  mainRow: string;
  areaC2: number;
  /** Wall-signature design (app/reduce.ts Layout.signature). */
  signature: SignaturePlan | null;
}

/** The nominal pass's facts the plan relies on (from runCore's output). */
export interface PlanNominal {
  /** Row of the section loads (the plan is built only when it is the main row). */
  mainRow: string;
  /** Capture fractions of the nominal wall result (depend on the geometry only), or null. */
  walls: { F: number; FMom?: number } | null;
  /** Contour rule of the surface integration (Settings.contourRule; the settings' default is 'spline', a plan without one 'linear'). */
  rule?: ContourRule;
}

/** The outputs of one draw. */
export interface McValues {
  cl: number;
  cd: number;
  cdp: number;
  cmc4: number;
  clMom: number;
  gammaPressure: number;
  gammaMomentum: number;
  gammaWall: number;
}

interface Stencils {
  lo: Int32Array;
  hi: Int32Array;
  t: Float64Array;
}

export interface McPlan {
  chord: number;
  height: number;
  width: number;
  areaC2: number;
  /** The correction as the nominal pass resolved it (app/correctionChoice.ts). */
  correct: CorrectionPlan;
  signature: SignaturePlan | null;
  rule: ContourRule;
  baro: number;
  T: number;
  rh: number;
  iDp: number;
  iPs: number;
  /** H∞ channel (−1: none, the wake uses q_u). */
  iPt: number;
  /** Every tap (for the bound check): value index and nominal x. */
  allVal: Int32Array;
  /** Main-row good taps by slot; slots [0, nU) upper, [nU, n) lower, each in nominal contour order. */
  n: number;
  nU: number;
  slotTap: Int32Array;
  slotVal: Int32Array;
  slotX0: Float64Array;
  slotY: Float64Array;
  /** Tie order of orderContour (y, then id, then input order) within a surface. */
  slotRank: Float64Array;
  // Wake (nT = 0: no wake).
  nT: number;
  tVal: Int32Array;
  tY: Float64Array;
  sVal: Int32Array | null;
  tStatic: Stencils | null;
  nA: number;
  aVal: Int32Array;
  aY: Float64Array;
  aCpt: Stencils | null;
  /** The setup has flow-angle probes: their flux term is added to cl_mom (0 without a wake). */
  angleSetup: boolean;
  // Walls (null: none).
  walls: {
    fVal: Int32Array;
    cVal: Int32Array;
    gx: Float64Array;
    gf: Stencils;
    gc: Stencils;
    F: number;
    /** The wall line integral's grid (the whole overlap), its stencils and capture fraction. */
    wx: Float64Array;
    wf: Stencils;
    wc: Stencils;
    FW: number;
  } | null;
  // Scratch (one draw at a time).
  x: Float64Array;
  cp: Float64Array;
  perm: Int32Array;
  ox: Float64Array;
  oy: Float64Array;
  ocp: Float64Array;
  cpt: Float64Array;
  jones: Float64Array;
  statics: Float64Array;
  uv: Float64Array;
  fcp: Float64Array;
  ccp: Float64Array;
  dcp: Float64Array;
  du: Float64Array;
  /** Set by evalMcPlan: the contour order of this draw differs from the nominal one. */
  reordered: boolean;
}

/** Indices of `items` in the order of a stable sort by key. */
function sortedBy<T>(items: readonly T[], key: (t: T) => number): number[] {
  return items.map((_, i) => i).sort((a, b) => key(items[a]) - key(items[b]));
}

function stencils(xs: ArrayLike<number>, at: ArrayLike<number>): Stencils {
  const s: Stencils = { lo: new Int32Array(at.length), hi: new Int32Array(at.length), t: new Float64Array(at.length) };
  for (let i = 0; i < at.length; i++) {
    const w = linearStencil(xs, at[i]);
    s.lo[i] = w.lo;
    s.hi[i] = w.hi;
    s.t[i] = w.t;
  }
  return s;
}

/**
 * The plan of one run, or null when the run is outside what the plan covers (runCore is then used
 * for every draw). `index` maps a channel name to its place in the array of drawn values; `bad`
 * the taps dropped by the nominal pass.
 */
export function buildMcPlan(
  setup: Setup,
  L: PlanLayout,
  info: RunInfo,
  correction: CorrectionPlan,
  bad: readonly { id: string }[],
  nominal: PlanNominal,
  index: ReadonlyMap<string, number>,
): McPlan | null {
  if (nominal.mainRow !== L.mainRow) return null;
  // The wall signature needs the walls in the same order as the design (both sorted by x).
  if (correction.method === 'wall-signature' && (!L.signature || L.signature.unusable)) return null;
  const idx = (name: string): number => index.get(name) ?? -1;
  const iDp = idx(L.dpRef);
  const iPs = idx(L.pStatic);
  const iPt = L.pTotal !== undefined ? idx(L.pTotal) : -1;
  if (L.pTotal !== undefined && iPt < 0) return null;
  const allVal = Int32Array.from(L.taps, (t) => idx(t.ch));
  if (iDp < 0 || iPs < 0 || allVal.some((k) => k < 0)) return null;

  // Main row: the good taps, each surface in orderContour's order at the nominal x.
  const badIds = new Set(bad.map((b) => b.id));
  const good = L.taps.map((t, i) => ({ t, i })).filter(({ t }) => t.row === L.mainRow && !badIds.has(t.id));
  const rankOf = new Map<number, number>();
  for (const s of ['upper', 'lower'] as const) {
    const list = good.filter(({ t }) => t.surface === s);
    // Tie order: orderContour's comparison with x set aside, then input order (stable sort).
    const tied = [...list].sort((a, b) => compareUpper({ ...a.t, x: 0 }, { ...b.t, x: 0 }) || a.i - b.i);
    tied.forEach(({ i }, r) => rankOf.set(i, r));
  }
  const upper = good.filter(({ t }) => t.surface === 'upper')
    .sort((a, b) => b.t.x - a.t.x || rankOf.get(a.i)! - rankOf.get(b.i)!);
  const lower = good.filter(({ t }) => t.surface === 'lower')
    .sort((a, b) => a.t.x - b.t.x || rankOf.get(a.i)! - rankOf.get(b.i)!);
  if (!upper.length || !lower.length) return null;
  const slots = [...upper, ...lower];
  const n = slots.length;

  // Wake: total probes sorted by y (jonesDrag), statics sorted by y (interpolateStatic), angle
  // probes sorted by y (angleFlux), all with stable sorts as those functions do.
  const hasWake = L.rakeTotal.length >= 3;
  const tOrder = hasWake ? sortedBy(L.rakeTotal, (p) => p.y) : [];
  const tVal = Int32Array.from(tOrder, (i) => idx(L.rakeTotal[i].ch));
  const tY = Float64Array.from(tOrder, (i) => L.rakeTotal[i].y);
  let sVal: Int32Array | null = null;
  let tStatic: Stencils | null = null;
  if (hasWake && L.rakeStatic.length) {
    const sOrder = sortedBy(L.rakeStatic, (p) => p.y);
    sVal = Int32Array.from(sOrder, (i) => idx(L.rakeStatic[i].ch));
    tStatic = stencils(Float64Array.from(sOrder, (i) => L.rakeStatic[i].y), tY);
  }
  const withAngle = hasWake && L.rakeAngle.length > 0;
  const aOrder = withAngle ? sortedBy(L.rakeAngle, (p) => p.y) : [];
  const aVal = Int32Array.from(aOrder, (i) => idx(L.rakeAngle[i].ch));
  const aY = Float64Array.from(aOrder, (i) => L.rakeAngle[i].y);
  const aCpt = withAngle ? stencils(tY, aY) : null;
  if ([...tVal, ...(sVal ?? []), ...aVal].some((k) => k < 0)) return null;

  // Walls: each wall sorted by x (wallLoads), the momentum grid and its capture fraction.
  let walls: McPlan['walls'] = null;
  const hasWalls = L.floor.length >= 2 && L.ceiling.length >= 2;
  if (hasWalls !== (nominal.walls !== null)) return null;
  if (hasWalls && nominal.walls) {
    const fOrder = sortedBy(L.floor, (p) => p.x);
    const cOrder = sortedBy(L.ceiling, (p) => p.x);
    const fx = fOrder.map((i) => L.floor[i].x);
    const cx = cOrder.map((i) => L.ceiling[i].x);
    const x1 = Math.max(fx[0], cx[0]);
    const x2 = Math.min(fx[fx.length - 1], cx[cx.length - 1]);
    const mom = nominal.walls.FMom !== undefined;
    const gx = Float64Array.from(wallGrid(x1, mom ? Math.min(x2, setup.rake.x) : x2, fx, cx));
    const wx = Float64Array.from(wallGrid(x1, x2, fx, cx));
    walls = {
      fVal: Int32Array.from(fOrder, (i) => idx(L.floor[i].ch)),
      cVal: Int32Array.from(cOrder, (i) => idx(L.ceiling[i].ch)),
      gx,
      gf: stencils(fx, gx),
      gc: stencils(cx, gx),
      F: mom ? nominal.walls.FMom! : nominal.walls.F,
      wx,
      wf: stencils(fx, wx),
      wc: stencils(cx, wx),
      FW: nominal.walls.F,
    };
    if (walls.fVal.some((k) => k < 0) || walls.cVal.some((k) => k < 0)) return null;
  }

  const nT = tVal.length;
  const nA = aVal.length;
  const nG = walls ? walls.gx.length : 0;
  return {
    chord: setup.model.chord,
    height: setup.facility.sectionHeight,
    width: setup.facility.sectionWidth,
    areaC2: L.areaC2,
    correct: correction,
    signature: L.signature,
    rule: nominal.rule ?? 'linear',
    baro: info.baro,
    T: info.temperatureC + 273.15,
    rh: info.humidity,
    iDp,
    iPs,
    iPt,
    allVal,
    n,
    nU: upper.length,
    slotTap: Int32Array.from(slots, (s) => s.i),
    slotVal: Int32Array.from(slots, (s) => allVal[s.i]),
    slotX0: Float64Array.from(slots, (s) => s.t.x),
    slotY: Float64Array.from(slots, (s) => s.t.y),
    slotRank: Float64Array.from(slots, (s) => rankOf.get(s.i)!),
    nT,
    tVal,
    tY,
    sVal,
    tStatic,
    nA,
    aVal,
    aY,
    aCpt,
    angleSetup: L.rakeAngle.length > 0,
    walls,
    x: new Float64Array(n),
    cp: new Float64Array(n),
    perm: new Int32Array(n),
    ox: new Float64Array(n),
    oy: new Float64Array(n),
    ocp: new Float64Array(n),
    cpt: new Float64Array(nT),
    jones: new Float64Array(nT),
    statics: new Float64Array(sVal ? sVal.length : 0),
    uv: new Float64Array(nA),
    fcp: new Float64Array(walls ? walls.fVal.length : 0),
    ccp: new Float64Array(walls ? walls.cVal.length : 0),
    dcp: new Float64Array(nG),
    du: new Float64Array(walls ? walls.wx.length : 0),
    reordered: false,
  };
}

/** Sums of |value| beyond this are left to runCore (nothing downstream can overflow below it). */
const BOUND = 1e300;

/** Insertion sort of perm[from, to) by orderContour's comparison; true if anything moved. */
function sortSurface(P: McPlan, from: number, to: number, upper: boolean): boolean {
  const { perm, x, slotRank } = P;
  let moved = false;
  for (let k = from + 1; k < to; k++) {
    const s = perm[k];
    let j = k - 1;
    while (j >= from) {
      const r = perm[j];
      // compareUpper(r, s) = x_s − x_r || tie; compareLower(r, s) = x_r − x_s || tie.
      const c = (upper ? x[s] - x[r] : x[r] - x[s]) || slotRank[r] - slotRank[s];
      if (!(c > 0)) break;
      perm[j + 1] = r;
      j--;
      moved = true;
    }
    perm[j + 1] = s;
  }
  return moved;
}

/**
 * One draw by the plan: channel values in `vals` (by the plan's index), tap x/c offsets in `tapDx`
 * (by tap), α, k_q and the reduction's own errors `adj` (app/reductionErrors.ts ADJ order; none: 0).
 * Writes `out` and returns true, or returns false when the draw must be left to runCore (see the
 * module comment).
 */
export function evalMcPlan(
  P: McPlan, vals: Float64Array, tapDx: Float64Array, alphaDeg: number, kq: number, out: McValues,
  adj?: Float64Array,
): boolean {
  P.reordered = false;
  if (!Number.isFinite(alphaDeg) || !Number.isFinite(kq)) return false;
  let bound = 0;
  for (let k = 0; k < vals.length; k++) bound += Math.abs(vals[k]);
  for (let i = 0; i < tapDx.length; i++) bound += Math.abs(tapDx[i]);
  if (adj) for (let j = 0; j < adj.length; j++) bound += Math.abs(adj[j]);
  if (!(bound < BOUND)) return false;

  const pInf = vals[P.iPs];
  const p = P.baro + pInf;
  if (!(p > 0)) return false;
  const fs = freeStream({ dpRef: vals[P.iDp], kq, p, T: P.T, rh: P.rh, chord: P.chord });
  const q = fs.qu;
  const V = fs.V;
  if (!(q > 0) || !(V > 0) || !Number.isFinite(V)) return false;

  // Every tap's Cp stays bounded (the other rows are integrated by runCore too).
  let cpBound = 0;
  const allVal = P.allVal;
  for (let i = 0; i < allVal.length; i++) cpBound += Math.abs((vals[allVal[i]] - pInf) / q);

  // Main row: x/c and Cp by slot, contour order of this draw, loads.
  const { n, nU, x, cp, perm, ox, oy, ocp, slotY } = P;
  for (let s = 0; s < n; s++) {
    x[s] = P.slotX0[s] + tapDx[P.slotTap[s]];
    cp[s] = (vals[P.slotVal[s]] - pInf) / q;
    perm[s] = s;
  }
  const movedU = sortSurface(P, 0, nU, true);
  const movedL = sortSurface(P, nU, n, false);
  P.reordered = movedU || movedL;
  for (let k = 0; k < n; k++) {
    const s = perm[k];
    ox[k] = x[s];
    oy[k] = slotY[s];
    ocp[k] = cp[s];
  }
  const main = contourIntegrals(ox, oy, ocp, n, nU, alphaDeg, P.rule);

  // Wake.
  let cdU = NaN;
  let angleCl = 0;
  if (P.nT > 0) {
    const { nT, tVal, cpt, jones, statics } = P;
    const qW = P.iPt >= 0 ? vals[P.iPt] - pInf : q;
    if (!(qW > 0)) return false;
    const st = P.tStatic;
    if (st && P.sVal) for (let j = 0; j < statics.length; j++) statics[j] = vals[P.sVal[j]];
    for (let i = 0; i < nT; i++) {
      const H = vals[tVal[i]];
      const pw = st ? applyStencil(st.lo[i], st.hi[i], st.t[i], statics) : pInf;
      cpt[i] = (H - pInf) / qW;
      cpBound += Math.abs(cpt[i]);
      jones[i] = jonesTerm((H - pw) / qW, cpt[i]);
    }
    cdU = jonesIntegral(P.tY, jones, P.chord);
    const ac = P.aCpt;
    if (ac) {
      const { nA, aVal, uv } = P;
      for (let j = 0; j < nA; j++) {
        uv[j] = angleFluxTerm(vals[aVal[j]], applyStencil(ac.lo[j], ac.hi[j], ac.t[j], cpt));
      }
      angleCl = angleFluxIntegral(P.aY, uv, P.chord);
    }
  }

  // Walls.
  let clMom = NaN;
  let gammaWall = NaN;
  const W = P.walls;
  if (W) {
    const { fcp, ccp, dcp } = P;
    for (let j = 0; j < fcp.length; j++) {
      fcp[j] = (vals[W.fVal[j]] - pInf) / q;
      cpBound += Math.abs(fcp[j]);
    }
    for (let j = 0; j < ccp.length; j++) {
      ccp[j] = (vals[W.cVal[j]] - pInf) / q;
      cpBound += Math.abs(ccp[j]);
    }
    const { gf, gc } = W;
    for (let k = 0; k < dcp.length; k++) {
      dcp[k] = applyStencil(gf.lo[k], gf.hi[k], gf.t[k], fcp) - applyStencil(gc.lo[k], gc.hi[k], gc.t[k], ccp);
    }
    clMom = momentumCl(trapezoid(W.gx, dcp), P.chord, W.F, P.angleSetup ? angleCl : 0);
    const du = P.du;
    const { wf, wc } = W;
    for (let k = 0; k < du.length; k++) {
      du[k] = V * (speedRatio(applyStencil(wc.lo[k], wc.hi[k], wc.t[k], ccp)) - speedRatio(applyStencil(wf.lo[k], wf.hi[k], wf.t[k], fcp)));
    }
    gammaWall = trapezoid(W.wx, du) / W.FW;
    if (adj) {
      clMom *= 1 + adj[ADJ.walls];
      gammaWall *= 1 + adj[ADJ.walls];
    }
  }
  if (!(cpBound < BOUND)) return false;

  if (adj && P.nT > 0) cdU += adj[ADJ.cd];
  const uncorrected: Coefficients = {
    cl: main.cl + (adj ? adj[ADJ.cl] : 0),
    cd: cdU,
    cdp: main.cdp + (adj ? adj[ADJ.cdp] : 0),
    cmc4: main.cmc4 + (adj ? adj[ADJ.cmc4] : 0),
    alphaDeg,
    q,
    V,
    Re: fs.Re,
  };
  // The same parameters as runCore's (correctionOf, app/correctionChoice.ts), the draw's
  // correction-model errors applied as runCore applies them.
  const chosen = correctionOf(
    P.correct, { chord: P.chord, height: P.height, width: P.width, sectionAreaC2: P.areaC2 }, cdU, uncorrected.cdp, P.signature, W ? P.fcp : null, W ? P.ccp : null,
  );
  if (!chosen) return false;
  const correction = adjustedCorrection(chosen, adj);
  const corrected = applyCorrections(uncorrected, correction, uncorrected.cmc4);
  const lift = correctedLift(corrected, correction, V, clMom, gammaWall, P.chord);
  out.cl = corrected.cl;
  out.cd = corrected.cd;
  out.cdp = corrected.cdp;
  out.cmc4 = corrected.cmc4;
  out.clMom = lift.clMom;
  out.gammaPressure = lift.pressure;
  out.gammaMomentum = lift.momentum;
  out.gammaWall = lift.wall;
  // Belt and braces: what the model gives finite must be finite here.
  if (!Number.isFinite(out.cl + out.cdp + out.cmc4 + out.gammaPressure)) return false;
  if (P.nT > 0 && !Number.isFinite(out.cd + angleCl)) return false;
  if (W && !Number.isFinite(out.clMom + out.gammaMomentum + out.gammaWall)) return false;
  return true;
}
