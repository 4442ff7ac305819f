import { describe, expect, it } from 'vitest';
import { angleFlux, captureFraction, gd, wallLoads } from '../app/walls';
import { gammaFromCl } from '../app/crosscheck';

// Check case: bound vortex midway between floor and ceiling (REDUCTION.md §5, §11.3).
// Flow along +x, y up, walls at y = ±h/2, vortex Γ (clockwise-positive, i.e. positive lift) at the
// origin (the model quarter chord). Method of images (Milne-Thomson, Theoretical Hydrodynamics):
// images at y = n·h with strength (−1)^n Γ. Closed form of the whole flow (summed images):
//   u − i v = V + (iΓ/2h) / sinh(πz/h),
// which near z = 0 reduces to iΓ/(2πz), the clockwise vortex, and on the walls z = x ± ih/2 gives
//   u = V ± (Γ/2h)·sech(πx/h), v = 0  (+ ceiling, − floor).
// The image sum below checks this closed form, including the sign, independently.

const h = 0.9; // m, test-section height (invented scenario: HAL No. 2 tunnel)
const c = 0.25; // m
const V = 30; // m/s
const clTrue = 1.0;
const G = gammaFromCl(clTrue, V, c); // Γ = ½ V c cl = 3.75 m²/s; Γ/2h ≈ 2.08 m/s ≈ 7 % of V

const sech = (t: number): number => 1 / Math.cosh(t);
/** Wall speed perturbation from the closed form: + on the ceiling, − on the floor. */
const uPert = (x: number): number => (G / (2 * h)) * sech((Math.PI * x) / h);

/** Cp from exact Bernoulli (inviscid, incompressible): Cp = 1 − (u/V)². */
const cpFromSpeed = (u: number): number => 1 - (u / V) ** 2;

function walls(x1: number, x2: number, n: number) {
  const xs = Array.from({ length: n }, (_, i) => x1 + ((x2 - x1) * i) / (n - 1));
  return {
    floor: xs.map((x) => ({ x, cp: cpFromSpeed(V - uPert(x)) })),
    ceiling: xs.map((x) => ({ x, cp: cpFromSpeed(V + uPert(x)) })),
  };
}

/** Velocity (u, v) at (x, y) from the image sum, images n = 1−N … N (whole pairs about the
 *  ceiling), averaged over N and N+1 to cancel the alternating tail. Vortex of strength Γn
 *  (clockwise) at (0, yn): u = Γn (y − yn)/(2π r²), v = −Γn x/(2π r²). */
function imageSum(x: number, y: number, N: number): { u: number; v: number } {
  const partial = (M: number) => {
    let u = 0;
    let v = 0;
    for (let n = 1 - M; n <= M; n++) {
      const gn = (n % 2 === 0 ? 1 : -1) * G;
      const dy = y - n * h;
      const r2 = x * x + dy * dy;
      u += (gn * dy) / (2 * Math.PI * r2);
      v += (-gn * x) / (2 * Math.PI * r2);
    }
    return { u, v };
  };
  const a = partial(N);
  const b = partial(N + 1);
  return { u: (a.u + b.u) / 2, v: (a.v + b.v) / 2 };
}

describe('image-vortex wall signature', () => {
  it('summing 4,000 image vortices reproduces ±(Γ/2h)·sech(πx/h), ceiling faster for Γ > 0', () => {
    for (const x of [0, 0.13 * h, 0.5 * h, 1.2 * h]) {
      const top = imageSum(x, h / 2, 2000);
      const bottom = imageSum(x, -h / 2, 2000);
      const ref = uPert(x);
      expect(Math.abs(top.u - ref)).toBeLessThan(1e-6 * (G / (2 * h)));
      expect(Math.abs(bottom.u + ref)).toBeLessThan(1e-6 * (G / (2 * h)));
      expect(Math.abs(top.v)).toBeLessThan(1e-9); // the walls are streamlines
    }
  });
});

