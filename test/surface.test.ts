import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  detectBadTaps,
  integrateContour,
  orderContour,
  reduceSurface,
  TE_METHOD_LINEAR,
  type ContourPoint,
} from '../app/surface';
import { DEFAULT_SETTINGS, type TapCp } from '../app/types';
import { joukowski, karmanTrefftz } from './helpers/joukowski';
import { cleanTapRow } from './helpers/tapRow';

const DEG = Math.PI / 180;

/** Lifting circular cylinder (Anderson, Fundamentals of Aerodynamics, §3.15, memory):
 *  Cp(θ) = 1 − (2 sin θ' + Γ/(2πRV))², θ' measured from the downstream free-stream direction.
 *  Model axes: chord = diameter 2R along x, x/c = (1 + cos θ)/2, y/c = (sin θ)/2, so the trailing
 *  edge is θ = 0; with the free stream at α to x, θ' = θ − α. Lift L' = ρVΓ (Kutta–Joukowski), so
 *  cl = L'/(½ρV²·2R) = Γ/(VR) = 2π·G with G = Γ/(2πRV), at any α; pressure drag zero. */
function cylinderTaps(count: number, G: number, alphaDeg: number): ContourPoint[] {
  return Array.from({ length: count }, (_, k) => {
    const th = (2 * Math.PI * (k + 0.5)) / count;
    return {
      id: `c${k}`,
      x: (1 + Math.cos(th)) / 2,
      y: Math.sin(th) / 2,
      surface: Math.sin(th) > 0 ? ('upper' as const) : ('lower' as const),
      cp: 1 - (2 * Math.sin(th - alphaDeg * DEG) + G) ** 2,
    };
  });
}

function asTaps(points: { x: number; y: number; cp: number; surface: 'upper' | 'lower' }[], row = 'C'): TapCp[] {
  return points.map((p, i) => ({ id: `${row}${i}`, x: p.x, y: p.y, surface: p.surface, row, cp: p.cp, bad: false }));
}

describe('orderContour', () => {
  it('orders TE → upper (decreasing x) → LE → lower (increasing x)', () => {
    const taps = [
      { id: 'l2', x: 0.6, y: -0.03, surface: 'lower' as const },
      { id: 'u1', x: 0.1, y: 0.05, surface: 'upper' as const },
      { id: 'le', x: 0, y: 0, surface: 'upper' as const },
      { id: 'l1', x: 0.05, y: -0.02, surface: 'lower' as const },
      { id: 'u2', x: 0.8, y: 0.03, surface: 'upper' as const },
    ];
    expect(orderContour(taps).map((t) => t.id)).toEqual(['u2', 'u1', 'le', 'l1', 'l2']);
  });
});

