// The run and session reducers: one place where the methods of the other app/ modules are put
// together, in the order of REDUCTION.md (air state → Cp → surface loads → wake → walls →
// Kutta–Joukowski cross-check → wall corrections → Monte Carlo uncertainty → flags).
// Conventions (common practice, no source): every pressure channel is a differential against one
// common reference taken to be the ambient (barometric) pressure, so the absolute test-section
// static pressure used for density is baro + p∞(gauge). Cp = (p − p∞)/q_u with q_u = k_q·Δp_ref.
// The lift cross-check compares uncorrected values (REDUCTION.md §6).
import {
  CORE_VERSION, DEFAULT_SETTINGS,
  type Channel, type ChannelStats, type Coefficients, type Flag, type Interval, type PolarPoint,
  type RawRun, type ResultDigest, type RunInfo, type RunResult, type SessionFinding, type SessionSummary, type Settings, type Setup,
  type TapCp, type WakeResult, type WallResult, type ZeroedRun, type RowLoads, type UncertaintyKey, type PolarIntervals,
} from './types';
import { freeStream } from './air';
import { averageRun, applyZeros, unsteadiness } from './samples';
import { detectBadTaps, reduceSurface, type BadTap, type RowShape } from './surface';
import { rowShape } from './shapeRule';
import { keptFor, referenceCheck, type ReferenceFinding } from './tapCheck';
import { channelFindings, notedFlags, sessionFindings, type ChannelRun } from './sessionFaults';
import { inviscidCp } from './panel';
import { spanLoading, completeRow } from './spanwise';
import { jonesDrag, interpolateStatic } from './wake';
import { interpLinear } from './quadrature';
import { wallLoads, angleFlux } from './walls';
import { gammaFromCl, liftCrossCheck } from './crosscheck';
import { sectionArea, wallCorrections, applyCorrections } from './corrections';
import { correctionFor, correctionSet, type CorrectionInputs, type CorrectionPlan } from './correctionChoice';
import { signaturePlan, type SignaturePlan, type WallCpUncertainty } from './wallSignature';
import { coverageInterval, instrumentStd, monteCarlo, NormalStream } from './uncertainty';
import { addGroupErrors, channelSd, instrumentModel, type InstrumentModel } from './instruments';
import {
  ADJ, ADJ_LENGTH, adjustedCorrection, adjustmentMean, adjustmentSd, correctedLift, reductionErrors, type ReductionErrors,
} from './reductionErrors';
import { runBudget } from './budget';
import { orderContour } from './surface';
import {
  buildMcPlan, evalMcPlan, evalPlanStages, inputStages, planSnapshot, STAGE_ALL,
  type McPlan, type McValues, type PlanLayout, type PlanSnapshot,
} from './mcPlan';
import { sessionStats } from './session';
import { makeFlag } from './flags';
import { toPascal, isPressureUnit } from './units';

export function resolveSettings(setup: Setup, overrides?: Partial<Settings>): Settings {
  return { ...DEFAULT_SETTINGS, ...(setup.settings ?? {}), ...(overrides ?? {}) };
}

export function averageRuns(raws: RawRun[], settings: Settings): { info: RunInfo; stats: Record<string, ChannelStats> }[] {
  return raws.map((r) => averageRun(r, settings.spikeK));
}

/** Channels that must not be zeroed (flow angles). */
function angleChannels(setup: Setup): Set<string> {
  return new Set(setup.channels.filter((c) => c.unit === 'deg').map((c) => c.name));
}

export function prepareRuns(
  setup: Setup,
  averaged: { info: RunInfo; stats: Record<string, ChannelStats> }[],
): ZeroedRun[] {
  const zeros = averaged.filter((a) => a.info.kind === 'zero');
  const skip = angleChannels(setup);
  return averaged.filter((a) => a.info.kind === 'data').map((a) => applyZeros(a, zeros, skip));
}

// ---------------------------------------------------------------------------------------------
// Channel lookup, built once per setup object.

interface Layout {
  byTarget: Map<string, Channel>;
  dpRef: Channel;
  pStatic: Channel;
  pTotal: Channel | undefined;
  taps: { tap: Setup['taps'][number]; ch: Channel }[];
  rakeTotal: { y: number; ch: Channel }[];
  rakeStatic: { y: number; ch: Channel }[];
  rakeAngle: { y: number; ch: Channel }[];
  floor: { x: number; ch: Channel }[];
  ceiling: { x: number; ch: Channel }[];
  mainRow: string;
  areaC2: number;
  /** Wall-signature fit design for the floor and ceiling taps (null: no taps on both walls). */
  signature: SignaturePlan | null;
  /** Pa per channel unit (1 for deg). */
  scale: Map<string, number>;
  /** Flow-angle channels (not zeroed, not drift-checked). */
  angle: Set<string>;
}

const layouts = new WeakMap<Setup, Layout>();

function key(kind: string, id: string): string {
  return `${kind}:${id}`;
}

export function layoutOf(setup: Setup): Layout {
  const hit = layouts.get(setup);
  if (hit) return hit;
  const byTarget = new Map<string, Channel>();
  const scale = new Map<string, number>();
  for (const ch of setup.channels) {
    const t = ch.target;
    byTarget.set(t.kind === 'reference' ? key('reference', t.ref) : key(t.kind, t.id), ch);
    scale.set(ch.name, isPressureUnit(ch.unit) ? toPascal(1, ch.unit) : 1);
  }
  const need = (ref: string): Channel => {
    const c = byTarget.get(key('reference', ref));
    if (!c) throw new Error(`Setup has no channel mapped to the reference "${ref}".`);
    return c;
  };
  const pick = <T extends { id: string }>(kind: string, items: T[]) =>
    items.flatMap((it) => {
      const ch = byTarget.get(key(kind, it.id));
      return ch ? [{ it, ch }] : [];
    });
  const rake = pick('rake', setup.rake.probes);
  const floorCh = pick('floor', setup.floor).map(({ it, ch }) => ({ x: it.x, ch }));
  const ceilingCh = pick('ceiling', setup.ceiling).map(({ it, ch }) => ({ x: it.x, ch }));
  const rowCounts = new Map<string, number>();
  for (const t of setup.taps) rowCounts.set(t.row, (rowCounts.get(t.row) ?? 0) + 1);
  const mainRow = rowCounts.has('C')
    ? 'C'
    : [...rowCounts.entries()].sort((a, b) => b[1] - a[1])[0]?.[0] ?? 'C';
  const layout: Layout = {
    byTarget,
    dpRef: need('dpRef'),
    pStatic: need('pStatic'),
    pTotal: byTarget.get(key('reference', 'pTotal')),
    taps: pick('tap', setup.taps).map(({ it, ch }) => ({ tap: it, ch })),
    rakeTotal: rake.filter((r) => r.it.kind === 'total').map(({ it, ch }) => ({ y: it.y, ch })),
    rakeStatic: rake.filter((r) => r.it.kind === 'static').map(({ it, ch }) => ({ y: it.y, ch })),
    rakeAngle: rake.filter((r) => r.it.kind === 'angle').map(({ it, ch }) => ({ y: it.y, ch })),
    floor: floorCh,
    ceiling: ceilingCh,
    mainRow,
    areaC2: sectionArea(setup.model.geometry),
    signature: floorCh.length >= 2 && ceilingCh.length >= 2
      ? signaturePlan({
          floorX: floorCh.map((f) => f.x),
          ceilingX: ceilingCh.map((c) => c.x),
          height: setup.facility.sectionHeight,
          chord: setup.model.chord,
        })
      : null,
    scale,
    angle: angleChannels(setup),
  };
  layouts.set(setup, layout);
  return layout;
}

