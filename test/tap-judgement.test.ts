// Tap judgement (issue 9): the leave-one-out prediction test and the stagnation reference check of
// app/tapCheck.ts, and the contour rules of app/surface.ts / app/contourSpline.ts, on exact
// Joukowski sections (REDUCTION.md §11 case 2; test/helpers/joukowski.ts: Milne-Thomson ch. 7,
// Katz & Plotkin §6.5, memory) with realistic rows (cosine spacing in arc length, a leading-edge
// tap, a gap at the trailing edge; test/helpers/joukowski.ts arcTaps).
// The rates measured here are reported in docs/TAP-JUDGEMENT.md; the bounds asserted are the
// measured figures rounded down (detection) or up (false alarms), so a change that makes the test
// worse fails.
import { describe, expect, it } from 'vitest';
import { detectBadTaps, integrateContour, orderContour } from '../app/surface';
import { cpStagnation, findRowOutliers, referenceCheck } from '../app/tapCheck';
import { DEFAULT_SETTINGS, type TapCp } from '../app/types';
import { arcTaps, joukowski } from './helpers/joukowski';

/** A 12 % thick, 2 % cambered Joukowski section (t/c from the exact shape, checked below). */
const M_J = 0.1;
const N_J = 0.04;
/** Typical tap channel uncertainty: 0.25 % of a 2.5 kPa transducer over q ≈ 1.2 kPa (invented). */
const U_TAP = 0.005;
const POS_U = 0.0005;

function row(alpha: number, count: number): TapCp[] {
  return arcTaps(joukowski(M_J, N_J, alpha), count).map((p) => ({
    id: p.id, x: p.x, y: p.y, surface: p.surface, row: 'C', cp: p.cp, bad: false,
  }));
}
const judge = (taps: TapCp[]) =>
  findRowOutliers(orderContour(taps).map((t) => ({ id: t.id, x: t.x, y: t.y, cp: t.cp, u: U_TAP })), {
    k: DEFAULT_SETTINGS.tapCheckK,
    positionU: POS_U,
  });

describe('the exact section used', () => {
  it('is about 12 % thick', () => {
    const taps = arcTaps(joukowski(M_J, N_J, 0), 400);
    let t = 0;
    for (const u of taps.filter((p) => p.surface === 'upper')) {
      const l = taps.filter((p) => p.surface === 'lower').reduce((a, b) => (Math.abs(b.x - u.x) < Math.abs(a.x - u.x) ? b : a));
      t = Math.max(t, u.y - l.y);
    }
    expect(t).toBeGreaterThan(0.11);
    expect(t).toBeLessThan(0.13);
  });
});

describe('leave-one-out test on exact sections, α −8° … 16°', () => {
  // Measured (docs/TAP-JUDGEMENT.md): 0 of 25 angles with a tap dropped at 16, 24, 48 and 96 taps
  // (at 16 taps the stagnation tap at 0° was dropped until the row's stagnation-region peak was
  // shielded from the neighbours' prediction); rows of fewer than 12 taps are not judged.
  it.each([24, 48, 96])('%i taps: no tap dropped at any angle', (count) => {
    for (let a = -8; a <= 16; a++) expect(judge(row(a, count)), `α = ${a}°`).toEqual([]);
  });
  it('16 taps: no tap dropped at any angle, the stagnation-region peak included', () => {
    for (let a = -8; a <= 16; a++) expect(judge(row(a, 16)), `α = ${a}°`).toEqual([]);
  });
  it('the shielded peak is only the row\'s highest reading, and only a stagnation-region one', () => {
    // The same 16-tap row at 0° with the peak lowered to 0.3 Cp: below STAGNATION_REGION_CP (0.5),
    // no longer a stagnation-region reading, it is judged as any tap (and, 0.7 below the exact
    // 0.998, dropped).
    const base = row(0, 16);
    const peak = base.reduce((b, t) => (t.cp > b.cp ? t : b));
    expect(peak.cp).toBeGreaterThan(0.99);
    expect(judge(base.map((t) => (t.id === peak.id ? { ...t, cp: 0.3 } : t))).map((v) => v.id)).toEqual([peak.id]);
    // A glitch that makes an aft tap the row's highest reading is no stagnation reading.
    const aft = base.filter((t) => t.x > 0.5)[0];
    const glitched = base.map((t) => (t.id === aft.id ? { ...t, cp: t.cp + 1.4 } : t));
    expect(Math.max(...glitched.map((t) => t.cp))).toBe(aft.cp + 1.4);
    expect(judge(glitched).map((v) => v.id)).toEqual([aft.id]);
  });
  it('a row of 10 taps is not judged', () => {
    expect(judge(row(4, 10).map((t, i) => (i === 5 ? { ...t, cp: t.cp + 1 } : t)))).toEqual([]);
  });
});

