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
import { applyCorrections, wallCorrections } from './corrections';
import { correctionOf, type CorrectionPlan } from './correctionChoice';
import { signatureInterference, type SignaturePlan } from './wallSignature';
import { ADJ, adjustedCorrection, correctedLift } from './reductionErrors';
import { applyStencil, linearStencil, trapezoid } from './quadrature';
import { compareUpper, contourIntegrals, type ContourRule, type RowShape, type RowShapeArrays } from './surface';
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
  /** Contour rule of the surface integration (Settings.contourRule; default 'linear'). */
  rule?: ContourRule;
  /** The main row's shape of the 'shape' rule (app/shapeRule.ts), kept for every draw. */
  shape?: RowShape | null;
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
  /** The 'shape' rule's shape at each slot's tap (null for the other rules), and the shape's
   *  arrays handed to contourIntegrals (`v` is the draw's contour order, filled per draw). */
  slotV: Float64Array | null;
  shape: RowShapeArrays | null;
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
  /** The correction's fixed parts (formula methods), or null. */
  fixed: FixedCorrection | null;
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
  // The 'shape' rule: the shape's value at each slot's tap (a tap without one: no plan).
  let slotV: Float64Array | null = null;
  if ((nominal.rule ?? 'linear') === 'shape') {
    const sh = nominal.shape;
    if (!sh) return null;
    slotV = new Float64Array(n);
    for (let k = 0; k < n; k++) {
      const f = sh.v.get(slots[k].t.id);
      if (f === undefined) return null;
      slotV[k] = f;
    }
  }
  const plan: McPlan = {
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
    slotV,
    shape: slotV && nominal.shape ? { v: new Float64Array(n), cn: nominal.shape.cn, ca: nominal.shape.ca, cmLE: nominal.shape.cmLE, fitX: nominal.shape.fitX } : null,
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
    fixed: null,
  };
  plan.fixed = fixedCorrection(plan);
  return plan;
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

/** Stages of a plan evaluation (evalPlanStages): what an input reaches. The free stream (Δp_ref,
 *  p∞, k_q) reaches everything (STAGE_ALL); the tail (uncorrected → corrected → Γ) always runs. */
export const STAGE_CONTOUR = 1;
export const STAGE_WAKE = 2;
export const STAGE_WALLS = 4;
export const STAGE_FREE = 8;
export const STAGE_ALL = 15;

/** The intermediate results of a full plan evaluation, kept so that an evaluation with one input
 *  moved can reuse the stages that input does not reach (the budget's sensitivities). Re-running
 *  a stage on bitwise equal inputs gives bitwise equal results, so reusing one is exact. */
export interface PlanSnapshot {
  fs: ReturnType<typeof freeStream>;
  main: ReturnType<typeof contourIntegrals>;
  reordered: boolean;
  cdU: number;
  angleCl: number;
  cpt: Float64Array;
  clMom: number;
  gammaWall: number;
  fcp: Float64Array;
  ccp: Float64Array;
}

/** A snapshot holder for `P` (filled by evalPlanStages with `keep`). */
export function planSnapshot(P: McPlan): PlanSnapshot {
  return {
    fs: freeStream({ dpRef: 1, kq: 1, p: 1e5, T: 288, rh: 0, chord: 1 }),
    main: { cn: NaN, ca: NaN, cl: NaN, cdp: NaN, cmLE: NaN, cmc4: NaN, teCp: NaN } as ReturnType<typeof contourIntegrals>,
    reordered: false,
    cdU: NaN,
    angleCl: 0,
    cpt: new Float64Array(P.cpt.length),
    clMom: NaN,
    gammaWall: NaN,
    fcp: new Float64Array(P.fcp.length),
    ccp: new Float64Array(P.ccp.length),
  };
}

/** Which stages each drawn channel (by value index, `count` of them) and each tap's x/c offset
 *  reach: the references everything, a main-row tap the contour, rake channels the wake, wall
 *  channels the walls; other-row and dropped taps only the bound checks (0). */
