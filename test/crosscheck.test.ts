import { describe, expect, it } from 'vitest';
import { clFromGamma, flagText, gammaFromCl, liftCrossCheck, liftTolerance } from '../app/crosscheck';
import { DEFAULT_SETTINGS } from '../app/types';

describe('Kutta–Joukowski', () => {
  it('Γ = ½ V c cl, so that ρVΓ equals the section lift ½ρV²c·cl (Anderson §3.16, from memory)', () => {
    const rho = 1.2, V = 30, c = 0.25, cl = 0.8;
    const G = gammaFromCl(cl, V, c);
    expect(rho * V * G).toBeCloseTo(0.5 * rho * V * V * c * cl, 12);
    expect(clFromGamma(G, V, c)).toBeCloseTo(cl, 14);
  });
});

describe('liftCrossCheck — tolerance 0.02 + 3 % (common practice, no source)', () => {
  const tol = { tolAbs: DEFAULT_SETTINGS.liftTolAbs, tolRel: DEFAULT_SETTINGS.liftTolRel };

  it('passes just inside the tolerance and flags just outside it', () => {
    // cl_p = 1.0 → tolerance 0.02 + 0.03 = 0.05.
    expect(liftTolerance(1.0, tol.tolAbs, tol.tolRel)).toBeCloseTo(0.05, 15);
    expect(liftCrossCheck({ clPressure: 1.0, clMomentum: 1.0499, ...tol })).toBeNull();
    expect(liftCrossCheck({ clPressure: 1.0, clMomentum: 0.9501, ...tol })).toBeNull();
    const hi = liftCrossCheck({ clPressure: 1.0, clMomentum: 1.0501, ...tol });
    const lo = liftCrossCheck({ clPressure: 1.0, clMomentum: 0.9499, ...tol });
    for (const f of [hi, lo]) {
      expect(f?.code).toBe('lift-mismatch');
      expect(f?.severity).toBe('reject');
    }
  });

  it('scales the relative part with |cl_p|, also for negative lift', () => {
    // cl_p = −0.5 → tolerance 0.02 + 0.015 = 0.035.
    expect(liftCrossCheck({ clPressure: -0.5, clMomentum: -0.5349, ...tol })).toBeNull();
    expect(liftCrossCheck({ clPressure: -0.5, clMomentum: -0.5351, ...tol })).not.toBeNull();
    // cl_p = 0 → the absolute part alone.
    expect(liftCrossCheck({ clPressure: 0, clMomentum: 0.0199, ...tol })).toBeNull();
    expect(liftCrossCheck({ clPressure: 0, clMomentum: -0.0201, ...tol })).not.toBeNull();
  });

  it('names both methods, both values, the difference and the tolerance', () => {
    const f = liftCrossCheck({ clPressure: 1.162, clMomentum: 0.981, ...tol });
    expect(f?.reason).toBe(
      'Lift methods disagree: surface pressures give cl = 1.1620, wall momentum gives 0.9810, uncorrected as the cross-check compares them ' +
        '(difference 0.1810, tolerance 0.0549).', // 0.02 + 0.03 × 1.162 = 0.05486
    );
    const g = liftCrossCheck({ clPressure: 1.162, clMomentum: 0.981, clWall: 0.99, ...tol });
    expect(g?.reason).toContain('wall circulation integral gives 0.9900');
    expect(flagText(g!)).toMatch(/^hold: Lift methods disagree: surface pressures/);
  });

  it('cannot check (null) when a value is missing', () => {
    expect(liftCrossCheck({ clPressure: 1.0, clMomentum: NaN, ...tol })).toBeNull();
  });
});
