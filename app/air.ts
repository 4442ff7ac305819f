// Air state and free stream.
// - Dry air, ideal gas: ρ = p/(R T), R = 287.05 J kg⁻¹ K⁻¹ (ISO 2533:1975 value, rounded).
// - Humid air: CIPM-2007 equation, A. Picard, R. S. Davis, M. Gläser, K. Fujii, "Revised formula for
//   the density of moist air (CIPM-2007)", Metrologia 45 (2008) 149–155:
//   ρ = p M_a/(Z R T)·[1 − x_v(1 − M_v/M_a)], with p_sv(T), f(p,t), x_v = h f p_sv/p and Z(p,T,x_v).
//   Constants below were written down from memory of that paper and are marked "(memory)"; the
//   reference value 1.1993 kg m⁻³ at 20 °C / 101 325 Pa / 50 % / x_CO2 = 0.0004 checks them.
// - OIML R 111-1 (2004) approximate formula (independent check):
//   ρ = (0.34848 p − 0.009 h e^{0.061 t})/(273.15 + t), p in hPa, h in %, t in °C.
// - Viscosity, Sutherland's law in the ISO 2533 form μ = β T^1.5/(T + S), β = 1.458e-6, S = 110.4 K.
// - Speed of sound a = √(γ R T).
// - Free stream (REDUCTION.md §1): q_u = k_q Δp_ref; V = √(2q/ρ); Re = ρVc/μ; M = V/a.

import type { AirState } from './types';

export const R_DRY_AIR = 287.05;
export const GAMMA_AIR = 1.4;
export const KELVIN = 273.15;

/** Ideal-gas density of dry air, kg m⁻³. p in Pa, T in K. */
export function dryAirDensity(p: number, T: number): number {
  return p / (R_DRY_AIR * T);
}

// ---- CIPM-2007 (Picard et al. 2008) ----
/** Molar gas constant used by CIPM-2007, J mol⁻¹ K⁻¹ (CODATA 2006 value) (memory). */
const CIPM_R = 8.314472;
/** Molar mass of water, kg mol⁻¹ (memory). */
const CIPM_MV = 18.01528e-3;
/** Saturation vapour pressure p_sv = exp(A T² + B T + C + D/T) Pa (memory). */
const PSV_A = 1.2378847e-5;
const PSV_B = -1.9121316e-2;
const PSV_C = 33.93711047;
const PSV_D = -6.3431645e3;
/** Enhancement factor f = α + β p + γ t² (memory). */
const F_ALPHA = 1.00062;
const F_BETA = 3.14e-8;
const F_GAMMA = 5.6e-7;
/** Compressibility factor constants (memory). */
const Z_A0 = 1.58123e-6;
const Z_A1 = -2.9331e-8;
const Z_A2 = 1.1043e-10;
const Z_B0 = 5.707e-6;
const Z_B1 = -2.051e-8;
const Z_C0 = 1.9898e-4;
const Z_C1 = -2.376e-6;
const Z_D = 1.83e-11;
const Z_E = -0.765e-8;

/** CIPM-2007 saturation vapour pressure of water over a plane liquid surface, Pa. T in K. */
export function saturationVapourPressure(T: number): number {
  return Math.exp(PSV_A * T * T + PSV_B * T + PSV_C + PSV_D / T);
}

/** CIPM-2007 enhancement factor f(p, t). p in Pa, t in °C. */
export function enhancementFactor(p: number, tC: number): number {
  return F_ALPHA + F_BETA * p + F_GAMMA * tC * tC;
}

/** CIPM-2007 molar mass of dry air with CO2 mole fraction xCO2, kg mol⁻¹ (memory). */
export function dryAirMolarMass(xCO2 = 0.0004): number {
  return (28.96546 + 12.011 * (xCO2 - 0.0004)) * 1e-3;
}

