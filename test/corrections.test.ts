import { describe, expect, it } from 'vitest';
import { applyCorrections, sectionArea, wallCorrections } from '../app/corrections';
import type { Coefficients } from '../app/types';

// Worked example for REDUCTION.md §8 (Barlow, Rae & Pope 1999 ch. 9; Allen & Vincenti, NACA R-782
// (memory)), arithmetic by hand, each step rounded to 7 significant figures:
//   chord c = 0.25 m, section height h = 0.90 m, width = span = 0.60 m, section area A = 0.0817 c²,
//   cd_u = 0.0100, cl_u = 0.80, cm_c/4,u = −0.090, α_u = 4.00°, cd_p,u = 0.0060,
//   q_u = 600 Pa, V_u = 31.60 m/s, Re_u = 5.30e5.
//   c/h = 0.25/0.9 = 0.2777778;  (c/h)² = 0.07716049
//   π²/48 = 9.869604/48 = 0.2056168
//   σ = 0.2056168 × 0.07716049 = 0.01586549
//   V_model = A c² b = 0.0817 × 0.0625 × 0.60 = 0.00306375 m³
//   C = h × width = 0.90 × 0.60 = 0.54 m²;  √0.54 = 0.7348469;  C^1.5 = 0.54 × 0.7348469 = 0.3968173
//   ε_sb = 0.74 × 0.00306375 / 0.3968173 = 0.002267175 / 0.3968173 = 0.005713397
//   ε_wb = (c/4h) cd_u = 0.06944444 × 0.0100 = 0.0006944444  (core 0.3.0: the source between walls,
//      docs/WALL-CORRECTIONS.md and test/wall-signature.test.ts; the (c/2h) of REDUCTION.md §8 was
//      from memory and is twice the source-image value)
//   ε = 0.005713397 + 0.0006944444 = 0.006407841;  2ε = 0.01281568
//   α: 57.3σ/(2π) with 57.3 → 180/π is (180/π)(π²/48)(c/h)²/(2π) = (15/8)(c/h)² = 1.875 × 0.07716049
//      = 0.1446759;  cl_u + 4cm_u = 0.80 − 0.36 = 0.44;  Δα = 0.1446759 × 0.44 = 0.06365741°
//      α = 4.00 + 0.06365741 = 4.063657°
//   cl = 0.80 × (1 − 0.01586549 − 0.01281568) = 0.80 × 0.9713188 = 0.7770551
//   cm = −0.090 × (1 − 0.01281568) + 0.01586549 × 0.7770551/4
//      = −0.08884659 + 0.003082090 = −0.08576450
//   drag factor 1 − 3ε_sb − 2ε_wb = 1 − 0.01714019 − 0.001388889 = 0.9814709
//   cd = 0.0100 × 0.9814709 = 0.009814709;  cd_p = 0.0060 × 0.9814709 = 0.005888825
//   q = 600 × 1.012816 = 607.6894 Pa;  V = 31.60 × 1.006408 = 31.80249 m/s;  Re = 5.30e5 × 1.006408 = 533396
const uncorrected: Coefficients = {
  cl: 0.8,
  cd: 0.01,
  cdp: 0.006,
  cmc4: -0.09,
  alphaDeg: 4,
  q: 600,
  V: 31.6,
  Re: 5.3e5,
};
const geometry = { chord: 0.25, height: 0.9, width: 0.6, sectionAreaC2: 0.0817, cdU: 0.01 };

describe('wallCorrections: worked example (Barlow, Rae & Pope ch. 9, by hand above)', () => {
  const c = wallCorrections({ ...geometry, method: 'barlow-rae-pope' });
  it('σ, ε_sb, ε_wb, ε', () => {
    expect(c.method).toBe('barlow-rae-pope');
    expect(c.sigma).toBeCloseTo(0.01586549, 7);
    expect(c.epsSb).toBeCloseTo(0.005713397, 8);
    expect(c.epsWb).toBeCloseTo(0.0006944444, 9);
    expect(c.eps).toBeCloseTo(0.006407841, 8);
  });

  it('applyCorrections gives the hand-computed corrected coefficients', () => {
    const k = applyCorrections(uncorrected, c, uncorrected.cmc4);
    expect(k.alphaDeg).toBeCloseTo(4.063657, 5);
    expect(k.cl).toBeCloseTo(0.7770551, 6);
    expect(k.cmc4).toBeCloseTo(-0.0857645, 7);
    expect(k.cd).toBeCloseTo(0.009814709, 8);
    expect(k.cdp).toBeCloseTo(0.005888825, 8);
    expect(k.q).toBeCloseTo(607.6894, 3);
    expect(k.V).toBeCloseTo(31.80249, 4);
    expect(Math.abs(k.Re - 533396)).toBeLessThan(1);
  });

  it('cm_c/4 used for α is the argument, not u.cmc4', () => {
    const k = applyCorrections(uncorrected, c, 0);
    // Δα = 0.1446759 × 0.80 = 0.1157407° (same hand arithmetic as above with cm_u = 0)
    expect(k.alphaDeg).toBeCloseTo(4.1157407, 5);
  });

  it('a wake drag of NaN stays NaN', () => {
    const k = applyCorrections({ ...uncorrected, cd: Number.NaN }, c, uncorrected.cmc4);
    expect(Number.isNaN(k.cd)).toBe(true);
    expect(k.cl).toBeCloseTo(0.7770551, 6);
  });
});