describe('integrateContour: analytic cases', () => {
  it.each([0, 7])('lifting cylinder, 64 taps, α = %i°: cl within 0.5 % of Γ/(VR), cd_p within 0.002', (alpha) => {
    // Anderson §3.15 (memory); see cylinderTaps for the normalisation.
    const G = 0.4;
    const r = integrateContour(cylinderTaps(64, G, alpha), alpha);
    const clExact = 2 * Math.PI * G;
    expect(Math.abs(r.cl / clExact - 1)).toBeLessThan(0.005);
    expect(Math.abs(r.cdp)).toBeLessThan(0.002);
    expect(r.teMethod).toBe(TE_METHOD_LINEAR);
    // Trailing edge θ = 0: Cp = 1 − (2 sin(−α) + G)².
    expect(r.teCp).toBeCloseTo(1 - (2 * Math.sin(-alpha * DEG) + G) ** 2, 1);
  });

  it.each([
    [0.1, 0.05, 5],
    [0.08, 0.1, 8],
    [0.12, 0.06, -3],
  ])('Joukowski airfoil (m = %f, n = %f, α = %i°), 64 taps: cl within 0.5 %, cm_c/4 within 0.005', (m, n, alpha) => {
    // Exact cl from the circulation fixed by the Kutta condition, exact cm_c/4 from the complex
    // potential by the Blasius theorem (test/helpers/joukowski.ts; Milne-Thomson ch. 7, Katz &
    // Plotkin §6.5, memory).
    const J = joukowski(m, n, alpha);
    const taps = J.taps(64).map((p, i) => ({ id: `j${i}`, ...p }));
    const r = integrateContour(taps, alpha);
    expect(Math.abs(r.cl - J.cl)).toBeLessThan(0.005 * Math.abs(J.cl) + 1e-3);
    expect(Math.abs(r.cmc4 - J.cmc4)).toBeLessThan(0.005);
    // Potential flow: no pressure drag (d'Alembert).
    expect(Math.abs(r.cdp)).toBeLessThan(0.002);
  });

  it('the Blasius moment of the helper matches the exact Cp integrated at 20 000 points', () => {
    // Checks the helper's moment derivation (and the integrator) independently of the tap count:
    // linear-Cp integration converges as h², so 20 000 points leave errors far below 1e-5.
    for (const [m, n, alpha, tau] of [
      [0.1, 0.05, 5, 0],
      [0.08, 0.1, 8, 12],
    ]) {
      const J = karmanTrefftz(m, n, alpha, tau);
      const r = integrateContour(
        J.taps(20000).map((p, i) => ({ id: `h${i}`, ...p })),
        alpha,
      );
      expect(Math.abs(r.cl - J.cl)).toBeLessThan(1e-5);
      expect(Math.abs(r.cmc4 - J.cmc4)).toBeLessThan(1e-5);
    }
  });

  it('closes the trailing edge by linear extrapolation, or the nearest tap when a surface has one', () => {
    // Cp linear in x on each surface (upper Cp = x, lower Cp = 2x − 0.5): extrapolation to x = 1
    // gives 1 and 1.5 exactly, mean 1.25 (common practice, no source).
    const pts: ContourPoint[] = [
      { id: 'a', x: 0.2, y: 0.05, surface: 'upper', cp: 0.2 },
      { id: 'b', x: 0.6, y: 0.04, surface: 'upper', cp: 0.6 },
      { id: 'c', x: 0.3, y: -0.03, surface: 'lower', cp: 0.1 },
      { id: 'd', x: 0.7, y: -0.02, surface: 'lower', cp: 0.9 },
    ];
    const r = integrateContour(pts, 0);
    expect(r.teCp).toBeCloseTo(1.25, 12);
    expect(r.teMethod).toBe(TE_METHOD_LINEAR);
    const one = integrateContour(pts.filter((p) => p.id !== 'c'), 0);
    expect(one.teCp).toBeCloseTo(0.5 * (1 + 0.9), 12);
    expect(one.teMethod).toContain('lower: nearest tap');
  });

  it('gives the flat-plate-like loads of a uniform pressure difference', () => {
    // Thin plate along the chord, Cp_u = −1, Cp_l = 0: cn = 1 acting at mid-chord, so cm_LE = −0.5
    // and cm_c/4 = −0.25 (nose-up positive; Anderson §1.5 sign convention, memory).
    const xs = [0, 0.25, 0.5, 0.75, 1];
    const pts: ContourPoint[] = [
      ...xs.map((x, i) => ({ id: `u${i}`, x, y: 0, surface: 'upper' as const, cp: -1 })),
      ...xs.map((x, i) => ({ id: `l${i}`, x, y: 0, surface: 'lower' as const, cp: 0 })),
    ];
    const r = integrateContour(pts, 10);
    expect(r.cn).toBeCloseTo(1, 12);
    expect(r.ca).toBeCloseTo(0, 12);
    expect(r.cmLE).toBeCloseTo(-0.5, 12);
    expect(r.cmc4).toBeCloseTo(-0.25, 12);
    expect(r.cl).toBeCloseTo(Math.cos(10 * DEG), 12);
    expect(r.cdp).toBeCloseTo(Math.sin(10 * DEG), 12);
  });

  it('names the problem when a surface has no taps or a value is not finite', () => {
    const up: ContourPoint[] = [{ id: 'u1', x: 0.5, y: 0.05, surface: 'upper', cp: -0.5 }];
    expect(() => integrateContour(up, 0)).toThrow(/each surface/);
    expect(() =>
      integrateContour([...up, { id: 'L7', x: 0.5, y: -0.05, surface: 'lower', cp: Number.NaN }], 0),
    ).toThrow(/L7.*cp/);
  });
});

