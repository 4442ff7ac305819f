// Every wall-correction method of a run side by side, and the one applied (docs/WALL-CORRECTIONS.md).
// - classical: 'barlow-rae-pope' / 'allen-vincenti' (app/corrections.ts);
// - 'maskell': Maskell's separated-flow blockage (app/corrections.ts), on the larger of the captured
//   wake drag and the pressure drag (the rake under-reads a wide, unsteady separated wake; the
//   pressure drag leaves out the skin friction: the larger is the better estimate of the drag whose
//   wake blocks the tunnel — common practice, no source);
// - 'wall-signature': the fit of app/wallSignature.ts to this run's floor and ceiling Cp.
// 'auto' (the default): the wall signature where the walls are instrumented well enough (the plan
// says so) and the fit residual is at most settings.wallFitResidualCp; otherwise Maskell past stall
// (the upper surface separated over at least settings.separatedExtent of the chord); otherwise
// classical (Barlow, Rae & Pope). An explicit 'wall-signature' that the walls cannot support falls
// back the same way and says so: a run is never corrected silently with a poor fit.
// Past stall is judged from the run's own pressures, not from the session's cl_max (a run is
// reduced on its own): trailing-edge separation drives the upper-surface trailing-edge pressure
// from slightly positive (attached recovery) to suction, so a run is past stall when its rearmost
// upper tap aft of 0.85c reads Cp ≤ settings.stallTeCp (default −0.15; the trailing-edge pressure
// divergence, common practice, no source).
// The flag 'correction-disagree' (warn) is raised when the applied method is not the classical one
// and their ε differ by more than settings.correctionTolEps or their Δα by more than
// settings.correctionTolAlphaDeg: a sign of stall, wall boundary-layer growth or wall-tap trouble.

import { applyCorrections, wallCorrections } from './corrections';
import { makeFlag } from './flags';
import { fitSignature, signatureInterference, type SignaturePlan, type WallCpUncertainty } from './wallSignature';
import type {
  AppliedMethod, Coefficients, CorrectionMethod, CorrectionResult, CorrectionSet, Flag,
  MethodCorrection, Settings, TapCp, WallResult,
} from './types';

/** Taps at or aft of this x/c count as trailing-edge taps for the stall judgement. */
export const TE_TAP_XC = 0.85;

/** Cp of the rearmost good upper-surface tap at or aft of TE_TAP_XC (NaN when there is none). */
export function trailingEdgeCp(taps: readonly Pick<TapCp, 'x' | 'cp' | 'surface' | 'bad'>[]): number {
  let best: { x: number; cp: number } | null = null;
  for (const t of taps) {
    if (t.surface !== 'upper' || t.bad || !Number.isFinite(t.cp) || t.x < TE_TAP_XC) continue;
    if (!best || t.x > best.x) best = t;
  }
  return best ? best.cp : NaN;
}

/** What the methods need of a run (nominal pass or one Monte Carlo draw). */
export interface CorrectionInputs {
  chord: number;
  height: number;
  width: number;
  sectionAreaC2: number;
  uncorrected: Coefficients;
  cmc4U: number;
  /** Wake (Jones) drag, NaN without a wake; whether the rake captured the wake. */
  wakeCd: number;
  wakeCaptured: boolean;
  walls: WallResult | null;
  signaturePlan: SignaturePlan | null;
}

/** How one pass corrects: the method and what the nominal pass fixed for it. */
export interface CorrectionPlan {
  method: AppliedMethod;
  maskellTheta: number;
  /** Drag Maskell uses (fixed by the nominal pass so a draw cannot switch it). */
  maskellSource: 'wake' | 'pressure';
}

/** Which drag Maskell's formula uses for these inputs. */
export function maskellSource(x: CorrectionInputs): 'wake' | 'pressure' {
  return x.wakeCaptured && Number.isFinite(x.wakeCd) && x.wakeCd > x.uncorrected.cdp ? 'wake' : 'pressure';
}

/** The correction parameters of one method from plain inputs (the Monte Carlo plan calls this
 *  with its typed arrays): wall Cp in the design's order (each wall sorted by x). Null when the wall
 *  signature cannot be applied. */
