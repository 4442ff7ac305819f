// Lift from the tunnel walls: momentum (floor − ceiling pressure) lift and the wall circulation.
// - Momentum theorem, y-component, on the control volume floor / ceiling / far upstream / far
//   downstream: L′ = ∫ (p_floor − p_ceiling) dx, cl_mom = (1/c) ∫ (Cp_floor − Cp_ceiling) dx; with a
//   flow-angle rake closing the volume at the rake plane, add −ρ ∫ u v dy there (any fluid-mechanics
//   text, e.g. Anderson, Fundamentals of Aerodynamics, §2.6 — from memory).
// - Circulation Γ = ∮ V·ds, clockwise-positive, on the same contour; wall speed by Bernoulli,
//   u = V∞ √(1 − Cp_wall). cl_wall = 2Γ/(V c) by Kutta–Joukowski (see crosscheck.ts).
// - Finite instrumented length: a bound vortex midway between walls h apart has, by the method of
//   images (Milne-Thomson, Theoretical Hydrodynamics), wall speed perturbation (Γ/2h)·sech(πx/h),
//   opposite on the two walls, so the fraction of the infinite integral caught on x₁…x₂ is
//   F = [gd(πx₂/h) − gd(πx₁/h)]/π, gd(z) = arctan(sinh z) (the Gudermannian). Measured integrals are
//   divided by F.
//
// SIGN FINDING (checked here, see test/walls.test.ts): with the flow along +x and y up, positive lift
// means clockwise bound circulation, which speeds the flow along the ceiling and slows it along the
// floor. The clockwise contour runs along the ceiling in +x and back along the floor in −x, so
//   Γ_wall (clockwise-positive) = ∫ (u_ceiling − u_floor) dx,
// NOT ∫ (u_floor − u_ceiling) dx as REDUCTION.md §5 writes (that sign gives Γ < 0 for positive lift).
// The test sums the image vortices independently and confirms the ceiling speeds up for positive Γ.
//
// The wall integrals are taken over the x range instrumented on BOTH walls (the overlap), on the
// union of the two walls' tap stations there, each wall interpolated linearly; F uses that range.

import type { WallResult } from './types';
import { clFromGamma } from './crosscheck';
import { interpLinear, requireFinite, trapezoid } from './quadrature';

export interface WallTapCp {
  /** m from the model quarter chord, positive downstream. */
  x: number;
  cp: number;
}

export interface WallLoadsArgs {
  floor: WallTapCp[];
  ceiling: WallTapCp[];
  chord: number;
  /** Test-section height h, m. */
  height: number;
  /** Free-stream speed V∞, m/s. */
  V: number;
  /** Rake vertical-momentum flux term as a cl contribution (angleFlux), added to clMom. */
  angleFluxCl?: number;
  /**
   * Rake plane x (m from the quarter chord). Used only together with angleFluxCl: the rake flux
   * closes the momentum control volume at the rake plane, so the floor − ceiling integral then
   * stops at rakeX and is scaled by the fraction of ∫_{−∞}^{rakeX} it catches,
   * [gd(πx₂/h) − gd(πx₁/h)] / [gd(π·rakeX/h) + π/2] with x₂ = min(end of overlap, rakeX).
   * Without rakeX, angleFluxCl is simply added to the F-corrected full-length integral — correct
   * only if the wall taps themselves stop at the rake plane, since the F correction already
   * accounts for the wall signature downstream of it.
   */
  rakeX?: number;
}

/** Gudermannian function gd(z) = arctan(sinh z). */
export function gd(z: number): number {
  return Math.atan(Math.sinh(z));
}

/** Fraction F of a midway bound vortex's infinite wall integral caught between x1 and x2. */
export function captureFraction(x1: number, x2: number, h: number): number {
  return (gd((Math.PI * x2) / h) - gd((Math.PI * x1) / h)) / Math.PI;
}

function checkWall(taps: WallTapCp[], name: string): WallTapCp[] {
  if (taps.length < 2) throw new Error(`Walls: the ${name} needs at least 2 static taps (got ${taps.length})`);
  taps.forEach((t, i) => {
    if (!Number.isFinite(t.x)) requireFinite(t.x, `Walls: ${name} tap ${i} x`);
    if (!Number.isFinite(t.cp)) requireFinite(t.cp, `Walls: ${name} tap at x = ${t.x} m Cp`);
  });
  return [...taps].sort((a, b) => a.x - b.x);
}

/** Wall speed ratio u/V = √(1 − Cp), clamped at 0 for Cp > 1 (shared with app/mcPlan.ts). */
export function speedRatio(cp: number): number {
  return Math.sqrt(Math.max(0, 1 - cp));
}

/** Both walls on one grid: every tap station of either wall (fx, cx) inside [a, b], plus a and b,
 *  increasing, without repeats. */
export function wallGrid(a: number, b: number, fx: readonly number[], cx: readonly number[]): number[] {
  const xs = [a, b, ...fx, ...cx].filter((x) => x >= a && x <= b).sort((p, q) => p - q);
  return xs.filter((x, i) => i === 0 || x !== xs[i - 1]);
}

/** cl_mom from the floor − ceiling Cp integral over the grid, the chord, the capture fraction of
 *  that integral and the rake angle-flux term. */
export function momentumCl(cpIntegral: number, chord: number, F: number, angleFluxCl: number): number {
  return cpIntegral / chord / F + angleFluxCl;
}