// ---------------------------------------------------------------------------------------------
// The deterministic core of one run: used once for the nominal result and once per Monte Carlo
// draw (with perturbed inputs and the bad-tap list fixed by the nominal pass).

interface CoreInput {
  values: (name: string) => number;
  alphaDeg: number;
  kq: number;
  /** Offsets added to every tap's x/c (Monte Carlo), by tap index in layout.taps. */
  tapDx?: Float64Array;
  /** The reduction's own errors of one draw, in app/reductionErrors.ts ADJ order (Monte Carlo). */
  adj?: Float64Array;
  bad: { id: string; reason: string }[];
  /** How to correct (the nominal pass resolves 'auto'; its first pass uses the classical plan). */
  correct: CorrectionPlan;
  /** Each row's inviscid shape for the 'shape' contour rule (app/shapeRule.ts), by row: fitted by
   *  the nominal pass (absent: fitted here), kept by the Monte Carlo draws. */
  shapes?: ReadonlyMap<string, RowShape | null>;
}

interface CoreOutput {
  fs: ReturnType<typeof freeStream>;
  pInf: number;
  taps: TapCp[];
  rows: RowLoads[];
  main: RowLoads;
  wake: WakeResult | null;
  walls: WallResult | null;
  uncorrected: Coefficients;
  corrected: Coefficients;
  correction: ReturnType<typeof wallCorrections>;
  /** What the correction methods need (for the nominal comparison of every method). */
  correctionInputs: CorrectionInputs;
  clMomentum: number;
  gamma: { pressure: number; momentum: number; wall: number };
  /** Corrected momentum cl and corrected Γ (app/reductionErrors.ts correctedLift). */
  lift: ReturnType<typeof correctedLift>;
  /** The rows' shapes of the 'shape' contour rule (empty for the other rules). */
  shapes: Map<string, RowShape | null>;
}

function runCore(setup: Setup, L: Layout, info: RunInfo, settings: Settings, inp: CoreInput): CoreOutput {
  const v = inp.values;
  const pInf = v(L.pStatic.name);
  const fs = freeStream({
    dpRef: v(L.dpRef.name),
    kq: inp.kq,
    p: info.baro + pInf,
    T: info.temperatureC + 273.15,
    rh: info.humidity,
    chord: setup.model.chord,
  });
  const q = fs.qu;
  const taps: TapCp[] = L.taps.map(({ tap, ch }, i) => ({
    id: tap.id,
    x: tap.x + (inp.tapDx ? inp.tapDx[i] : 0),
    y: tap.y,
    surface: tap.surface,
    row: tap.row,
    cp: (v(ch.name) - pInf) / q,
    bad: false,
  }));
  const badById = new Map(inp.bad.map((b) => [b.id, b.reason]));
  for (const t of taps) {
    const r = badById.get(t.id);
    if (r !== undefined) {
      t.bad = true;
      t.badReason = r;
    }
  }
  const rowNames = [...new Set(taps.map((t) => t.row))].sort((a, b) =>
    a === L.mainRow ? -1 : b === L.mainRow ? 1 : a.localeCompare(b),
  );
  const rows: RowLoads[] = [];
  const shapes = new Map<string, RowShape | null>();
  const mainTaps = taps.filter((t) => t.row === L.mainRow);
  for (const row of rowNames) {
    const own = taps.filter((t) => t.row === row);
    const rt = row === L.mainRow ? own : completeRow(own, mainTaps);
    // A row needs both surfaces to be integrated; short rows that cover one side only are skipped.
    if (!rt.some((t) => t.surface === 'upper') || !rt.some((t) => t.surface === 'lower')) continue;
    let shape: RowShape | null = null;
    if (settings.contourRule === 'shape') {
      if (inp.shapes) shape = inp.shapes.get(row) ?? null;
      else {
        const badIds = new Set(inp.bad.map((b) => b.id));
        shape = rowShape(setup.model.geometry, rt.filter((t) => !t.bad && !badIds.has(t.id)), inp.alphaDeg, fs.M);
      }
      shapes.set(row, shape);
    }
    const loads = reduceSurface(rt, inp.alphaDeg, inp.bad, settings.contourRule, shape);
    const z = setup.taps.find((t) => t.row === row)?.z ?? 0;
    rows.push({ ...loads, row, z });
  }
  const main = rows.find((r) => r.row === L.mainRow) ?? rows[0];
  if (!main) throw new Error('No spanwise row has taps on both surfaces: cannot integrate the section loads.');

  // Wake rake.
  let wake: WakeResult | null = null;
  let angleCl = 0;
  if (L.rakeTotal.length >= 3) {
    const statics = L.rakeStatic.map((s) => ({ y: s.y, p: v(s.ch.name) }));
    wake = jonesDrag({
      probes: L.rakeTotal.map((r) => ({ y: r.y, H: v(r.ch.name), ps: statics.length ? interpolateStatic(statics, r.y) : undefined })),
      pInf,
      // Jones' q∞ = H∞ − p∞ (REDUCTION.md §4) when the setup measures H∞; else k_q·Δp_ref.
      qInf: L.pTotal ? v(L.pTotal.name) - pInf : q,
      chord: setup.model.chord,
      edgeTol: settings.wakeEdgeTol,
    });
    if (L.rakeAngle.length && wake) {
      const ys = wake.profile.map((p) => p.y);
      const cpts = wake.profile.map((p) => p.cpt);
      angleCl = angleFlux({
        probes: L.rakeAngle.map((a) => ({ y: a.y, angleDeg: v(a.ch.name), cpt: interpLinear(ys, cpts, a.y) })),
        chord: setup.model.chord,
      });
    }
  }

  // Walls.
  let walls: WallResult | null = null;
  if (L.floor.length >= 2 && L.ceiling.length >= 2) {
    walls = wallLoads({
      floor: L.floor.map((f) => ({ x: f.x, cp: (v(f.ch.name) - pInf) / q })),
      ceiling: L.ceiling.map((c) => ({ x: c.x, cp: (v(c.ch.name) - pInf) / q })),
      chord: setup.model.chord,
      height: setup.facility.sectionHeight,
      V: fs.V,
      // With flow-angle probes the control volume closes at the rake plane: the wall integral
      // stops there and the rake's vertical-momentum flux is added (REDUCTION.md §5).
      ...(L.rakeAngle.length ? { angleFluxCl: angleCl, rakeX: setup.rake.x } : {}),
    });
  }

  const adj = inp.adj;
  const cdU = wake ? wake.cd + (adj ? adj[ADJ.cd] : 0) : NaN;
  const uncorrected: Coefficients = {
    cl: main.cl + (adj ? adj[ADJ.cl] : 0),
    cd: cdU,
    cdp: main.cdp + (adj ? adj[ADJ.cdp] : 0),
    cmc4: main.cmc4 + (adj ? adj[ADJ.cmc4] : 0),
    alphaDeg: inp.alphaDeg,
    q,
    V: fs.V,
    Re: fs.Re,
  };
  const correctionInputs: CorrectionInputs = {
    chord: setup.model.chord,
    height: setup.facility.sectionHeight,
    width: setup.facility.sectionWidth,
    sectionAreaC2: L.areaC2,
    uncorrected,
    cmc4U: uncorrected.cmc4,
    wakeCd: cdU,
    wakeCaptured: wake?.captured ?? false,
    walls,
    signaturePlan: L.signature,
  };
  const correction = adjustedCorrection(correctionFor(inp.correct, correctionInputs)
    ?? correctionFor({ ...inp.correct, method: 'barlow-rae-pope' }, correctionInputs)!, adj);
  const corrected = applyCorrections(uncorrected, correction, uncorrected.cmc4);
  const wallScale = adj ? 1 + adj[ADJ.walls] : 1;
  const clMomentum = walls ? walls.clMom * wallScale : NaN;
  const gammaWall = walls ? walls.gammaWall * wallScale : NaN;
  return {
    fs,
    pInf,
    taps,
    rows,
    main,
    wake,
    walls,
    uncorrected,
    corrected,
    correction,
    correctionInputs,
    shapes,
    clMomentum,
    gamma: {
      pressure: gammaFromCl(uncorrected.cl, fs.V, setup.model.chord),
      momentum: walls ? gammaFromCl(clMomentum, fs.V, setup.model.chord) : NaN,
      wall: gammaWall,
    },
    lift: correctedLift(corrected, correction, fs.V, clMomentum, gammaWall, setup.model.chord),
  };
}