export function correctionOf(
  plan: CorrectionPlan,
  geom: { chord: number; height: number; width: number; sectionAreaC2: number },
  wakeCd: number, cdp: number,
  signature: SignaturePlan | null, floorCp: ArrayLike<number> | null, ceilingCp: ArrayLike<number> | null,
): CorrectionResult | null {
  const g = { chord: geom.chord, height: geom.height, width: geom.width, sectionAreaC2: geom.sectionAreaC2 };
  const classicalCd = Number.isFinite(wakeCd) ? wakeCd : cdp;
  switch (plan.method) {
    case 'wall-signature': {
      if (!signature || signature.unusable || !floorCp || !ceilingCp) return null;
      const s = signatureInterference(signature, floorCp, ceilingCp);
      return {
        method: 'wall-signature',
        sigma: wallCorrections({ ...g, cdU: classicalCd, method: 'barlow-rae-pope' }).sigma,
        epsSb: s.epsSb,
        epsWb: s.epsWb,
        eps: s.epsSb + s.epsWb,
        measured: { dAlphaDeg: s.dAlphaDeg, dCl: s.dCl, dCm: s.dCm },
      };
    }
    case 'maskell':
      return wallCorrections({
        ...g,
        cdU: plan.maskellSource === 'wake' && Number.isFinite(wakeCd) ? wakeCd : cdp,
        method: 'maskell',
        maskellTheta: plan.maskellTheta,
      });
    default:
      return wallCorrections({ ...g, cdU: classicalCd, method: plan.method });
  }
}

/** correctionOf for a run's inputs. */
export function correctionFor(plan: CorrectionPlan, x: CorrectionInputs): CorrectionResult | null {
  return correctionOf(
    plan, x, x.wakeCd, x.uncorrected.cdp, x.signaturePlan,
    x.walls ? x.walls.floor.map((t) => t.cp) : null, x.walls ? x.walls.ceiling.map((t) => t.cp) : null,
  );
}

const RAD_TO_DEG = 180 / Math.PI;

/** Δα of a correction as applyCorrections applies it. */
function dAlphaOf(c: CorrectionResult, u: Coefficients, cmc4U: number): number {
  return c.measured ? c.measured.dAlphaDeg : ((RAD_TO_DEG * c.sigma) / (2 * Math.PI)) * (u.cl + 4 * cmc4U);
}

const f4 = (v: number): string => (Number.isFinite(v) ? v.toFixed(4) : '—');
const f2 = (v: number): string => (Number.isFinite(v) ? v.toFixed(2) : '—');

export const METHOD_WORDS: Record<AppliedMethod, string> = {
  'wall-signature': 'wall signature',
  maskell: 'Maskell',
  'barlow-rae-pope': 'classical (Barlow, Rae & Pope)',
  'allen-vincenti': 'classical (Allen & Vincenti)',
  none: 'none',
};

/**
 * The nominal pass: every method's ε, Δα and corrected coefficients, the method applied and why,
 * and the disagreement flag (or null).
 */
