// Demo scenario generator: an invented test day in an invented facility (Harrowgate Aeronautical
// Laboratory, No. 2 low-speed tunnel; model HAL-S4412, a NACA 4412 section). Every number below that
// describes the facility, the model, the people or the flow "as measured" is invented demo data.
//
// The pressures come from the physics of REDUCTION.md so that the reduction methods agree where they
// should:
// - Surface Cp: the linear-vortex panel method of app/panel.ts at an effective angle, with invented
//   but plausible viscous changes (a leading-edge suction factor, a smooth trailing-edge recovery
//   deficit, a trailing-edge separation plateau that moves forward with α and jumps forward at stall,
//   with hysteresis). The effective angle and the suction factor are solved so that the Cp integrated
//   on the panel contour gives an invented target polar cl(α), cd_p(α). Generated in the tunnel
//   frame: tunnel upwash and streamline curvature are NOT modelled (the core's wall corrections are
//   applied to data that does not contain them; the demo is a reduction exercise, not a
//   wall-interference study).
// - Walls (REDUCTION.md §5): the wall speed is u/V = 1 + e(x) + b(x) ± g(x) and Cp = 1 − (u/V)²
//   (exact Bernoulli). g(x) = (Γ/2hV)·sech(πx/h) is the bound vortex and its images (Milne-Thomson,
//   Theoretical Hydrodynamics, method of images; complex potential −(iΓ/2π) ln tanh(πz/2h)),
//   + on the ceiling, − on the floor (clockwise Γ speeds the ceiling), plus the shift of that vortex to
//   the centre of pressure (δ = −cm_c/4·c/cl). b(x) is symmetric on both
//   walls: a solid-blockage doublet m = V·A(1 + t/c)/2π (far-field doublet of an ellipse of the same
//   area and thickness ratio, Milne-Thomson, from memory) whose images give (m/V)(π/h)²sech²(πx/h),
//   plus a wake-blockage source Q = ½Vc·cd at the trailing edge giving (Q/2hV)(1 + tanh(πx/h))
//   (past stall the separated wake's Q = θVc·cd_p, Maskell's blockage with θ = 0.96)
//   (channel source, derived here by images: velocity (Q/2h)coth(πz/h) plus the uniform Q/2h that
//   keeps the upstream speed fixed). e(x) is an invented empty-tunnel speed gradient.
//   Γ = ½V c cl/(1 + b̄), b̄ the sech-weighted mean of e + b on the walls: with Cp_f − Cp_c =
//   4g(1 + e + b) exactly, this makes the floor − ceiling integral (momentum lift) give exactly the cl
//   the surface was generated with, and the circulation integral give Γ (Kutta–Joukowski with the
//   local, blockage-raised speed). So cl_mom = cl_p and cl_wall = cl_p/(1 + b̄), b̄ ≈ 0.5–2 %.
// - Wake (REDUCTION.md §4): a Gaussian total-pressure deficit, centred where the trailing-edge
//   streamline is carried by the downwash of the bound vortex and its images,
//   v(x) = Γ/(2h sinh(πx/h)) on the centreline (same complex potential), whose Jones integral with
//   the generated rake static pressure equals an invented profile-drag polar. Rake statics read below
//   p∞ (wake blockage plus an invented near-wake depression).
// - Free stream: q = ½ρV² with ρ from app/air.ts (CIPM-2007 humid air); p∞ − p_ref = −0.08 q;
//   H∞ = p∞ + q; Δp_ref = q/k_q. Every pressure channel is a differential against the laboratory
//   ambient (the test-section plenum chamber is vented to the laboratory through the breather, and
//   every transducer reference port is piped to it), i.e. the barometer pressure.
// - Samples: 100 Hz, per-channel Gaussian noise, tunnel q unsteadiness as a first-order
//   autoregressive process shared by all wind-on channels, rare electrical spikes on scanner channels
//   (removed by the core's spike rejection), per-channel wind-off zero offsets drifting linearly
//   through the day (plus the hydrostatic head of each station about the centreline).
//
// Everything is deterministic for a seed, and runs() is lazy: one RawRun exists at a time.

import type {
  Channel, ChannelUnit, FlagCode, InstrumentUncertainty, RakeProbe, RawRun, RunInfo, Setup, Surface, TransducerGroup,
  Tap, WallTap,
} from '../../app/types';
import { geometryPoints, naca4Point, panelSolve } from '../../app/panel';
import { airState } from '../../app/air';

// ================================================================================================
// Public types

export interface DemoOptions {
  /** Random seed (default 20261118). */
  seed?: number;
  /** 'day' (the 52-run test day) or a total number of runs (zeros included). */
  runs?: 'day' | number;
  /** Total chordwise taps over all rows (default 80: 60 on row C, 10 each on rows P and S). */
  taps?: number;
  /** Rake probes, total + static (default 40: 37 total, 3 static). */
  rakeProbes?: number;
  /** Static taps PER WALL (default 30 on the floor and 30 on the ceiling). */
  wallTaps?: number;
  /** Samples per channel per run (default 200, at 100 Hz). */
  samples?: number;
  /** Plant the five faults (default true). */
  faults?: boolean;
}

/** A planted fault and what the core is expected to report. */
export interface PlantedFault {
  /** A data run on which the core must raise `code` (the first one when several are affected). */
  run: number;
  code: FlagCode;
  what: string;
  /** 'session': the fault affects every data run (the leaking tap); 'run': the listed runs only. */
  scope: 'run' | 'session';
  /** Every data run on which the core must raise `code`. */
  runs: number[];
  /** The tap concerned (leaking tap). */
  tap?: string;
  /** Channels concerned. */
  channels?: string[];
  /** The wind-off zero run carrying the fault (zero drift). */
  zeroRun?: number;
}

/** What was put into one data run (for tests and for the curious; not part of any log). */
export interface DemoRunTruth {
  run: number;
  alphaDeg: number;
  stalled: boolean;
  /** Free stream: q (Pa), V (m/s), ρ (kg/m³), Re, p∞ gauge (Pa, against the laboratory ambient). */
  q: number;
  V: number;
  rho: number;
  Re: number;
  pInf: number;
  /** cl, cd_p, cm_c/4 of the generated surface distribution of row C (panel-contour integral). */
  cl: number;
  cdp: number;
  cmc4: number;
  /** The lift the walls see (= cl except for the stall-cell fault run). */
  clWalls: number;
  /** Bound circulation put into the walls, m²/s: ½ V c clWalls / (1 + bBar). */
  gamma: number;
  /** sech-weighted symmetric wall speed increment (blockage + empty-tunnel gradient). */
  bBar: number;
  /** Jones drag of the generated (continuous) wake profile. */
  cdWake: number;
  /** Wake centre and Gaussian σ, m, in tunnel coordinates; peak deficit of (H − p∞)/q. */
  wakeCentre: number;
  wakeSigma: number;
  wakeDeficit: number;
  /** Rake height error of the run (m; the probes sat this far from their logged y). */
  rakeOffset: number;
  /** Upper-surface separation point x/c (1 = attached to the trailing edge). */
  separation: number;
  /** Shape parameters of the surface Cp: panel-method angle, leading-edge suction factor, aft
   *  de-cambering amplitude (ΔCp). */
  alphaEffDeg: number;
  suctionFactor: number;
  decamber: number;
  /** std/mean of the generated q fluctuation model (not of the drawn samples). */
  qUnsteadiness: number;
}

export interface DemoSession {
  setup: Setup;
  index: RunInfo[];
  runs(): Iterable<RawRun>;
  faults: PlantedFault[];
  /** Generated truth of a data run (undefined for zero runs and unknown runs). */
  truth(run: number): DemoRunTruth | undefined;
  /** Sample rate of the generated samples, Hz. */
  sampleRateHz: number;
}