// ---------------------------------------------------------------------------------------------

/** The taps kept in this run against the automatic test (Settings.keptTaps), in setup order. */
function keptField(setup: Setup, settings: Settings, run: number): { kept?: string[] } {
  const keep = keptFor(settings.keptTaps, run);
  const kept = setup.taps.filter((t) => keep.has(t.id)).map((t) => t.id);
  return kept.length ? { kept } : {};
}

/** The nominal result of a run: a first pass with no taps dropped finds the bad taps, a second
 *  pass (when there are any) drops and bridges them. */
function nominalPass(
  setup: Setup, L: Layout, run: ZeroedRun, settings: Settings,
): { bad: BadTap[]; nominal: CoreOutput; reference: ReferenceFinding[]; choice: ReturnType<typeof correctionSet> } {
  const info = run.info;
  const provisional: CorrectionPlan = {
    method: settings.correction === 'none' ? 'none' : 'barlow-rae-pope',
    maskellTheta: settings.maskellTheta,
    maskellSource: 'pressure',
  };
  const values = (name: string): number => {
    const x = run.values[name];
    if (x === undefined || !Number.isFinite(x)) throw new Error(`Run ${info.run}: channel ${name} has no value.`);
    return x;
  };

  // First pass: Cp with no taps dropped, to detect bad taps. Its loads are the nominal ones only
  // when no tap is bad; with the 'shape' rule it integrates by the linear rule (the shape is
  // fitted once, to the taps kept, in the second pass, which then always runs).
  const shapeRule = settings.contourRule === 'shape';
  const first = runCore(setup, L, info, shapeRule ? { ...settings, contourRule: 'linear' } : settings, { values, alphaDeg: info.alphaDeg, kq: setup.facility.qCalibration, bad: [], correct: provisional });
  const zeroByTap: Record<string, number> | undefined = run.zeroRaw
    ? Object.fromEntries(L.taps.map(({ tap, ch }) => [tap.id, run.zeroRaw![ch.name]]).filter(([, z]) => Number.isFinite(z as number)))
    : undefined;
  // Standard uncertainty of each tap's own Cp (instrument and standard error of its channel), and
  // of a Cp from the references (p∞ channel, q through k_q and Δp_ref): JCGM 100:2008 eq. (10).
  const q = first.fs.qu;
  const chStd = (ch: Channel): number => {
    const x = run.values[ch.name] ?? 0;
    const ui = instrumentStd(ch.uncertainty, x, L.scale.get(ch.name) ?? 1);
    const se = run.stats[ch.name]?.stdErr ?? 0;
    return Math.hypot(ui, se);
  };
  const uCp: Record<string, number> = {};
  for (const { tap, ch } of L.taps) uCp[tap.id] = chStd(ch) / q;
  const uPinfCp = chStd(L.pStatic) / q;
  const dp = run.values[L.dpRef.name];
  const uqRel = Math.hypot(
    Number.isFinite(dp) && dp !== 0 ? chStd(L.dpRef) / Math.abs(dp) : 0,
    (setup.facility.qCalibrationUncertainty ?? 0) / setup.facility.qCalibration,
  );
  const bad = detectBadTaps(first.taps, settings, zeroByTap, settings.leakPa, {
    uCp,
    positionU: setup.model.tapPositionUncertainty,
    keep: keptFor(settings.keptTaps, info.run),
    inviscid: { geometry: setup.model.geometry, alphaDeg: info.alphaDeg, mach: first.fs.M },
  });
  const nominal = bad.length || shapeRule
    ? runCore(setup, L, info, settings, { values, alphaDeg: info.alphaDeg, kq: setup.facility.qCalibration, bad, correct: provisional })
    : first;
  // The references, row by row, from the taps kept (app/tapCheck.ts referenceCheck).
  const badIds = new Set(bad.map((b) => b.id));
  const reference: ReferenceFinding[] = [];
  const rowsSeen = [...new Set(nominal.taps.map((t) => t.row))];
  for (const row of rowsSeen) {
    const kept = nominal.taps.filter((t) => t.row === row && !badIds.has(t.id));
    const f = referenceCheck(
      row, kept,
      (id, cp) => Math.sqrt(Math.max(settings.tapCheckMinU, uCp[id] ?? 0) ** 2 + uPinfCp ** 2 + (cp * uqRel) ** 2),
      first.fs.M, q, settings.stagnationK,
    );
    if (f) reference.push(f);
  }
  // Every correction method side by side, and the one applied ('auto' resolved here, once: the
  // Monte Carlo draws use the same method).
  const choice = correctionSet(
    settings.correction, nominal.correctionInputs, settings,
    nominal.taps.filter((t) => t.row === nominal.main.row),
    wallCpUncertainty(setup, L, run, nominal.uncorrected.q),
  );
  nominal.correction = choice.correction;
  nominal.corrected = choice.corrected;
  return { bad, nominal, reference, choice };
}

/** Uncertainty of the wall Cp for the wall-signature fit, as the wall channels are wired
 *  (app/instruments.ts): each channel's independent part (its own %FS ⊕ offset, or its group's
 *  linearity and zero-drift residual, with the standard error of its mean) and, per transducer
 *  group holding wall channels, the common gain (δCp_i = u_g·p_i/q, p_i the zeroed reading) and the
 *  common zero where no wind-off zero on both sides removes it (δCp = u_z/q). Order: floor, then
 *  ceiling, as the wall Cp go to the fit. Reference-pressure errors (q, p∞) are not in it: they
 *  reach ε through the Monte Carlo draws. */