/** Momentum lift, wall circulation and its Kutta–Joukowski cl from floor and ceiling Cp. */
export function wallLoads(args: WallLoadsArgs): WallResult {
  const { chord, height, V } = args;
  for (const [v, what] of [[chord, 'chord'], [height, 'test-section height'], [V, 'free-stream speed']] as const) {
    requireFinite(v, `Walls: ${what}`);
    if (!(v > 0)) throw new Error(`Walls: ${what} must be positive (got ${v})`);
  }
  const floor = checkWall(args.floor, 'floor');
  const ceiling = checkWall(args.ceiling, 'ceiling');
  const x1 = Math.max(floor[0].x, ceiling[0].x);
  const x2 = Math.min(floor[floor.length - 1].x, ceiling[ceiling.length - 1].x);
  if (!(x2 > x1)) {
    throw new Error(
      `Walls: floor (${floor[0].x}…${floor[floor.length - 1].x} m) and ceiling ` +
        `(${ceiling[0].x}…${ceiling[ceiling.length - 1].x} m) taps have no common x range`,
    );
  }
  const fx = floor.map((t) => t.x);
  const fcp = floor.map((t) => t.cp);
  const cx = ceiling.map((t) => t.x);
  const ccp = ceiling.map((t) => t.cp);

  const cpIntegral = (xs: number[]): number =>
    trapezoid(xs, xs.map((x) => interpLinear(fx, fcp, x) - interpLinear(cx, ccp, x)));

  const xs = wallGrid(x1, x2, fx, cx);
  const F = captureFraction(x1, x2, height);
  const gammaMeasured = trapezoid(
    xs,
    xs.map((x) => V * (speedRatio(interpLinear(cx, ccp, x)) - speedRatio(interpLinear(fx, fcp, x)))),
  );
  const gammaWall = gammaMeasured / F;
  const clWall = clFromGamma(gammaWall, V, chord);

  const angleFluxCl = args.angleFluxCl ?? 0;
  requireFinite(angleFluxCl, 'Walls: rake angle-flux cl');
  let clMom: number;
  let FMom: number | undefined;
  if (args.angleFluxCl !== undefined && args.rakeX !== undefined) {
    const xr = args.rakeX;
    requireFinite(xr, 'Walls: rake plane x');
    const xEnd = Math.min(x2, xr);
    if (!(xEnd > x1)) {
      throw new Error(`Walls: the rake plane (x = ${xr} m) lies upstream of the common wall-tap range`);
    }
    FMom = (gd((Math.PI * xEnd) / height) - gd((Math.PI * x1) / height)) /
      (gd((Math.PI * xr) / height) + Math.PI / 2);
    clMom = momentumCl(cpIntegral(wallGrid(x1, xEnd, fx, cx)), chord, FMom, angleFluxCl);
  } else {
    clMom = momentumCl(cpIntegral(xs), chord, F, angleFluxCl);
  }

  const result: WallResult = { clMom, gammaWall, clWall, F, angleFluxCl, floor, ceiling };
  if (FMom !== undefined) result.FMom = FMom;
  return result;
}

export interface AngleProbe {
  /** Vertical position, m. */
  y: number;
  /** Flow angle, degrees, positive when the flow points up (+y, upwash). */
  angleDeg: number;
  /** (H − p∞)/q∞ at the probe. */
  cpt: number;
}

/**
 * Rake vertical-momentum flux as a cl contribution: −(2/c) ∫ (u v / V∞²) dy, with
 * u = V∞√cpt·cos θ, v = V∞√cpt·sin θ (local static taken as p∞; cpt clamped at 0).
 * Sign convention: y up, θ positive for upwash; the downwash behind a lifting section (θ < 0) gives a
 * positive contribution. Trapezoid over the probes sorted by y.
 */
export function angleFlux(args: { probes: AngleProbe[]; chord: number }): number {
  const { chord } = args;
  requireFinite(chord, 'Rake angle flux: chord');
  if (!(chord > 0)) throw new Error(`Rake angle flux: chord must be positive (got ${chord} m)`);
  if (args.probes.length < 2) {
    throw new Error(`Rake angle flux: need at least 2 flow-angle probes (got ${args.probes.length})`);
  }
  const probes = [...args.probes].sort((a, b) => a.y - b.y);
  probes.forEach((p, i) => {
    if (!Number.isFinite(p.y)) requireFinite(p.y, `Rake angle probe ${i} y`);
    if (!Number.isFinite(p.angleDeg)) requireFinite(p.angleDeg, `Rake angle probe at y = ${p.y} m angle`);
    if (!Number.isFinite(p.cpt)) requireFinite(p.cpt, `Rake angle probe at y = ${p.y} m cpt`);
  });
  return angleFluxIntegral(probes.map((p) => p.y), probes.map((p) => angleFluxTerm(p.angleDeg, p.cpt)), chord);
}

/** u v / V∞² at one flow-angle probe: max(0, cpt)·cos θ·sin θ (shared with app/mcPlan.ts). */
export function angleFluxTerm(angleDeg: number, cpt: number): number {
  const th = (angleDeg * Math.PI) / 180;
  return Math.max(0, cpt) * Math.cos(th) * Math.sin(th);
}

/** −(2/c) ∫ (u v / V∞²) dy, trapezoid over the probes sorted by y. */
export function angleFluxIntegral(y: ArrayLike<number>, uv: ArrayLike<number>, chord: number): number {
  return -(2 / chord) * trapezoid(y, uv);
}
