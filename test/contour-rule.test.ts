// Contour rules (issue 9 part 5) against exact potential flow: Joukowski sections from
// test/helpers/joukowski.ts (Milne-Thomson, Theoretical Hydrodynamics, ch. 7; Katz & Plotkin,
// Low-Speed Aerodynamics, 2nd ed., §6.5, memory; REDUCTION.md §11 case 2), rows of taps cosine-
// spaced in arc length with a 3 % gap at the trailing edge (arcTaps). The full table is printed by
// scripts/contour-sweep.ts and kept in docs/TAP-JUDGEMENT.md. The bounds here are the measured
// worst cases rounded up, so a change that makes a rule worse fails.
// The targets (|Δcl| ≤ 0.004 at 24 taps, ≤ 0.001 at 48 taps, α −8…12°) are met by neither
// rule at 24 taps (linear 0.0121, spline 0.0091 at worst over the sections): 'linear' stays the
// default; the 48-tap target is asserted for the spline, which meets it.
import { describe, expect, it } from 'vitest';
import { integrateContour } from '../app/surface';
import { DEFAULT_SETTINGS } from '../app/types';
import { arcTaps, joukowski } from './helpers/joukowski';

/** Joukowski m, n: about 9 %, 12 % and 15 % thick, 0–4 % camber. */
const SECTIONS: [number, number][] = [[0.075, 0], [0.1, 0.04], [0.125, 0.08]];

const ROWS = new Map<string, { J: ReturnType<typeof joukowski>; taps: ReturnType<typeof arcTaps> }>();
function rowOf(m: number, n: number, a: number, count: number) {
  const key = `${m} ${n} ${a} ${count}`;
  let r = ROWS.get(key);
  if (!r) {
    const J = joukowski(m, n, a);
    r = { J, taps: arcTaps(J, count) };
    ROWS.set(key, r);
  }
  return r;
}

function worst(count: number, rule: 'linear' | 'spline', alphaHi = 12) {
  let cl = 0;
  let cm = 0;
  for (const [m, n] of SECTIONS) {
    for (let a = -8; a <= alphaHi; a += 2) {
      const { J, taps } = rowOf(m, n, a, count);
      const r = integrateContour(taps, a, rule);
      expect(r.rule).toBe(rule);
      cl = Math.max(cl, Math.abs(r.cl - J.cl));
      cm = Math.max(cm, Math.abs(r.cmc4 - J.cmc4));
    }
  }
  return { cl, cm };
}

describe('contour rules on exact Joukowski sections (9–15 % thick, 0–4 % camber)', () => {
  it('the default rule is linear (the spline misses the 24-tap target)', () => {
    expect(DEFAULT_SETTINGS.contourRule).toBe('linear');
  });
  it('the spline is better than linear at 16, 24, 48 and 96 taps in worst |Δcl| and |Δcm|', () => {
    for (const n of [16, 24, 48, 96]) {
      const l = worst(n, 'linear');
      const s = worst(n, 'spline');
      expect(s.cl, `${n} taps cl`).toBeLessThan(l.cl);
      expect(s.cm, `${n} taps cm`).toBeLessThan(l.cm);
    }
  });
  it('the spline meets the 48-tap target (0.001 in cl) and stays within its measured bounds', () => {
    expect(worst(48, 'spline').cl).toBeLessThan(0.001);
    expect(worst(48, 'spline').cm).toBeLessThan(0.0005);
    expect(worst(24, 'spline').cl).toBeLessThan(0.01);
    expect(worst(96, 'spline').cl).toBeLessThan(0.0005);
  });
  it('linear stays within its measured bounds (worst |Δcl| 24 taps 0.012, 48 taps 0.004)', () => {
    expect(worst(24, 'linear').cl).toBeLessThan(0.013);
    expect(worst(48, 'linear').cl).toBeLessThan(0.0045);
  });
});
