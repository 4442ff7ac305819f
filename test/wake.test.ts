import { describe, expect, it } from 'vitest';
import { interpolateStatic, jonesDrag } from '../app/wake';

// Check case: Gaussian wake (REDUCTION.md §11.4). Total-pressure profile
//   cpt(y) = (H − p∞)/q∞ = 1 − D·exp(−(y − y0)²/(2σ²)),
// a smooth analytic profile with known centre y0 and known 5 %-of-peak width 2σ√(2 ln 20).
// Reference cd: composite Simpson with 10,000 intervals of the analytic Jones integrand (Jones, ARC
// R&M 1688; Barlow, Rae & Pope 1999 ch. 9, from memory) — written out independently in this file.
// The Gaussian shape and its parameters are invented test data, no source.

const q = 550; // Pa
const pInf = 120; // Pa, differential against the common reference
const chord = 0.25; // m
const D = 0.2; // peak deficit
const sigma = 0.006; // m

const cptOf = (y: number, y0: number): number => 1 - D * Math.exp(-((y - y0) ** 2) / (2 * sigma * sigma));

function simpson(g: (y: number) => number, a: number, b: number, n = 10_000): number {
  const h = (b - a) / n;
  let s = g(a) + g(b);
  for (let i = 1; i < n; i++) s += (i % 2 ? 4 : 2) * g(a + i * h);
  return (s * h) / 3;
}

/** 40 total probes evenly over ±3σ about the rake centre 0. */
function rake(y0: number, ps?: (y: number) => number) {
  return Array.from({ length: 40 }, (_, i) => {
    const y = -3 * sigma + (6 * sigma * i) / 39;
    return { y, H: pInf + q * cptOf(y, y0), ...(ps ? { ps: ps(y) } : {}) };
  });
}

// Jones integrand without statics (p_w = p∞): √cpt·(1 − √cpt).
const jonesFarWake = (y0: number) => (y: number) => {
  const b = cptOf(y, y0);
  return Math.sqrt(b) * (1 - Math.sqrt(b));
};