// ================================================================================================
// Scenario constants (invented)

export const DEMO_SEED = 20261118;
export const SAMPLE_RATE_HZ = 100;
const CHORD = 0.25;
const SPAN = 0.6;
const H = 0.9;
const WIDTH = 0.6;
const KQ = 1.038;
const NACA = '4412';
const RAKE_X = 0.75;
/** Maskell's 2-D blockage factor of the separated wake the walls see past stall (app/corrections.ts). */
const MASKELL_THETA_DEMO = 0.96;
const RAKE_HALF = 0.12;
const WALL_X1 = -1.8;
const WALL_X2 = 1.8;
/** p∞ − p_ambient as a fraction of q (closed section, breather at the diffuser entry). */
const PINF_FRACTION = -0.08;
const V_SET = 45;
const N_PANELS = 240;
const START_ISO = '2026-11-18T09:05:00Z';
const G_N = 9.80665;

/** Fault placement (run numbers in the day pattern; also used for longer sessions). */
const WAKE_RUN = 11;
const UNSTEADY_RUN = 17;
const CELL_RUN = 30;
const STEP_ZERO_RUN = 49;
/** Offset step of every surface-tap channel from the STEP_ZERO_RUN on, Pa. */
const ZERO_STEP_PA = 24;
/** Rake height error of WAKE_RUN, m (probes sat this much lower than logged). */
const RAKE_OFFSET = -0.145;
/** The leaking tap: row C upper surface, nearest this x/c. */
const LEAK_XC = 0.3;
const LEAK_ZERO_PA = 46;
const LEAK_FRACTION = 0.4;

/** α of the data runs of one day, in order: up-sweep, down-sweep, two repeats (up direction). */
const DAY_ALPHAS: number[] = [
  ...Array.from({ length: 25 }, (_, i) => -6 + i),
  17, 16, 15, 14, 13, 12, 11, 10, 8, 6, 4, 2, 0, -2, -4,
  4, 10,
];
const DATA_PER_BLOCK = 5;
const DAY_RUNS = 52;

// ================================================================================================
// Random numbers: xoshiro128** (Blackman & Vigna, "Scrambled linear pseudorandom number generators",
// 2018) seeded through splitmix32; Box–Muller normals. One independent stream per (run, channel).

function splitmix32(state: number): () => number {
  let s = state >>> 0;
  return () => {
    s = (s + 0x9e3779b9) >>> 0;
    let z = s;
    z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
    z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
    return (z ^ (z >>> 16)) >>> 0;
  };
}

function mix(...parts: number[]): number {
  let h = 0x811c9dc5;
  for (const p of parts) {
    h = Math.imul(h ^ (p >>> 0), 0x01000193);
    h ^= h >>> 15;
    h = Math.imul(h, 0x2c1b3c6d);
    h ^= h >>> 12;
  }
  return h >>> 0;
}

export class Rng {
  private a: number;
  private b: number;
  private c: number;
  private d: number;
  private spare = NaN;
  constructor(seed: number) {
    const sm = splitmix32(seed);
    this.a = sm();
    this.b = sm();
    this.c = sm();
    this.d = sm();
    if ((this.a | this.b | this.c | this.d) === 0) this.a = 1;
  }
  next32(): number {
    const r = Math.imul(rotl(Math.imul(this.b, 5), 7), 9) >>> 0;
    const t = this.b << 9;
    this.c ^= this.a;
    this.d ^= this.b;
    this.b ^= this.c;
    this.a ^= this.d;
    this.c ^= t;
    this.d = rotl(this.d, 11);
    return r;
  }
  /** Uniform in [0, 1). */
  uniform(): number {
    return this.next32() / 4294967296;
  }
  /** Uniform in [lo, hi). */
  range(lo: number, hi: number): number {
    return lo + (hi - lo) * this.uniform();
  }
  /** Standard normal (Box–Muller). */
  normal(): number {
    if (!Number.isNaN(this.spare)) {
      const s = this.spare;
      this.spare = NaN;
      return s;
    }
    const u1 = (this.next32() + 1) / 4294967297;
    const u2 = this.next32() / 4294967296;
    const r = Math.sqrt(-2 * Math.log(u1));
    this.spare = r * Math.sin(2 * Math.PI * u2);
    return r * Math.cos(2 * Math.PI * u2);
  }
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}

// ================================================================================================
// Small helpers

const DEG = Math.PI / 180;
const clamp = (x: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, x));
const smoothstep = (t: number) => {
  const u = clamp(t, 0, 1);
  return u * u * (3 - 2 * u);
};
const sech = (z: number) => 1 / Math.cosh(z);
const round = (x: number, d: number) => Math.round(x * 10 ** d) / 10 ** d;
const pad = (n: number, w = 2) => String(n).padStart(w, '0');

function isoTime(ms: number): string {
  return new Date(ms).toISOString().replace(/\.\d{3}Z$/, 'Z');
}

function checkInt(name: string, v: number, min: number): number {
  if (!Number.isInteger(v) || v < min) {
    throw new RangeError(`demoSession: option ${name} must be an integer ≥ ${min} (got ${v})`);
  }
  return v;
}

function unc(fullScale: number, percentFullScale: number, offset: number): InstrumentUncertainty {
  return { fullScale, percentFullScale, offset };
}

// ================================================================================================
// Instrumentation layout

/** The scanner modules of the invented Harrowgate installation (figures invented, of the order a
 *  calibrated electronic scanner holds): row C on a 10 kPa module (leading-edge region) and a
 *  2.5 kPa module, the side rows on the older inch-of-water scanner (two ranges), the wake rake on
 *  its own module together with the free-stream pitot-static pair (H∞ and p∞), and the wall taps
 *  on a fifth. Δp_ref has a transducer of its own and keeps its channel figures. */
function demoGroups(L: Layout): TransducerGroup[] {
  const names = (f: (s: ChannelSpec) => boolean) => L.specs.filter(f).map((s) => s.channel.name);
  const tapFs = (s: ChannelSpec) => (s.channel.target.kind === 'tap' ? s.channel.uncertainty.fullScale : NaN);
  const onRow = (s: ChannelSpec, c: boolean) => s.channel.target.kind === 'tap' && (s.channel.name.startsWith('S_C') === c);
  const groups: TransducerGroup[] = [
    { id: 'SCN-C10K', channels: names((s) => onRow(s, true) && tapFs(s) === 10000), unit: 'kPa', fullScale: 10, gainPercent: 0.05, zero: 0.005, linearityPercentFS: 0.03 },
    { id: 'SCN-C2K5', channels: names((s) => onRow(s, true) && tapFs(s) === 2500), unit: 'Pa', fullScale: 2500, gainPercent: 0.05, zero: 2, linearityPercentFS: 0.03 },
    { id: 'SCN-SIDE40', channels: names((s) => onRow(s, false) && tapFs(s) === 40), unit: 'inH2O', fullScale: 40, gainPercent: 0.08, zero: 0.01, linearityPercentFS: 0.05 },
    { id: 'SCN-SIDE10', channels: names((s) => onRow(s, false) && tapFs(s) === 10), unit: 'inH2O', fullScale: 10, gainPercent: 0.08, zero: 0.005, linearityPercentFS: 0.05 },
    {
      id: 'SCN-RAKE',
      channels: names((s) => s.channel.target.kind === 'rake' || (s.channel.target.kind === 'reference' && s.channel.target.ref !== 'dpRef')),
      unit: 'mmH2O', fullScale: 250, gainPercent: 0.05, zero: 0.2, linearityPercentFS: 0.02,
    },
    { id: 'SCN-WALL', channels: names((s) => s.channel.target.kind === 'floor' || s.channel.target.kind === 'ceiling'), unit: 'Pa', fullScale: 1000, gainPercent: 0.05, zero: 0.5, linearityPercentFS: 0.03 },
  ];
  return groups.filter((g) => g.channels.length > 0);
}

