import { describe, expect, it } from 'vitest';
import { linearFit, sessionStats, type SessionPoint } from '../app/session';

// These tests check the statistics against invented polars with known parameters (synthetic data,
// no physics source): they verify the arithmetic and the documented rules of app/session.ts, not the
// aerodynamics. No plausibility claim about real sections is made here.

describe('linearFit (ordinary least squares)', () => {
  it('matches a hand-worked example', () => {
    // x = 0,1,2; y = 0,1,3: x̄ = 1, ȳ = 4/3, Sxy = 3, Sxx = 2 → slope 1.5, intercept −1/6;
    // SS_res = 1/6, SS_tot = 14/3 → r² = 27/28.
    const f = linearFit([0, 1, 2], [0, 1, 3]);
    expect(f.slope).toBeCloseTo(1.5, 14);
    expect(f.intercept).toBeCloseTo(-1 / 6, 14);
    expect(f.r2).toBeCloseTo(27 / 28, 14);
  });
  it('is exact on a line and refuses degenerate input', () => {
    const f = linearFit([1, 2, 3, 4], [2.5, 4.5, 6.5, 8.5]);
    expect(f.slope).toBeCloseTo(2, 14);
    expect(f.intercept).toBeCloseTo(0.5, 14);
    expect(f.r2).toBeCloseTo(1, 14);
    expect(() => linearFit([1], [1])).toThrow(/at least 2/);
    expect(() => linearFit([1, 1], [1, 2])).toThrow(/equal/);
  });
});

// Invented polar: attached cl = a(α − α0) − k·max(0, α − αb)², stalled (up-sweep above 14°) 0.4 lower.
const a = 0.104, alpha0 = -3.8, alphaB = 8, k = 0.012;
const base = (al: number): number => a * (al - alpha0) - k * Math.max(0, al - alphaB) ** 2;
const clUp = (al: number): number => (al <= 14 ? base(al) : base(al) - 0.4);
// Down-sweep stays separated down to 11° (a hysteresis loop), reattached from 10° down.
const clDown = (al: number): number =>
  al >= 15 ? clUp(al) + 0.02 * (al - 14) - 0.02 : al >= 11 ? base(al) - 0.4 - 0.02 * (14 - al) : base(al);
const cdOf = (cl: number, stalled: boolean): number => 0.0065 + 0.006 * (cl - 0.4) ** 2 + (stalled ? 0.05 : 0);

const t0 = Date.parse('2026-11-18T09:00:00Z');
const at = (i: number): string => new Date(t0 + i * 4 * 60_000).toISOString();

function polar(): SessionPoint[] {
  const pts: SessionPoint[] = [];
  let i = 0;
  for (let al = -6; al <= 18; al++) {
    const cl = clUp(al);
    pts.push({ run: 100 + i, alphaDeg: al, cl, cd: cdOf(cl, al > 14), cmc4: -0.1, time: at(i) });
    i++;
  }
  for (let al = 17; al >= 6; al--) {
    const cl = clDown(al);
    pts.push({ run: 100 + i, alphaDeg: al, cl, cd: cdOf(cl, al >= 11), cmc4: -0.1, time: at(i) });
    i++;
  }
  return pts;
}

/** Deterministic shuffle (so the test does not depend on input order). */
function shuffled<T>(xs: T[]): T[] {
  const out = [...xs];
  let s = 12345;
  for (let i = out.length - 1; i > 0; i--) {
    s = (s * 1103515245 + 12345) % 2147483648;
    const j = s % (i + 1);
    [out[i], out[j]] = [out[j], out[i]];
  }
  return out;
}

describe('sessionStats — invented polar with known parameters', () => {
  const pts = polar();
  const st = sessionStats(shuffled(pts));

  it('finds the linear range, lift slope and zero-lift angle', () => {
    expect(st.linearRange[0]).toBe(-6);
    // The range may run a little past αb = 8° (departure k(α−8)² is 0.012 at 9°) but not into the
    // clearly curved part (departure ≥ 0.1 from 11°).
    expect(st.linearRange[1]).toBeGreaterThanOrEqual(8);
    expect(st.linearRange[1]).toBeLessThanOrEqual(10);
    expect(Math.abs(st.liftSlopePerDeg / a - 1)).toBeLessThan(0.02);
    expect(Math.abs(st.alphaL0Deg - alpha0)).toBeLessThan(0.1);
  });

  it('finds cl_max, cd_min and (l/d)_max', () => {
    // cl_max of the model on whole degrees: d(base)/dα = 0 at α = 8 + a/(2k) = 12.33° → 12°.
    expect(st.alphaClMaxDeg).toBe(12);
    expect(st.clMax).toBeCloseTo(base(12), 12);
    // cd_min where cl is nearest 0.4: α = α0 + 0.4/a = 0.05° → the point at 0°.
    expect(st.cdMin).toBeCloseTo(cdOf(base(0), false), 14);
    expect(st.clAtCdMin).toBeCloseTo(base(0), 14);
    // (l/d)_max by brute force over the invented model at the measured α's.
    let best = -Infinity, bestAl = NaN;
    for (const p of pts) if (p.cl / p.cd > best) { best = p.cl / p.cd; bestAl = p.alphaDeg; }
    expect(st.ldMax).toBeCloseTo(best, 10);
    expect(st.alphaLdMaxDeg).toBe(bestAl);
  });

  it('measures the hysteresis loop', () => {
    // Up attached, down separated at 11–14°: Δ = 0.4 + 0.02(14 − α), largest (0.46) at 11°.
    expect(st.hysteresis).not.toBeNull();
    expect(st.hysteresis!.maxDeltaCl).toBeCloseTo(0.46, 12);
    expect(st.hysteresis!.alphaDeg).toBe(11);
    expect(st.repeatSpread).toBeNull(); // no α repeated in one direction
  });

  it('gives the same answer whatever the input order (sweeps come from the times)', () => {
    expect(sessionStats(pts)).toEqual(st);
  });
});