function wallCpUncertainty(setup: Setup, L: Layout, run: ZeroedRun, q: number): WallCpUncertainty | number {
  const all = [...L.floor, ...L.ceiling];
  if (!all.length || !(q > 0)) return 0;
  const names = all.map(({ ch }) => ch.name);
  const m = instrumentModel(setup, run, names, L.scale);
  const independent = Float64Array.from(m.sd, (v) => v / q);
  const common: Float64Array[] = [];
  m.groups.forEach((g, gi) => {
    const gain = new Float64Array(names.length);
    const zero = new Float64Array(names.length);
    let inGroup = false;
    let zeroCounts = false;
    names.forEach((name, k) => {
      if (m.group[k] !== gi) return;
      inGroup = true;
      gain[k] = (g.gain * (run.values[name] ?? 0) * (L.scale.get(name) ?? 1)) / q;
      if (m.zeroCounts[k]) {
        zero[k] = g.zeroPa / q;
        zeroCounts = true;
      }
    });
    if (inGroup && g.gain > 0) common.push(gain);
    if (zeroCounts && g.zeroPa > 0) common.push(zero);
  });
  return { independent, common };
}

/** How reduceRun evaluates the Monte Carlo draws: 'plan' (default) by the per-run plan of
 *  app/mcPlan.ts, falling back to runCore for a draw the plan does not cover; 'core' by runCore for
 *  every draw (the reference the plan is tested against). Both give the same values. */
export interface ReduceOptions {
  mcPath?: 'plan' | 'core';
  /** How the draws and the budget are run: 'columns' (default) draws every input of every draw in
   *  one pass (runUncertainty) and lets the budget reuse the stages an input does not reach;
   *  'per-draw' is the earlier form (one Draw object, every budget evaluation in full), kept as
   *  the reference test/mc-columns.test.ts compares the default with (identical numbers). */
  mcEngine?: 'columns' | 'per-draw';
}

/** Reduce one data run to its result: every figure, its uncertainty and its flags. */
export function reduceRun(setup: Setup, run: ZeroedRun, settings: Settings, options: ReduceOptions = {}): RunResult {
  const L = layoutOf(setup);
  const info = run.info;
  const { bad, nominal, reference, choice } = nominalPass(setup, L, run, settings);

  // Flags.
  const flags: Flag[] = [];
  const cross = Number.isFinite(nominal.clMomentum)
    ? liftCrossCheck({
        clPressure: nominal.main.cl,
        clMomentum: nominal.clMomentum,
        clWall: nominal.walls?.clWall,
        tolAbs: settings.liftTolAbs,
        tolRel: settings.liftTolRel,
        corrected: { clPressure: nominal.corrected.cl, clMomentum: nominal.lift.clMom },
      })
    : null;
  if (cross) flags.push(cross);
  if (nominal.wake && !nominal.wake.captured) {
    const [lo, hi] = nominal.wake.edgeCpt;
    flags.push(makeFlag('wake-not-captured', { edgeLo: lo, edgeHi: hi, tol: settings.wakeEdgeTol, peakMm: peakY(nominal.wake) * 1000, cd: nominal.wake.cd }));
  }
  const qStats = run.stats[L.dpRef.name];
  if (qStats) {
    const u = unsteadiness(qStats);
    if (u > settings.unsteadyThreshold) {
      flags.push(makeFlag('unsteady', { fraction: u, limit: settings.unsteadyThreshold }));
    }
  }
  const leaks = bad.filter((b) => b.reason === 'leak');
  if (leaks.length) {
    flags.push(makeFlag('leaking-tap', { taps: leaks.map((b) => b.id), leakPa: settings.leakPa }));
  }
  // Taps the user marked are bridged without a flag: the user already knows about them.
  const others = bad.filter((b) => b.reason !== 'leak' && b.reason !== 'marked');
  if (others.length) {
    flags.push(makeFlag('bad-tap', { taps: others.map((b) => ({ id: b.id, reason: b.reason, ...(b.verdict ?? {}) })) }));
  }
  if (reference.length) flags.push(referenceFlag(reference));
  if (!run.zeroRuns.length) {
    flags.push(makeFlag('no-zero', {}));
  } else {
    const limit = settings.zeroDriftFraction * nominal.uncorrected.q;
    const drifting = Object.entries(run.drift).filter(([n, d]) => L.scale.has(n) && !L.angle.has(n) && Math.abs(d) > limit);
    if (drifting.length) {
      const worst = drifting.reduce((a, b) => (Math.abs(b[1]) > Math.abs(a[1]) ? b : a));
      flags.push(makeFlag('zero-drift', {
        channels: drifting.length, fraction: settings.zeroDriftFraction, zeroRuns: run.zeroRuns, worstChannel: worst[0], worstPa: worst[1],
      }));
    }
  }
  const M = nominal.fs.M;
  if (M > settings.machLimit) {
    flags.push(makeFlag('compressible', { M, limit: settings.machLimit }));
  }
  if (choice.flag) flags.push(choice.flag);
  let spanwise: RunResult['spanwise'] = null;
  if (nominal.rows.length > 1) {
    const s = spanLoading(nominal.rows, setup.model.chord, setup.model.span, settings.spanSpreadTol);
    spanwise = { spread: s.spread, CL: s.CL };
    if (s.flag) flags.push(s.flag);
  }

  // Monte Carlo uncertainty on the corrected coefficients and circulations, and the GUM budget.
  let uncertainty: RunResult['uncertainty'] = {};
  let budget: RunResult['budget'];
  let cpU: RunResult['cpU'];
  if (settings.mcDraws > 0) {
    const m = mcModel(setup, L, run, settings, bad, nominal, choice.plan, options.mcPath !== 'core');
    const nominalOut: Record<UKey, number> = {
      cl: nominal.corrected.cl,
      cd: nominal.corrected.cd,
      cdp: nominal.corrected.cdp,
      cmc4: nominal.corrected.cmc4,
      clMom: nominal.lift.clMom,
      gammaPressure: nominal.lift.pressure,
      gammaMomentum: nominal.lift.momentum,
      gammaWall: nominal.lift.wall,
    };
    const perDraw = options.mcEngine === 'per-draw';
    uncertainty = perDraw ? runUncertaintyPerDraw(m, settings, run, nominalOut) : runUncertainty(m, settings, run, nominalOut);
    budget = runBudget(setup, m, run.info.alphaDeg, nominalOut, { staged: !perDraw });
    cpU = tapCpUncertainty(L, m, nominal);
  }

  return {
    run: info.run,
    coreVersion: CORE_VERSION,
    settings,
    air: nominal.fs.air,
    M,
    taps: nominal.taps,
    dropped: bad.map((b) => ({
      id: b.id,
      reason: b.reason,
      by: b.reason === 'marked' ? ('hand' as const) : ('auto' as const),
      ...(b.verdict ?? {}),
    })),
    ...keptField(setup, settings, info.run),
    rows: nominal.rows,
    surface: nominal.main,
    wake: nominal.wake,
    walls: nominal.walls,
    circulation: nominal.gamma,
    circulationCorrected: { pressure: nominal.lift.pressure, momentum: nominal.lift.momentum, wall: nominal.lift.wall },
    correction: nominal.correction,
    corrections: choice.set,
    uncorrected: nominal.uncorrected,
    corrected: nominal.corrected,
    clMomentum: nominal.clMomentum,
    spanwise,
    uncertainty,
    ...(budget ? { budget } : {}),
    ...(cpU ? { cpU } : {}),
    flags,
    inviscid: inviscidCp(setup.model.geometry, nominal.corrected.alphaDeg),
  };
}