/** Mole fraction of water vapour from relative humidity (CIPM-2007: x_v = h f p_sv / p). */
export function vapourMoleFraction(p: number, T: number, rhPercent: number): number {
  return (rhPercent / 100) * enhancementFactor(p, T - KELVIN) * saturationVapourPressure(T) / p;
}

/** CIPM-2007 compressibility factor Z(p, T, x_v). */
export function compressibility(p: number, T: number, xv: number): number {
  const t = T - KELVIN;
  const pT = p / T;
  return (
    1 -
    pT * (Z_A0 + Z_A1 * t + Z_A2 * t * t + (Z_B0 + Z_B1 * t) * xv + (Z_C0 + Z_C1 * t) * xv * xv) +
    pT * pT * (Z_D + Z_E * xv * xv)
  );
}

/** CIPM-2007 density of moist air, kg m⁻³. p in Pa, T in K, RH in %, CO2 mole fraction. */
export function humidAirDensity(p: number, T: number, rhPercent: number, xCO2 = 0.0004): number {
  if (!(p > 0) || !(T > 0)) {
    throw new RangeError(`humidAirDensity: need p > 0 Pa and T > 0 K (got p=${p}, T=${T})`);
  }
  if (!(rhPercent >= 0 && rhPercent <= 100)) {
    throw new RangeError(`humidAirDensity: relative humidity ${rhPercent} % is outside 0–100 %`);
  }
  const Ma = dryAirMolarMass(xCO2);
  const xv = vapourMoleFraction(p, T, rhPercent);
  const Z = compressibility(p, T, xv);
  return ((p * Ma) / (Z * CIPM_R * T)) * (1 - xv * (1 - CIPM_MV / Ma));
}

/** OIML R 111-1 (2004) approximate air density, kg m⁻³. p in hPa, RH in %, t in °C. */
export function oimlDensity(pHpa: number, rhPercent: number, tC: number): number {
  return (0.34848 * pHpa - 0.009 * rhPercent * Math.exp(0.061 * tC)) / (KELVIN + tC);
}

/** Dynamic viscosity of air, Pa s: Sutherland's law, ISO 2533 constants. T in K. */
export function sutherlandViscosity(T: number): number {
  const beta = 1.458e-6;
  const S = 110.4;
  return (beta * T ** 1.5) / (T + S);
}

/** Speed of sound, m s⁻¹. T in K. */
export function speedOfSound(T: number, gamma = GAMMA_AIR, R = R_DRY_AIR): number {
  return Math.sqrt(gamma * R * T);
}

/** Air state from static pressure p (Pa), temperature T (K) and relative humidity rh (%). */
export function airState(p: number, T: number, rh: number): AirState {
  return {
    p,
    T,
    rh,
    rho: humidAirDensity(p, T, rh),
    mu: sutherlandViscosity(T),
    a: speedOfSound(T),
  };
}

export interface FreeStream {
  /** Uncorrected dynamic pressure q_u = k_q·Δp_ref, Pa. */
  qu: number;
  rho: number;
  mu: number;
  a: number;
  V: number;
  Re: number;
  M: number;
  air: AirState;
}

/**
 * Free stream from the tunnel reference Δp (Pa), calibration k_q, static pressure p (Pa),
 * temperature T (K), relative humidity rh (%) and chord (m).
 */
export function freeStream(args: {
  dpRef: number;
  kq: number;
  p: number;
  T: number;
  rh: number;
  chord: number;
}): FreeStream {
  const { dpRef, kq, p, T, rh, chord } = args;
  const air = airState(p, T, rh);
  const qu = kq * dpRef;
  // A negative q (reference lines swapped, or a wind-off run) gives V = NaN rather than a fake speed.
  const V = qu >= 0 ? Math.sqrt((2 * qu) / air.rho) : Number.NaN;
  return {
    qu,
    rho: air.rho,
    mu: air.mu,
    a: air.a,
    V,
    Re: (air.rho * V * chord) / air.mu,
    M: V / air.a,
    air,
  };
}