export function correctionSet(
  requested: CorrectionMethod, x: CorrectionInputs, settings: Pick<Settings,
    'maskellTheta' | 'wallFitResidualCp' | 'stallTeCp' | 'correctionTolEps' | 'correctionTolAlphaDeg'>,
  upperTaps: readonly Pick<TapCp, 'x' | 'cp' | 'surface' | 'bad'>[], uWallCp: number | WallCpUncertainty,
): { set: CorrectionSet; plan: CorrectionPlan; correction: CorrectionResult; corrected: Coefficients; flag: Flag | null } {
  const u = x.uncorrected;
  const mSource = maskellSource(x);
  const planOf = (method: AppliedMethod): CorrectionPlan => ({ method, maskellTheta: settings.maskellTheta, maskellSource: mSource });
  const teCp = trailingEdgeCp(upperTaps);

  // The wall signature: fit with its residual, or why the walls cannot say.
  let why: string | null = null;
  let signature: CorrectionSet['signature'] = null;
  const P = x.signaturePlan;
  if (!x.walls) why = 'The walls cannot say: this setup has no floor and ceiling taps on both walls.';
  else if (!P) why = 'The walls cannot say: no wall-signature design for this setup.';
  else if (P.unusable) why = P.unusable;
  else {
    const fit = fitSignature(P, x.walls.floor.map((t) => t.cp), x.walls.ceiling.map((t) => t.cp), u.V, uWallCp);
    if (!fit || ![fit.eps, fit.dAlphaDeg, fit.dCl, fit.residualCp].every(Number.isFinite)) {
      why = 'The walls cannot say: the wall-signature fit gave no finite result (check the wall channels).';
    } else {
      signature = {
        gamma: fit.gamma, Q: fit.Q, mu: fit.mu, offset: fit.offset, gradient: fit.gradient,
        residualCp: fit.residualCp, worstCp: fit.worstCp, worstAt: fit.worstAt, uEps: fit.uEps,
        condition: fit.condition, taps: fit.taps, epsSb: fit.epsSb, epsWb: fit.epsWb, eps: fit.eps,
        dAlphaDeg: fit.dAlphaDeg, dCl: fit.dCl, dCm: fit.dCm, gammaShift: fit.gammaShift, muShift: fit.muShift,
        fitted: fit.fitted,
      };
      if (fit.residualCp > settings.wallFitResidualCp) {
        why =
          `The walls cannot say: the wall-signature fit leaves an rms residual of ${f4(fit.residualCp)} in Cp, above the ` +
          `${f4(settings.wallFitResidualCp)} limit (largest ${f4(fit.worstCp)} at the ${fit.worstAt.wall} tap at x = ${f2(fit.worstAt.x)} m): ` +
          'a wall tap or the flow is not what vortex, source and doublet between walls describe.';
      }
    }
  }

  const methods: MethodCorrection[] = [];
  const byMethod = new Map<AppliedMethod, { c: CorrectionResult; k: Coefficients }>();
  for (const m of ['wall-signature', 'maskell', 'barlow-rae-pope', 'allen-vincenti'] as const) {
    const c = m === 'wall-signature' && (why !== null || !signature) ? null : correctionFor(planOf(m), x);
    if (!c) {
      methods.push({ method: m, available: false, why: why ?? 'not available' });
      continue;
    }
    const k = applyCorrections(u, c, x.cmc4U);
    byMethod.set(m, { c, k });
    methods.push({
      method: m, available: true, eps: c.eps, epsSb: c.epsSb, epsWb: c.epsWb,
      dAlphaDeg: dAlphaOf(c, u, x.cmc4U), corrected: k,
    });
  }

  // The method applied, and why.
  const stalled = teCp <= settings.stallTeCp;
  const stallWords = Number.isFinite(teCp)
    ? `the upper-surface trailing-edge Cp is ${f2(teCp)}`
    : `no upper-surface tap aft of ${TE_TAP_XC}c tells whether the flow is separated`;
  const withoutWalls = (lead: string): { m: AppliedMethod; reason: string } =>
    stalled
      ? { m: 'maskell', reason: `${lead} ${stallWords} (at or below ${f2(settings.stallTeCp)}: past stall), so Maskell's blockage (θ = ${settings.maskellTheta}) is applied.` }
      : { m: 'barlow-rae-pope', reason: `${lead} ${stallWords}${Number.isFinite(teCp) ? ` (above ${f2(settings.stallTeCp)}: attached)` : ''}, so the classical corrections (Barlow, Rae & Pope) are applied.` };
  let choice: { m: AppliedMethod; reason: string };
  if (requested === 'auto' || requested === 'wall-signature') {
    if (!why && signature) {
      choice = {
        m: 'wall-signature',
        reason: `${requested === 'auto' ? 'Automatic choice: ' : ''}wall signature from ${signature.taps} wall taps, rms fit residual ${f4(signature.residualCp)} in Cp (limit ${f4(settings.wallFitResidualCp)}).`,
      };
    } else {
      const lead = `${requested === 'auto' ? 'Automatic choice' : 'Wall signature asked for but not used'}: ${why} Without it,`;
      choice = withoutWalls(lead);
    }
  } else if (requested === 'maskell') {
    choice = { m: 'maskell', reason: `Maskell's blockage (θ = ${settings.maskellTheta}) by setting; ${stallWords}.` };
  } else {
    choice = { m: requested, reason: `${METHOD_WORDS[requested]} by setting.` };
  }

  const plan = planOf(choice.m);
  const applied = choice.m === 'none'
    ? { c: wallCorrections({ chord: x.chord, height: x.height, width: x.width, sectionAreaC2: x.sectionAreaC2, cdU: 0, method: 'none' }), k: u }
    : byMethod.get(choice.m)!;
  const reference: AppliedMethod = requested === 'allen-vincenti' ? 'allen-vincenti' : 'barlow-rae-pope';
  let flag: Flag | null = null;
  const classical = byMethod.get(reference)!;
  if (choice.m !== reference && choice.m !== 'none' && choice.m !== 'barlow-rae-pope' && choice.m !== 'allen-vincenti') {
    const dEps = applied.c.eps - classical.c.eps;
    const aA = dAlphaOf(applied.c, u, x.cmc4U);
    const aC = dAlphaOf(classical.c, u, x.cmc4U);
    if (Math.abs(dEps) > settings.correctionTolEps || Math.abs(aA - aC) > settings.correctionTolAlphaDeg) {
      flag = makeFlag('correction-disagree', {
        applied: METHOD_WORDS[choice.m], epsApplied: applied.c.eps, dAlphaApplied: aA, clApplied: applied.k.cl,
        reference: METHOD_WORDS[reference], epsReference: classical.c.eps, dAlphaReference: aC, clReference: classical.k.cl,
        tolEps: settings.correctionTolEps, tolAlphaDeg: settings.correctionTolAlphaDeg,
      });
    }
  }
  const set: CorrectionSet = {
    requested,
    applied: choice.m,
    reason: choice.reason,
    methods,
    signature,
    teCp,
    maskellDrag: { cd: mSource === 'wake' ? x.wakeCd : u.cdp, source: mSource },
  };
  return { set, plan, correction: applied.c, corrected: applied.k, flag };
}