describe('planted single-tap glitches aft of x/c 0.05', () => {
  /** Share of glitches found alone, and count of runs where another tap was dropped. */
  function rates(count: number, dcp: number) {
    let found = 0;
    let total = 0;
    let wrong = 0;
    for (let a = -8; a <= 16; a += 2) {
      const base = row(a, count);
      for (const t of base) {
        if (t.x < 0.05) continue;
        for (const sign of [1, -1]) {
          const f = judge(base.map((b) => (b.id === t.id ? { ...b, cp: b.cp + sign * dcp } : b)));
          total++;
          if (f.length === 1 && f[0].id === t.id) found++;
          if (f.some((v) => v.id !== t.id)) wrong++;
        }
      }
    }
    return { found: found / total, wrong };
  }
  // Measured: 0.1 at 48 taps 83.7 % found, 0 wrong; 0.2 at 48 taps 87.1 %, 0 wrong; 0.3 at 24 taps 67 %,
  // 3 wrong of 546. The misses are taps in the steep region behind the leading edge (x/c < 0.3) at
  // the largest |α|, where the neighbours cannot predict a tap to 0.1.
  it('0.1 Cp at 48 taps', () => {
    const r = rates(48, 0.1);
    expect(r.found).toBeGreaterThan(0.83);
    expect(r.wrong).toBe(0);
  });
  it('0.2 Cp at 48 taps', () => {
    const r = rates(48, 0.2);
    expect(r.found).toBeGreaterThan(0.87);
    expect(r.wrong).toBe(0);
  });
  it('0.3 Cp at 24 taps', () => {
    const r = rates(24, 0.3);
    expect(r.found).toBeGreaterThan(0.6);
    expect(r.wrong).toBeLessThanOrEqual(3);
  });
  it('a glitch of 0.2 at x/c ≈ 0.85 is found and the stagnation tap is kept (issue 9)', () => {
    const base = row(4, 48);
    const t85 = base.filter((t) => t.surface === 'upper').reduce((a, b) => (Math.abs(b.x - 0.85) < Math.abs(a.x - 0.85) ? b : a));
    const taps = base.map((t) => (t.id === t85.id ? { ...t, cp: t.cp + 0.2 } : t));
    const bad = detectBadTaps(taps, DEFAULT_SETTINGS, undefined, undefined, { positionU: POS_U });
    expect(bad.map((b) => [b.id, b.reason])).toEqual([[t85.id, 'outlier']]);
    expect(bad[0].verdict!.residual).toBeCloseTo(0.2, 2);
  });
});

