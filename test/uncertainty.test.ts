import { describe, expect, it } from 'vitest';
import {
  coverageInterval,
  createRng,
  gaussian,
  gumLinear,
  instrumentStd,
  monteCarlo,
  splitMix64,
  xoshiro128ss,
} from '../app/uncertainty';
import { PA_PER_UNIT } from '../app/units';

describe('generators', () => {
  it('xoshiro128** matches the reference C implementation (Blackman & Vigna)', () => {
    // Test vector generated with the public-domain C reference (prng.di.unimi.it/xoshiro128starstar.c)
    // as published in the repository edorfaus/xoshiro-6502, file test-rom/testdata.asm:
    // state {0x964D4A0C, 0xD40AB895, 0xAD7FDECB, 0x3006F0F0} → 0xF1391922, 0x6FE53806, 0xA5BE2840, 0xF510EE70.
    const next = xoshiro128ss(0x964d4a0c, 0xd40ab895, 0xad7fdecb, 0x3006f0f0);
    expect([next(), next(), next(), next()]).toEqual([0xf1391922, 0x6fe53806, 0xa5be2840, 0xf510ee70]);
  });

  it('SplitMix64 from seed 0 gives the known first outputs (Steele, Lea & Flood 2014; from memory)', () => {
    const s = splitMix64(0n);
    expect([s(), s(), s()]).toEqual([0xe220a8397b1dcdafn, 0x6e789e6aa1b965f4n, 0x06c45d188009454fn]);
  });

  it('the all-zero xoshiro state and non-integer seeds are refused', () => {
    expect(() => xoshiro128ss(0, 0, 0, 0)).toThrow(/all-zero/);
    expect(() => createRng(1.5)).toThrow(/seed/);
  });

  it('uniform draws lie in [0, 1) with mean 1/2 and variance 1/12', () => {
    // n = 100 000: sd of the mean √(1/12/n) = 9.1e-4; sd of the sample variance of U(0,1)
    // √((1/80 − 1/144)/n) = 2.4e-4. Tolerances are 4 sd (common practice, no source).
    const rng = createRng(12345);
    const n = 100000;
    let s = 0;
    let s2 = 0;
    let min = 1;
    let max = 0;
    for (let i = 0; i < n; i++) {
      const u = rng();
      s += u;
      s2 += u * u;
      if (u < min) min = u;
      if (u > max) max = u;
    }
    const mean = s / n;
    const v = s2 / n - mean * mean;
    expect(min).toBeGreaterThanOrEqual(0);
    expect(max).toBeLessThan(1);
    expect(Math.abs(mean - 0.5)).toBeLessThan(4 * 9.1e-4);
    expect(Math.abs(v - 1 / 12)).toBeLessThan(4 * 2.4e-4);
  });

  it('Box–Muller deviates have mean 0, variance 1 and 95 % of them within ±1.96', () => {
    // n = 100 000: sd of the mean 1/√n = 3.2e-3; of the variance √(2/n) = 4.5e-3; of the fraction
    // inside ±1.96, √(0.95·0.05/n) = 6.9e-4. Tolerances are 4 sd.
    const rng = createRng(2026);
    const n = 100000;
    let s = 0;
    let s2 = 0;
    let inside = 0;
    for (let i = 0; i < n; i++) {
      const z = gaussian(rng);
      s += z;
      s2 += z * z;
      if (Math.abs(z) <= 1.959964) inside++;
    }
    expect(Math.abs(s / n)).toBeLessThan(4 * 3.2e-3);
    expect(Math.abs(s2 / n - 1)).toBeLessThan(4 * 4.5e-3);
    expect(Math.abs(inside / n - 0.95)).toBeLessThan(4 * 6.9e-4);
  });
});