describe('captureFraction', () => {
  it('is the integral of sech(πx/h)/h between x1 and x2 (Simpson, 2,000 intervals)', () => {
    const simpson = (a: number, b: number, n = 2000) => {
      const dx = (b - a) / n;
      const f = (x: number) => sech((Math.PI * x) / h) / h;
      let s = f(a) + f(b);
      for (let i = 1; i < n; i++) s += (i % 2 ? 4 : 2) * f(a + i * dx);
      return (s * dx) / 3;
    };
    for (const [a, b] of [[-0.5 * h, 0.5 * h], [-h, 1.5 * h], [0.2 * h, 3 * h]]) {
      expect(captureFraction(a, b, h)).toBeCloseTo(simpson(a, b), 10);
    }
  });
  it('tends to 1 as the range grows', () => {
    const Fs = [0.5, 1, 2, 5].map((k) => captureFraction(-k * h, k * h, h));
    for (let i = 1; i < Fs.length; i++) expect(Fs[i]).toBeGreaterThan(Fs[i - 1]);
    expect(1 - Fs[3]).toBeLessThan(1e-6);
    expect(captureFraction(-Infinity, Infinity, h)).toBe(1);
  });
  it('gd satisfies gd(z) = 2·arctan(tanh(z/2)) (standard identity, from memory)', () => {
    for (const z of [-3, -0.4, 0, 0.7, 2.5]) expect(gd(z)).toBeCloseTo(2 * Math.atan(Math.tanh(z / 2)), 14);
  });
});

describe('wallLoads — vortex between walls', () => {
  // Expected errors. Circulation: the method inverts Bernoulli exactly (u = V√(1 − Cp)), so Γ is
  // exact up to the trapezoid rule (~1e-4 relative for 30 taps over ±2h). Momentum: with the vortex
  // midway the two wall perturbations are equal and opposite, so Cp_floor − Cp_ceiling =
  // [(V+u′)² − (V−u′)²]/V² = 4u′/V EXACTLY — the quadratic terms cancel and the linearisation error
  // is zero here (it would not be for a vortex off the centreline). Both are held to 0.1 %,
  // tighter than the 0.5 % asked.
  it('recovers Γ and cl = 2Γ/(Vc) from 30 taps per wall over ±2h after the F correction', () => {
    const r = wallLoads({ ...walls(-2 * h, 2 * h, 30), chord: c, height: h, V });
    expect(r.F).toBeCloseTo(captureFraction(-2 * h, 2 * h, h), 14);
    expect(Math.abs(r.gammaWall / G - 1)).toBeLessThan(1e-3);
    expect(r.gammaWall).toBeGreaterThan(0); // positive lift ⇒ positive (clockwise) Γ
    expect(Math.abs(r.clWall / clTrue - 1)).toBeLessThan(1e-3);
    expect(Math.abs(r.clMom / clTrue - 1)).toBeLessThan(1e-3);
    expect(r.angleFluxCl).toBe(0);
  });

  it('needs the F correction on a short instrumented length (±h/2, F ≈ 0.74)', () => {
    const r = wallLoads({ ...walls(-0.5 * h, 0.5 * h, 30), chord: c, height: h, V });
    expect(r.F).toBeLessThan(0.75);
    expect(Math.abs(r.gammaWall / G - 1)).toBeLessThan(1e-3);
    expect(Math.abs(r.clMom / clTrue - 1)).toBeLessThan(1e-3);
    // Without the correction the raw integral would be short by the factor F.
    expect(Math.abs((r.gammaWall * r.F) / G - r.F)).toBeLessThan(1e-3);
  });

  it('uses the range common to both walls when they are instrumented differently', () => {
    const f = walls(-h, 2 * h, 35).floor;
    const ce = walls(-1.5 * h, 1.5 * h, 28).ceiling;
    const r = wallLoads({ floor: f, ceiling: ce, chord: c, height: h, V });
    expect(r.F).toBeCloseTo(captureFraction(-h, 1.5 * h, h), 14);
    expect(Math.abs(r.gammaWall / G - 1)).toBeLessThan(2e-3);
    expect(Math.abs(r.clMom / clTrue - 1)).toBeLessThan(2e-3);
  });

  it('gives zero lift and circulation for a symmetric (non-lifting) signature', () => {
    // Blockage-like signature, equal on both walls (invented shape).
    const xs = Array.from({ length: 30 }, (_, i) => -2 * h + (4 * h * i) / 29);
    const sig = xs.map((x) => ({ x, cp: -0.05 * sech((Math.PI * x) / h) }));
    const r = wallLoads({ floor: sig, ceiling: sig, chord: c, height: h, V });
    expect(Math.abs(r.clMom)).toBeLessThan(1e-12);
    expect(Math.abs(r.gammaWall)).toBeLessThan(1e-12);
  });

  it('adds the angle-flux term as given', () => {
    const base = wallLoads({ ...walls(-2 * h, 2 * h, 30), chord: c, height: h, V });
    const withFlux = wallLoads({ ...walls(-2 * h, 2 * h, 30), chord: c, height: h, V, angleFluxCl: 0.04 });
    expect(withFlux.clMom - base.clMom).toBeCloseTo(0.04, 12);
    expect(withFlux.angleFluxCl).toBe(0.04);
    expect(withFlux.gammaWall).toBe(base.gammaWall);
  });

  it('rejects walls with no common range', () => {
    const a = walls(-2 * h, -h, 10).floor;
    const b = walls(h, 2 * h, 10).ceiling;
    expect(() => wallLoads({ floor: a, ceiling: b, chord: c, height: h, V })).toThrow(/no common x range/);
    expect(() => wallLoads({ floor: a.slice(0, 1), ceiling: b, chord: c, height: h, V })).toThrow(/floor needs at least 2/);
  });
});

