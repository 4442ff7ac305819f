// Bound circulation by the Kutta–Joukowski theorem, L′ = ρ∞ V∞ Γ (Kutta 1902, Joukowski 1906; e.g.
// Anderson, Fundamentals of Aerodynamics, §3.16), so with L′ = ½ρV²c·cl: Γ = ½ V c cl and
// cl = 2Γ/(V c). Lift cross-check between surface-pressure and wall-momentum lift:
// flag when |cl_mom − cl_p| > tol_abs + tol_rel·|cl_p| (default 0.02 + 3 %: common practice, no source).

import type { Flag } from './types';
import { flagLine, makeFlag } from './flags';

/** Circulation per Kutta–Joukowski from a section lift coefficient: Γ = ½ V c cl (m²/s). */
export function gammaFromCl(cl: number, V: number, chord: number): number {
  return 0.5 * V * chord * cl;
}

/** Section lift coefficient from circulation: cl = 2Γ/(V c). */
export function clFromGamma(gamma: number, V: number, chord: number): number {
  return (2 * gamma) / (V * chord);
}

export interface LiftCrossCheckArgs {
  clPressure: number;
  clMomentum: number;
  /** cl from the wall circulation integral, quoted in the reason if given (not tested). */
  clWall?: number;
  tolAbs: number;
  tolRel: number;
  /** Both lifts on the corrected basis, quoted in the reason beside the uncorrected ones. */
  corrected?: { clPressure: number; clMomentum: number };
}

/** Allowed |cl_mom − cl_p| for a given pressure cl. */
export function liftTolerance(clPressure: number, tolAbs: number, tolRel: number): number {
  return tolAbs + tolRel * Math.abs(clPressure);
}

/**
 * 'lift-mismatch' (reject) when the wall-momentum lift departs from the surface-pressure lift by
 * more than the tolerance; null when they agree or when either value is not finite (no check
 * possible, e.g. no wall taps).
 */
export function liftCrossCheck(args: LiftCrossCheckArgs): Flag | null {
  const { clPressure, clMomentum, clWall, tolAbs, tolRel } = args;
  if (!Number.isFinite(clPressure) || !Number.isFinite(clMomentum)) return null;
  const diff = Math.abs(clMomentum - clPressure);
  const tol = liftTolerance(clPressure, tolAbs, tolRel);
  if (!(diff > tol)) return null;
  return makeFlag('lift-mismatch', { clPressure, clMomentum, tol, clWall, ...(args.corrected ? { corrected: args.corrected } : {}) });
}

/** One-line text of a flag for plain-text tables, e.g. "hold: lift methods disagree — …". */
export function flagText(flag: Flag): string {
  return flagLine(flag, 'reason');
}