describe('shape-aided prediction (the fitted inviscid shape, app/tapShape.ts), as the reduction runs it', () => {
  // The model geometry as the setup would give it: the exact section's contour as coordinates.
  const nodes = joukowski(M_J, N_J, 0).nodes(400);
  const geometry = { kind: 'coordinates' as const, x: nodes.x, y: nodes.y };
  /** An invented viscous-like row (no source; a smooth distortion the inviscid shape does not
   *  have): the exact section at a lower effective angle, 0.88α − 0.4°, suction peaks softened
   *  (Cp → −2.5·tanh(−Cp/2.5) where Cp < 0), 7 % less loading and a pressure-recovery shortfall
   *  towards the trailing edge (+0.12(x/c)³ upper, +0.04(x/c)² lower). */
  function viscousRow(alpha: number, count: number): TapCp[] {
    return arcTaps(joukowski(M_J, N_J, 0.88 * alpha - 0.4), count).map((p) => {
      const soft = p.cp < 0 ? -2.5 * Math.tanh(-p.cp / 2.5) : p.cp;
      const cp = 0.93 * soft + (p.surface === 'upper' ? 0.12 * p.x ** 3 : 0.04 * p.x ** 2);
      return { id: p.id, x: p.x, y: p.y, surface: p.surface, row: 'C', cp, bad: false };
    });
  }
  const detect = (taps: TapCp[], alpha: number) =>
    detectBadTaps(taps, DEFAULT_SETTINGS, undefined, undefined, { positionU: POS_U, inviscid: { geometry, alphaDeg: alpha } });
  function falseAlarms(make: (a: number, n: number) => TapCp[], count: number): number {
    let n = 0;
    for (let a = -8; a <= 16; a++) if (detect(make(a, count), a).length) n++;
    return n;
  }
  function glitchRates(make: (a: number, n: number) => TapCp[], count: number, dcp: number) {
    let found = 0;
    let total = 0;
    let wrong = 0;
    for (let a = -8; a <= 16; a += 2) {
      const base = make(a, count);
      for (const t of base) {
        if (t.x < 0.05) continue;
        for (const sign of [1, -1]) {
          const f = detect(base.map((b) => (b.id === t.id ? { ...b, cp: b.cp + sign * dcp } : b)), a);
          total++;
          if (f.length === 1 && f[0].id === t.id) found++;
          if (f.some((v) => v.id !== t.id)) wrong++;
        }
      }
    }
    return { found: found / total, wrong };
  }
  // Measured (docs/TAP-JUDGEMENT.md §1); bounds are the figures rounded down (found) or up (wrong).
  it('exact rows: no tap dropped at 24, 48, 96 taps, α −8° … 16°; 16-tap rows keep the plain test', () => {
    for (const n of [16, 24, 48, 96]) expect(falseAlarms(row, n), `${n} taps`).toBe(0);
  });
  it('viscous-like rows: no tap dropped at 24, 48, 96 taps; at most 1 of 25 angles at 16 taps', () => {
    for (const n of [24, 48, 96]) expect(falseAlarms(viscousRow, n), `${n} taps`).toBe(0);
    expect(falseAlarms(viscousRow, 16)).toBeLessThanOrEqual(1);
  });
  it('four exact sections (9.6 % symmetric to 15 % / 4 % camber), 12 to 96 taps: no tap dropped at any angle', () => {
    // Before the fit's own uncertainty, the suction-peak shield and the 0.5 floor of the
    // stagnation shield: the symmetric section at 5° and the thin cambered one at −6° lost their
    // stagnation-side nose tap at 16 taps, and six angles of 12-tap rows their suction-peak tap.
    const bad: string[] = [];
    for (const [m, n] of [[0.075, 0], [0.1, 0.04], [0.125, 0.08], [0.075, 0.08]]) {
      const g = joukowski(m, n, 0).nodes(400);
      for (const count of [12, 16, 20, 24, 32, 48, 96]) {
        for (let a = -8; a <= 16; a++) {
          const taps = arcTaps(joukowski(m, n, a), count).map((p) => ({ id: p.id, x: p.x, y: p.y, surface: p.surface, row: 'C', cp: p.cp, bad: false }));
          const f = detectBadTaps(taps, DEFAULT_SETTINGS, undefined, undefined, { positionU: POS_U, inviscid: { geometry: { kind: 'coordinates', x: g.x, y: g.y }, alphaDeg: a } });
          if (f.length) bad.push(`m ${m} n ${n}, ${count} taps, α ${a}°: ${f.map((v) => v.id).join(', ')}`);
        }
      }
    }
    expect(bad).toEqual([]);
  }, 60_000);
  it('planted glitches on exact rows: 0.1 and 0.2 Cp at 48 taps, 0.3 Cp at 24 taps', () => {
    const a = glitchRates(row, 48, 0.1);
    const b = glitchRates(row, 48, 0.2);
    const c = glitchRates(row, 24, 0.3);
    expect(a.found).toBeGreaterThan(0.97);
    expect(a.wrong).toBe(0);
    expect(b.found).toBeGreaterThan(0.985);
    expect(b.wrong).toBe(0);
    // 90.8 % before the one-sided prediction of the difference (app/tapCheck.ts
    // differencePrediction); 95.2 % with it.
    expect(c.found).toBeGreaterThan(0.95);
    expect(c.wrong).toBe(0);
  }, 60_000);
  it('planted glitches on viscous-like rows: the same cases', () => {
    const a = glitchRates(viscousRow, 48, 0.1);
    const b = glitchRates(viscousRow, 48, 0.2);
    const c = glitchRates(viscousRow, 24, 0.3);
    expect(a.found).toBeGreaterThan(0.93);
    expect(a.wrong).toBe(0);
    expect(b.found).toBeGreaterThan(0.96);
    expect(b.wrong).toBe(0);
    expect(c.found).toBeGreaterThan(0.82);
    expect(c.wrong).toBeLessThanOrEqual(4);
  }, 60_000);
});