/** u(Cp) of every tap for the Cp band: Cp = (p − p∞)/q with the tap's and p∞'s total reading
 *  uncertainties (app/instruments.ts channelSd) and q's relative one (Δp_ref, k_q), in quadrature
 *  (JCGM 100 eq. 10; the tap–p∞ correlation of a shared module is left out, a small overstatement). */
function tapCpUncertainty(L: Layout, m: McModel, nominal: CoreOutput): Record<string, number> {
  const at = new Map(m.names.map((n, k) => [n, k]));
  const sdOf = (name: string) => {
    const k = at.get(name);
    return k === undefined ? 0 : channelSd(m.instruments, k, m.mean[k]);
  };
  const q = nominal.uncorrected.q;
  const kDp = at.get(L.dpRef.name);
  const dp = kDp === undefined ? NaN : m.mean[kDp];
  const uqRel = Math.hypot(sdOf(L.dpRef.name) / dp, m.kqSd / m.kq);
  const uPinf = sdOf(L.pStatic.name);
  const out: Record<string, number> = {};
  for (const t of nominal.taps) {
    const ch = L.byTarget.get(key('tap', t.id));
    if (!ch) continue;
    const u = Math.hypot(Math.hypot(sdOf(ch.name), uPinf) / q, t.cp * uqRel);
    if (Number.isFinite(u)) out[t.id] = u;
  }
  return out;
}

/** y of the largest total-pressure deficit on the rake. */
function peakY(w: WakeResult): number {
  let best = w.profile[0];
  for (const p of w.profile) if (p.cpt < best.cpt) best = p;
  return best ? best.y : NaN;
}


/** The reference flag (app/tapCheck.ts referenceCheck): Cp on the uncorrected basis (q_u) of
 *  every tap Cp, the same numbers as the tap table. */
function referenceFlag(found: readonly ReferenceFinding[]): Flag {
  const w = found.reduce((a, b) => (b.cp > a.cp ? b : a));
  return makeFlag('reference', {
    found: found.map((f) => ({ row: f.row, id: f.id, cp: f.cp, cpStag: f.cpStag, M: f.M, u: f.u })),
    qLowPct: w.qLow * 100,
    staticLowPa: w.staticLowPa,
  });
}

type UKey = UncertaintyKey;

/** The Monte Carlo model of one run: its random inputs and its per-draw evaluation. */
export interface McModel {
  /** Channels drawn, in draw order, with their nominal values and independent standard
   *  uncertainties (app/instruments.ts). */
  names: readonly string[];
  mean: Float64Array;
  sd: Float64Array;
  /** The instrument model: groups with their correlated gain and zero errors. */
  instruments: InstrumentModel;
  /** Taps whose x/c is drawn (in layout order) and the standard uncertainty of each. */
  tapCount: number;
  tapSd: number;
  /** Standard uncertainty of α (deg); k_q and its standard uncertainty (0: not drawn). */
  alphaSd: number;
  kq: number;
  kqSd: number;
  /** The reduction's own errors and the standard uncertainties of the per-draw adjustments
   *  (app/reductionErrors.ts ADJ order). */
  errors: ReductionErrors;
  /** Means of the adjustments (the estimated integration error, app/reductionErrors.ts
   *  adjustmentMean): the draws are of the exact value, so the intervals are placed with it. */
  adjMean: Float64Array;
  adjSd: Float64Array;
  /** The model by runCore: values by `names`, tap offsets by tap, α, k_q, adjustments (none: 0). */
  core(vals: Float64Array, tapDx: Float64Array, alphaDeg: number, kq: number, adj?: Float64Array): Record<UKey, number>;
  /** The model as reduceRun evaluates it (the plan, or runCore where the plan does not cover a
   *  draw or the option asks for runCore). */
  evaluate(vals: Float64Array, tapDx: Float64Array, alphaDeg: number, kq: number, adj?: Float64Array): Record<UKey, number>;
  /** As `evaluate`, writing the outputs into `out` (no allocation on the plan's path). */
  evaluateInto(vals: Float64Array, tapDx: Float64Array, alphaDeg: number, kq: number, adj: Float64Array | undefined, out: McValues): void;
  /** `evaluate` at the budget's base point, keeping its stages (app/mcPlan.ts PlanSnapshot). */
  evaluateBase(vals: Float64Array, tapDx: Float64Array, alphaDeg: number, kq: number, adj?: Float64Array): Record<UKey, number>;
  /** `evaluate` of inputs that differ from the last evaluateBase's only in what `stages` read
   *  (app/mcPlan.ts STAGE_*): the other stages are reused, so the values are those of `evaluate`. */
  evaluateStages(stages: number, vals: Float64Array, tapDx: Float64Array, alphaDeg: number, kq: number, adj?: Float64Array): Record<UKey, number>;
  /** The stages each channel (by `names`) and each tap's x/c reach (STAGE_ALL for all without a plan). */
  stages: { channel: Uint8Array; tap: Uint8Array };
  /** Whether the run has a plan, and how the last `evaluate` went. */
  hasPlan: boolean;
  last: { path: 'plan' | 'core'; reordered: boolean };
}

/** The main row's good taps of the nominal pass in contour order, as arrays, with each tap's Cp
 *  standard uncertainty from its own channel's independent errors (`uPa`: Pa by channel name). */
function mainRowArrays(nominal: CoreOutput, mainRow: string, L: Layout, uPa: ReadonlyMap<string, number>) {
  const good = orderContour(nominal.taps.filter((t) => t.row === mainRow && !t.bad));
  let nUpper = 0;
  while (nUpper < good.length && good[nUpper].surface === 'upper') nUpper++;
  const chOf = new Map(L.taps.map(({ tap, ch }) => [tap.id, ch.name]));
  const q = nominal.fs.qu;
  const ucp = good.map((t) => (uPa.get(chOf.get(t.id) ?? '') ?? 0) / Math.abs(q));
  const sh = nominal.main.rule === 'shape' ? nominal.shapes.get(mainRow) : null;
  const v = sh ? good.map((t) => sh.v.get(t.id)) : [];
  const shape = sh && v.every((f) => f !== undefined) ? { v: v as number[], cn: sh.cn, ca: sh.ca, cmLE: sh.cmLE, fitX: sh.fitX, u: sh.u, halves: sh.halves } : undefined;
  return { x: good.map((t) => t.x), y: good.map((t) => t.y), cp: good.map((t) => t.cp), n: good.length, nUpper, ucp, ...(shape ? { shape } : {}) };
}