interface ChannelSpec {
  channel: Channel;
  /** Per-sample electrical noise, Pa. */
  noisePa: number;
  /** Station height above the centreline, m (hydrostatic head in the zero). */
  height: number;
  /** Spikes possible (scanner channels). */
  spiky: boolean;
}

interface Layout {
  taps: Tap[];
  probes: RakeProbe[];
  floor: WallTap[];
  ceiling: WallTap[];
  specs: ChannelSpec[];
  leakTap: string | null;
}

/** Chord stations x/c on one surface: x = ξ², ξ uniform (uniform arc length near the leading edge,
 *  where x ≈ s²/2r), from ξ0 to √xMax. */
function stations(n: number, withLE: boolean, xMax: number): number[] {
  const out: number[] = [];
  const top = Math.sqrt(xMax);
  for (let i = 0; i < n; i++) {
    const xi = withLE ? (n === 1 ? 0 : (top * i) / (n - 1)) : (top * (i + 1)) / n;
    out.push(xi * xi);
  }
  return out;
}

/** Stations of a short off-centre row (n taps): a few near the leading edge so the suction peak is
 *  caught, the rest spread to the trailing edge. */
function shortRowStations(n: number): { upper: number[]; lower: number[] } {
  if (n === 10) {
    // The default: eight on the upper surface, dense at the suction peak; two on the lower surface.
    return { upper: [0, 0.005, 0.015, 0.04, 0.1, 0.25, 0.5, 0.85], lower: [0.05, 0.5] };
  }
  const nU = Math.max(2, Math.round(n * 0.7));
  return { upper: stations(nU, true, 0.9), lower: stations(Math.max(1, n - nU), false, 0.9) };
}

function buildLayout(nTaps: number, nRake: number, nWall: number): Layout {
  const taps: Tap[] = [];
  const specs: ChannelSpec[] = [];
  const add = (name: string, target: Channel['target'], unit: ChannelUnit, u: InstrumentUncertainty, noisePa: number, height: number, spiky: boolean) =>
    specs.push({ channel: { name, target, unit, uncertainty: u }, noisePa, height, spiky });

  // References.
  add('REF_DP', { kind: 'reference', ref: 'dpRef' }, 'kPa', unc(2.5, 0.05, 0.0005), 0.4, 0, false);
  add('REF_PS', { kind: 'reference', ref: 'pStatic' }, 'Pa', unc(1000, 0.1, 0.5), 0.6, 0, false);
  add('REF_PT', { kind: 'reference', ref: 'pTotal' }, 'kPa', unc(2.5, 0.05, 0.0005), 0.6, 0, false);

  // Surface taps: row C (z = 0) and, with enough taps, rows P (z = −0.15 m) and S (z = +0.15 m).
  const nSide = nTaps >= 30 ? Math.round(nTaps / 8) : 0;
  const nC = nTaps - 2 * nSide;
  const rows: { row: string; z: number; upper: number[]; lower: number[] }[] = [];
  const nCU = Math.max(1, Math.ceil(nC * 0.55));
  rows.push({ row: 'C', z: 0, upper: stations(nCU, true, 0.97), lower: stations(nC - nCU, false, 0.97) });
  if (nSide > 0) {
    const st = shortRowStations(nSide);
    rows.push({ row: 'P', z: -0.15, ...st }, { row: 'S', z: 0.15, ...st });
  }
  let leakTap: string | null = null;
  let leakBest = Infinity;
  for (const r of rows) {
    let k = 0;
    for (const [surface, xs] of [['upper', r.upper], ['lower', r.lower]] as [Surface, number[]][]) {
      for (const xc of xs) {
        k++;
        const id = `${r.row}${pad(k)}`;
        const pt = naca4Point(NACA, xc, surface);
        const tap: Tap = { id, x: round(pt.x, 5), y: round(pt.y, 5), surface, row: r.row, z: r.z };
        taps.push(tap);
        // Scanner: leading-edge region (suction up to Cp ≈ −6) on a 10 kPa module, the rest on 2.5 kPa.
        const le = (surface === 'upper' && xc <= 0.25) || (surface === 'lower' && xc <= 0.06);
        if (r.row === 'C') {
          add(`S_${id}`, { kind: 'tap', id }, 'Pa', le ? unc(10000, 0.06, 3) : unc(2500, 0.1, 1), le ? 3 : 1, 0, true);
          if (surface === 'upper' && Math.abs(xc - LEAK_XC) < leakBest) {
            leakBest = Math.abs(xc - LEAK_XC);
            leakTap = id;
          }
        } else {
          // The side rows are on an older scanner calibrated in inches of water.
          add(`S_${id}`, { kind: 'tap', id }, 'inH2O', le ? unc(40, 0.1, 0.01) : unc(10, 0.1, 0.005), 1.5, 0, true);
        }
      }
    }
  }

  // Wake rake: total probes evenly over ±0.12 m (bottom → top), and static probes.
  const nStatic = nRake >= 10 ? 3 : nRake >= 5 ? 1 : 0;
  const nTotal = nRake - nStatic;
  const probes: RakeProbe[] = [];
  for (let i = 0; i < nTotal; i++) {
    const y = nTotal === 1 ? 0 : -RAKE_HALF + (2 * RAKE_HALF * i) / (nTotal - 1);
    probes.push({ id: `T${pad(i + 1)}`, y: round(y, 5), kind: 'total' });
  }
  const staticY = nStatic === 3 ? [-0.1, -0.04, 0.04] : nStatic === 1 ? [-0.03] : [];
  staticY.forEach((y, i) => probes.push({ id: `ST${i + 1}`, y, kind: 'static' }));
  for (const p of probes) {
    add(`R_${p.id}`, { kind: 'rake', id: p.id }, 'mmH2O', unc(250, 0.1, 0.1), 0.8, p.y, true);
  }

  // Floor and ceiling taps, evenly from x = −1.8 m to +1.8 m (upstream → downstream).
  const floor: WallTap[] = [];
  const ceiling: WallTap[] = [];
  for (let i = 0; i < nWall; i++) {
    const x = round(nWall === 1 ? 0 : WALL_X1 + ((WALL_X2 - WALL_X1) * i) / (nWall - 1), 4);
    floor.push({ id: `F${pad(i + 1)}`, x });
    ceiling.push({ id: `U${pad(i + 1)}`, x });
  }
  for (const t of floor) add(`W_${t.id}`, { kind: 'floor', id: t.id }, 'Pa', unc(1000, 0.1, 0.5), 0.6, -H / 2, true);
  for (const t of ceiling) add(`W_${t.id}`, { kind: 'ceiling', id: t.id }, 'Pa', unc(1000, 0.1, 0.5), 0.6, H / 2, true);

  return { taps, probes, floor, ceiling, specs, leakTap };
}

// ================================================================================================
// Run schedule and conditions

type RunFault = 'wake' | 'unsteady' | 'cell' | null;

interface Plan {
  info: RunInfo;
  /** Session fraction 0…1 of the start time. */
  tau: number;
  tMs: number;
  stalled: boolean;
  fault: RunFault;
  /** Velocity set point, m/s. */
  V: number;
}

