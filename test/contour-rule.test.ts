// The 'spline' contour rule (Settings.contourRule, issue 9 part 5) on exact sections: the exact flow
// is the Joukowski airfoil by conformal mapping with the Kutta condition (REDUCTION.md §11 case 2;
// Milne-Thomson, Theoretical Hydrodynamics ch. 7, Katz & Plotkin §6.5, memory; generator
// test/helpers/joukowski.ts, its cl and cm_c/4 in closed form). Rows are realistic: cosine spacing
// in arc length from a leading-edge tap, a 3 % gap at the trailing edge (arcTaps). The targets are
// the issue's: worst |Δcl| over α −8…12° within 0.004 at 24 taps and 0.001 at 48, cm improved on
// linear; the rule must also beat linear at 16 taps and not be worse at 96. Measured figures are
// in docs/TAP-JUDGEMENT.md §3; nothing here is tuned to one section (three sections, 9.6–15 %
// thick, 0–4 % camber).
import { describe, expect, it } from 'vitest';
import { integrateContour, type ContourRule } from '../app/surface';
import { DEFAULT_SETTINGS } from '../app/types';
import { arcTaps, joukowski, karmanTrefftz } from './helpers/joukowski';

/** Circle offsets (m, n) of the sections: thickness and camber measured in the first test. */
const SECTIONS: [string, number, number][] = [
  ['symmetric', 0.075, 0],
  ['12 % thick, 2 % camber', 0.1, 0.04],
  ['15 % thick, 4 % camber', 0.125, 0.08],
];

function worst(m: number, n: number, count: number, rule: ContourRule, aMax = 12) {
  let cl = 0;
  let cm = 0;
  for (let a = -8; a <= aMax; a++) {
    const J = joukowski(m, n, a);
    const r = integrateContour(arcTaps(J, count), a, rule);
    expect(r.rule).toBe(rule);
    cl = Math.max(cl, Math.abs(r.cl - J.cl));
    cm = Math.max(cm, Math.abs(r.cmc4 - J.cmc4));
  }
  return { cl, cm };
}

describe('the spline contour rule on exact Joukowski sections', () => {
  const rule: ContourRule = 'spline';
  it('the sections span 9–15 % thickness and 0–4 % camber; the spline is a setting, not the default', () => {
    // docs/TAP-JUDGEMENT.md §3: spline is not linear in Cp, and as the default it broke the
    // uncertainty coverage; the default is the 'shape' rule (test/shape-rule.test.ts).
    expect(DEFAULT_SETTINGS.contourRule).toBe('shape');
    const dims = SECTIONS.map(([, m, n]) => {
      const taps = arcTaps(joukowski(m, n, 0), 400);
      const up = taps.filter((p) => p.surface === 'upper');
      const lo = taps.filter((p) => p.surface === 'lower');
      let t = 0;
      let f = 0;
      for (const u of up) {
        const l = lo.reduce((a, b) => (Math.abs(b.x - u.x) < Math.abs(a.x - u.x) ? b : a));
        t = Math.max(t, u.y - l.y);
        f = Math.max(f, 0.5 * (u.y + l.y));
      }
      return { t, f };
    });
    expect(dims[0].t).toBeGreaterThan(0.09);
    expect(dims[0].t).toBeLessThan(0.1);
    expect(dims[0].f).toBeLessThan(0.001);
    expect(dims[1].t).toBeGreaterThan(0.11);
    expect(dims[1].t).toBeLessThan(0.13);
    expect(dims[2].t).toBeGreaterThan(0.14);
    expect(dims[2].t).toBeLessThan(0.16);
    expect(dims[2].f).toBeGreaterThan(0.035);
    expect(dims[2].f).toBeLessThan(0.045);
  });
  for (const [name, m, n] of SECTIONS) {
    it(`${name}: cl within 0.004 at 24 taps and 0.001 at 48, α −8…12° (issue 9 targets)`, () => {
      expect(worst(m, n, 24, rule).cl).toBeLessThan(0.004);
      expect(worst(m, n, 48, rule).cl).toBeLessThan(0.001);
    });
    it(`${name}: better than linear at 16, 24 and 48 taps in cl and cm_c/4, not worse at 96`, () => {
      for (const count of [16, 24, 48]) {
        const s = worst(m, n, count, rule);
        const l = worst(m, n, count, 'linear');
        expect(s.cl, `${count} taps cl`).toBeLessThan(l.cl);
        expect(s.cm, `${count} taps cm`).toBeLessThan(l.cm);
      }
      const s = worst(m, n, 96, rule);
      const l = worst(m, n, 96, 'linear');
      // Both are at the trailing-edge closure's level here; "not worse" within 1e-4.
      expect(s.cl).toBeLessThan(l.cl + 1e-4);
      expect(s.cm).toBeLessThan(l.cm + 1e-4);
    });
  }
  it('no regression past 12°: α −8…16° at 24 and 48 taps stays within 0.005 and 0.001 in cl', () => {
    for (const [, m, n] of SECTIONS) {
      expect(worst(m, n, 24, rule, 16).cl).toBeLessThan(0.005);
      expect(worst(m, n, 48, rule, 16).cl).toBeLessThan(0.001);
    }
  });
});

