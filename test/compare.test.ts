// Polar differences between sessions (app/compare.ts): piecewise-linear interpolation in the
// reference session (common practice, no source). The polars here are made-up exact shapes, so
// the expected differences are known in closed form; no published data are involved.
import { describe, expect, it } from 'vitest';
import { attachedBranch, interpolate, monotoneTable, polarDifferences, type ComparePoint } from '../app/compare';

// A lift curve of slope 0.1/° through α_L0 = −4°, stalling above 12°; a parabolic drag polar.
const clOf = (a: number) => (a <= 12 ? 0.1 * (a + 4) : 1.6 - 0.08 * (a - 12));
const cdOf = (cl: number) => 0.008 + 0.01 * cl * cl;
const polar = (alphas: number[], dCl = 0, dCd = 0, run0 = 1): ComparePoint[] =>
  alphas.map((a, i) => ({ run: run0 + i, alphaDeg: a, cl: clOf(a) + dCl, cd: cdOf(clOf(a) + dCl) + dCd + (a > 12 ? 0.05 : 0) }));

describe('polar differences', () => {
  it('interpolates linearly inside the table, never outside it; repeats are averaged', () => {
    const t = monotoneTable([[2, 0.6], [0, 0.4], [2, 0.62], [NaN, 1], [4, 0.8]]);
    expect(t).toEqual([[0, 0.4], [2, 0.61], [4, 0.8]]);
    expect(interpolate(t, 1)).toBeCloseTo(0.505, 12);
    expect(interpolate(t, 3)).toBeCloseTo(0.705, 12);
    expect(interpolate(t, 4)).toBeCloseTo(0.8, 12);
    expect(interpolate(t, -0.01)).toBeNull();
    expect(interpolate(t, 4.01)).toBeNull();
    expect(interpolate([], 1)).toBeNull();
  });

  it('Δcl at matched α is exact on a straight lift curve, and absent beyond the reference range', () => {
    const ref = polar([-4, -2, 0, 2, 4, 6, 8]);
    const other = polar([-3, 1, 5, 7, 9], 0.05, 0, 100);
    const d = polarDifferences(ref, other);
    expect(d.map((x) => x.run)).toEqual([100, 101, 102, 103, 104]);
    for (const x of d.slice(0, 4)) expect(x.dCl!).toBeCloseTo(0.05, 12);
    expect(d[4].dCl).toBeNull(); // α = 9° is beyond the reference's 8°
  });

  it('Δcd at matched cl on the attached branches: within the interpolation error of a parabola', () => {
    const ref = polar([-4, -2, 0, 2, 4, 6, 8, 10, 12, 14, 16]);
    const other = polar([-3, -1, 1, 3, 5, 7, 9, 11, 15], 0, 0.001, 200);
    const d = polarDifferences(ref, other);
    // linear interpolation of cd = a + b·cl² between nodes Δcl = 0.2 apart errs by at most b·Δcl²/4
    const bound = 0.01 * 0.2 * 0.2 / 4;
    for (const x of d.filter((p) => p.alphaDeg < 12)) {
      expect(x.dCd).not.toBeNull();
      expect(Math.abs(x.dCd! - 0.001)).toBeLessThanOrEqual(bound + 1e-15);
    }
    // the stalled point (15°) is past the other session's cl_max: no Δcd, though its cl lies inside
    // the reference's attached cl range
    expect(d.find((p) => p.alphaDeg === 15)!.dCd).toBeNull();
    expect(attachedBranch(ref).map((p) => p.alphaDeg).at(-1)).toBe(12);
  });
});