describe('sessionStats — sweep rules', () => {
  const mk = (alphas: number[], cl: (al: number, i: number) => number): SessionPoint[] =>
    alphas.map((al, i) => ({ run: i + 1, alphaDeg: al, cl: cl(al, i), cd: 0.01, cmc4: 0, time: at(i) }));

  it('interpolates the up-sweep at down-sweep angles between its points', () => {
    // Up: cl = 0.1(α + 4) at even α to 12° (linear, so interpolation is exact), stalled at 14°.
    // Down at odd α: 0.3 − 0.01(11 − α) below the up line → largest 0.30 at 11°; at 13° the down
    // value 1.2 is 0.1 below the up chord between 12° (1.6) and 14° (1.0).
    const up = [-4, -2, 0, 2, 4, 6, 8, 10, 12, 14];
    const down = [13, 11, 9, 7, 5];
    const pts = mk([...up, ...down], (al, i) =>
      i < up.length ? (al <= 12 ? 0.1 * (al + 4) : 1.0) : al === 13 ? 1.2 : 0.1 * (al + 4) - 0.3 + 0.01 * (11 - al));
    const st = sessionStats(pts);
    expect(st.hysteresis!.maxDeltaCl).toBeCloseTo(0.3, 12);
    expect(st.hysteresis!.alphaDeg).toBe(11);
    expect(st.liftSlopePerDeg).toBeCloseTo(0.1, 12);
    expect(st.alphaL0Deg).toBeCloseTo(-4, 10);
    expect(st.linearRange).toEqual([-4, 12]);
  });

  it('has no hysteresis without a down-sweep; a lone return to α is a repeat, not a sweep', () => {
    // Up to 6°, back to 0° once (check point), on up to 12°.
    const alphas = [-2, 0, 2, 4, 6, 0, 8, 10, 12];
    const pts = mk(alphas, (al, i) => 0.1 * (al + 3) + (i === 5 ? 0.004 : 0));
    const st = sessionStats(pts);
    expect(st.hysteresis).toBeNull();
    expect(st.linearRange).toEqual([-2, 12]);
    expect(st.liftSlopePerDeg).toBeCloseTo(0.1, 3);
    // The return point is in the other direction from the first 0° point: no same-direction repeat.
    expect(st.repeatSpread).toBeNull();
  });

  it('takes the repeat spread among same-α runs in one sweep direction', () => {
    // 4° taken three times in a row during the up-sweep; 8° twice (once up, once down: not a repeat).
    const alphas = [0, 2, 4, 4.02, 3.99, 6, 8, 10, 8, 6];
    const extra = [0, 0, 0, 0.012, -0.006, 0, 0, 0, 0.05, 0];
    const pts = mk(alphas, (al, i) => 0.1 * al + extra[i]);
    const st = sessionStats(pts);
    // Group at 3.99/4/4.02°: cl 0.393, 0.400, 0.414 (the small α scatter counts too).
    expect(st.repeatSpread).toBeCloseTo((0.1 * 4.02 + 0.012) - (0.1 * 3.99 - 0.006), 12);
  });

  it('returns NaN statistics for an empty session and rejects unreadable times', () => {
    const st = sessionStats([]);
    expect(st.liftSlopePerDeg).toBeNaN();
    expect(st.clMax).toBeNaN();
    expect(st.hysteresis).toBeNull();
    expect(st.repeatSpread).toBeNull();
    expect(() =>
      sessionStats([{ run: 7, alphaDeg: 0, cl: 0, cd: 0.01, cmc4: 0, time: 'yesterday' }]),
    ).toThrow(/run 7 .*unreadable time/);
  });

  it('ignores missing drag (NaN cd) for cd_min and (l/d)_max', () => {
    const pts = mk([0, 2, 4], (al) => 0.1 * al).map((p, i) => ({ ...p, cd: i === 1 ? NaN : 0.01 + 0.001 * i }));
    const st = sessionStats(pts);
    expect(st.cdMin).toBeCloseTo(0.01, 14);
    expect(st.ldMax).toBeCloseTo(0.4 / 0.012, 10);
    expect(st.alphaLdMaxDeg).toBe(4);
  });
});