function buildSchedule(nRuns: number, rng: Rng, faults: boolean): { plans: Plan[]; stepMs: number | null } {
  type Item = { kind: 'zero' } | { kind: 'data'; alpha: number };
  const items: Item[] = [{ kind: 'zero' }];
  let d = 0;
  while (items.length < nRuns - 1) {
    items.push({ kind: 'data', alpha: DAY_ALPHAS[d % DAY_ALPHAS.length] });
    d++;
    if (d % DATA_PER_BLOCK === 0 && items.length < nRuns - 1) items.push({ kind: 'zero' });
  }
  if (nRuns > 1) items.push({ kind: 'zero' });

  // Times: a zero takes 1.5–2.5 min before the next run, a data run 2–4 min (stalled ones longer).
  const t0 = Date.parse(START_ISO);
  const times: number[] = [];
  let t = t0;
  let stalled = false;
  const stall: boolean[] = [];
  for (const it of items) {
    times.push(t);
    if (it.kind === 'data') {
      stalled = it.alpha >= 14.5 || (stalled && it.alpha >= 12.5);
      stall.push(stalled);
      t += Math.round((stalled ? rng.range(3, 4) : rng.range(2, 3.5)) * 60) * 1000;
    } else {
      stall.push(false);
      t += Math.round(rng.range(1.5, 2.5) * 60) * 1000;
    }
  }
  const tEnd = times[times.length - 1];
  const span = Math.max(1, tEnd - t0);
  const plans: Plan[] = items.map((it, i) => {
    const tau = (times[i] - t0) / span;
    // Barometer rising through the day (a ridge moving in), temperature rising as the tunnel warms,
    // relative humidity falling with it (invented).
    const baro = 100230 + 330 * smoothstep(tau) + 4 * rng.normal();
    const temp = 17.0 + 4.0 * (1 - Math.exp(-2.5 * tau)) / (1 - Math.exp(-2.5)) + 0.05 * rng.normal();
    const rh = 65 - 2.4 * (temp - 17) + 0.4 * rng.normal();
    const run = i + 1;
    const isData = it.kind === 'data';
    let fault: RunFault = null;
    if (faults && isData) {
      if (run === WAKE_RUN) fault = 'wake';
      else if (run === UNSTEADY_RUN) fault = 'unsteady';
      else if (run === CELL_RUN && it.alpha === 18) fault = 'cell';
    }
    return {
      info: {
        run,
        kind: it.kind,
        time: isoTime(times[i]),
        alphaDeg: isData ? it.alpha : 0,
        baro: round(baro, 0),
        temperatureC: round(temp, 1),
        humidity: round(rh, 1),
      },
      tau,
      tMs: times[i],
      stalled: stall[i],
      fault,
      V: V_SET + 0.15 * rng.normal(),
    };
  });
  const stepOk = faults && plans.length >= STEP_ZERO_RUN && plans[STEP_ZERO_RUN - 1].info.kind === 'zero';
  return { plans, stepMs: stepOk ? plans[STEP_ZERO_RUN - 1].tMs - 20_000 : null };
}

// ================================================================================================
// Aerodynamics of one run (coefficient level, independent of q)

interface Contour {
  X: number[];
  Y: number[];
  n: number;
  iLE: number;
  xm: Float64Array;
  ym: Float64Array;
  sMid: Float64Array;
  sNode: Float64Array;
  area: number;
  thickness: number;
}

function buildContour(): Contour {
  const { x: X, y: Y } = geometryPoints({ kind: 'naca4', code: NACA }, N_PANELS);
  const n = X.length - 1;
  const iLE = Math.floor(N_PANELS / 2); // naca4(): node nU is the leading edge (x/c = 0)
  const xm = new Float64Array(n);
  const ym = new Float64Array(n);
  const sMid = new Float64Array(n);
  const sNode = new Float64Array(n + 1);
  let area2 = 0;
  for (let j = 0; j < n; j++) {
    const L = Math.hypot(X[j + 1] - X[j], Y[j + 1] - Y[j]);
    xm[j] = 0.5 * (X[j] + X[j + 1]);
    ym[j] = 0.5 * (Y[j] + Y[j + 1]);
    sMid[j] = sNode[j] + L / 2;
    sNode[j + 1] = sNode[j] + L;
    area2 += X[j] * Y[j + 1] - X[j + 1] * Y[j];
  }
  return { X, Y, n, iLE, xm, ym, sMid, sNode, area: Math.abs(area2) / 2, thickness: Number(NACA.slice(2)) / 100 };
}

interface Shape {
  cpTE: number;
  /** Upper-surface separation x/c (≥ 1: attached). */
  xs: number;
  /** Plateau exponent past separation. */
  nPlat: number;
}

interface SurfaceSolution {
  cp: Float64Array;
  cl: number;
  cdp: number;
  cmc4: number;
  alphaEff: number;
  kappa: number;
  decamber: number;
}

/** Viscous-looking Cp at the panel midpoints (see the module comment): the panel-method Cp at
 *  alphaEff, its leading-edge suction scaled by (1 + kappa) (Cp − 1 scaled, so stagnation stays at 1),
 *  an aft de-cambering load (boundary-layer displacement: +decamber·bump on the upper surface, − on
 *  the lower (upper only when stalled), zero ahead of 0.15c), the trailing-edge recovery deficit (smooth blend to cpTE over
 *  0.6–1.0c) and the separated plateau past xs. */
function viscousCp(C: Contour, alphaEff: number, kappa: number, decamber: number, sh: Shape): Float64Array {
  const sol = panelSolve(C.X, C.Y, alphaEff);
  const cp = new Float64Array(C.n);
  for (let i = 0; i < C.n; i++) {
    const x = clamp(C.xm[i], 0, 1);
    // Stalled: the de-cambering relieves the separated upper-surface plateau only.
    const sgn = i < C.iLE ? 1 : sh.xs < 0.6 ? 0 : -1;
    const bump = x > 0.15 ? Math.sin((Math.PI * (x - 0.15)) / 0.85) ** 2 : 0;
    let c = 1 + (sol.cp[i] - 1) * (1 + kappa * Math.exp(-x / 0.05)) + sgn * decamber * bump;
    const w = smoothstep((x - 0.6) / 0.4);
    c += w * (sh.cpTE - c);
    cp[i] = c;
  }
  if (sh.xs < 1) {
    // Upper-surface panels run TE → LE (x decreasing with index); find Cp at the separation point.
    let cs = cp[0];
    for (let i = 0; i + 1 < C.iLE; i++) {
      const xa = C.xm[i];
      const xb = C.xm[i + 1];
      if (xa >= sh.xs && xb <= sh.xs) {
        const t = xa === xb ? 0 : (xa - sh.xs) / (xa - xb);
        cs = cp[i] + t * (cp[i + 1] - cp[i]);
        break;
      }
    }
    for (let i = 0; i < C.iLE; i++) {
      const x = C.xm[i];
      if (x > sh.xs) {
        const r = (x - sh.xs) / (1 - sh.xs);
        cp[i] = cs + (sh.cpTE - cs) * r ** sh.nPlat;
      }
    }
  }
  return cp;
}

/** cn, ca, cm by integrating panel-constant Cp on the panel contour (counter-clockwise TE → upper →
 *  LE → lower → TE; outward normal (dy, −dx)/ds): cn = ∮Cp dx, ca = −∮Cp dy,
 *  cm_LE = −∮Cp (x dx + y dy) (Anderson, Fundamentals of Aerodynamics §1.5, memory). */
function contourLoads(C: Contour, cp: Float64Array, alphaDeg: number): { cl: number; cdp: number; cmc4: number } {
  let cn = 0;
  let ca = 0;
  let cm = 0;
  for (let i = 0; i < C.n; i++) {
    const dx = C.X[i + 1] - C.X[i];
    const dy = C.Y[i + 1] - C.Y[i];
    cn += cp[i] * dx;
    ca -= cp[i] * dy;
    cm -= cp[i] * (C.xm[i] * dx + C.ym[i] * dy);
  }
  const a = alphaDeg * DEG;
  return { cl: cn * Math.cos(a) - ca * Math.sin(a), cdp: cn * Math.sin(a) + ca * Math.cos(a), cmc4: cm + cn / 4 };
}