function mcModel(
  setup: Setup, L: Layout, run: ZeroedRun, settings: Settings, bad: { id: string; reason: string }[],
  nominal: CoreOutput, correct: CorrectionPlan, usePlan: boolean,
): McModel {
  const names = setup.channels.map((c) => c.name).filter((n) => run.values[n] !== undefined);
  const instruments = instrumentModel(setup, run, names, L.scale);
  const mean = Float64Array.from(names, (n) => run.values[n]);
  const sd = instruments.sd;
  // A name drawn twice (duplicate channel names) is read at its last draw, as a record would be.
  const index = new Map<string, number>();
  names.forEach((n, k) => index.set(n, k));
  const uPa = new Map(names.map((n, k) => [n, sd[k]]));
  const errors = reductionErrors({
    row: mainRowArrays(nominal, nominal.main.row, L, uPa),
    alphaDeg: run.info.alphaDeg,
    wake: nominal.wake,
    walls: nominal.walls,
    chord: setup.model.chord,
    height: setup.facility.sectionHeight,
    correction: nominal.correction,
    rule: nominal.main.rule ?? 'linear',
  });

  const perturbed: Record<string, number> = {};
  const values = (n: string) => perturbed[n];
  const outputs = (out: CoreOutput): Record<UKey, number> => ({
    cl: out.corrected.cl,
    cd: out.corrected.cd,
    cdp: out.corrected.cdp,
    cmc4: out.corrected.cmc4,
    clMom: out.lift.clMom,
    gammaPressure: out.lift.pressure,
    gammaMomentum: out.lift.momentum,
    gammaWall: out.lift.wall,
  });
  const core = (vals: Float64Array, tapDx: Float64Array, alphaDeg: number, kq: number, adj?: Float64Array): Record<UKey, number> => {
    for (let k = 0; k < names.length; k++) perturbed[names[k]] = vals[k];
    return outputs(runCore(setup, L, run.info, settings, { values, alphaDeg, kq, tapDx, adj, bad, correct, shapes: nominal.shapes }));
  };

  const plan: McPlan | null = usePlan
    ? buildMcPlan(setup, planLayout(L), run.info, correct, bad, {
        mainRow: nominal.main.row,
        walls: nominal.walls,
        rule: nominal.main.rule ?? 'linear',
        shape: nominal.shapes.get(nominal.main.row) ?? null,
      }, index)
    : null;
  const o: McValues = { cl: NaN, cd: NaN, cdp: NaN, cmc4: NaN, clMom: NaN, gammaPressure: NaN, gammaMomentum: NaN, gammaWall: NaN };
  const snap: PlanSnapshot | null = plan ? planSnapshot(plan) : null;
  let snapValid = false;
  const stages = plan
    ? inputStages(plan, names.length)
    : { channel: new Uint8Array(names.length).fill(STAGE_ALL), tap: new Uint8Array(L.taps.length).fill(STAGE_ALL) };
  const model: McModel = {
    names,
    mean,
    sd,
    instruments,
    tapCount: L.taps.length,
    tapSd: setup.model.tapPositionUncertainty,
    alphaSd: setup.model.alphaUncertaintyDeg,
    kq: setup.facility.qCalibration,
    kqSd: setup.facility.qCalibrationUncertainty ?? 0,
    errors,
    adjMean: adjustmentMean(errors),
    adjSd: adjustmentSd(errors),
    core,
    hasPlan: plan !== null,
    last: { path: 'core', reordered: false },
    evaluate(vals, tapDx, alphaDeg, kq, adj) {
      if (plan && evalMcPlan(plan, vals, tapDx, alphaDeg, kq, o, adj)) {
        model.last.path = 'plan';
        model.last.reordered = plan.reordered;
        return { ...o };
      }
      model.last.path = 'core';
      model.last.reordered = false;
      return core(vals, tapDx, alphaDeg, kq, adj);
    },
    evaluateInto(vals, tapDx, alphaDeg, kq, adj, out) {
      if (plan && evalMcPlan(plan, vals, tapDx, alphaDeg, kq, out, adj)) return;
      const y = core(vals, tapDx, alphaDeg, kq, adj);
      out.cl = y.cl;
      out.cd = y.cd;
      out.cdp = y.cdp;
      out.cmc4 = y.cmc4;
      out.clMom = y.clMom;
      out.gammaPressure = y.gammaPressure;
      out.gammaMomentum = y.gammaMomentum;
      out.gammaWall = y.gammaWall;
    },
    evaluateBase(vals, tapDx, alphaDeg, kq, adj) {
      snapValid = false;
      if (plan && snap && evalPlanStages(plan, vals, tapDx, alphaDeg, kq, o, adj, STAGE_ALL, snap, true)) {
        snapValid = true;
        model.last.path = 'plan';
        model.last.reordered = plan.reordered;
        return { ...o };
      }
      return model.evaluate(vals, tapDx, alphaDeg, kq, adj);
    },
    evaluateStages(st, vals, tapDx, alphaDeg, kq, adj) {
      if (!(plan && snap && snapValid)) return model.evaluate(vals, tapDx, alphaDeg, kq, adj);
      if (evalPlanStages(plan, vals, tapDx, alphaDeg, kq, o, adj, st, snap, false)) {
        model.last.path = 'plan';
        model.last.reordered = plan.reordered;
        return { ...o };
      }
      model.last.path = 'core';
      model.last.reordered = false;
      return core(vals, tapDx, alphaDeg, kq, adj);
    },
    stages,
  };
  return model;
}

const planLayouts = new WeakMap<Layout, PlanLayout>();

function planLayout(L: Layout): PlanLayout {
  const hit = planLayouts.get(L);
  if (hit) return hit;
  const P: PlanLayout = {
    dpRef: L.dpRef.name,
    pStatic: L.pStatic.name,
    ...(L.pTotal ? { pTotal: L.pTotal.name } : {}),
    taps: L.taps.map(({ tap, ch }) => ({ id: tap.id, x: tap.x, y: tap.y, surface: tap.surface, row: tap.row, ch: ch.name })),
    rakeTotal: L.rakeTotal.map((r) => ({ y: r.y, ch: r.ch.name })),
    rakeStatic: L.rakeStatic.map((r) => ({ y: r.y, ch: r.ch.name })),
    rakeAngle: L.rakeAngle.map((r) => ({ y: r.y, ch: r.ch.name })),
    floor: L.floor.map((f) => ({ x: f.x, ch: f.ch.name })),
    ceiling: L.ceiling.map((c) => ({ x: c.x, ch: c.ch.name })),
    mainRow: L.mainRow,
    areaC2: L.areaC2,
    signature: L.signature,
  };
  planLayouts.set(L, P);
  return P;
}

const KEYS_MC: UKey[] = ['cl', 'cd', 'cdp', 'cmc4', 'clMom', 'gammaPressure', 'gammaMomentum', 'gammaWall'];
/** The deviates of a block of draws and the output columns (grown as needed, reused from run to
 *  run on this thread). */