describe('the spline on awkward rows', () => {
  const J = joukowski(0.1, 0.04, 4);
  const base = arcTaps(J, 24);
  it('a stagnation tap reading 1.05 (a q error) changes cl by a bounded amount and stays finite', () => {
    const j = base.reduce((b, p, i) => (p.cp > base[b].cp ? i : b), 0);
    const taps = base.map((p, i) => (i === j ? { ...p, cp: 1.05 } : p));
    const r = integrateContour(taps, 4, 'spline');
    expect(Number.isFinite(r.cl)).toBe(true);
    expect(Math.abs(r.cl - J.cl)).toBeLessThan(0.02);
  });
  it('a row without a leading-edge tap (the nearest at x/c ≈ 0.01 on each side) still meets 0.004', () => {
    const taps = base.filter((p) => p.x > 1e-4);
    expect(taps.length).toBe(23);
    expect(Math.abs(integrateContour(taps, 4, 'spline').cl - J.cl)).toBeLessThan(0.004);
  });
  it('a tap right next to the trailing edge (0.03 % of a spacing): no worse than linear at 48 and 96 taps', () => {
    // Rows of the coverage test's kind (test/helpers/exactRun.ts: taps evenly spaced in the
    // circle's angle from a phase), with the phase putting the first tap almost on the trailing
    // edge. Without TE_MERGE (app/contourSpline.ts) the spline's cl error on the first of these is
    // 0.22 against the linear rule's 0.0004 (measured; docs/UNCERTAINTY.md §4).
    for (const [alpha, count] of [[1.6, 96], [7.5, 96], [4, 48], [6, 48]] as const) {
      const K = karmanTrefftz(0.06, 0.04, alpha, 6);
      const taps = Array.from({ length: count }, (_, k) => ({ id: `t${k}`, ...K.at(K.thetaTE + (2 * Math.PI * (k + 3e-4)) / count) }));
      const lin = Math.abs(integrateContour(taps, alpha, 'linear').cl - K.cl);
      const spl = Math.abs(integrateContour(taps, alpha, 'spline').cl - K.cl);
      expect(spl, `α ${alpha}, ${count} taps: spline ${spl}, linear ${lin}`).toBeLessThanOrEqual(lin);
    }
  });
  it('dense exact data: within 1e-5 of exact cl and cm_c/4', () => {
    const K = joukowski(0.1, 0.05, 5);
    const taps = K.taps(2000).map((p, i) => ({ id: `h${i}`, ...p }));
    const r = integrateContour(taps, 5, 'spline');
    expect(Math.abs(r.cl - K.cl)).toBeLessThan(1e-5);
    expect(Math.abs(r.cmc4 - K.cmc4)).toBeLessThan(1e-5);
  });
});
