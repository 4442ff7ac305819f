// Pressure unit conversion to the pascal.
// Source: NIST Special Publication 811 (2008 ed.), "Guide for the Use of the International System of
// Units (SI)", Appendix B.8 (factors listed alphabetically) and B.9 (factors by kind of quantity:
// "pressure or stress"). The factors are built from the exact definitions behind those table entries
// (SI prefixes; 1 lbf = 4.448 221 615 260 5 N, 1 in = 0.0254 m; standard gravity
// g_n = 9.806 65 m s⁻²; 1 torr = 101 325/760 Pa), so they agree with the rounded table values.
// Water and mercury columns use the "conventional" definitions of SP 811 B.8: water density
// 1000 kg m⁻³ (≈ water at 4 °C) and mercury density 13 595.1 kg m⁻³ (≈ mercury at 0 °C), both under
// standard gravity — NOT the "inch of water (39.2 °F)" or "(60 °F)" entries.

import type { ChannelUnit, PressureUnit } from './types';

/** Standard acceleration of gravity g_n, m s⁻² (exact, SP 811 B.8 footnote). */
const G_N = 9.80665;
/** Conventional densities of water and mercury, kg m⁻³ (SP 811 B.8 footnotes). */
const RHO_WATER_CONVENTIONAL = 1000;
const RHO_MERCURY_CONVENTIONAL = 13595.1;
const INCH = 0.0254;
const POUND_FORCE = 4.4482216152605;

/** Pascals per one unit of each pressure unit (NIST SP 811 (2008) App. B.8/B.9). */
export const PA_PER_UNIT: Readonly<Record<PressureUnit, number>> = Object.freeze({
  Pa: 1,
  kPa: 1e3,
  hPa: 1e2,
  mbar: 1e2, // millibar: 1.0 E+02 Pa (exact)
  psi: POUND_FORCE / (INCH * INCH), // pound-force per square inch: 6.894 757 E+03 Pa
  inH2O: RHO_WATER_CONVENTIONAL * G_N * INCH, // inch of water, conventional: 2.490 889 E+02 Pa
  mmH2O: RHO_WATER_CONVENTIONAL * G_N * 1e-3, // millimetre of water, conventional: 9.806 65 E+00 Pa
  mmHg: RHO_MERCURY_CONVENTIONAL * G_N * 1e-3, // millimetre of mercury, conventional: 1.333 224 E+02 Pa
  torr: 101325 / 760, // torr: 1.333 224 E+02 Pa
});

const PRESSURE_UNITS = new Set<string>(Object.keys(PA_PER_UNIT));

export function isPressureUnit(s: string): s is PressureUnit {
  return PRESSURE_UNITS.has(s);
}

export function isChannelUnit(s: string): s is ChannelUnit {
  return s === 'deg' || isPressureUnit(s);
}

function factor(unit: string): number {
  if (!isPressureUnit(unit)) {
    throw new RangeError(
      `Unknown pressure unit "${unit}" (known: ${[...PRESSURE_UNITS].join(', ')})`,
    );
  }
  return PA_PER_UNIT[unit];
}

/** Value in `unit` → Pa. */
export function toPascal(v: number, unit: PressureUnit): number {
  return v * factor(unit);
}

/** Value in Pa → `unit`. */
export function fromPascal(v: number, unit: PressureUnit): number {
  return v / factor(unit);
}

/** A channel reading → SI: pressures to Pa; angles ('deg') pass through unchanged. */
export function channelToSI(v: number, unit: ChannelUnit): number {
  return unit === 'deg' ? v : toPascal(v, unit);
}