let deviates = new Float64Array(0);
let columns: Float64Array[] = [];

/** Draws whose deviates are made in one pass (bounds the buffer: ~0.75 MB for the bench's run). */
const MC_BLOCK = 256;

/** JCGM 101 Monte Carlo of one run (the draw order of runUncertaintyPerDraw, which see): the
 *  standard normal deviates of a block of draws first, in one pass over the seeded stream
 *  (app/uncertainty.ts NormalStream), then each draw's inputs as mean + u·z from its part of the
 *  block and its outputs straight into one Float64Array column per output — no per-draw objects.
 *  The same draws in the same order with the same arithmetic, so the same numbers. */
function runUncertainty(m: McModel, settings: Settings, run: ZeroedRun, nominal: Record<UKey, number>): Partial<Record<UKey, Interval>> {
  const draws = settings.mcDraws;
  if (!Number.isInteger(draws) || draws < 2) {
    throw new RangeError(`monteCarlo: draws must be an integer ≥ 2 (got ${draws})`);
  }
  const { mean, sd, tapSd, adjMean, adjSd } = m;
  const groups = m.instruments.groups;
  const nCh = mean.length;
  const nTap = m.tapCount;
  const nG = groups.length;
  const withKq = m.kqSd > 0;
  const per = nCh + nTap + 1 + (withKq ? 1 : 0) + 2 * nG + ADJ_LENGTH;
  const block = Math.min(draws, MC_BLOCK);
  if (deviates.length < block * per) deviates = new Float64Array(block * per);
  const z = deviates;
  const stream = new NormalStream(settings.mcSeed + run.info.run);
  if (!columns.length || columns[0].length < draws) columns = KEYS_MC.map(() => new Float64Array(draws));
  const [cCl, cCd, cCdp, cCm, cMom, cGp, cGm, cGw] = columns;
  const vals = new Float64Array(nCh);
  const tapDx = new Float64Array(nTap);
  const gain = new Float64Array(nG);
  const zero = new Float64Array(nG);
  const adj = new Float64Array(ADJ_LENGTH);
  const out: McValues = { cl: NaN, cd: NaN, cdp: NaN, cmc4: NaN, clMom: NaN, gammaPressure: NaN, gammaMomentum: NaN, gammaWall: NaN };
  const alpha0 = run.info.alphaDeg;
  const { alphaSd, kq: kq0, kqSd } = m;
  for (let d = 0, o = 0; d < draws; d++) {
    if (d % block === 0) {
      stream.fill(z, Math.min(block, draws - d) * per);
      o = 0;
    }
    for (let k = 0; k < nCh; k++) vals[k] = mean[k] + sd[k] * z[o++];
    for (let i = 0; i < nTap; i++) tapDx[i] = 0 + tapSd * z[o++];
    const alphaDeg = alpha0 + alphaSd * z[o++];
    const kq = withKq ? kq0 + kqSd * z[o++] : kq0;
    if (nG) {
      for (let g = 0; g < nG; g++) {
        gain[g] = 0 + groups[g].gain * z[o++];
        zero[g] = 0 + groups[g].zeroPa * z[o++];
      }
      addGroupErrors(m.instruments, mean, vals, gain, zero);
    }
    for (let j = 0; j < ADJ_LENGTH; j++) adj[j] = adjMean[j] + adjSd[j] * z[o++];
    m.evaluateInto(vals, tapDx, alphaDeg, kq, adj, out);
    cCl[d] = out.cl;
    cCd[d] = out.cd;
    cCdp[d] = out.cdp;
    cCm[d] = out.cmc4;
    cMom[d] = out.clMom;
    cGp[d] = out.gammaPressure;
    cGm[d] = out.gammaMomentum;
    cGw[d] = out.gammaWall;
  }
  const result: Partial<Record<UKey, Interval>> = {};
  for (let k = 0; k < KEYS_MC.length; k++) {
    const iv = coverageInterval(columns[k].subarray(0, draws));
    if (!Number.isFinite(iv.value)) continue;
    result[KEYS_MC[k]] = holdingValue(nominal[KEYS_MC[k]], iv);
  }
  return result;
}

/** The interval of one output on its nominal value: the Monte Carlo coverage interval (JCGM 101
 *  §7.7) of the draws, which are of the exact value (the estimated integration error is in their
 *  means, McModel.adjMean), stretched where needed to hold the reported value itself — the
 *  reported value is not corrected for that error (JCGM 100 §F.2.4.5 in spirit, memory), so the
 *  interval reaches from it to the side where the error puts the exact value. Measured on exact
 *  data the stretch changes the coverage by at most 0.3 % (docs/UNCERTAINTY.md). */
function holdingValue(value: number, iv: Interval): Interval {
  return { value, u: iv.u, lo: Math.min(iv.lo, value), hi: Math.max(iv.hi, value), mean: iv.value };
}

/** The per-draw form of runUncertainty (ReduceOptions.mcEngine 'per-draw'): the same draws
 *  through one Draw object, a model call per draw. JCGM 101 Monte Carlo of one run, every input drawn from one seeded stream in this order: each
 *  channel's independent error (instrument or linearity, standard error, drift residual), the tap
 *  positions, α, k_q; then, when the setup has transducer groups, each group's gain and zero; then
 *  the reduction's own errors (ADJ order). The intervals sit on the nominal values (`nominal`),
 *  the mean of the draws kept beside them. */
function runUncertaintyPerDraw(m: McModel, settings: Settings, run: ZeroedRun, nominal: Record<UKey, number>): Partial<Record<UKey, Interval>> {
  const { mean, sd, tapSd, adjMean, adjSd } = m;
  const groups = m.instruments.groups;
  const vals = new Float64Array(mean.length);
  const tapDx = new Float64Array(m.tapCount);
  const gain = new Float64Array(groups.length);
  const zero = new Float64Array(groups.length);
  const adj = new Float64Array(ADJ_LENGTH);
  const mc = monteCarlo<UKey>(settings.mcDraws, settings.mcSeed + run.info.run, (d) => {
    for (let k = 0; k < vals.length; k++) vals[k] = d.normal(mean[k], sd[k]);
    for (let i = 0; i < tapDx.length; i++) tapDx[i] = d.normal(0, tapSd);
    const alphaDeg = d.normal(run.info.alphaDeg, m.alphaSd);
    const kq = m.kqSd > 0 ? d.normal(m.kq, m.kqSd) : m.kq;
    if (groups.length) {
      for (let g = 0; g < groups.length; g++) {
        gain[g] = d.normal(0, groups[g].gain);
        zero[g] = d.normal(0, groups[g].zeroPa);
      }
      addGroupErrors(m.instruments, mean, vals, gain, zero);
    }
    for (let j = 0; j < ADJ_LENGTH; j++) adj[j] = d.normal(adjMean[j], adjSd[j]);
    return m.evaluate(vals, tapDx, alphaDeg, kq, adj);
  });
  const out: Partial<Record<UKey, Interval>> = {};
  for (const k of Object.keys(mc) as UKey[]) {
    const iv = mc[k];
    if (!Number.isFinite(iv.value)) continue;
    out[k] = holdingValue(nominal[k], iv);
  }
  return out;
}