describe('coverageInterval (JCGM 101:2008 §7.7, probabilistically symmetric)', () => {
  function shuffled(M: number): number[] {
    const rng = createRng(M);
    const a = Array.from({ length: M }, (_, i) => i + 1);
    for (let i = M - 1; i > 0; i--) {
      const j = Math.floor(rng() * (i + 1));
      [a[i], a[j]] = [a[j], a[i]];
    }
    return a;
  }

  it('M = 400: q = 380, r = 10 → [y_(10), y_(390)]', () => {
    const c = coverageInterval(shuffled(400));
    expect([c.lo, c.hi]).toEqual([10, 390]);
    expect(c.value).toBeCloseTo(200.5, 12);
    expect(c.u).toBeCloseTo(Math.sqrt((400 * 401) / 12), 9); // sd of 1..M with n − 1: √(M(M+1)/12)
  });

  it('M = 61: pM = 57.95 → q = 58; (M − q)/2 = 1.5 → r = 2 → [y_(2), y_(60)]', () => {
    const c = coverageInterval(shuffled(61));
    expect([c.lo, c.hi]).toEqual([2, 60]);
  });

  it('M = 1000, p = 0.9: q = 900, r = 50 → [y_(50), y_(950)]', () => {
    const c = coverageInterval(shuffled(1000), 0.9);
    expect([c.lo, c.hi]).toEqual([50, 950]);
  });

  it('non-finite values are left out; too few gives NaN', () => {
    const v = [...shuffled(400), Number.NaN, Number.POSITIVE_INFINITY];
    expect([coverageInterval(v).lo, coverageInterval(v).hi]).toEqual([10, 390]);
    expect(Number.isNaN(coverageInterval([Number.NaN, 1]).value)).toBe(true);
  });
});

describe('instrumentStd and gumLinear', () => {
  it('%FS and offset combine in quadrature and convert to Pa', () => {
    // 0.1 % of 10 inH2O = 0.01 inH2O; √(0.01² + 0.005²) = 0.01118034 inH2O;
    // × 249.0889 Pa/inH2O (NIST SP 811 B.8, conventional) = 2.784903 Pa.
    const u = instrumentStd({ fullScale: 10, percentFullScale: 0.1, offset: 0.005 }, 123, PA_PER_UNIT.inH2O);
    expect(u).toBeCloseTo(2.784903, 5);
  });

  it('gumLinear is JCGM 100:2008 eq. (10) for uncorrelated inputs', () => {
    // √((2·0.1)² + (−3·0.2)² + (0.5·0.4)²) = √(0.04 + 0.36 + 0.04) = √0.44 = 0.6633250
    expect(gumLinear([2, -3, 0.5], [0.1, 0.2, 0.4])).toBeCloseTo(0.663325, 6);
    expect(() => gumLinear([1, 2], [1])).toThrow(/2 sensitivities but 1/);
  });
});