/** Solves shape parameters p = (alphaEff, kappa, decamber), starting from `init`, so that the
 *  loads (cl, cd_p, cm_c/4) named in `targets` match, by damped Newton with a finite-difference
 *  Jacobian; `free` lists the indices of the parameters that move (as many as targets). Returns
 *  null when it does not converge or a parameter leaves its range. */
function newtonShape(
  C: Contour, alpha: number, targets: [number, number][], sh: Shape, free: number[], init: number[],
): number[] | null {
  const lo = [-30, -0.5, -0.5];
  const hi = [30, 4, 2];
  const steps = [0.01, 0.001, 0.001];
  const wts = [1, 10, 3];
  const p = [...init];
  const f = (q: number[]) => {
    const l = contourLoads(C, viscousCp(C, q[0], q[1], q[2], sh), alpha);
    const v = [l.cl, l.cdp, l.cmc4];
    return targets.map(([k, t]) => v[k] - t);
  };
  const norm = (r: number[]) => Math.sqrt(r.reduce((s, v, i) => s + (wts[targets[i][0]] * v) ** 2, 0));
  const m = free.length;
  let r = f(p);
  for (let it = 0; it < 40; it++) {
    if (r.every((v) => Math.abs(v) < 1e-8)) return p;
    const J: number[][] = Array.from({ length: m }, () => new Array<number>(m).fill(0));
    for (let j = 0; j < m; j++) {
      const q = [...p];
      q[free[j]] += steps[free[j]];
      const rj = f(q);
      for (let i = 0; i < m; i++) J[i][j] = (rj[i] - r[i]) / steps[free[j]];
    }
    const d = solveLinear(J, r.map((v) => -v));
    if (!d) return null;
    let t = 1;
    let accepted = false;
    for (let k = 0; k < 12; k++) {
      const q = [...p];
      for (let j = 0; j < m; j++) q[free[j]] += t * d[j];
      if (q.every((v, j) => v >= lo[j] && v <= hi[j])) {
        const rq = f(q);
        if (norm(rq) < norm(r)) {
          for (let j = 0; j < 3; j++) p[j] = q[j];
          r = rq;
          accepted = true;
          break;
        }
      }
      t /= 2;
    }
    if (!accepted) return null;
  }
  return r.every((v) => Math.abs(v) < 1e-6) ? p : null;
}

/** Gaussian elimination with partial pivoting for a small dense system; null if singular. */
function solveLinear(A: number[][], b: number[]): number[] | null {
  const n = b.length;
  const M = A.map((row, i) => [...row, b[i]]);
  for (let k = 0; k < n; k++) {
    let piv = k;
    for (let i = k + 1; i < n; i++) if (Math.abs(M[i][k]) > Math.abs(M[piv][k])) piv = i;
    if (!(Math.abs(M[piv][k]) > 1e-14)) return null;
    [M[k], M[piv]] = [M[piv], M[k]];
    for (let i = k + 1; i < n; i++) {
      const fct = M[i][k] / M[k][k];
      for (let j = k; j <= n; j++) M[i][j] -= fct * M[k][j];
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let i = n - 1; i >= 0; i--) {
    let s = M[i][n];
    for (let j = i + 1; j < n; j++) s -= M[i][j] * x[j];
    x[i] = s / M[i][i];
  }
  return x;
}

/** Surface distribution hitting the target cl exactly and, where the shape family allows, cd_p
 *  and cm. Attached: (alphaEff, kappa, decamber) for (cl, cd_p, cm). Stalled: the de-cambering is
 *  held at 0.4 (upper surface only) and (alphaEff, kappa) give (cl, cd_p) — this family cannot also hold cm there, and cm
 *  comes out by itself. Last resort: the angle alone for cl. */
function solveSurface(C: Contour, alpha: number, clT: number, cdpT: number, cmT: number, sh: Shape): SurfaceSolution {
  const stalledShape = sh.xs < 0.6;
  const tries: { targets: [number, number][]; free: number[]; init: number[] }[] = stalledShape
    ? [
        { targets: [[0, clT], [1, cdpT]], free: [0, 1], init: [alpha - 4, 0, 0.4] },
        { targets: [[0, clT]], free: [0], init: [alpha - 4, 0, 0.4] },
      ]
    : [
        { targets: [[0, clT], [1, cdpT], [2, cmT]], free: [0, 1, 2], init: [alpha - 0.5, 0, 0] },
        { targets: [[0, clT], [1, cdpT]], free: [0, 1], init: [alpha - 0.5, 0, 0] },
        { targets: [[0, clT]], free: [0], init: [alpha - 0.5, 0, 0] },
      ];
  let p: number[] | null = null;
  for (const t of tries) {
    p = newtonShape(C, alpha, t.targets, sh, t.free, t.init);
    if (p) break;
  }
  if (!p) throw new Error(`demoSession: no surface distribution found for α = ${alpha}° (cl ${clT})`);
  const [ae, k, dc] = p;
  const cp = viscousCp(C, ae, k, dc, sh);
  const f = contourLoads(C, cp, alpha);
  return { cp, cl: f.cl, cdp: f.cdp, cmc4: f.cmc4, alphaEff: ae, kappa: k, decamber: dc };
}

/** Arc-length position of a tap (x/c, y/c) on the panel polygon of its surface. */
function tapArcLength(C: Contour, x: number, y: number, surface: Surface): number {
  const j0 = surface === 'upper' ? 0 : C.iLE;
  const j1 = surface === 'upper' ? C.iLE : C.n;
  let best = Infinity;
  let sBest = 0;
  for (let j = j0; j < j1; j++) {
    const ax = C.X[j];
    const ay = C.Y[j];
    const dx = C.X[j + 1] - ax;
    const dy = C.Y[j + 1] - ay;
    const L2 = dx * dx + dy * dy;
    const t = clamp(((x - ax) * dx + (y - ay) * dy) / L2, 0, 1);
    const d = Math.hypot(ax + t * dx - x, ay + t * dy - y);
    if (d < best) {
      best = d;
      sBest = C.sNode[j] + t * Math.sqrt(L2);
    }
  }
  return sBest;
}

/** Cp at arc length s, linear between panel midpoints. */
function cpAt(C: Contour, cp: Float64Array, s: number): number {
  const sm = C.sMid;
  if (s <= sm[0]) return cp[0];
  if (s >= sm[C.n - 1]) return cp[C.n - 1];
  let lo = 0;
  let hi = C.n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (sm[mid] <= s) lo = mid;
    else hi = mid;
  }
  const t = (s - sm[lo]) / (sm[hi] - sm[lo]);
  return cp[lo] + t * (cp[hi] - cp[lo]);
}

// ---- invented target polars (NACA 4412, Re ≈ 7.5e5) ----

/** Attached-branch lift: slope 0.107/deg, α_L0 = −4°, gentle trailing-edge-separation rollover. */
function clAttached(a: number): number {
  return 0.107 * (a + 4) - 0.0062 * Math.max(0, a - 5) ** 2;
}
/** Stalled-branch lift (trailing-edge stall with separation near 0.3c). */
function clStalled(a: number): number {
  return 1.16 - 0.02 * (a - 15);
}
function cdAttached(a: number): number {
  const cl = clAttached(a);
  return 0.0085 + 0.0035 * (cl - 0.3) ** 2 + 0.018 * clamp((a - 8) / 7, 0, 1) ** 2;
}
function cdStalled(a: number): number {
  return Math.max(0.06, 0.07 + 0.005 * (a - 15));
}
function separation(a: number, stalled: boolean): number {
  if (stalled) return clamp(0.38 - 0.03 * (a - 15), 0.2, 0.45);
  return 1 - 0.35 * clamp((a - 6) / 9, 0, 1) ** 1.6;
}

