// Data types shared by every layer of Rakeline (core, store, import, UI).
// Units: SI throughout (Pa, m, K, kg/m³, m/s) unless a field says otherwise; angles in degrees
// where a field name says `Deg`, else radians. Pressure channels in logs may use other units;
// they are converted to Pa on import (app/units.ts) before anything else sees them.

/** Stored with every result; raised whenever the reduced numbers change (0.2.0: the
 *  Barlow, Rae & Pope wake blockage is (c/2h)·cd_u as REDUCTION.md §8 gives it, not (c/4h)·cd_u;
 *  the Monte Carlo normal deviates come from the polar Box–Muller method, so other draws; 0.3.0:
 *  the classical wake blockage is (c/4h)·cd_u for both classical methods — the source between
 *  walls, docs/WALL-CORRECTIONS.md — and the default correction is 'auto'; 0.4.0: the
 *  bad-tap test by prediction uncertainty and the stagnation reference check of app/tapCheck.ts,
 *  the contour rule named in each row's loads; 0.5.0: the reduction's own errors and the
 *  transducer groups in the uncertainty, every interval on the corrected basis, corrected Γ, the
 *  per-run budget, the wake's q∞ = H∞ − p∞ when H∞ is measured; 0.6.0: the bad-tap test also
 *  predicts from the fitted inviscid shape (app/tapShape.ts) on rows of 20 taps or more, and keep
 *  decisions (Settings.keptTaps) with each result's `kept`; 0.7.0: the 'spline' contour rule rebuilt in
 *  the square-root plane of the nose (app/contourSpline.ts); 'linear' stays the default; 0.8.0: the
 *  integration error estimated with its sign (Richardson at the rule's order) and its uncertainty
 *  from the leading-edge resolution, the intervals placed with it and holding the value
 *  (app/reductionErrors.ts; the values themselves unchanged); the spline rule leaves out a tap next
 *  to the trailing edge (app/contourSpline.ts TE_MERGE); 0.9.0: the 'shape' contour rule
 *  (app/shapeRule.ts) is the default, each row naming the rule used and its fit; 0.9.1: the
 *  shape-aided tap test predicts a tap's difference from the shape one-sided where that is the less
 *  uncertain (app/tapCheck.ts differencePrediction) and adds the fit's own uncertainty at the tap;
 *  the stagnation-region shield from Cp 0.5 (was 0.8), and the row's lowest reading at the nose
 *  shielded as well. */
export const CORE_VERSION = '0.9.1';

export type PressureUnit =
  | 'Pa' | 'kPa' | 'hPa' | 'mbar' | 'psi' | 'inH2O' | 'mmH2O' | 'mmHg' | 'torr';
export type ChannelUnit = PressureUnit | 'deg';

/** Tunnel facility: closed 2-D test section. */
export interface Facility {
  name: string;
  /** Test-section height h (floor to ceiling), m. */
  sectionHeight: number;
  /** Test-section width (= model span for a spanning model), m. */
  sectionWidth: number;
  /** Tunnel calibration constant k_q: q_u = k_q · Δp_ref. */
  qCalibration: number;
  /** Standard uncertainty of k_q (absolute, dimensionless). */
  qCalibrationUncertainty?: number;
}

/** Airfoil geometry: a NACA 4-digit code, or coordinates in x/c, y/c ordered
 *  trailing edge → upper surface → leading edge → lower surface → trailing edge. */
export type Geometry =
  | { kind: 'naca4'; code: string }
  | { kind: 'coordinates'; x: number[]; y: number[] };

export type Surface = 'upper' | 'lower';

/** A chordwise surface-pressure tap. x, y are x/c and y/c of the tap on the contour. */
export interface Tap {
  id: string;
  x: number;
  y: number;
  surface: Surface;
  /** Spanwise row name; the main (centre) row is usually 'C'. */
  row: string;
  /** Spanwise station of the row, m from the tunnel centreline. */
  z: number;
}

export type RakeProbeKind = 'total' | 'static' | 'angle';
/** A wake-rake probe. y is vertical, m, from the tunnel centreline (positive up). */
export interface RakeProbe {
  id: string;
  y: number;
  kind: RakeProbeKind;
}
export interface Rake {
  /** Rake plane, m downstream of the model quarter chord. */
  x: number;
  probes: RakeProbe[];
}