describe('jonesDrag — Gaussian wake', () => {
  it('matches high-accuracy quadrature of the same integrand over the rake span', () => {
    const r = jonesDrag({ probes: rake(0), pInf, qInf: q, chord, edgeTol: 0.01 });
    const ref = (2 / chord) * simpson(jonesFarWake(0), -3 * sigma, 3 * sigma);
    // Trapezoid on 40 probes of a smooth profile: expected error ~1e-4 relative; brief asks 0.5 %.
    expect(Math.abs(r.cd / ref - 1)).toBeLessThan(1e-3);
    expect(r.staticUsed).toBe(false);
    expect(r.captured).toBe(true);
    expect(r.clampedRadicands).toBe(0);
  });

  it('is within 0.5 % of the whole wake\'s drag (infinite-line integral) when the rake spans ±3σ', () => {
    const r = jonesDrag({ probes: rake(0), pInf, qInf: q, chord, edgeTol: 0.01 });
    // The tails beyond ±3σ hold ≈ erfc(3/√2) ≈ 0.27 % of the integral (Gaussian tail; the integrand
    // is ≈ D·g/2 for small deficit), so the truncated rake reads low by about that much.
    const whole = (2 / chord) * simpson(jonesFarWake(0), -12 * sigma, 12 * sigma);
    expect(r.cd).toBeLessThan(whole);
    expect(Math.abs(r.cd / whole - 1)).toBeLessThan(0.005);
  });

  it('recovers the wake centre and the 5 %-of-peak width', () => {
    const y0 = 0.3 * sigma;
    const r = jonesDrag({ probes: rake(y0), pInf, qInf: q, chord, edgeTol: 0.01 });
    // Centroid of a Gaussian = y0; the asymmetric truncation of the rake biases it slightly.
    expect(Math.abs(r.centre - y0)).toBeLessThan(0.02 * sigma);
    // exp(−w²/(2σ²)) = 0.05 at half width w = σ√(2 ln 20).
    const width = 2 * sigma * Math.sqrt(2 * Math.log(20));
    expect(Math.abs(r.width / width - 1)).toBeLessThan(0.01);
    expect(r.profile).toHaveLength(40);
    expect(r.edgeCpt[0]).toBeCloseTo(cptOf(-3 * sigma, y0), 12);
    expect(r.edgeCpt[1]).toBeCloseTo(cptOf(3 * sigma, y0), 12);
  });

  it('does not depend on probe order', () => {
    const probes = rake(0);
    const a = jonesDrag({ probes, pInf, qInf: q, chord, edgeTol: 0.01 });
    const b = jonesDrag({ probes: [...probes].reverse(), pInf, qInf: q, chord, edgeTol: 0.01 });
    expect(b.cd).toBe(a.cd);
    expect(b.profile[0].y).toBeLessThan(b.profile[1].y);
  });

  it('reports a wake that runs off the rake as not captured', () => {
    // Wake centred on the upper rake edge: that edge sees the full deficit.
    const r = jonesDrag({ probes: rake(3 * sigma), pInf, qInf: q, chord, edgeTol: 0.01 });
    expect(r.captured).toBe(false);
    expect(r.edgeCpt[1]).toBeCloseTo(1 - D, 12);
    expect(Math.abs(r.edgeCpt[0] - 1)).toBeLessThan(0.01);
  });

  it('uses the local static when the rake has static probes, p∞ otherwise', () => {
    // Near-wake static depression, linear between three static probes (invented test data):
    // p_w − p∞ = −q·(0.04 − 0.03·|y|/(3σ)) inside ±3σ.
    const statics = [
      { y: -3 * sigma, p: pInf - 0.01 * q },
      { y: 0, p: pInf - 0.04 * q },
      { y: 3 * sigma, p: pInf - 0.01 * q },
    ];
    const pwExact = (y: number) => pInf - q * (0.04 - (0.03 * Math.min(Math.abs(y), 3 * sigma)) / (3 * sigma));
    const withStatics = jonesDrag({
      probes: rake(0, (y) => interpolateStatic(statics, y)),
      pInf, qInf: q, chord, edgeTol: 0.01,
    });
    const refStatic = (2 / chord) * simpson((y) => {
      const H = pInf + q * cptOf(y, 0);
      return Math.sqrt((H - pwExact(y)) / q) * (1 - Math.sqrt((H - pInf) / q));
    }, -3 * sigma, 3 * sigma);
    const refFar = (2 / chord) * simpson(jonesFarWake(0), -3 * sigma, 3 * sigma);
    // The two branches differ by ≈ 2 %, far more than the 0.1 % accuracy asserted.
    expect(Math.abs(refStatic / refFar - 1)).toBeGreaterThan(0.01);
    expect(withStatics.staticUsed).toBe(true);
    expect(Math.abs(withStatics.cd / refStatic - 1)).toBeLessThan(1e-3);
    const without = jonesDrag({ probes: rake(0), pInf, qInf: q, chord, edgeTol: 0.01 });
    expect(without.staticUsed).toBe(false);
    expect(Math.abs(without.cd / refFar - 1)).toBeLessThan(1e-3);
  });

  it('clamps and counts negative radicands', () => {
    const probes = rake(0);
    probes[20] = { y: probes[20].y, H: pInf - 0.1 * q }; // total below p∞: a bad probe
    const r = jonesDrag({ probes, pInf, qInf: q, chord, edgeTol: 0.01 });
    expect(r.clampedRadicands).toBe(2);
    expect(Number.isFinite(r.cd)).toBe(true);
  });

  it('rejects bad input with a clear message', () => {
    expect(() => jonesDrag({ probes: rake(0).slice(0, 1), pInf, qInf: q, chord, edgeTol: 0.01 })).toThrow(/at least 2/);
    expect(() => jonesDrag({ probes: rake(0), pInf, qInf: 0, chord, edgeTol: 0.01 })).toThrow(/q∞/);
    const mixed = rake(0);
    mixed[3] = { ...mixed[3], ps: pInf };
    expect(() => jonesDrag({ probes: mixed, pInf, qInf: q, chord, edgeTol: 0.01 })).toThrow(/all or none/);
  });
});

describe('interpolateStatic', () => {
  const statics = [{ y: 0.02, p: 10 }, { y: -0.02, p: 30 }];
  it('is linear between probes and constant beyond the ends', () => {
    expect(interpolateStatic(statics, 0)).toBeCloseTo(20, 12);
    expect(interpolateStatic(statics, 0.01)).toBeCloseTo(15, 12);
    expect(interpolateStatic(statics, 0.5)).toBe(10);
    expect(interpolateStatic(statics, -0.5)).toBe(30);
  });
  it('refuses an empty list', () => {
    expect(() => interpolateStatic([], 0)).toThrow(/no static probes/);
  });
});