interface Aero {
  alpha: number;
  stalled: boolean;
  /** Cp per channel name for surface taps, rake ((H − p∞)/q or (p_w − p∞)/q), walls. */
  cp: Map<string, number>;
  /** Extra per-sample aerodynamic fluctuation, as a fraction of q, per channel. */
  turb: Map<string, number>;
  truth: Omit<DemoRunTruth, 'run' | 'q' | 'V' | 'rho' | 'Re' | 'pInf' | 'qUnsteadiness' | 'gamma'> & { gammaOverV: number };
}

/** Jones cd (REDUCTION.md §4) of a continuous Gaussian wake profile, fine trapezoid. */
function jonesContinuous(D0: number, yc: number, sig: number, cpw: (y: number, D0: number) => number): number {
  const n = 801;
  const y0 = yc - 8 * sig;
  const dy = (16 * sig) / (n - 1);
  let s = 0;
  for (let i = 0; i < n; i++) {
    const y = y0 + i * dy;
    const cpt = 1 - D0 * Math.exp(-0.5 * ((y - yc) / sig) ** 2);
    const f = Math.sqrt(Math.max(0, cpt - cpw(y, D0))) * (1 - Math.sqrt(Math.max(0, cpt)));
    s += (i === 0 || i === n - 1 ? 0.5 : 1) * f;
  }
  return ((2 / CHORD) * s * dy);
}

function computeAero(C: Contour, L: Layout, alpha: number, stalled: boolean, fault: RunFault): Aero {
  const a = alpha * DEG;
  const cl2d = stalled ? clStalled(alpha) : clAttached(alpha);
  // Stall cell (fault): the instrumented centre span sits in a mushroom cell and carries less lift
  // than the span average the walls respond to.
  const clRows = fault === 'cell' ? cl2d - 0.2 : cl2d;
  const clWalls = cl2d;
  let cdT = stalled ? cdStalled(alpha) : cdAttached(alpha);
  if (fault === 'cell') cdT += 0.005;
  const xs = separation(alpha, stalled);
  const cpTE = stalled ? -0.28 - 0.03 * (alpha - 15) : 0.14 - 0.25 * (1 - xs);

  // --- wake: origin between the trailing edge and the separation point, carried down by the
  // downwash of the bound vortex and its images.
  const yTE = -0.75 * CHORD * Math.sin(a);
  const xTE = 0.75 * CHORD * Math.cos(a);
  const yu = naca4Point(NACA, clamp(xs, 0, 1), 'upper').y;
  const ySep = -(xs - 0.25) * CHORD * Math.sin(a) + yu * CHORD * Math.cos(a);
  const yOrigin = yTE + 0.5 * (ySep - yTE) * clamp((1 - xs) / 0.7, 0, 1);
  // Γ/V uses the lift the walls see; the small (1 + b̄) factor is ignored for the wake path.
  const gOverV0 = 0.5 * CHORD * clWalls;
  const drop = (gOverV0 / (2 * Math.PI)) * Math.log(Math.tanh((Math.PI * RAKE_X) / (2 * H)) / Math.tanh((Math.PI * xTE) / (2 * H)));
  const yc = yOrigin - drop;
  const sig = stalled ? 0.02 + 0.001 * (alpha - 15) + (fault === 'cell' ? 0.002 : 0) : clamp(0.0075 * Math.sqrt(cdT / 0.009), 0.006, 0.02);
  // Wake blockage at the rake (centreline of the channel source) and solid blockage there.
  const mOverV = (C.area * CHORD * CHORD * (1 + C.thickness)) / (2 * Math.PI);
  const xd = 0.25 * CHORD * Math.cos(a); // mid-chord, from the quarter chord
  const epsRake = (cd: number) =>
    ((0.5 * CHORD * cd) / (2 * H)) * (1 + 1 / Math.tanh((Math.PI * (RAKE_X - xTE)) / H)) +
    mOverV * (Math.PI / H) ** 2 / Math.sinh((Math.PI * (RAKE_X - xd)) / H) ** 2;
  const cpwFar = (cd: number) => -((1 + epsRake(cd)) ** 2 - 1);
  const cpw = (y: number, D0: number, cd = cdT) =>
    cpwFar(cd) - 0.06 * D0 * Math.exp(-0.5 * ((y - yc) / (2.5 * sig)) ** 2);
  let lo = 0;
  let hi = 0.9;
  for (let it = 0; it < 60; it++) {
    const mid = 0.5 * (lo + hi);
    if (jonesContinuous(mid, yc, sig, (y, d) => cpw(y, d)) < cdT) lo = mid;
    else hi = mid;
  }
  const D0 = 0.5 * (lo + hi);
  const cdWake = jonesContinuous(D0, yc, sig, (y, d) => cpw(y, d));

  // --- surface: attached, cd_p is the wake drag less an invented skin friction; stalled, the
  // pressure drag exceeds the rake's Jones drag (the rake under-reads a separated, unsteady wake:
  // the wake is sized so that the rake captures it, see cdStalled).
  const cdf = 0.006 * (0.4 + 0.6 * Math.min(1, xs));
  const cdpT = stalled ? 1.4 * cdWake : cdWake - cdf;
  const shape: Shape = { cpTE, xs: xs >= 0.999 ? 1 : xs, nPlat: stalled ? 2 : 1.5 };
  const cmT = -0.085 + 0.003 * Math.max(0, alpha - 8);
  const surf = solveSurface(C, alpha, clRows, cdpT, cmT, shape);

  // --- walls: wall speed u/V = 1 + e + b ± g.
  const e = (x: number) => 0.0012 * (x / H);
  const bsb = (x: number) => mOverV * (Math.PI / H) ** 2 * sech((Math.PI * (x - xd)) / H) ** 2;
  // Wake source at the trailing edge. Attached: Q = ½Vc·cd (Thom), wall step ε_wb = (c/4h)·cd. Past
  // stall: the separated wake's, Q = θ·V·c·cd_p with Maskell's θ (R&M 3400; app/corrections.ts), so
  // the walls carry the larger separated-flow blockage ε_wb = θ(c/2h)·cd_p for the wall-signature
  // method to measure (docs/WALL-CORRECTIONS.md §6).
  const epsWbWall = stalled ? (MASKELL_THETA_DEMO * CHORD * cdpT) / (2 * H) : (0.5 * CHORD * cdWake) / (2 * H);
  const bwb = (x: number) => epsWbWall * (1 + Math.tanh((Math.PI * (x - xTE)) / H));
  const bSym = (x: number) => e(x) + bsb(x) + bwb(x);
  // b̄ = ∫ b sech(πx/h) dx / ∫ sech(πx/h) dx (∫ sech = h), fine trapezoid over ±8h.
  let num = 0;
  const nq = 4001;
  const dxq = (16 * H) / (nq - 1);
  for (let i = 0; i < nq; i++) {
    const x = -8 * H + i * dxq;
    num += (i === 0 || i === nq - 1 ? 0.5 : 1) * bSym(x) * sech((Math.PI * x) / H);
  }
  const bBar = (num * dxq) / H;
  const gammaOverV = (0.5 * CHORD * clWalls) / (1 + bBar);
  // The lift acts behind the quarter chord by δ = −cm_c/4·c/cl: the vortex displaced by δ adds, at the
  // walls, δ·∂/∂x0 of its signature, (πΓδ/2h²V)·sech·tanh (docs/WALL-CORRECTIONS.md §3), with
  // Γδ = −cm_c/4·½Vc². Odd in x: it leaves the momentum and circulation integrals unchanged.
  const gdOverV = -cmT * 0.5 * CHORD * CHORD / (1 + bBar);
  const g = (x: number) => {
    const w = (Math.PI * x) / H;
    return (gammaOverV / (2 * H)) * sech(w) + ((Math.PI * gdOverV) / (2 * H * H)) * sech(w) * Math.tanh(w);
  };

  const cp = new Map<string, number>();
  const turb = new Map<string, number>();
  // Surface taps; side rows follow row C with a small spanwise change of the loading (Cp − 1 scaled,
  // so stagnation stays at 1).
  const rowScale: Record<string, number> = stalled ? { C: 1, P: 0.993, S: 1.005 } : { C: 1, P: 0.995, S: 1.003 };
  for (const t of L.taps) {
    const s = tapArcLength(C, t.x, t.y, t.surface);
    const c = cpAt(C, surf.cp, s);
    const k = rowScale[t.row] ?? 1;
    cp.set(`S_${t.id}`, 1 + k * (c - 1));
    const separated = t.surface === 'upper' && t.x > xs;
    turb.set(`S_${t.id}`, separated ? (stalled ? 0.035 : 0.015) : 0.003);
  }
  // Rake (the probes sit RAKE_OFFSET from their logged y in the wake fault run).
  const rakeOffset = fault === 'wake' ? RAKE_OFFSET : 0;
  for (const p of L.probes) {
    const y = p.y + rakeOffset;
    const D = D0 * Math.exp(-0.5 * ((y - yc) / sig) ** 2);
    if (p.kind === 'total') {
      cp.set(`R_${p.id}`, 1 - D);
      turb.set(`R_${p.id}`, 0.002 + 0.12 * D);
    } else {
      cp.set(`R_${p.id}`, cpw(y, D0));
      turb.set(`R_${p.id}`, 0.002 + 0.03 * D);
    }
  }
  for (const w of L.floor) {
    cp.set(`W_${w.id}`, 1 - (1 + bSym(w.x) - g(w.x)) ** 2);
    turb.set(`W_${w.id}`, 0.001);
  }
  for (const w of L.ceiling) {
    cp.set(`W_${w.id}`, 1 - (1 + bSym(w.x) + g(w.x)) ** 2);
    turb.set(`W_${w.id}`, 0.001);
  }

  return {
    alpha,
    stalled,
    cp,
    turb,
    truth: {
      alphaDeg: alpha,
      stalled,
      cl: surf.cl,
      cdp: surf.cdp,
      cmc4: surf.cmc4,
      clWalls: fault === 'cell' ? clWalls : surf.cl,
      gammaOverV: fault === 'cell' ? gammaOverV : (0.5 * CHORD * surf.cl) / (1 + bBar),
      bBar,
      cdWake,
      wakeCentre: yc,
      wakeSigma: sig,
      wakeDeficit: D0,
      rakeOffset,
      separation: xs,
      alphaEffDeg: surf.alphaEff,
      suctionFactor: surf.kappa,
      decamber: surf.decamber,
    },
  };
}