describe('monteCarlo (JCGM 101:2008)', () => {
  const c = [2, -3, 0.5];
  const x = [1.0, 0.4, 10.0];
  const u = [0.1, 0.2, 0.4];
  const yTrue = c[0] * x[0] + c[1] * x[1] + c[2] * x[2]; // 2 − 1.2 + 5 = 5.8
  const uc = gumLinear(c, u); // 0.663325

  it('the draws\' normal deviates (polar Box–Muller, Marsaglia & Bray 1964): N(0, 1), and the two of a pair independent', () => {
    // M = 100 000 (4 sd tolerances): mean sd 1/√M = 3.2e-3; std relative sd 1/√(2(M − 1)) = 2.2e-3;
    // the 2.5 % quantile's sd √(p(1 − p)/M)/φ(1.96) = 4.94e-4/0.05845 = 8.5e-3. Product of the two
    // deviates of one pair: mean 0 and variance E[a²b²] = 1 when independent (sd of its mean 1/√M).
    const M = 100000;
    const r = monteCarlo(M, 4242, (d) => ({ z: d.normal(0, 1), p: d.normal(0, 1) * d.normal(0, 1) }));
    expect(Math.abs(r.z.value)).toBeLessThan(4 * 3.2e-3);
    expect(Math.abs(r.z.u - 1)).toBeLessThan(4 * 2.2e-3);
    expect(Math.abs(r.z.lo + 1.959964)).toBeLessThan(4 * 8.5e-3);
    expect(Math.abs(r.z.hi - 1.959964)).toBeLessThan(4 * 8.5e-3);
    expect(Math.abs(r.p.value)).toBeLessThan(4 * 3.2e-3);
    // var(ab) = 1 for independent a, b; its sampling sd is √((E[a⁴b⁴] − 1)/M) = √(8/M) ≈ 8.9e-3 in u².
    expect(Math.abs(r.p.u * r.p.u - 1)).toBeLessThan(4 * 8.9e-3);
  });

  it('linear model: MC mean, std and 95 % interval match the GUM (JCGM 100) propagation', () => {
    // Tolerances from the sampling distribution of M = 20 000 draws (4 sd each):
    //   mean: sd u_c/√M = 0.0047 → 0.019;   std: relative sd 1/√(2(M − 1)) = 0.5 % → 2 %;
    //   endpoints: sd of the 2.5 % sample quantile √(p(1 − p)/M)/φ(1.96)·u_c = 0.0189 u_c → 0.076 u_c.
    const M = 20000;
    const r = monteCarlo(M, 99, (d) => ({
      y: c[0] * d.normal(x[0], u[0]) + c[1] * d.normal(x[1], u[1]) + c[2] * d.normal(x[2], u[2]),
    }));
    expect(Math.abs(r.y.value - yTrue)).toBeLessThan((4 * uc) / Math.sqrt(M));
    expect(Math.abs(r.y.u / uc - 1)).toBeLessThan(4 / Math.sqrt(2 * (M - 1)));
    expect(Math.abs(r.y.lo - (yTrue - 1.959964 * uc))).toBeLessThan(0.076 * uc);
    expect(Math.abs(r.y.hi - (yTrue + 1.959964 * uc))).toBeLessThan(0.076 * uc);
  });

  it('coverage: 400 synthetic datasets, the 95 % interval covers the true value 364…393 times', () => {
    // Each dataset: observed x_i ~ N(X_i, u_i²); MC (500 draws) around the observations. The count of
    // intervals covering Y = Σ c_i X_i is Binomial(400, 0.95) (mean 380, sd 4.36); its central 99.9 %
    // range, computed exactly from the binomial pmf, is 364…393 (P = 0.99952).
    const data = createRng(777);
    let covers = 0;
    for (let k = 0; k < 400; k++) {
      const obs = x.map((xi, i) => xi + u[i] * gaussian(data));
      const r = monteCarlo(500, 1000 + k, (d) => ({
        y: c[0] * d.normal(obs[0], u[0]) + c[1] * d.normal(obs[1], u[1]) + c[2] * d.normal(obs[2], u[2]),
      }));
      if (r.y.lo <= yTrue && yTrue <= r.y.hi) covers++;
    }
    expect(covers).toBeGreaterThanOrEqual(364);
    expect(covers).toBeLessThanOrEqual(393);
  });

  it('is reproducible with the same seed and changes with another', () => {
    const model = (d: { normal(m: number, s: number): number }) => ({
      a: d.normal(0, 1),
      b: d.normal(5, 2) * d.normal(1, 0.1),
    });
    const r1 = monteCarlo(400, 20261202, model);
    const r2 = monteCarlo(400, 20261202, model);
    const r3 = monteCarlo(400, 20261203, model);
    expect(r2).toEqual(r1);
    expect(r3.a.value).not.toBe(r1.a.value);
  });

  it('draw index, zero std, missing keys and bad draw counts', () => {
    const seen: number[] = [];
    const r = monteCarlo(10, 1, (d) => {
      seen.push(d.index);
      const out: Record<string, number> = { fixed: d.normal(3, 0) };
      if (d.index === 0) out.once = 1;
      return out as Record<'fixed' | 'once', number>;
    });
    expect(seen).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8, 9]);
    expect(r.fixed).toEqual({ value: 3, u: 0, lo: 3, hi: 3 });
    expect(Number.isNaN(r.once.value)).toBe(true); // only 1 finite value of 10
    expect(() => monteCarlo(1, 1, () => ({ y: 0 }))).toThrow(/draws/);
  });
});
