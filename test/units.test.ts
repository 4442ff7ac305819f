import { describe, expect, it } from 'vitest';
import {
  PA_PER_UNIT,
  channelToSI,
  fromPascal,
  isChannelUnit,
  isPressureUnit,
  toPascal,
} from '../app/units';
import type { PressureUnit } from '../app/types';

// Table values of NIST SP 811 (2008 ed.), Appendix B.8 "Factors for units listed alphabetically"
// (same values in B.9 under "Pressure or stress (force divided by area)"), as printed there to
// 7 significant figures or exactly (written down from memory of the table). Each is checked to
// half a unit in the last printed digit.
const NIST_B8: { unit: PressureUnit; entry: string; value: number; halfUlp: number }[] = [
  { unit: 'kPa', entry: 'kilopascal (SI prefix, exact)', value: 1e3, halfUlp: 0 },
  { unit: 'hPa', entry: 'hectopascal (SI prefix, exact)', value: 1e2, halfUlp: 0 },
  { unit: 'mbar', entry: 'millibar (mbar) → 1.0 E+02 Pa (exact)', value: 1.0e2, halfUlp: 0 },
  { unit: 'psi', entry: 'pound-force per square inch (psi) → 6.894 757 E+03 Pa', value: 6.894757e3, halfUlp: 0.0005 },
  { unit: 'inH2O', entry: 'inch of water, conventional (inH2O) → 2.490 889 E+02 Pa', value: 2.490889e2, halfUlp: 0.00005 },
  { unit: 'mmH2O', entry: 'millimeter of water, conventional (mmH2O) → 9.806 65 E+00 Pa', value: 9.80665, halfUlp: 0.000005 },
  { unit: 'mmHg', entry: 'millimeter of mercury, conventional (mmHg) → 1.333 224 E+02 Pa', value: 1.333224e2, halfUlp: 0.00005 },
  { unit: 'torr', entry: 'torr (Torr) → 1.333 224 E+02 Pa', value: 1.333224e2, halfUlp: 0.00005 },
];

describe('PA_PER_UNIT against NIST SP 811 Appendix B.8', () => {
  for (const { unit, entry, value, halfUlp } of NIST_B8) {
    it(`${unit}: ${entry}`, () => {
      const got = PA_PER_UNIT[unit];
      if (halfUlp === 0) expect(got).toBe(value);
      else expect(Math.abs(got - value)).toBeLessThanOrEqual(halfUlp);
    });
  }

  it('pascal is 1 and every unit has a factor', () => {
    expect(PA_PER_UNIT.Pa).toBe(1);
    expect(Object.keys(PA_PER_UNIT).sort()).toEqual(
      ['Pa', 'hPa', 'inH2O', 'kPa', 'mbar', 'mmH2O', 'mmHg', 'psi', 'torr'].sort(),
    );
  });

  it('conventional inH2O is not the 39.2 °F entry (2.490 82 E+02 Pa, NIST SP 811 B.8)', () => {
    expect(Math.abs(PA_PER_UNIT.inH2O - 249.082)).toBeGreaterThan(0.005);
  });

  it('1 atm = 760 torr = 101 325 Pa (definition of the torr, NIST SP 811 B.8 footnote)', () => {
    expect(toPascal(760, 'torr')).toBeCloseTo(101325, 9);
  });
});

describe('conversions', () => {
  it('toPascal / fromPascal round-trip for every unit', () => {
    for (const unit of Object.keys(PA_PER_UNIT) as PressureUnit[]) {
      for (const v of [-12.5, 0, 1, 3.7e4]) {
        expect(fromPascal(toPascal(v, unit), unit)).toBeCloseTo(v, 9);
      }
    }
  });

  it('1 psi in inH2O ≈ 27.68 (ratio of the SP 811 B.8 entries 6.894 757 E+03 / 2.490 889 E+02)', () => {
    expect(fromPascal(toPascal(1, 'psi'), 'inH2O')).toBeCloseTo(6894.757 / 249.0889, 4);
  });

  it('channelToSI passes degrees through and converts pressures', () => {
    expect(channelToSI(12.3, 'deg')).toBe(12.3);
    expect(channelToSI(2, 'kPa')).toBe(2000);
    expect(channelToSI(1, 'inH2O')).toBe(PA_PER_UNIT.inH2O);
  });

  it('unknown unit names are rejected with the name in the message', () => {
    expect(() => toPascal(1, 'bar' as PressureUnit)).toThrow(/"bar"/);
  });
});

describe('type guards', () => {
  it('isPressureUnit', () => {
    expect(isPressureUnit('Pa')).toBe(true);
    expect(isPressureUnit('inH2O')).toBe(true);
    expect(isPressureUnit('deg')).toBe(false);
    expect(isPressureUnit('pa')).toBe(false);
    expect(isPressureUnit('toString')).toBe(false);
  });
  it('isChannelUnit', () => {
    expect(isChannelUnit('deg')).toBe(true);
    expect(isChannelUnit('mmHg')).toBe(true);
    expect(isChannelUnit('rad')).toBe(false);
  });
});