/** A floor or ceiling static tap. x is m from the model quarter chord, positive downstream. */
export interface WallTap {
  id: string;
  x: number;
}

export type ReferenceKind = 'dpRef' | 'pStatic' | 'pTotal';
export type ChannelTarget =
  | { kind: 'tap'; id: string }
  | { kind: 'rake'; id: string }
  | { kind: 'floor'; id: string }
  | { kind: 'ceiling'; id: string }
  /** dpRef: tunnel reference Δp (q_u = k_q·dpRef); pStatic: free-stream static p∞;
   *  pTotal: free-stream total H∞ (optional). */
  | { kind: 'reference'; ref: ReferenceKind };

/** Instrument uncertainty, standard (k = 1), in the channel's own unit. */
export interface InstrumentUncertainty {
  fullScale: number;
  /** Percent of full scale. */
  percentFullScale: number;
  /** Fixed offset uncertainty. */
  offset: number;
}

/** One column of the run logs. All pressure channels are differential against one common
 *  reference (e.g. the plenum); only differences of them enter the reduction. */
export interface Channel {
  name: string;
  target: ChannelTarget;
  unit: ChannelUnit;
  uncertainty: InstrumentUncertainty;
}

/** Channels that share one transducer or scanner module (setup `transducerGroups`): their errors
 *  are correlated. Standard uncertainties (k = 1). See app/instruments.ts and docs/LOG-FORMAT.md. */
export interface TransducerGroup {
  id: string;
  /** Channel names (each in at most one group). */
  channels: string[];
  /** Unit of `zero` and `fullScale`. */
  unit: PressureUnit;
  /** Full scale of the transducer(s), in `unit`. */
  fullScale: number;
  /** Gain (span) error common to the group, % of reading. */
  gainPercent: number;
  /** Zero (offset) error common to the group, in `unit`: removed by the wind-off zero; counted in
   *  full only for a run without one. */
  zero: number;
  /** Each channel's own error at a reading (non-linearity, hysteresis, repeatability), % of full
   *  scale, independent from channel to channel and not removed by the zero. */
  linearityPercentFS: number;
}

export interface ModelDef {
  name: string;
  /** Chord c, m. */
  chord: number;
  /** Span b, m. */
  span: number;
  geometry: Geometry;
  /** Standard uncertainty of α, degrees. */
  alphaUncertaintyDeg: number;
  /** Standard uncertainty of tap positions, in x/c. */
  tapPositionUncertainty: number;
}

export interface SessionInfo {
  title: string;
  /** ISO date of the test day. */
  date: string;
  operators: string[];
  notes?: string;
}

/** The setup file of a session. */
export interface Setup {
  formatVersion: 1;
  session: SessionInfo;
  facility: Facility;
  model: ModelDef;
  taps: Tap[];
  rake: Rake;
  floor: WallTap[];
  ceiling: WallTap[];
  channels: Channel[];
  /** Channels sharing a transducer or module (optional; without it every channel's own
   *  uncertainty is an independent error, as before). */
  transducerGroups?: TransducerGroup[];
  /** Session defaults overriding DEFAULT_SETTINGS. */
  settings?: Partial<Settings>;
}

/** Wall-correction methods (app/corrections.ts, app/wallSignature.ts, app/correctionChoice.ts):
 *  the classical closed-wall formulas ('barlow-rae-pope', 'allen-vincenti'), Maskell's separated-flow
 *  blockage, the wall-pressure-signature fit, 'auto' (chosen per run, see correctionChoice.ts) and
 *  'none'. */
export type CorrectionMethod = 'barlow-rae-pope' | 'allen-vincenti' | 'maskell' | 'wall-signature' | 'auto' | 'none';
/** A method a run is actually corrected with ('auto' resolved). */
export type AppliedMethod = Exclude<CorrectionMethod, 'auto'>;
export const CORRECTION_METHODS: readonly CorrectionMethod[] = [
  'auto', 'wall-signature', 'maskell', 'barlow-rae-pope', 'allen-vincenti', 'none',
];