// ================================================================================================
// The session

export function demoSession(opts: DemoOptions = {}): DemoSession {
  const seed = checkInt('seed', opts.seed ?? DEMO_SEED, 0) >>> 0;
  const nRuns = opts.runs === undefined || opts.runs === 'day' ? DAY_RUNS : checkInt('runs', opts.runs, 1);
  const nTaps = checkInt('taps', opts.taps ?? 80, 6);
  const nRake = checkInt('rakeProbes', opts.rakeProbes ?? 40, 4);
  const nWall = checkInt('wallTaps', opts.wallTaps ?? 30, 2);
  const nSamples = checkInt('samples', opts.samples ?? 200, 2);
  const withFaults = opts.faults ?? true;

  const L = buildLayout(nTaps, nRake, nWall);
  const { plans, stepMs } = buildSchedule(nRuns, new Rng(mix(seed, 0xa11ce)), withFaults);
  const leakTap = withFaults ? L.leakTap : null;
  const dataRuns = plans.filter((p) => p.info.kind === 'data').map((p) => p.info.run);

  // Per-channel zero offsets (Pa) and their drift over the session (Pa, linear in session time).
  const zrng = new Rng(mix(seed, 0x2e50));
  const rho0 = 1.2;
  const offsets = L.specs.map((s) => {
    const isTap = s.channel.target.kind === 'tap';
    const isRef = s.channel.target.kind === 'reference';
    let o = (isRef ? 3 : 5) * (2 * zrng.uniform() - 1) - rho0 * G_N * s.height;
    if (leakTap && s.channel.name === `S_${leakTap}`) o = LEAK_ZERO_PA + 2 * (2 * zrng.uniform() - 1);
    const drift = 3 * (2 * zrng.uniform() - 1);
    const step = stepMs !== null && isTap ? ZERO_STEP_PA + 2 * (2 * zrng.uniform() - 1) : 0;
    return { o, drift, step };
  });

  const setup: Setup = {
    formatVersion: 1,
    session: {
      title: 'HAL-S4412 section characteristics, α sweep at 45 m/s',
      date: '2026-11-18',
      operators: ['M. Okonkwo', 'T. Lindqvist'],
      notes:
        'Harrowgate Aeronautical Laboratory, No. 2 low-speed tunnel (closed section 0.90 m × 0.60 m). ' +
        'Model HAL-S4412 spans the section and pivots about its quarter chord on the tunnel centreline. ' +
        'All pressure channels are referenced to the laboratory ambient (plenum vented through the breather). ' +
        'Wake rake 0.75 m behind the quarter chord. Wind-off zeros every five data runs. Demo data: invented.',
    },
    facility: {
      name: 'Harrowgate Aeronautical Laboratory — No. 2 low-speed tunnel',
      sectionHeight: H,
      sectionWidth: WIDTH,
      qCalibration: KQ,
      qCalibrationUncertainty: 0.004,
    },
    model: {
      name: 'HAL-S4412',
      chord: CHORD,
      span: SPAN,
      geometry: { kind: 'naca4', code: NACA },
      alphaUncertaintyDeg: 0.05,
      tapPositionUncertainty: 0.0005,
    },
    taps: L.taps,
    rake: { x: RAKE_X, probes: L.probes },
    floor: L.floor,
    ceiling: L.ceiling,
    channels: L.specs.map((s) => s.channel),
    transducerGroups: demoGroups(L),
  };
  const index = plans.map((p) => p.info);

  // Aerodynamics, cached per (α, state, fault): coefficient level, so one entry serves many runs.
  let contour: Contour | null = null;
  const aeroCache = new Map<string, Aero>();
  const aeroFor = (p: Plan): Aero => {
    const key = `${p.info.alphaDeg}|${p.stalled}|${p.fault ?? ''}`;
    let a = aeroCache.get(key);
    if (!a) {
      contour ??= buildContour();
      a = computeAero(contour, L, p.info.alphaDeg, p.stalled, p.fault);
      aeroCache.set(key, a);
    }
    return a;
  };

  const freeStreamOf = (p: Plan) => {
    // q = ½ρV², ρ at the test-section static pressure baro + p∞ (p∞ = −0.08 q: one fixed-point step).
    let q = 0.5 * 1.2 * p.V * p.V;
    let air = airState(p.info.baro + PINF_FRACTION * q, p.info.temperatureC + 273.15, p.info.humidity);
    q = 0.5 * air.rho * p.V * p.V;
    air = airState(p.info.baro + PINF_FRACTION * q, p.info.temperatureC + 273.15, p.info.humidity);
    q = 0.5 * air.rho * p.V * p.V;
    return { q, rho: air.rho, V: p.V, Re: (air.rho * p.V * CHORD) / air.mu, pInf: PINF_FRACTION * q };
  };

  const qSigma = (p: Plan) => (p.fault === 'unsteady' ? 0.035 : 0.0025);
  const qSine = (p: Plan) => (p.fault === 'unsteady' ? 0.04 : 0);

  const truth = (run: number): DemoRunTruth | undefined => {
    const p = plans[run - 1];
    if (!p || p.info.kind !== 'data') return undefined;
    const a = aeroFor(p);
    const fs = freeStreamOf(p);
    const { gammaOverV, ...rest } = a.truth;
    return {
      ...rest,
      run,
      q: fs.q,
      V: fs.V,
      rho: fs.rho,
      Re: fs.Re,
      pInf: fs.pInf,
      gamma: gammaOverV * fs.V,
      qUnsteadiness: Math.sqrt(qSigma(p) ** 2 + qSine(p) ** 2 / 2),
    };
  };

  const makeRun = (p: Plan): RawRun => {
    const run = p.info.run;
    const n = nSamples;
    const dt = 1 / SAMPLE_RATE_HZ;
    const wind = p.info.kind === 'data';
    // Shared q fluctuation: AR(1) (τ = 0.15 s; 0.02 s in the unsteady run) plus, in the unsteady run,
    // the fan controller hunting at 0.8 Hz.
    const eq = new Float64Array(n);
    let aero: Aero | null = null;
    let fs: ReturnType<typeof freeStreamOf> | null = null;
    if (wind) {
      aero = aeroFor(p);
      fs = freeStreamOf(p);
      const r = new Rng(mix(seed, run, 0xfeed));
      const tauC = p.fault === 'unsteady' ? 0.02 : 0.15;
      const phi = Math.exp(-dt / tauC);
      const sd = qSigma(p);
      const amp = qSine(p);
      const ph = 2 * Math.PI * r.uniform();
      let s = sd * r.normal();
      for (let i = 0; i < n; i++) {
        if (i > 0) s = phi * s + sd * Math.sqrt(1 - phi * phi) * r.normal();
        eq[i] = s + amp * Math.sin(2 * Math.PI * 0.8 * i * dt + ph);
      }
    }
    const channels: Record<string, Float64Array> = {};
    L.specs.forEach((spec, ci) => {
      const name = spec.channel.name;
      const r = new Rng(mix(seed, run, ci + 1));
      const off = offsets[ci];
      let zero = off.o + off.drift * p.tau;
      if (stepMs !== null && p.tMs >= stepMs) zero += off.step;
      let mean = 0;
      let sdPa = spec.noisePa;
      if (wind && aero && fs) {
        const t = spec.channel.target;
        const q = fs.q;
        if (t.kind === 'reference') {
          mean = t.ref === 'dpRef' ? q / KQ : t.ref === 'pStatic' ? fs.pInf : fs.pInf + q;
        } else {
          const cp = aero.cp.get(name);
          if (cp === undefined) throw new Error(`demoSession: no generated Cp for channel ${name}`);
          mean = fs.pInf + cp * q;
          if (leakTap && name === `S_${leakTap}`) mean *= 1 - LEAK_FRACTION; // pulled toward the reference (0)
          const tb = aero.turb.get(name) ?? 0;
          sdPa = Math.sqrt(sdPa * sdPa + (tb * q) ** 2);
        }
      }
      const out = new Float64Array(n);
      for (let i = 0; i < n; i++) out[i] = zero + mean * (1 + eq[i]) + sdPa * r.normal();
      if (spec.spiky) {
        // Rare electrical spikes: about one sample in 10 000, 60–200 Pa either way.
        const pSpike = 1e-4;
        let i = Math.floor(Math.log(1 - r.uniform()) / Math.log(1 - pSpike));
        while (i < n) {
          out[i] += (r.uniform() < 0.5 ? -1 : 1) * r.range(60, 200);
          i += 1 + Math.floor(Math.log(1 - r.uniform()) / Math.log(1 - pSpike));
        }
      }
      channels[name] = out;
    });
    return { info: p.info, channels };
  };

  // Faults as the core should see them.
  const faults: PlantedFault[] = [];
  if (withFaults) {
    if (leakTap && dataRuns.length) {
      faults.push({
        run: dataRuns[0],
        code: 'leaking-tap',
        scope: 'session',
        runs: dataRuns,
        tap: leakTap,
        channels: [`S_${leakTap}`],
        what:
          `Tap ${leakTap} (row C, upper surface, x/c ≈ ${LEAK_XC}) has split tubing: its wind-off zero sits about ` +
          `+${LEAK_ZERO_PA} Pa from the other taps' and, wind on, it reads ${LEAK_FRACTION * 100} % of the way from the ` +
          `true tap pressure toward the reference (ambient). Every data run must report ${leakTap} bad with reason ` +
          `'leak' (bridged) and raise 'leaking-tap'; it is expected on clean runs too.`,
      });
    }
    const at = (run: number, kind: 'data' | 'zero') => plans[run - 1]?.info.kind === kind;
    if (at(WAKE_RUN, 'data') && plans[WAKE_RUN - 1].fault === 'wake') {
      faults.push({
        run: WAKE_RUN,
        code: 'wake-not-captured',
        scope: 'run',
        runs: [WAKE_RUN],
        what:
          `Run ${WAKE_RUN} (α = ${plans[WAKE_RUN - 1].info.alphaDeg}°): the rake traverse was left ${Math.abs(RAKE_OFFSET) * 1000} mm ` +
          'low after a traverse check, so the wake (logged probe heights unchanged) sits beyond the upper rake edge ' +
          'and the top probes read a total-pressure deficit.',
      });
    }
    if (at(UNSTEADY_RUN, 'data') && plans[UNSTEADY_RUN - 1].fault === 'unsteady') {
      faults.push({
        run: UNSTEADY_RUN,
        code: 'unsteady',
        scope: 'run',
        runs: [UNSTEADY_RUN],
        what:
          `Run ${UNSTEADY_RUN} (α = ${plans[UNSTEADY_RUN - 1].info.alphaDeg}°): the fan speed controller hunted after a set-point ` +
          'change; q fluctuates by about 5 % (std/mean), 0.8 Hz oscillation plus broadband.',
      });
    }
    if (at(CELL_RUN, 'data') && plans[CELL_RUN - 1].fault === 'cell') {
      faults.push({
        run: CELL_RUN,
        code: 'lift-mismatch',
        scope: 'run',
        runs: [CELL_RUN],
        what:
          `Run ${CELL_RUN} (α = 18°, deep stall at the top of the up-sweep): a single mushroom stall cell formed at mid-span. ` +
          'The three tap rows (|z| ≤ 0.15 m) all sit inside it and read a section cl about 0.2 below the span-average ' +
          'lift, which is what the floor and ceiling pressures respond to; the wall-momentum cl exceeds the ' +
          'surface cl by more than the tolerance. (The rows agree with each other, so no span-spread flag.)',
      });
    }
    if (stepMs !== null) {
      const prevZero = [...plans.slice(0, STEP_ZERO_RUN - 1)].reverse().find((p) => p.info.kind === 'zero');
      const affected = plans
        .filter((p) => p.info.kind === 'data' && p.info.run < STEP_ZERO_RUN && (!prevZero || p.info.run > prevZero.info.run))
        .map((p) => p.info.run);
      if (affected.length) {
        faults.push({
          run: affected[0],
          code: 'zero-drift',
          scope: 'run',
          runs: affected,
          zeroRun: STEP_ZERO_RUN,
          channels: L.specs.filter((s) => s.channel.target.kind === 'tap').map((s) => s.channel.name),
          what:
            `During the stop before wind-off zero run ${STEP_ZERO_RUN} the surface-tap scanners' reference manifold was ` +
            `re-seated: every surface-tap channel's offset stepped by about +${ZERO_STEP_PA} Pa (≈ 2 % of q) and stayed there. ` +
            `The data runs bracketed by zero runs ${prevZero?.info.run ?? '—'} and ${STEP_ZERO_RUN} (runs ${affected.join(', ')}) ` +
            'see zeros that differ by more than 1 % of q on all surface-tap channels.',
        });
      }
    }
  }

  return {
    setup,
    index,
    runs: function* () {
      for (const p of plans) yield makeRun(p);
    },
    faults,
    truth,
    sampleRateHz: SAMPLE_RATE_HZ,
  };
}