describe("'none' and 'allen-vincenti'", () => {
  it("'none' gives zero parameters and applyCorrections is the identity", () => {
    const c = wallCorrections({ ...geometry, method: 'none' });
    expect(c).toEqual({ method: 'none', sigma: 0, epsSb: 0, epsWb: 0, eps: 0 });
    expect(applyCorrections(uncorrected, c, uncorrected.cmc4)).toEqual(uncorrected);
  });

  it("'allen-vincenti': the same σ and ε_sb as Barlow (Λσ not implemented) and the same wake blockage (c/4h)·cd_u", () => {
    // Allen & Vincenti, NACA R-782 (memory): ε_wb = (c/4h)·cd_u = 0.06944444 × 0.0100 = 0.0006944444
    // for the example above; ε = 0.005713397 + 0.0006944444 = 0.006407841.
    const a = wallCorrections({ ...geometry, method: 'allen-vincenti' });
    const b = wallCorrections({ ...geometry, method: 'barlow-rae-pope' });
    expect(a.method).toBe('allen-vincenti');
    expect([a.sigma, a.epsSb, a.epsWb]).toEqual([b.sigma, b.epsSb, b.epsWb]);
    expect(a.epsWb).toBeCloseTo(0.0006944444, 9);
    expect(a.eps).toBeCloseTo(0.006407841, 8);
  });

  it('rejects a non-finite drag and non-positive dimensions with a clear message', () => {
    expect(() => wallCorrections({ ...geometry, cdU: Number.NaN, method: 'barlow-rae-pope' })).toThrow(/cd_p/);
    expect(() => wallCorrections({ ...geometry, height: 0, method: 'barlow-rae-pope' })).toThrow(/section height/);
  });
});

describe('sectionArea', () => {
  it('NACA 0012 equals the integral of the thickness formula', () => {
    // Abbott & von Doenhoff thickness y_t = 5t(0.2969√x − 0.1260x − 0.3516x² + 0.2843x³ − 0.1036x⁴)
    // (closed-trailing-edge last coefficient, as app/panel.ts uses). ∫₀¹ 2y_t dx
    // = 10t(0.2969·2/3 − 0.1260/2 − 0.3516/3 + 0.2843/4 − 0.1036/5)
    // = 10t(0.1979333 − 0.0630 − 0.1172 + 0.071075 − 0.02072) = 10t × 0.0680883 = 0.0817060 at t = 0.12.
    expect(sectionArea({ kind: 'naca4', code: '0012' })).toBeCloseTo(0.081706, 5);
  });

  it('camber leaves the area of NACA 4412 within 0.5 % of NACA 0012 (thickness normal to the mean line)', () => {
    const a = sectionArea({ kind: 'naca4', code: '4412' });
    expect(Math.abs(a / 0.081706 - 1)).toBeLessThan(0.005);
  });

  it('user coordinates: an ellipse of semi-axes 0.5 and 0.06 has area π·0.5·0.06 = 0.0942478', () => {
    const x: number[] = [];
    const y: number[] = [];
    for (let k = 0; k <= 120; k++) {
      const th = (2 * Math.PI * k) / 120; // θ = 0 at the TE, upper surface first
      x.push(0.5 + 0.5 * Math.cos(th));
      y.push(0.06 * Math.sin(th));
    }
    expect(sectionArea({ kind: 'coordinates', x, y })).toBeCloseTo(Math.PI * 0.5 * 0.06, 4);
  });
});

describe("Maskell's separated-flow blockage (E. C. Maskell, ARC R&M 3400, 1965 — from memory, as the issue quotes it)", () => {
  // Δq/q = θ·c_D·S/C; in 2-D S/C = (c·b)/(h·b) = c/h. Worked by hand for the geometry above with a
  // stalled section: cd_u = 0.1200, θ = 0.96 (the default, app/corrections.ts):
  //   Δq/q = 0.96 × 0.1200 × 0.2777778 = 0.03200000;  ε_wb = Δq/2q = 0.01600000
  //   ε_sb = 0.005713397 (classical, as above);  ε = 0.02171340;  2ε = 0.04342679
  //   cl_u = 1.10: cl = 1.10 × (1 − 0.01586549 − 0.04342679) = 1.10 × 0.9407077 = 1.034778
  //   q = 600 × 1.043427 = 626.0561 Pa
  //   drag factor 1 − 3 × 0.005713397 − 2 × 0.016 = 1 − 0.01714019 − 0.032 = 0.9508598
  //   cd = 0.1200 × 0.9508598 = 0.1141032
  // With θ = 1.03 (the value the TU Delft comparison found to fit better): ε_wb = ½ × 1.03 × 0.12 ×
  // 0.2777778 = 0.01716667.
  const stalled = { ...geometry, cdU: 0.12 };
  it('θ = 0.96: ε_wb, ε and the corrected coefficients by hand', () => {
    const m = wallCorrections({ ...stalled, method: 'maskell' });
    expect(m.method).toBe('maskell');
    expect(m.epsWb).toBeCloseTo(0.016, 9);
    expect(m.eps).toBeCloseTo(0.0217134, 7);
    const k = applyCorrections({ ...uncorrected, cl: 1.1, cd: 0.12 }, m, uncorrected.cmc4);
    expect(k.cl).toBeCloseTo(1.034778, 6);
    expect(k.q).toBeCloseTo(626.0561, 3);
    expect(k.cd).toBeCloseTo(0.1141032, 7);
  });
  it('θ = 1.03 by setting; twice the classical wake blockage for the same drag when θ = 1', () => {
    expect(wallCorrections({ ...stalled, method: 'maskell', maskellTheta: 1.03 }).epsWb).toBeCloseTo(0.01716667, 8);
    const one = wallCorrections({ ...stalled, method: 'maskell', maskellTheta: 1 }).epsWb;
    const classical = wallCorrections({ ...stalled, method: 'barlow-rae-pope' }).epsWb;
    expect(one / classical).toBeCloseTo(2, 12);
    expect(() => wallCorrections({ ...stalled, method: 'maskell', maskellTheta: 0 })).toThrow(/θ/);
  });
});