describe('integrateContour: properties (fast-check)', () => {
  const J = joukowski(0.1, 0.05, 6);
  const base = J.taps(48).map((p, i) => ({ id: `t${i}`, x: p.x, y: p.y, surface: p.surface, cp: p.cp }));

  it('does not depend on the order of the taps', () => {
    const ref = integrateContour(base, 6);
    fc.assert(
      fc.property(fc.shuffledSubarray(base, { minLength: base.length, maxLength: base.length }), (shuffled) => {
        const r = integrateContour(shuffled, 6);
        for (const k of ['cn', 'ca', 'cl', 'cdp', 'cmLE', 'cmc4', 'teCp'] as const) {
          expect(r[k]).toBeCloseTo(ref[k], 12);
        }
      }),
      { numRuns: 50 },
    );
  });

  it('cn, ca and cm are unchanged when every Cp shifts by a constant (closed contour)', () => {
    // ∮ const·dx = ∮ const·dy = ∮ const·(x dx + y dy) = 0 on a closed contour (common practice).
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: -0.3, max: 0.3, noNaN: true }), { minLength: base.length, maxLength: base.length }),
        fc.double({ min: -5, max: 5, noNaN: true }),
        fc.double({ min: -10, max: 20, noNaN: true }),
        (noise, shift, alpha) => {
          const pts = base.map((p, i) => ({ ...p, cp: p.cp + noise[i] }));
          const a = integrateContour(pts, alpha);
          const b = integrateContour(
            pts.map((p) => ({ ...p, cp: p.cp + shift })),
            alpha,
          );
          expect(Math.abs(b.cn - a.cn)).toBeLessThan(1e-9);
          expect(Math.abs(b.ca - a.ca)).toBeLessThan(1e-9);
          expect(Math.abs(b.cmLE - a.cmLE)).toBeLessThan(1e-9);
          expect(Math.abs(b.cmc4 - a.cmc4)).toBeLessThan(1e-9);
          expect(b.teCp - a.teCp).toBeCloseTo(shift, 9);
        },
      ),
      { numRuns: 100 },
    );
  });
});

describe('detectBadTaps', () => {
  const settings = DEFAULT_SETTINGS;

  it('flags nothing on a clean NACA 4412 distribution, α = −4° … 16°, 59 taps', () => {
    // Inviscid Cp from the panel method (test/helpers/tapRow.ts): sharp suction peaks and the
    // stagnation point must not be taken for bad taps (common practice, no source).
    for (let alpha = -4; alpha <= 16; alpha++) {
      const taps = cleanTapRow(alpha);
      expect(taps.length).toBeGreaterThanOrEqual(55);
      expect(detectBadTaps(taps, settings), `α = ${alpha}°`).toEqual([]);
    }
  });

  it('flags nothing when small measurement noise (±0.02 Cp) is added', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: -4, max: 16 }),
        fc.array(fc.double({ min: -0.02, max: 0.02, noNaN: true }), { minLength: 59, maxLength: 59 }),
        (alpha, noise) => {
          const taps = cleanTapRow(alpha).map((t, i) => ({ ...t, cp: t.cp + noise[i] }));
          // The test is told the noise: uniform ±0.02 has standard deviation 0.02/√3 (GUM §4.3.7).
          const uCp = Object.fromEntries(taps.map((t) => [t.id, 0.02 / Math.sqrt(3)]));
          expect(detectBadTaps(taps, settings, undefined, undefined, { uCp })).toEqual([]);
        },
      ),
      { numRuns: 40 },
    );
  });

  it('finds a spike tap as an outlier, and only that tap', () => {
    for (const alpha of [-4, 0, 6, 12]) {
      for (const [id, dcp] of [
        ['CU17', 0.5],
        ['CU25', -0.4],
        ['CL20', 0.6],
        ['CL29', -0.5],
        ['CU30', 0.5],
      ] as const) {
        const taps = cleanTapRow(alpha).map((t) => (t.id === id ? { ...t, cp: t.cp + dcp } : t));
        expect(detectBadTaps(taps, settings).map(({ id, reason }) => ({ id, reason })), `α = ${alpha}°, ${id}`).toEqual([{ id, reason: 'outlier' }]);
      }
    }
  });

  it('finds two bad taps on the two surfaces', () => {
    // Two ADJACENT bad taps hide each other from the cross-validation term (docs/TAP-JUDGEMENT.md).
    const taps = cleanTapRow(4).map((t) =>
      t.id === 'CU19' ? { ...t, cp: t.cp + 0.6 } : t.id === 'CL20' ? { ...t, cp: t.cp - 0.5 } : t,
    );
    expect(detectBadTaps(taps, settings).map((b) => b.id)).toEqual(['CU19', 'CL20']);
  });

  it('finds a leaking tap from the wind-off zeros and a marked tap', () => {
    const taps = cleanTapRow(5);
    const zeroRaw: Record<string, number> = {};
    taps.forEach((t, i) => (zeroRaw[t.id] = 2 + 0.5 * Math.sin(i))); // a few Pa, all alike
    zeroRaw.CL12 = 40; // 38 Pa off the median: a leak
    const found = detectBadTaps(taps, { ...settings, badTaps: ['CU08'] }, zeroRaw, 15);
    expect(found).toEqual([
      { id: 'CU08', reason: 'marked' },
      { id: 'CL12', reason: 'leak' },
    ]);
    // A departure within leakPa is not a leak.
    expect(detectBadTaps(taps, settings, { ...zeroRaw, CL12: 14 }, 15)).toEqual([]);
  });

  it('treats each row separately', () => {
    const a = cleanTapRow(3, '4412', 'A');
    const b = cleanTapRow(3, '4412', 'B').map((t) => (t.id === 'BU18' ? { ...t, cp: t.cp + 0.7 } : t));
    expect(detectBadTaps([...a, ...b], settings).map(({ id, reason }) => ({ id, reason }))).toEqual([{ id: 'BU18', reason: 'outlier' }]);
  });
});