/** Reduction settings (per session, overridable per reduction). */
export interface Settings {
  /** Lift cross-check tolerance: |cl_mom − cl_p| > liftTolAbs + liftTolRel·|cl_p| flags. */
  liftTolAbs: number;
  liftTolRel: number;
  /** Spike rejection: samples beyond median ± spikeK·MAD (scaled to σ) are dropped. */
  spikeK: number;
  /** Unsteadiness: std(q)/mean(q) above this flags the run. */
  unsteadyThreshold: number;
  /** Wake captured when both rake edges have (H_w − p∞)/q∞ within this of 1. */
  wakeEdgeTol: number;
  /** Bad-tap test (app/tapCheck.ts, docs/TAP-JUDGEMENT.md): a tap is an outlier when it departs
   *  from the leave-one-out prediction of its neighbours by more than tapCheckK times the combined
   *  standard uncertainty (tap channel and prediction). */
  tapCheckK: number;
  /** Smallest standard uncertainty of a tap's Cp the test assumes (unmodelled effects: tap hole,
   *  position), in Cp. */
  tapCheckMinU: number;
  /** Stagnation check: the row's highest Cp above the isentropic Cp_stag by more than stagnationK
   *  standard uncertainties gives a reference flag (the tap is kept). */
  stagnationK: number;
  /** Contour rule of the surface integration: 'shape' (the default: Cp linear between taps plus
   *  the fitted inviscid shape's own departure from linear, app/shapeRule.ts; rows it cannot
   *  stand on are integrated by 'linear' and say so), 'linear' (Cp linear between taps on
   *  straight segments) or 'spline' (cubic splines of the contour and the surface speed in the
   *  square-root plane of the nose, app/contourSpline.ts; not linear in the taps' Cp) — see
   *  docs/TAP-JUDGEMENT.md §3. */
  contourRule: 'shape' | 'linear' | 'spline';
  /** Wind-off leak: a tap whose wind-off zero departs from the median zero of the taps by more
   *  than this many Pa is flagged as leaking. */
  leakPa: number;
  /** Zero drift between the wind-off zeros bracketing a run, as a fraction of q, that flags. */
  zeroDriftFraction: number;
  /** M above this flags the run as compressible. */
  machLimit: number;
  /** Spread of section cl across spanwise rows that flags poor two-dimensionality. */
  spanSpreadTol: number;
  /** Monte Carlo draws for uncertainty (0 = skip). */
  mcDraws: number;
  mcSeed: number;
  correction: CorrectionMethod;
  /** Maskell's two-dimensional blockage factor θ in Δq/q = θ·cd·c/h (R&M 3400; see
   *  app/corrections.ts for why 0.96). */
  maskellTheta: number;
  /** Largest rms fit residual (in Cp) of the wall-signature fit that 'auto' still uses. */
  wallFitResidualCp: number;
  /** A run counts as past stall for 'auto' (Maskell instead of classical where the walls cannot
   *  say) when its rearmost upper-surface tap (aft of 0.85c) reads Cp at or below this. */
  stallTeCp: number;
  /** Flag when the chosen and the classical corrections differ in ε by more than this… */
  correctionTolEps: number;
  /** …or in Δα by more than this many degrees. */
  correctionTolAlphaDeg: number;
  /** Taps the user marked bad (ids). */
  badTaps: string[];
  /** Keep decisions against the automatic bad-tap test, one per tap and run: "C07@12" keeps tap
   *  C07 in run 12 (it is no longer dropped there as leaking or as an outlier; docs/TAP-JUDGEMENT.md
   *  §5). Written by the inspector's keep button (audited as 'tap.keep'). */
  keptTaps: string[];
}

export const DEFAULT_SETTINGS: Settings = {
  liftTolAbs: 0.02,
  liftTolRel: 0.03,
  spikeK: 5,
  unsteadyThreshold: 0.02,
  wakeEdgeTol: 0.01,
  tapCheckK: 4,
  tapCheckMinU: 0.005,
  stagnationK: 2,
  contourRule: 'shape',
  leakPa: 15,
  zeroDriftFraction: 0.01,
  machLimit: 0.3,
  spanSpreadTol: 0.05,
  mcDraws: 400,
  mcSeed: 20261202,
  correction: 'auto',
  maskellTheta: 0.96,
  wallFitResidualCp: 0.005,
  stallTeCp: -0.15,
  correctionTolEps: 0.006,
  correctionTolAlphaDeg: 0.25,
  badTaps: [],
  keptTaps: [],
};