describe('stagnation and the references', () => {
  it('Cp_stag against the isentropic formula at M 0.1, 0.2, 0.3', () => {
    // Isentropic total-to-static ratio p0/p = (1 + (γ−1)M²/2)^{γ/(γ−1)} (NACA Report 1135, memory),
    // Cp_stag = (p0 − p)/(½γpM²); the series 1 + M²/4 + M⁴/40 (same source) gives 1.0025025,
    // 1.010040, 1.0227025, which the formula must reproduce to the series' next term (~M⁶/1600).
    for (const [M, v] of [[0.1, 1.0025025], [0.2, 1.01004], [0.3, 1.0227025]]) {
      const g = 1.4;
      const exact = ((1 + ((g - 1) / 2) * M * M) ** (g / (g - 1)) - 1) / ((g / 2) * M * M);
      expect(cpStagnation(M)).toBeCloseTo(exact, 12);
      expect(cpStagnation(M)).toBeCloseTo(v, 5);
      expect(Math.abs(cpStagnation(M) - (1 + M * M / 4 + M ** 4 / 40))).toBeLessThan(1e-4);
    }
    expect(cpStagnation(0)).toBe(1);
  });

  /** A 48-tap row with one tap exactly at the stagnation point (θ = α + π on the circle, where the
   *  surface speed of the exact solution vanishes besides the trailing edge). */
  function rowWithStagnationTap(alpha: number): TapCp[] {
    const J = joukowski(M_J, N_J, alpha);
    const taps = row(alpha, 48);
    // Stagnation on the circle: 2 sin(θ − α) + Γ/(2πa) = 0, the root away from the trailing edge.
    const a = Math.hypot(1 + M_J, N_J);
    const th = alpha * Math.PI / 180 + Math.PI + Math.asin(J.gamma / (4 * Math.PI * a));
    const p = J.at(th);
    const near = taps.reduce((b, t) => (Math.hypot(t.x - p.x, t.y - p.y) < Math.hypot(b.x - p.x, b.y - p.y) ? t : b));
    return taps.map((t) => (t.id === near.id ? { ...t, x: p.x, y: p.y, cp: p.cp, surface: p.surface } : t));
  }

  it('the exact stagnation tap reads Cp = 1 and gives no flag', () => {
    const taps = rowWithStagnationTap(4);
    expect(Math.max(...taps.map((t) => t.cp))).toBeCloseTo(1, 6);
    expect(referenceCheck('C', taps, () => 0.006, 0.1, 1200, DEFAULT_SETTINGS.stagnationK)).toBeNull();
  });

  it.each([0.03, 0.05])('q reading %f low: reference flag with the implied q error, no tap dropped', (err) => {
    // q_u = (1 − err)·q: every Cp is divided by (1 − err) (common practice, no source).
    for (const alpha of [-4, 0, 6]) {
      const taps = rowWithStagnationTap(alpha).map((t) => ({ ...t, cp: t.cp / (1 - err) }));
      const bad = detectBadTaps(taps, DEFAULT_SETTINGS, undefined, undefined, { positionU: POS_U });
      expect(bad, `α = ${alpha}°`).toEqual([]);
      const M = 0.1;
      const f = referenceCheck('C', taps, (_, cp) => Math.hypot(0.005, cp * 0.003), M, 1200, DEFAULT_SETTINGS.stagnationK);
      expect(f).not.toBeNull();
      // Cp_max = Cp_stag_true/(1 − err) with the true maximum 1 (the section's M = 0 solution):
      // qLow = 1 − Cp_stag(M)/Cp_max, close to err (within the M²/4 of Cp_stag).
      expect(f!.qLow).toBeCloseTo(1 - cpStagnation(M) * (1 - err), 6);
      expect(Math.abs(f!.qLow - err)).toBeLessThan(0.003);
    }
  });

  it('a stagnation over-reading by a static-reference error is flagged with its Pa, the tap kept', () => {
    // p∞ reading 60 Pa low at q = 1200 Pa: every Cp up by 0.05.
    const taps = rowWithStagnationTap(2).map((t) => ({ ...t, cp: t.cp + 60 / 1200 }));
    expect(detectBadTaps(taps, DEFAULT_SETTINGS, undefined, undefined, { positionU: POS_U })).toEqual([]);
    const f = referenceCheck('C', taps, () => 0.006, 0.1, 1200, 2)!;
    expect(f.staticLowPa).toBeCloseTo(60 - (cpStagnation(0.1) - 1) * 1200, 6);
  });

  it('within its uncertainty the highest Cp is no finding', () => {
    const taps = rowWithStagnationTap(2).map((t) => ({ ...t, cp: t.cp + 0.01 }));
    expect(referenceCheck('C', taps, () => 0.006, 0.1, 1200, 2)).toBeNull();
  });
});