describe('reduceSurface', () => {
  it('drops bad taps, bridges them, and changes cl little for a smooth distribution', () => {
    // Bridging one tap replaces Cp there by linear interpolation of its neighbours; for a smooth
    // distribution the change in cl is of the order of the tap spacing squared (common practice).
    const taps = cleanTapRow(6);
    const full = reduceSurface(taps, 6, []);
    const bad = [{ id: 'CU18', reason: 'outlier' }, { id: 'CL14', reason: 'leak' }];
    const bridged = reduceSurface(taps, 6, bad);
    expect(bridged.bridged.sort()).toEqual(['CL14', 'CU18']);
    expect(full.bridged).toEqual([]);
    expect(Math.abs(bridged.cl - full.cl)).toBeLessThan(0.005);
    expect(Math.abs(bridged.cmc4 - full.cmc4)).toBeLessThan(0.002);
  });

  it('gives the same loads when a spiked tap is detected and bridged as with the clean row', () => {
    const clean = cleanTapRow(8);
    const spiked = clean.map((t) => (t.id === 'CU21' ? { ...t, cp: t.cp + 0.8 } : t));
    const bad = detectBadTaps(spiked, DEFAULT_SETTINGS);
    expect(bad.map((b) => b.id)).toEqual(['CU21']);
    const r = reduceSurface(spiked, 8, bad);
    const ref = reduceSurface(clean, 8, []);
    expect(Math.abs(r.cl - ref.cl)).toBeLessThan(0.005);
    // Without bridging the spike would have cost about 0.8 × (spacing 0.05) = 0.04 in cl.
    expect(Math.abs(reduceSurface(spiked, 8, []).cl - ref.cl)).toBeGreaterThan(0.02);
  });

  it('refuses mixed rows and a surface with no good tap left', () => {
    const taps = asTaps([
      { x: 0.5, y: 0.05, cp: -0.5, surface: 'upper' },
      { x: 0.5, y: -0.05, cp: 0.2, surface: 'lower' },
    ]);
    expect(() => reduceSurface([...taps, { ...taps[0], id: 'X', row: 'B' }], 0, [])).toThrow(/rows C, B/);
    expect(() => reduceSurface(taps, 0, [{ id: 'C1' }])).toThrow(/lower-surface/);
  });
});