export type RunKind = 'zero' | 'data';

/** One line of the run index. */
export interface RunInfo {
  run: number;
  kind: RunKind;
  /** ISO 8601 start time. */
  time: string;
  /** Geometric angle of attack, degrees (0 for wind-off zeros as logged). */
  alphaDeg: number;
  /** Barometric pressure, Pa. */
  baro: number;
  /** Air temperature, °C. */
  temperatureC: number;
  /** Relative humidity, %. */
  humidity: number;
  /** Source file name, if any. */
  file?: string;
}

/** Raw samples of one run: channel name → samples, already converted to Pa (or deg). */
export interface RawRun {
  info: RunInfo;
  channels: Record<string, Float64Array>;
}

/** Statistics of one channel over one run (app/samples.ts). */
export interface ChannelStats {
  mean: number;
  std: number;
  /** Samples kept after spike rejection. */
  n: number;
  /** std/√n. */
  stdErr: number;
  /** Samples rejected as spikes. */
  rejected: number;
}

/** A data run after averaging and wind-off-zero subtraction: what the run reducer consumes. */
export interface ZeroedRun {
  info: RunInfo;
  /** Channel name → zero-corrected mean, Pa (or deg for angle channels). */
  values: Record<string, number>;
  /** Channel name → statistics of the raw samples (before zero subtraction). */
  stats: Record<string, ChannelStats>;
  /** Channel name → zero value subtracted, Pa. */
  zero: Record<string, number>;
  /** Channel name → change of the zero between the bracketing wind-off runs, Pa (0 if one side). */
  drift: Record<string, number>;
  /** Run numbers of the wind-off zeros used. */
  zeroRuns: number[];
  /** Channel name → wind-off zero of the nearest zero run (for leak detection). */
  zeroRaw?: Record<string, number>;
}

/** Flag codes: the keys of the one vocabulary table (app/flags.ts); add a code there. */
export type { FlagCode } from './flags';
import type { FlagCode } from './flags';

export interface Flag {
  code: FlagCode;
  /** Human-readable reason, with numbers. */
  reason: string;
  /** 'warn': look at it; 'reject': do not use without review. */
  severity: 'warn' | 'reject';
}

/** A value with its Monte Carlo 95 % coverage interval. */
export interface Interval {
  value: number;
  /** Standard uncertainty. */
  u: number;
  lo: number;
  hi: number;
  /** Mean of the Monte Carlo values, when `value` is the nominal result instead. */
  mean?: number;
}

/** Outputs that carry an uncertainty (all on the corrected basis). */
export type UncertaintyKey = 'cl' | 'cd' | 'cdp' | 'cmc4' | 'clMom' | 'gammaPressure' | 'gammaMomentum' | 'gammaWall';

/** One line of the budget: an input quantity (or a group of independent ones) and what it
 *  contributes to each output, c_i·u(x_i) (JCGM 100 §5.1.3, eq. 10 terms). */
export interface BudgetLine {
  /** Short name of the source. */
  source: string;
  /** Kind: instrument, reference, geometry, reduction (the method's own error), correction model. */
  kind: 'instrument' | 'reference' | 'geometry' | 'reduction' | 'correction';
  /** Standard uncertainty of the input in its own unit (text, e.g. "0.05°"), and how it was found. */
  u: string;
  basis: string;
  /** Several independent inputs combined (then no single sensitivity). */
  inputs: number;
  /** Sensitivity ∂y/∂x per output (per unit of `u`), when the line is one input. */
  sensitivity?: Partial<Record<UncertaintyKey, number>>;
  /** |c_i|·u(x_i) per output (root-sum-square over the inputs of the line). */
  contribution: Partial<Record<UncertaintyKey, number>>;
}

/** The per-run budget: its lines, the combined standard uncertainty by JCGM 100 eq. (10), the
 *  analytic 95 % interval value + shift ± k·u_c (k = 1.96, normal) beside the Monte Carlo one. */