describe('angleFlux', () => {
  it('downwash (θ < 0) gives a positive lift contribution (sign convention)', () => {
    // Uniform flow at θ = −2°, cpt = 1 over 0.2 m: −(2/c)·cos θ sin θ·0.2 > 0.
    const probes = [-0.1, 0, 0.1].map((y) => ({ y, angleDeg: -2, cpt: 1 }));
    const th = (-2 * Math.PI) / 180;
    expect(angleFlux({ probes, chord: c })).toBeCloseTo(-(2 / c) * Math.cos(th) * Math.sin(th) * 0.2, 12);
    expect(angleFlux({ probes, chord: c })).toBeGreaterThan(0);
  });

  it('closes the y-momentum balance of the image-vortex flow at a rake plane', () => {
    // Momentum theorem on the volume floor/ceiling/far upstream/rake plane x_r:
    //   L′ = ∫_{−∞}^{x_r} (p_f − p_c) dx − ρ ∫ u v dy |_{x_r}.
    // With the wall signature 4u′/V the wall part is cl·[gd(πx_r/h) + π/2]/π, so the rake term must
    // supply cl·(½ − gd(πx_r/h)/π). Flow at the rake from the closed form above; since this flow is
    // inviscid we feed cpt = (u² + v²)/V² so that √cpt is the exact local speed ratio.
    const xr = 0.3 * h;
    const probes = Array.from({ length: 61 }, (_, i) => {
      const y = -h / 2 + (h * i) / 60;
      // (iΓ/2h)/sinh(πz/h) with z = xr + iy.
      const a = (Math.PI * xr) / h;
      const b = (Math.PI * y) / h;
      const sr = Math.sinh(a) * Math.cos(b);
      const si = Math.cosh(a) * Math.sin(b);
      const m = sr * sr + si * si;
      const k = G / (2 * h);
      // i·k/(sr + i si) = k(si + i sr)/m
      const u = V + (k * si) / m;
      const v = -(k * sr) / m;
      return { y, angleDeg: (Math.atan2(v, u) * 180) / Math.PI, cpt: (u * u + v * v) / (V * V) };
    });
    const flux = angleFlux({ probes, chord: c });
    const expected = clTrue * (0.5 - gd((Math.PI * xr) / h) / Math.PI);
    expect(Math.abs(flux / expected - 1)).toBeLessThan(2e-3);
    expect(flux).toBeGreaterThan(0);

    // The same balance through wallLoads: wall taps over ±2h, contour closed at the rake plane.
    // Cutting the wall integral at x_r, where the signature is steep, makes the trapezoid error
    // second order in the tap spacing (≈ 0.3 % with 30 taps over ±2h, ≈ 0.08 % with 60).
    const r = wallLoads({ ...walls(-2 * h, 2 * h, 30), chord: c, height: h, V, angleFluxCl: flux, rakeX: xr });
    expect(r.FMom).toBeDefined();
    expect(Math.abs(r.clMom / clTrue - 1)).toBeLessThan(5e-3);
    const fine = wallLoads({ ...walls(-2 * h, 2 * h, 60), chord: c, height: h, V, angleFluxCl: flux, rakeX: xr });
    expect(Math.abs(fine.clMom / clTrue - 1)).toBeLessThan(2e-3);
    // Circulation still uses the whole overlap and F.
    expect(Math.abs(r.gammaWall / G - 1)).toBeLessThan(1e-3);
  });
});