export function inputStages(P: McPlan, count: number): { channel: Uint8Array; tap: Uint8Array } {
  const channel = new Uint8Array(count);
  const mark = (k: number, s: number) => { if (k >= 0 && k < count) channel[k] |= s; };
  mark(P.iDp, STAGE_ALL);
  mark(P.iPs, STAGE_ALL);
  mark(P.iPt, STAGE_WAKE);
  for (let s = 0; s < P.n; s++) mark(P.slotVal[s], STAGE_CONTOUR);
  for (const k of P.tVal) mark(k, STAGE_WAKE);
  if (P.sVal) for (const k of P.sVal) mark(k, STAGE_WAKE);
  for (const k of P.aVal) mark(k, STAGE_WAKE);
  if (P.walls) {
    for (const k of P.walls.fVal) mark(k, STAGE_WALLS);
    for (const k of P.walls.cVal) mark(k, STAGE_WALLS);
  }
  const tap = new Uint8Array(P.allVal.length);
  for (let s = 0; s < P.n; s++) tap[P.slotTap[s]] = STAGE_CONTOUR;
  return { channel, tap };
}

/** The correction's parts that do not depend on the draw (σ, ε_sb and the factor of cd_u in ε_wb
 *  of the formula methods; σ of the wall signature), found once by wallCorrections itself; null
 *  where correctionOf is called every draw (no correction, or a geometry wallCorrections refuses).
 *  ε_wb = kWb·cd_u is the product wallCorrections forms: ((c/h)/4)·cd_u, or (½·θ·(c/h))·cd_u. */
interface FixedCorrection {
  method: CorrectionPlan['method'];
  sigma: number;
  epsSb: number;
  /** ε_wb per unit cd_u. */
  kWb: number;
  maskellWake: boolean;
}

function fixedCorrection(P: Pick<McPlan, 'correct' | 'chord' | 'height' | 'width' | 'areaC2'>): FixedCorrection | null {
  const c = P.correct;
  if (c.method === 'none') return null;
  try {
    const g = { chord: P.chord, height: P.height, width: P.width, sectionAreaC2: P.areaC2, cdU: 1 };
    // The wall signature takes σ from the classical formula (correctionOf), which depends on the
    // geometry only; ε comes from the walls every draw.
    const w = c.method === 'maskell'
      ? wallCorrections({ ...g, method: 'maskell', maskellTheta: c.maskellTheta })
      : wallCorrections({ ...g, method: c.method === 'wall-signature' ? 'barlow-rae-pope' : c.method });
    // With cd_u = 1, ε_wb is wallCorrections' own factor of cd_u, exactly (x·1 = x).
    return {
      method: c.method,
      sigma: w.sigma,
      epsSb: w.epsSb,
      kWb: w.epsWb,
      maskellWake: c.method === 'maskell' && c.maskellSource === 'wake',
    };
  } catch {
    return null;
  }
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
  return evalPlanStages(P, vals, tapDx, alphaDeg, kq, out, adj, STAGE_ALL, null, false);
}

/**
 * evalMcPlan with only the stages in `stages` run afresh and the others taken from `snap` (a
 * snapshot of a full evaluation whose inputs differ from these only in what those stages read;
 * STAGE_ALL needs no snapshot). `keep`: write this evaluation's stages into `snap`. The bound
 * checks are always made on the whole input, in the same order as a full evaluation.
 */