export interface UncertaintyBudget {
  lines: BudgetLine[];
  combined: Partial<Record<UncertaintyKey, number>>;
  analytic: Partial<Record<UncertaintyKey, { lo: number; hi: number }>>;
  /** The estimated integration (tap resolution) error carried to each output, with its sign: the
   *  intervals (analytic and Monte Carlo) are placed at value + shift; the values are not changed. */
  shift?: Partial<Record<UncertaintyKey, number>>;
  k: number;
}

export interface TapCp {
  id: string;
  x: number;
  y: number;
  surface: Surface;
  row: string;
  cp: number;
  bad: boolean;
  /** Why the tap is bad ('marked', 'outlier', 'leak'; 'stagnation' in results of core < 0.3.0). */
  badReason?: string;
}

/** A tap left out of the integration, and who left it out: 'hand' — marked bad by the engineer
 *  (Settings.badTaps); 'auto' — found by the core (a leak at wind-off, or an outlier of the
 *  leave-one-out test, with its verdict), a suggestion for the engineer to confirm or keep. */
export interface DroppedTap {
  id: string;
  reason: string;
  by: 'hand' | 'auto';
  /** Outliers: Cp predicted from the neighbours, Cp − prediction, combined standard uncertainty,
   *  |residual|/u. */
  predicted?: number;
  residual?: number;
  u?: number;
  score?: number;
}

/** Surface-pressure integration of one row (app/surface.ts). */
export interface SurfaceLoads {
  cn: number;
  ca: number;
  cl: number;
  cdp: number;
  cmLE: number;
  cmc4: number;
  /** Trailing-edge Cp used to close the contour, and how. */
  teCp: number;
  teMethod: string;
  /** The contour rule used (app/surface.ts ContourRule); absent in results of core < 0.3.0, which
   *  were all 'linear'. */
  rule?: 'shape' | 'spline' | 'linear';
  /** The 'shape' rule's fit (app/shapeRule.ts): the inviscid shape's α_eff, deg, and the slope b
   *  of Cp ≈ a + b·shape over the row's taps, with the rms of the fit's residuals. */
  shapeFit?: { alphaEffDeg: number; b: number; rms: number };
  /** Ids of taps dropped and bridged. */
  bridged: string[];
}

export interface RowLoads extends SurfaceLoads {
  row: string;
  z: number;
}

export interface WakeResult {
  cd: number;
  /** Wake centre, m (y of the total-pressure deficit centroid). */
  centre: number;
  /** Wake width, m (between the points where the deficit falls to 5 % of its peak). */
  width: number;
  captured: boolean;
  /** True when rake static probes gave p_w; false = far-wake assumption p_w = p∞. */
  staticUsed: boolean;
  /** (H_w − p∞)/q∞ at the edges (lower, upper). */
  edgeCpt: [number, number];
  profile: { y: number; cpt: number }[];
  /** Number of negative radicands in the Jones integrand clamped to 0 (noise or bad probes). */
  clampedRadicands?: number;
}

export interface WallResult {
  /** Momentum lift coefficient from floor − ceiling pressures, F-corrected. */
  clMom: number;
  /** Circulation from the wall line integral (F-corrected), m²/s. */
  gammaWall: number;
  /** cl from gammaWall via Kutta–Joukowski. */
  clWall: number;
  /** Finite-length capture fraction F. */
  F: number;
  /** Flow-angle flux term added to clMom (0 if no angle probes). */
  angleFluxCl: number;
  /** Capture fraction used for clMom when the momentum contour closes at the rake plane
   *  (angle flux given with rakeX); absent when clMom uses F. */
  FMom?: number;
  floor: { x: number; cp: number }[];
  ceiling: { x: number; cp: number }[];
}

export interface CorrectionResult {
  method: AppliedMethod;
  sigma: number;
  epsSb: number;
  epsWb: number;
  eps: number;
  /** Upwash and streamline-curvature increments measured at the walls (wall-signature method):
   *  when present, applyCorrections uses them in place of the σ terms. */
  measured?: { dAlphaDeg: number; dCl: number; dCm: number };
}

/** One method's correction of a run, for the side-by-side comparison. */
export interface MethodCorrection {
  method: AppliedMethod;
  /** False when the method could not be applied to this run (then `why` says why, no numbers). */
  available: boolean;
  why?: string;
  eps?: number;
  epsSb?: number;
  epsWb?: number;
  dAlphaDeg?: number;
  corrected?: Coefficients;
}

