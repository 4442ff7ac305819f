import { describe, expect, it } from 'vitest';
import { spanLoading } from '../app/spanwise';

const row = (name: string, z: number, cl: number) => ({ row: name, z, cl });

describe('spanLoading (trapezoidal rule; common practice, no source)', () => {
  const chord = 0.25;
  const span = 0.6;

  it('is exact for a linear cl(z), with the end values held to the span edges', () => {
    // cl(z) = 0.8 + 0.5 z between the rows (trapezoid exact for linear integrands); outside the
    // outermost rows cl is held at their values:
    // CL = (1/b)[∫_{z1}^{zn} cl dz + cl(z1)(z1 + b/2) + cl(zn)(b/2 − zn)].
    const cl = (z: number) => 0.8 + 0.5 * z;
    const zs = [-0.2, -0.05, 0, 0.12];
    const r = spanLoading(
      zs.map((z, i) => row(String.fromCharCode(65 + i), z, cl(z))).reverse(),
      chord,
      span,
      1,
    );
    const [z1, zn] = [-0.2, 0.12];
    const inner = 0.8 * (zn - z1) + 0.25 * (zn * zn - z1 * z1);
    const expected = (inner + cl(z1) * (z1 + span / 2) + cl(zn) * (span / 2 - zn)) / span;
    expect(r.CL).toBeCloseTo(expected, 12);
    expect(r.z).toEqual(zs);
    expect(r.cl.map((c, i) => c - cl(zs[i])).every((d) => Math.abs(d) < 1e-15)).toBe(true);
    expect(r.spread).toBeCloseTo(cl(0.12) - cl(-0.2), 12);
  });

  it('converges to the exact lift of a parabolic loading within the trapezoid error bound', () => {
    // cl(z) = 1 − 2 z² over rows spanning the whole span: exact CL = 1 − 2·b²/12; trapezoid error
    // ≤ (b h² / 12)·max|cl''| / b = h²·4/12 (standard bound, e.g. Press et al., Numerical Recipes §4.1).
    const n = 13;
    const h = span / (n - 1);
    const rows = Array.from({ length: n }, (_, i) => {
      const z = -span / 2 + i * h;
      return row(`R${i}`, z, 1 - 2 * z * z);
    });
    const r = spanLoading(rows, chord, span, 1);
    const exact = 1 - (2 * span * span) / 12;
    expect(Math.abs(r.CL - exact)).toBeLessThanOrEqual((h * h * 4) / 12 + 1e-12);
    expect(Math.abs(r.CL - exact)).toBeGreaterThan(0); // the rule is not exact for a parabola
  });

  it('returns the row value for a single row', () => {
    const r = spanLoading([row('C', 0, 0.93)], chord, span, 0.05);
    expect(r.CL).toBeCloseTo(0.93, 12);
    expect(r.spread).toBe(0);
    expect(r.flag).toBeNull();
  });

  it('warns when the spread exceeds the tolerance, with the numbers in the reason', () => {
    const rows = [row('A', -0.15, 0.9), row('C', 0, 0.96), row('B', 0.15, 0.88)];
    const ok = spanLoading(rows, chord, span, 0.1);
    expect(ok.flag).toBeNull();
    const bad = spanLoading(rows, chord, span, 0.05);
    expect(bad.flag?.code).toBe('span-spread');
    expect(bad.flag?.severity).toBe('warn');
    expect(bad.flag?.reason).toContain('0.080');
    expect(bad.flag?.reason).toContain('row B');
    expect(bad.flag?.reason).toContain('row C');
    expect(bad.flag?.reason).toContain('0.050');
  });

  it('refuses rows outside the span and empty input', () => {
    expect(() => spanLoading([], chord, span, 0.05)).toThrow(/no spanwise rows/);
    expect(() => spanLoading([row('E', 0.4, 1)], chord, span, 0.05)).toThrow(/row E.*outside/);
  });
});