describe('contour rules on exact sections, α −8° … 12°', () => {
  // Measured (docs/TAP-JUDGEMENT.md §3), max |cl − cl_exact| linear / spline (core 0.7.0, the
  // square-root-plane spline): 16 taps 0.017 / 0.011, 24 taps 0.0090 / 0.0011, 48 taps 0.0018 /
  // 0.0004, 96 taps 0.0012 / 0.0003. The targets for the default rule are asserted on three
  // sections in test/contour-rule.test.ts.
  function worst(count: number, rule: 'linear' | 'spline') {
    let cl = 0;
    let cm = 0;
    for (let a = -8; a <= 12; a++) {
      const J = joukowski(M_J, N_J, a);
      const r = integrateContour(arcTaps(J, count), a, rule);
      expect(r.rule).toBe(rule);
      cl = Math.max(cl, Math.abs(r.cl - J.cl));
      cm = Math.max(cm, Math.abs(r.cmc4 - J.cmc4));
    }
    return { cl, cm };
  }
  it('the spline beats linear at 48 and 96 taps, in cl and cm', () => {
    for (const n of [48, 96]) {
      const l = worst(n, 'linear');
      const s = worst(n, 'spline');
      expect(s.cl, `${n} taps`).toBeLessThan(0.5 * l.cl);
      expect(s.cm, `${n} taps`).toBeLessThan(l.cm);
      expect(s.cl).toBeLessThan(0.001);
    }
  });
  it('at 24 taps both rules stay within 0.01 of exact cl', () => {
    expect(worst(24, 'linear').cl).toBeLessThan(0.01);
    expect(worst(24, 'spline').cl).toBeLessThan(0.01);
  });
  it('the spline integrates the lifting cylinder and dense exact data like linear, or better', () => {
    const J = joukowski(0.1, 0.05, 5);
    const taps = J.taps(2000).map((p, i) => ({ id: `h${i}`, ...p }));
    expect(Math.abs(integrateContour(taps, 5, 'spline').cl - J.cl)).toBeLessThan(1e-5);
    expect(Math.abs(integrateContour(taps, 5, 'spline').cmc4 - J.cmc4)).toBeLessThan(1e-5);
  });
});