/** Every method's correction of a run, and which one was applied and why. */
export interface CorrectionSet {
  /** Setting asked for ('auto' or a method). */
  requested: CorrectionMethod;
  applied: AppliedMethod;
  /** Why this method, in words (names the fall-back when 'auto' or the request could not be met). */
  reason: string;
  methods: MethodCorrection[];
  /** Wall-signature fit (null when the walls could not say). */
  signature: {
    gamma: number; Q: number; mu: number; offset: number; gradient: number;
    residualCp: number; worstCp: number; worstAt: { wall: 'floor' | 'ceiling'; x: number };
    uEps: number; condition: number; taps: number;
    epsSb: number; epsWb: number; eps: number; dAlphaDeg: number; dCl: number; dCm: number;
    /** Shift terms Γδ (m³/s) and μδ (m⁴/s). */
    gammaShift: number; muShift: number;
    /** Fitted wall Cp at the taps (for the wall-signature plot). */
    fitted: { floor: { x: number; cp: number }[]; ceiling: { x: number; cp: number }[] };
  } | null;
  /** Cp of the rearmost upper-surface tap aft of 0.85c (NaN: none), and the drag Maskell used. */
  teCp: number;
  maskellDrag: { cd: number; source: 'wake' | 'pressure' };
}

export interface Coefficients {
  cl: number;
  /** Wake (Jones) drag, NaN when no wake. */
  cd: number;
  cdp: number;
  cmc4: number;
  alphaDeg: number;
  q: number;
  V: number;
  Re: number;
}

export interface AirState {
  /** Static pressure used for density, Pa. */
  p: number;
  T: number;
  rh: number;
  rho: number;
  mu: number;
  a: number;
}

export interface RunResult {
  run: number;
  coreVersion: string;
  settings: Settings;
  air: AirState;
  M: number;
  /** Cp of every tap, all rows. */
  taps: TapCp[];
  /** Taps dropped, by hand or automatically (absent in results of core < 0.3.0). */
  dropped?: DroppedTap[];
  /** Taps the engineer kept in this run against the automatic test (Settings.keptTaps), in setup
   *  order; absent when none. */
  kept?: string[];
  /** Section loads of each spanwise row (main row first). */
  rows: RowLoads[];
  /** Loads of the main row (uncorrected). */
  surface: SurfaceLoads;
  wake: WakeResult | null;
  walls: WallResult | null;
  /** Bound circulation Γ by Kutta–Joukowski from each method, m²/s, UNCORRECTED: ½·V_u·c·cl_u
   *  (pressure, momentum) and the wall line integral as measured. */
  circulation: { pressure: number; momentum: number; wall: number };
  /** The same on the corrected basis: ½·V·c·cl with V and cl corrected (the wall line integral
   *  scaled by the same factor (1 + ε)(1 − σ − 2ε)). The intervals of `uncertainty` sit on these. */
  circulationCorrected?: { pressure: number; momentum: number; wall: number };
  correction: CorrectionResult;
  /** Every wall-correction method side by side (absent in results stored before core 0.3.0). */
  corrections?: CorrectionSet;
  uncorrected: Coefficients;
  corrected: Coefficients;
  /** cl by the wall-momentum method (uncorrected), for the cross-check. */
  clMomentum: number;
  spanwise: { spread: number; CL: number } | null;
  /** 95 % intervals (Monte Carlo, JCGM 101) of the corrected coefficients, the corrected
   *  momentum cl and the corrected circulations (circulationCorrected); `value` is the nominal
   *  corrected figure printed beside the interval, `mean` the mean of the draws. */
  uncertainty: Partial<Record<UncertaintyKey, Interval>>;
  /** GUM-style budget (JCGM 100 §8) of the same outputs; absent when Monte Carlo is off. */
  budget?: UncertaintyBudget;
  /** Standard uncertainty of each tap's Cp (every input, Cp = (p − p∞)/q), by tap id; absent when
   *  Monte Carlo is off. The Cp plot draws its 95 % band. */
  cpU?: Record<string, number>;
  flags: Flag[];
  /** Inviscid panel-method Cp at the corrected α (x/c, Cp, surface). */
  inviscid: { x: number; cp: number; surface: Surface }[];
}