/**
 * For tests (test/mc-fast.test.ts): the Monte Carlo model of one run, after the nominal pass of
 * reduceRun, with the plan when `usePlan` (default) and the run allows one.
 */
export function uncertaintyModel(setup: Setup, run: ZeroedRun, settings: Settings, usePlan = true): McModel {
  const L = layoutOf(setup);
  const { bad, nominal, choice } = nominalPass(setup, L, run, settings);
  return mcModel(setup, L, run, settings, bad, nominal, choice.plan, usePlan);
}

// ---------------------------------------------------------------------------------------------
// Session.

/** The momentum-method cl put on the corrected basis of the pressure cl (same factor
 *  1 − σ − 2ε, REDUCTION.md §8; the value its interval sits on). */
export function correctedMomentumCl(r: Pick<ResultDigest, 'correction' | 'clMomentum'>): number {
  return r.clMomentum * (1 - r.correction.sigma - 2 * r.correction.eps);
}

/** The polar error bars of a result: its 95 % intervals of cl, cl_mom, cd (wake) and cm, or null. */
export function polarIntervals(r: Pick<RunResult, 'uncertainty'>): PolarIntervals | null {
  const out: PolarIntervals = {};
  for (const k of ['cl', 'clMom', 'cd', 'cmc4'] as const) {
    const iv = r.uncertainty[k];
    if (iv && Number.isFinite(iv.lo) && Number.isFinite(iv.hi)) out[k] = [iv.lo, iv.hi];
  }
  return Object.keys(out).length ? out : null;
}

/** A digest's stored intervals, or a full result's own. */
function intervalsOf(r: ResultDigest | RunResult): { intervals?: PolarIntervals } {
  const iv = ('intervals' in r ? r.intervals : undefined) ?? ('uncertainty' in r ? polarIntervals(r) : null);
  return iv ? { intervals: iv } : {};
}

/** String.prototype.localeCompare's own order (default locale and options), one collator reused:
 *  localeCompare builds one per call, which dominated the summary of a 300-run day. */
const timeOrder = new Intl.Collator();

/** Session summary from the results (or their stored digests, ResultDigest) and the run index. */
function withChannelFindings(
  taps: ReturnType<typeof sessionFindings>, channels: SessionFinding[],
): ReturnType<typeof sessionFindings> {
  if (!channels.length) return taps;
  // A tap whose channel is dead or saturated gets that finding only: it is the cause (a frozen
  // output off the other zeros also reads as a leak). Its runs' flags stay explained.
  const cause = new Set(channels.map((c) => c.tap));
  return { ...taps, findings: [...taps.findings.filter((f) => !cause.has(f.tap)), ...channels] };
}

/** The session summary; `channelRuns` (every run's channel statistics, wind-off zeros included)
 *  adds the dead and saturated channels to the findings (app/sessionFaults.ts channelFindings). */
export function summariseSession(setup: Setup, results: ResultDigest[], infos: RunInfo[], channelRuns?: readonly ChannelRun[]): SessionSummary {
  const byRun = new Map(infos.map((i) => [i.run, i]));
  const rows = results
    .map((r) => ({ r, info: byRun.get(r.run) }))
    .filter((x): x is { r: ResultDigest; info: RunInfo } => x.info !== undefined)
    .sort((a, b) => timeOrder.compare(a.info.time, b.info.time));
  const found = withChannelFindings(sessionFindings(rows.map(({ r }) => r)), channelRuns ? channelFindings(setup, channelRuns) : []);
  // The notes and the runs needing a decision from the same, final findings (a channel finding
  // explains its tap's flags as the tap's own finding did).
  const noted = notedFlags(rows.map(({ r }) => r), found.findings);
  const notedCount = new Map(noted.map((x) => [x.run, x.flags.length]));
  const polar: PolarPoint[] = rows.map(({ r, info }) => ({
    run: r.run,
    alphaDeg: r.corrected.alphaDeg,
    cl: r.corrected.cl,
    clMom: correctedMomentumCl(r),
    cd: Number.isFinite(r.corrected.cd) ? r.corrected.cd : r.corrected.cdp,
    cdp: r.corrected.cdp,
    cmc4: r.corrected.cmc4,
    time: info.time,
    // a flag of its own: the notes of the session findings do not count
    flagged: r.flags.length > (notedCount.get(r.run) ?? 0),
    ...intervalsOf(r),
  }));
  // Statistics from the runs nobody should reject (runs with a 'reject' flag are left out).
  const usable = rows.filter(({ r }) => !r.flags.some((f) => f.severity === 'reject'));
  const stats = usable.length >= 3
    ? sessionStats(usable.map(({ r, info }) => ({
        run: r.run,
        alphaDeg: r.corrected.alphaDeg,
        cl: r.corrected.cl,
        cd: Number.isFinite(r.corrected.cd) ? r.corrected.cd : r.corrected.cdp,
        cmc4: r.corrected.cmc4,
        time: info.time,
      })))
    : null;
  const span = rows
    .filter(({ r }) => r.rows.length > 1)
    .map(({ r }) => {
      const s = spanLoading(r.rows, setup.model.chord, setup.model.span, r.settings.spanSpreadTol);
      return { run: r.run, alphaDeg: r.corrected.alphaDeg, z: s.z, cl: s.cl, CL: s.CL };
    });
  const range = (f: (x: { r: ResultDigest; info: RunInfo }) => number): [number, number] => {
    const v = rows.map(f).filter(Number.isFinite);
    return v.length ? [Math.min(...v), Math.max(...v)] : [NaN, NaN];
  };
  const [qMin, qMax] = range(({ r }) => r.corrected.q);
  const [ReMin, ReMax] = range(({ r }) => r.corrected.Re);
  const [alphaMin, alphaMax] = range(({ r }) => r.corrected.alphaDeg);
  const [tempMin, tempMax] = range(({ info }) => info.temperatureC);
  const [baroMin, baroMax] = range(({ info }) => info.baro);
  return {
    stats,
    flagged: rows.filter(({ r }) => r.flags.length).map(({ r }) => ({ run: r.run, flags: r.flags })),
    findings: found.findings,
    needsDecision: rows.filter(({ r }) => r.flags.length > (notedCount.get(r.run) ?? 0)).map(({ r }) => r.run),
    noted,
    conditions: rows.length ? { qMin, qMax, ReMin, ReMax, alphaMin, alphaMax, tempMin, tempMax, baroMin, baroMax } : null,
    polar,
    span,
  };
}

/** Raw runs → results and summary (tests, bench, CLI without a store). */
export function reduceRawSession(
  setup: Setup, raws: RawRun[], overrides?: Partial<Settings>,
): { results: RunResult[]; summary: SessionSummary } {
  const settings = resolveSettings(setup, overrides);
  const averaged = averageRuns(raws, settings);
  const zeroed = prepareRuns(setup, averaged);
  const results = zeroed.map((z) => reduceRun(setup, z, settings));
  return { results, summary: summariseSession(setup, results, raws.map((r) => r.info), averaged) };
}