export function evalPlanStages(
  P: McPlan, vals: Float64Array, tapDx: Float64Array, alphaDeg: number, kq: number, out: McValues,
  adj: Float64Array | undefined, stages: number, snap: PlanSnapshot | null, keep: boolean,
): boolean {
  if (stages & STAGE_FREE) stages = STAGE_ALL;
  else if (!snap) throw new Error('evalPlanStages: a partial evaluation needs a snapshot');
  // The angle-flux term of the wake enters cl_mom.
  if (stages & STAGE_WAKE && P.angleSetup) stages |= STAGE_WALLS;
  P.reordered = false;
  if (!Number.isFinite(alphaDeg) || !Number.isFinite(kq)) return false;
  let bound = 0;
  for (let k = 0; k < vals.length; k++) bound += Math.abs(vals[k]);
  for (let i = 0; i < tapDx.length; i++) bound += Math.abs(tapDx[i]);
  if (adj) for (let j = 0; j < adj.length; j++) bound += Math.abs(adj[j]);
  if (!(bound < BOUND)) return false;

  let fs: ReturnType<typeof freeStream>;
  if (stages & STAGE_FREE) {
    const p = P.baro + vals[P.iPs];
    if (!(p > 0)) return false;
    fs = freeStream({ dpRef: vals[P.iDp], kq, p, T: P.T, rh: P.rh, chord: P.chord });
    if (!(fs.qu > 0) || !(fs.V > 0) || !Number.isFinite(fs.V)) return false;
  } else {
    fs = snap!.fs;
  }
  const pInf = vals[P.iPs];
  const q = fs.qu;
  const V = fs.V;

  // Every tap's Cp stays bounded (the other rows are integrated by runCore too).
  let cpBound = 0;
  const allVal = P.allVal;
  for (let i = 0; i < allVal.length; i++) cpBound += Math.abs((vals[allVal[i]] - pInf) / q);

  // Main row: x/c and Cp by slot, contour order of this draw, loads.
  let main: ReturnType<typeof contourIntegrals>;
  if (stages & STAGE_CONTOUR) {
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
    const sh = P.shape;
    if (sh && P.slotV) {
      const ov = sh.v as Float64Array;
      for (let k = 0; k < n; k++) ov[k] = P.slotV[perm[k]];
    }
    main = contourIntegrals(ox, oy, ocp, n, nU, alphaDeg, P.rule, sh ?? undefined);
  } else {
    main = snap!.main;
    P.reordered = snap!.reordered;
  }

  // Wake.
  let cdU = NaN;
  let angleCl = 0;
  if (P.nT > 0) {
    const { nT, tVal, cpt, jones, statics } = P;
    if (stages & STAGE_WAKE) {
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
    } else {
      cpt.set(snap!.cpt);
      for (let i = 0; i < nT; i++) cpBound += Math.abs(cpt[i]);
      cdU = snap!.cdU;
      angleCl = snap!.angleCl;
    }
  }

  // Walls.
  let clMom = NaN;
  let gammaWall = NaN;
  const W = P.walls;
  if (W) {
    const { fcp, ccp, dcp } = P;
    if (stages & STAGE_WALLS) {
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
    } else {
      fcp.set(snap!.fcp);
      ccp.set(snap!.ccp);
      for (let j = 0; j < fcp.length; j++) cpBound += Math.abs(fcp[j]);
      for (let j = 0; j < ccp.length; j++) cpBound += Math.abs(ccp[j]);
      clMom = snap!.clMom;
      gammaWall = snap!.gammaWall;
    }
  }
  if (keep && snap) {
    snap.fs = fs;
    snap.main = main;
    snap.reordered = P.reordered;
    snap.cdU = cdU;
    snap.angleCl = angleCl;
    snap.cpt.set(P.cpt);
    snap.clMom = clMom;
    snap.gammaWall = gammaWall;
    snap.fcp.set(P.fcp);
    snap.ccp.set(P.ccp);
  }
  if (W && adj) {
    clMom *= 1 + adj[ADJ.walls];
    gammaWall *= 1 + adj[ADJ.walls];
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
  const chosen = planCorrection(P, W, cdU, uncorrected.cdp);
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

/** correctionOf(P.correct, …) of this draw: for the formula methods from the fixed parts (the same
 *  numbers wallCorrections gives, ε_wb by the same product), else by correctionOf itself. */
function planCorrection(P: McPlan, W: McPlan['walls'], cdU: number, cdp: number) {
  const f = P.fixed;
  if (f && f.method === 'wall-signature') {
    // correctionOf's wall-signature case; its σ call refuses a non-finite drag (left to it).
    const sig = P.signature;
    if (W && sig && !sig.unusable && Number.isFinite(Number.isFinite(cdU) ? cdU : cdp)) {
      const s = signatureInterference(sig, P.fcp, P.ccp);
      return {
        method: f.method,
        sigma: f.sigma,
        epsSb: s.epsSb,
        epsWb: s.epsWb,
        eps: s.epsSb + s.epsWb,
        measured: { dAlphaDeg: s.dAlphaDeg, dCl: s.dCl, dCm: s.dCm },
      };
    }
  } else if (f) {
    const cd = f.method === 'maskell' ? (f.maskellWake && Number.isFinite(cdU) ? cdU : cdp) : Number.isFinite(cdU) ? cdU : cdp;
    if (Number.isFinite(cd)) {
      const epsWb = f.kWb * cd;
      return { method: f.method, sigma: f.sigma, epsSb: f.epsSb, epsWb, eps: f.epsSb + epsWb };
    }
  }
  return correctionOf(
    P.correct, { chord: P.chord, height: P.height, width: P.width, sectionAreaC2: P.areaC2 }, cdU, cdp, P.signature, W ? P.fcp : null, W ? P.ccp : null,
  );
}