/** What the session summary (app/reduce.ts summariseSession) needs of a run's result: the store
 *  keeps it beside the full result, so a summary never decodes every stored result. */
export type ResultDigest = Pick<RunResult, 'run' | 'corrected' | 'uncorrected' | 'correction' | 'clMomentum' | 'flags'> & {
  /** Taps dropped (who and why), for the session findings (app/sessionFaults.ts). */
  dropped?: Pick<DroppedTap, 'id' | 'reason' | 'by'>[];
  /** The 95 % intervals the polars draw as error bars (absent in digests stored before 0.3.0). */
  intervals?: PolarIntervals;
  rows: Pick<RowLoads, 'row' | 'z' | 'cl'>[];
  settings: Pick<Settings, 'spanSpreadTol'>;
};

export interface SessionStats {
  /** dcl/dα per degree over the linear range, with its fit range. */
  liftSlopePerDeg: number;
  linearRange: [number, number];
  alphaL0Deg: number;
  clMax: number;
  alphaClMaxDeg: number;
  cdMin: number;
  clAtCdMin: number;
  ldMax: number;
  alphaLdMaxDeg: number;
  /** Largest |cl_down − cl_up| at matching α between up- and down-sweeps. */
  hysteresis: { maxDeltaCl: number; alphaDeg: number } | null;
  /** Repeat-run spread: largest cl range among runs at the same α and sweep direction. */
  repeatSpread: number | null;
}

/** 95 % intervals [lo, hi] of a polar point's corrected values (error bars). */
export type PolarIntervals = Partial<Record<'cl' | 'clMom' | 'cd' | 'cmc4', [number, number]>>;

/** One point of the session polars. */
export interface PolarPoint {
  /** 95 % intervals of cl, clMom, cd (wake) and cm, when the reduction had Monte Carlo. */
  intervals?: PolarIntervals;
  run: number;
  alphaDeg: number;
  cl: number;
  clMom: number;
  cd: number;
  cdp: number;
  cmc4: number;
  time: string;
  /** The run has a flag of its own (one no session finding explains: SessionSummary.noted). */
  flagged: boolean;
}

export interface SessionConditions {
  qMin: number; qMax: number;
  ReMin: number; ReMax: number;
  alphaMin: number; alphaMax: number;
  tempMin: number; tempMax: number;
  baroMin: number; baroMax: number;
}

/** A fault seen on most runs of a session (app/sessionFaults.ts). */
export interface SessionFinding {
  /** 'leaking-tap' / 'bad-tap': a tap dropped alike on most runs; 'dead-channel' (no scatter at
   *  all, or a model tap that reads with the wind on what it reads wind-off) and
   *  'saturated-channel' (at its full scale): a channel fault seen in the statistics of the runs. */
  code: 'leaking-tap' | 'bad-tap' | 'dead-channel' | 'saturated-channel';
  /** The tap (or, for a channel finding, the id of what the channel measures, or the channel's
   *  name for a reference channel). */
  tap: string;
  /** Channel findings: the channel's name. */
  channel?: string;
  /** Runs carrying it, and the data runs it was looked for on. */
  runs: number[];
  of: number;
  /** One sentence, e.g. "C19 leaks in every wind-off zero, runs 1–52; dropped from all runs". */
  text: string;
}

/** What the session reducer returns (app/reduce.ts summariseSession). */
export interface SessionSummary {
  stats: SessionStats | null;
  flagged: { run: number; flags: Flag[] }[];
  conditions: SessionConditions | null;
  /** Corrected coefficients of every reduced data run, in time order. */
  polar: PolarPoint[];
  /** Faults that persist across the session, each reported once (app/sessionFaults.ts). */
  findings?: SessionFinding[];
  /** Runs whose flags are not all explained by a session finding: the runs needing a decision. */
  needsDecision?: number[];
  /** Per run, the indices (in its flags) of the flags a session finding explains: shown as notes
   *  and not counted as flagged (app/sessionFaults.ts notedFlags). */
  noted?: { run: number; flags: number[] }[];
  /** Span loading of every run with several rows. */
  span: { run: number; alphaDeg: number; z: number[]; cl: number[]; CL: number }[];
}
