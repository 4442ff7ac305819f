import { describe, expect, it } from 'vitest';
import {
  SIGNATURE_LIMITS, cothMinusInv, csch2MinusInv2, cschMinusInv, fitSignature, imageVelocity,
  signatureInterference, signaturePlan, vortexShiftKernel, wallBasis,
} from '../app/wallSignature';
import { wallCorrections } from '../app/corrections';

// Checks of the wall-pressure-signature method (app/wallSignature.ts, docs/WALL-CORRECTIONS.md)
// against the method of images summed term by term here (Milne-Thomson, Theoretical Hydrodynamics,
// images of a singularity between two parallel walls — the sums below are written independently of
// the module's closed forms). Walls at y = ±h/2, model at the origin (the quarter chord), flow +x.
// The geometry is the invented scenario's (HAL No. 2 tunnel: h = 0.9 m, c = 0.25 m).

const h = 0.9;
const c = 0.25;
const V = 40;

type Kind = 'vortex' | 'source' | 'doublet';

/** Velocity at (x, y) of ONE singularity of strength k at (a, b). Vortex clockwise-positive; source
 *  volume flux k; doublet W = k/(2π(z − z0)) (axis upstream: a body). */
function one(kind: Kind, k: number, a: number, b: number, x: number, y: number): [number, number] {
  const dx = x - a;
  const dy = y - b;
  const r2 = dx * dx + dy * dy;
  switch (kind) {
    case 'vortex':
      return [(k * dy) / (2 * Math.PI * r2), (-k * dx) / (2 * Math.PI * r2)];
    case 'source':
      return [(k * dx) / (2 * Math.PI * r2), (k * dy) / (2 * Math.PI * r2)];
    case 'doublet':
      // u − iv = −k/(2π (z − z0)²)
      return [(-k * (dx * dx - dy * dy)) / (2 * Math.PI * r2 * r2), (-k * dx * dy) / (Math.PI * r2 * r2)];
  }
}

/** Images of a singularity at (a, 0) between the walls: at (a, n h), strength (−1)ⁿk for a vortex,
 *  k for a source or a doublet; n from −N to N (n = 0 left out when `imagesOnly`), partial sums for
 *  N and N + 1 averaged (cancels the alternating tail of the vortex row). The source row's u decays
 *  like 1/n²: the tail beyond N is added as k·dx/(π h² (N + ½)) (∫ of the far terms). */
function imageSum(kind: Kind, k: number, a: number, x: number, y: number, imagesOnly: boolean, N = 4000): [number, number] {
  const partial = (M: number): [number, number] => {
    let u = 0;
    let v = 0;
    for (let n = -M; n <= M; n++) {
      if (imagesOnly && n === 0) continue;
      const kn = kind === 'vortex' && n % 2 !== 0 ? -k : k;
      const [du, dv] = one(kind, kn, a, n * h, x, y);
      u += du;
      v += dv;
    }
    if (kind === 'source') u += (k * (x - a)) / (Math.PI * h * h * (M + 0.5));
    if (kind === 'doublet') u += k / (Math.PI * h * h * (M + 0.5));
    return [u, v];
  };
  const p = partial(N);
  const q = partial(N + 1);
  return [(p[0] + q[0]) / 2, (p[1] + q[1]) / 2];
}

/** Wall Cp of a set of singularities at the quarter chord by exact Bernoulli, Cp = 1 − |V|²/V∞²,
 *  with the uniform Q/2h that keeps the stream far upstream at V∞ (mass conservation: half of a
 *  source's flux goes upstream). */
function wallCp(strengths: Partial<Record<Kind, number>>, xs: number[], side: 1 | -1, N = 4000): number[] {
  return xs.map((x) => {
    let u = V + (strengths.source ?? 0) / (2 * h);
    let v = 0;
    for (const kind of ['vortex', 'source', 'doublet'] as const) {
      const k = strengths[kind];
      if (!k) continue;
      const [du, dv] = imageSum(kind, k, 0, x, (side * h) / 2, false, N);
      u += du;
      v += dv;
    }
    return 1 - (u * u + v * v) / (V * V);
  });
}

const evenly = (a: number, b: number, n: number): number[] => Array.from({ length: n }, (_, i) => a + ((b - a) * i) / (n - 1));

/** Standard normal deviates (Box–Muller) from a small seeded generator (mulberry32). */
function normals(seed: number): () => number {
  let t = seed >>> 0;
  const uni = (): number => {
    t = (t + 0x6d2b79f5) >>> 0;
    let r = Math.imul(t ^ (t >>> 15), 1 | t);
    r = (r + Math.imul(r ^ (r >>> 7), 61 | r)) ^ r;
    return ((r ^ (r >>> 14)) >>> 0) / 4294967296;
  };
  return () => Math.sqrt(-2 * Math.log(1 - uni())) * Math.cos(2 * Math.PI * uni());
}

describe('closed forms against image sums (method of images, summed here)', () => {
  it('wall signatures of a vortex, a source and a doublet', () => {
    const G = 3; // m²/s
    const Q = 0.2; // m²/s
    const mu = 0.05; // m³/s
    for (const x of [-1.4, -0.5, 0, 0.13, 0.7, 1.6]) {
      for (const side of [1, -1] as const) {
        const y = (side * h) / 2;
        const [uv, vv] = imageSum('vortex', G, 0, x, y, false);
        expect(uv).toBeCloseTo(G / h * V / V * wallBasis('vortex', x, 0, h, side) * 1, 6);
        expect(Math.abs(vv)).toBeLessThan(1e-6);
        // Source: the row plus the uniform Q/2h (far-upstream stream at V).
        const [us, vs] = imageSum('source', Q, 0, x, y, false);
        expect(us + Q / (2 * h)).toBeCloseTo((Q / h) * (wallBasis('source', x, 0, h, side) + 0.5), 6);
        expect(Math.abs(vs)).toBeLessThan(1e-5);
        const [ud, vd] = imageSum('doublet', mu, 0, x, y, false);
        expect(ud).toBeCloseTo((mu / (h * h)) * wallBasis('doublet', x, 0, h, side), 7);
        expect(Math.abs(vd)).toBeLessThan(1e-7);
      }
    }
  });

  it("the images' velocity on the chord line (own singularity left out)", () => {
    for (const x of [0, -c / 4, c / 4, (3 * c) / 4, 0.4]) {
      const [, vv] = imageSum('vortex', 1, 0, x, 0, true);
      expect(vv).toBeCloseTo((1 / h) * imageVelocity('vortex', x, 0, h)[1], 8);
      const [us] = imageSum('source', 1, 0, x, 0, true);
      expect(us).toBeCloseTo((1 / h) * imageVelocity('source', x, 0, h)[0], 6);
      const [ud] = imageSum('doublet', 1, 0, x, 0, true);
      expect(ud).toBeCloseTo((1 / (h * h)) * imageVelocity('doublet', x, 0, h)[0], 7);
    }
  });

  it('the shift terms are the x0-derivatives of the vortex and doublet rows (central differences)', () => {
    const d = 1e-4;
    for (const x of [-1.1, -0.3, 0.2, 0.9]) {
      for (const side of [1, -1] as const) {
        const y = (side * h) / 2;
        const dv = (imageSum('vortex', 1, d, x, y, false)[0] - imageSum('vortex', 1, -d, x, y, false)[0]) / (2 * d);
        expect(dv).toBeCloseTo((1 / (h * h)) * wallBasis('vortexShift', x, 0, h, side), 4);
        const dd = (imageSum('doublet', 1, d, x, y, false)[0] - imageSum('doublet', 1, -d, x, y, false)[0]) / (2 * d);
        expect(dd).toBeCloseTo((1 / h ** 3) * wallBasis('doubletShift', x, 0, h, side), 3);
      }
    }
    for (const x of [c / 4, -c / 4, (3 * c) / 4]) {
      const dv = (imageSum('vortex', 1, d, x, 0, true)[1] - imageSum('vortex', 1, -d, x, 0, true)[1]) / (2 * d);
      expect(dv).toBeCloseTo((1 / (h * h)) * imageVelocity('vortexShift', x, 0, h)[1], 5);
    }
  });

  it('the series used near w = 0 match the direct differences where both are accurate', () => {
    for (const w of [0.0099, -0.006, 0.02, 0.05]) {
      expect(cothMinusInv(w)).toBeCloseTo(1 / Math.tanh(w) - 1 / w, 9);
      expect(cschMinusInv(w)).toBeCloseTo(1 / Math.sinh(w) - 1 / w, 9);
      expect(csch2MinusInv2(w)).toBeCloseTo(1 / Math.sinh(w) ** 2 - 1 / (w * w), 7);
      expect(vortexShiftKernel(w)).toBeCloseTo(1 / (w * w) - 1 / (Math.sinh(w) * Math.tanh(w)), 7);
    }
    expect(csch2MinusInv2(0)).toBe(-1 / 3);
    expect(cothMinusInv(0)).toBe(0);
  });
});

describe('a doublet alone: blockage at the model = one third of the wall speed-up opposite it', () => {
  // Image sums: at the model Σ_{n≠0} μ/(2π n² h²) = (μ/2πh²)(π²/3); on the wall Σ_n μ/(2π(n − ½)²h²)
  // = (μ/2πh²)·π² (Σ 1/n² = π²/6, Σ 1/(n − ½)² = π²; REDUCTION.md §12).
  const mu = 0.08;
  it('the image sums give the ratio 1/3', () => {
    const [atModel] = imageSum('doublet', mu, 0, 0, 0, true);
    const [atWall] = imageSum('doublet', mu, 0, 0, h / 2, false);
    expect(atModel).toBeCloseTo((mu / (2 * Math.PI * h * h)) * (Math.PI ** 2 / 3), 8);
    expect(atWall).toBeCloseTo((mu / (2 * Math.PI * h * h)) * Math.PI ** 2, 8);
    expect(atModel / atWall).toBeCloseTo(1 / 3, 6);
  });
  it('the fit to the doublet-only walls gives that ε_sb', () => {
    const xs = evenly(-1.5 * h, 1.5 * h, 24);
    const plan = signaturePlan({ floorX: xs, ceilingX: xs, height: h, chord: c });
    const fit = fitSignature(plan, wallCp({ doublet: mu }, xs, -1), wallCp({ doublet: mu }, xs, 1), V)!;
    const [atWall] = imageSum('doublet', mu, 0, 0, h / 2, false);
    expect(fit.epsSb).toBeCloseTo(atWall / V / 3, 6);
    expect(Math.abs(fit.epsSb / (atWall / V / 3) - 1)).toBeLessThan(0.01);
    expect(Math.abs(fit.epsWb)).toBeLessThan(1e-6);
  });
});

describe('exact vortex + source + doublet walls (image sums), taps over ±1.5h', () => {
  // Strengths of a lifting section with a wake: cl = 1.0, cd = 0.02, a 12 % section's doublet.
  const G = 0.5 * V * c * 1.0;
  const Q = 0.5 * V * c * 0.02;
  const mu = 2 * V * 0.0817 * c * c * 1.1;
  const cases: [string, number[], number[]][] = [
    ['24 evenly spaced taps per wall', evenly(-1.5 * h, 1.5 * h, 24), evenly(-1.5 * h, 1.5 * h, 24)],
    ['sparse and uneven: 12 floor taps, 9 ceiling taps, not at the same stations', [-1.35, -1.0, -0.8, -0.45, -0.2, -0.05, 0.1, 0.3, 0.55, 0.8, 1.1, 1.35], [-1.3, -0.95, -0.5, -0.15, 0.12, 0.4, 0.7, 1.0, 1.36]],
  ];
  for (const [name, fx, cx] of cases) {
    it(`${name}: strengths within 1 %, ε within 2 %, a small residual`, () => {
      const plan = signaturePlan({ floorX: fx, ceilingX: cx, height: h, chord: c });
      expect(plan.unusable).toBeNull();
      const fit = fitSignature(plan, wallCp({ vortex: G, source: Q, doublet: mu }, fx, -1), wallCp({ vortex: G, source: Q, doublet: mu }, cx, 1), V)!;
      expect(Math.abs(fit.gamma / G - 1)).toBeLessThan(0.01);
      expect(Math.abs(fit.Q / Q - 1)).toBeLessThan(0.01);
      expect(Math.abs(fit.mu / mu - 1)).toBeLessThan(0.01);
      // ε from the image sums at the model: doublet images + (Q/2h + source images, which vanish).
      const epsSb = imageSum('doublet', mu, 0, 0, 0, true)[0] / V;
      const epsWb = (Q / (2 * h) + imageSum('source', Q, 0, 0, 0, true)[0]) / V;
      expect(Math.abs(fit.epsSb / epsSb - 1)).toBeLessThan(0.02);
      expect(Math.abs(fit.epsWb / epsWb - 1)).toBeLessThan(0.02);
      expect(Math.abs(fit.eps / (epsSb + epsWb) - 1)).toBeLessThan(0.02);
      // Upwash at the mid-chord from the vortex images.
      const vMid = imageSum('vortex', G, 0, c / 4, 0, true)[1] / V;
      expect(Math.abs(fit.dAlphaDeg / ((vMid * 180) / Math.PI) - 1)).toBeLessThan(0.02);
      expect(fit.residualCp).toBeLessThan(1e-5);
      // The fitted wall Cp (for the plot) are the data's, tap by tap.
      const fData = wallCp({ vortex: G, source: Q, doublet: mu }, [...fx].sort((a, b) => a - b), -1);
      fit.fitted.floor.forEach((p, i) => expect(p.cp).toBeCloseTo(fData[i], 5));
      // The Monte Carlo path gives the same interference.
      const s = signatureInterference(plan, wallCp({ vortex: G, source: Q, doublet: mu }, fx, -1), wallCp({ vortex: G, source: Q, doublet: mu }, cx, 1));
      expect(s.epsSb + s.epsWb).toBeCloseTo(fit.eps, 12);
      expect(s.dAlphaDeg).toBeCloseTo(fit.dAlphaDeg, 12);
    });
  }
});

describe('settling the classical wake blockage against the walls (exact data)', () => {
  // A wake of drag cd is a source of its volume deficit Q = D/(ρV) = ½Vc·cd (momentum theorem on the
  // far wake, common practice). Classical formulas, app/corrections.ts: Thom / Allen & Vincenti (c/4h)·cd
  // (NACA R-782, memory); REDUCTION.md §8 from memory (c/2h)·cd.
  for (const cd of [0.01, 0.05, 0.12]) {
    it(`cd = ${cd}: the walls measure (c/4h)·cd, half of (c/2h)·cd`, () => {
      const xs = evenly(-1.5 * h, 1.5 * h, 24);
      const Q = 0.5 * V * c * cd;
      const G = 0.5 * V * c * 0.6;
      const mu = 2 * V * 0.0817 * c * c;
      const plan = signaturePlan({ floorX: xs, ceilingX: xs, height: h, chord: c });
      const fit = fitSignature(plan, wallCp({ vortex: G, source: Q, doublet: mu }, xs, -1), wallCp({ vortex: G, source: Q, doublet: mu }, xs, 1), V)!;
      const classical = wallCorrections({ chord: c, height: h, width: 0.6, sectionAreaC2: 0.0817, cdU: cd, method: 'barlow-rae-pope' });
      expect(Math.abs(fit.epsWb / ((c / (4 * h)) * cd) - 1)).toBeLessThan(0.02);
      expect(Math.abs(fit.epsWb / classical.epsWb - 1)).toBeLessThan(0.02);
      expect(fit.epsWb / ((c / (2 * h)) * cd)).toBeCloseTo(0.5, 2);
    });
  }
});

describe('upwash and curvature against the classical σ terms (small c/h)', () => {
  // Classical (Barlow, Rae & Pope ch. 9; Allen & Vincenti, memory): Δα = (σ/2π)(cl + 4cm_c/4) rad,
  // Δcl = −σ·cl, Δcm = +σ·cl/4, σ = (π²/48)(c/h)², all to leading order in c/h. A vortex Γ = ½Vc·cl
  // at the quarter chord carries the cl part; the load centre behind it (Γδ = −cm_c/4·½Vc², the
  // moment about the quarter chord) the cm part.
  const cSmall = 0.09; // c/h = 0.1
  const sigma = (Math.PI ** 2 / 48) * (cSmall / h) ** 2;
  const cl = 0.8;
  const cm = -0.1;
  it('Δα, Δcl and Δcm within 1 % of the classical ones', () => {
    const xs = evenly(-1.5 * h, 1.5 * h, 30);
    const plan = signaturePlan({ floorX: xs, ceilingX: xs, height: h, chord: cSmall });
    const G = 0.5 * V * cSmall * cl;
    const Gd = -cm * 0.5 * V * cSmall * cSmall;
    // Exact data: the vortex and its x0-derivative times δ (central difference of image sums).
    const d = 1e-4;
    const cp = (side: 1 | -1) => xs.map((x) => {
      const y = (side * h) / 2;
      const u = V + imageSum('vortex', G, 0, x, y, false)[0] +
        (Gd / d) * (imageSum('vortex', 1, d / 2, x, y, false)[0] - imageSum('vortex', 1, -d / 2, x, y, false)[0]);
      return 1 - (u / V) ** 2;
    });
    const fit = fitSignature(plan, cp(-1), cp(1), V)!;
    const dAlphaClassical = ((sigma / (2 * Math.PI)) * (cl + 4 * cm) * 180) / Math.PI;
    expect(Math.abs(fit.dAlphaDeg / dAlphaClassical - 1)).toBeLessThan(0.01);
    expect(Math.abs(fit.dCl / (-sigma * cl) - 1)).toBeLessThan(0.01);
    expect(Math.abs(fit.dCm / ((sigma * cl) / 4) - 1)).toBeLessThan(0.01);
  });
});

describe('noise at the stated wall-channel uncertainty', () => {
  it('gives the spread of ε the fit states (400 replicates, within 12 %)', () => {
    const xs = evenly(-1.5 * h, 1.5 * h, 24);
    const plan = signaturePlan({ floorX: xs, ceilingX: xs, height: h, chord: c });
    const s = { vortex: 0.5 * V * c, source: 0.5 * V * c * 0.02, doublet: 2 * V * 0.0817 * c * c };
    const f0 = wallCp(s, xs, -1, 400);
    const c0 = wallCp(s, xs, 1, 400);
    const uCp = 0.002;
    const exact = fitSignature(plan, f0, c0, V, uCp)!;
    const z = normals(20261202);
    const eps: number[] = [];
    for (let r = 0; r < 400; r++) {
      const fit = fitSignature(plan, f0.map((p) => p + uCp * z()), c0.map((p) => p + uCp * z()), V)!;
      eps.push(fit.eps);
    }
    const mean = eps.reduce((a, b) => a + b, 0) / eps.length;
    const sd = Math.sqrt(eps.reduce((a, b) => a + (b - mean) ** 2, 0) / (eps.length - 1));
    // Sample sd of 400 normal draws: relative standard error 1/√798 ≈ 3.5 %; 12 % ≈ 3.4 of them.
    expect(Math.abs(sd / exact.uEps - 1)).toBeLessThan(0.12);
    expect(Math.abs(mean - exact.eps)).toBeLessThan((4 * exact.uEps) / Math.sqrt(400));
    // And the noise shows in the residual at about uCp (the fit takes 7 of the 48 degrees of freedom).
    const noisy = fitSignature(plan, f0.map((p) => p + uCp * z()), c0.map((p) => p + uCp * z()), V)!;
    expect(noisy.residualCp).toBeGreaterThan(0.5 * uCp);
    expect(noisy.residualCp).toBeLessThan(1.5 * uCp);
  });
});

describe('when the walls cannot say', () => {
  it('too few taps on a wall', () => {
    const plan = signaturePlan({ floorX: evenly(-1.4, 1.4, 4), ceilingX: evenly(-1.4, 1.4, 20), height: h, chord: c });
    expect(plan.unusable).toMatch(/floor has 4 static taps, fewer than the 5/);
    expect(fitSignature(plan, [0, 0, 0, 0], new Array(20).fill(0), V)).toBeNull();
  });
  it('taps not spanning the model by about ±h', () => {
    const plan = signaturePlan({ floorX: evenly(-0.5 * h, 0.5 * h, 15), ceilingX: evenly(-1.5 * h, 1.5 * h, 15), height: h, chord: c });
    expect(plan.unusable).toMatch(/floor taps run from −?-?0\.45 m to 0\.45 m, not spanning the model by about ±h/);
    expect(plan.unusable).not.toMatch(/ceiling/);
  });
  it('a layout that cannot separate the terms', () => {
    // Every tap at two stations only: the seven terms cannot be told apart.
    const xs = [...new Array(8).fill(-h), ...new Array(8).fill(h)];
    const plan = signaturePlan({ floorX: xs, ceilingX: xs, height: h, chord: c });
    expect(plan.unusable).toMatch(/cannot tell the singularities apart/);
    expect(SIGNATURE_LIMITS.maxCondition).toBeGreaterThan(1e3);
  });
  it('a glitched wall tap shows in the residual and names the tap', () => {
    const xs = evenly(-1.5 * h, 1.5 * h, 24);
    const plan = signaturePlan({ floorX: xs, ceilingX: xs, height: h, chord: c });
    const s = { vortex: 0.5 * V * c, source: 0.5 * V * c * 0.02, doublet: 2 * V * 0.0817 * c * c };
    const f = wallCp(s, xs, -1, 400);
    f[9] += 0.05;
    const fit = fitSignature(plan, f, wallCp(s, xs, 1, 400), V)!;
    expect(fit.residualCp).toBeGreaterThan(0.005);
    expect(fit.worstAt).toEqual({ wall: 'floor', x: xs[9] });
  });
});

describe('wall Cp errors as the channels are wired (transducer groups, app/instruments.ts)', () => {
  it('a gain common to the floor module: u(ε) from the correlated propagation matches 400 replicates; treated tap by tap it would not', () => {
    // JCGM 100:2008 §5.2.2 (correlated inputs): u²(ε) = Σ(c_i u_i)² + (Σ c_i δCp_i)² for a common
    // gain; the replicates draw one gain per run for all floor taps and independent tap noise.
    const xs = evenly(-1.5 * h, 1.5 * h, 24);
    const plan = signaturePlan({ floorX: xs, ceilingX: xs, height: h, chord: c });
    const s = { vortex: 0.5 * V * c, source: 0.5 * V * c * 0.02, doublet: 2 * V * 0.0817 * c * c };
    const f0 = wallCp(s, xs, -1, 400);
    const c0 = wallCp(s, xs, 1, 400);
    const uTap = 0.0005;
    const uGain = 0.01; // 1 % module gain (invented)
    const pRef = 0.5; // the floor readings p_i/q = Cp_i + 0.5: zeroed gauge readings (invented)
    const n = f0.length + c0.length;
    const gainShift = Float64Array.from([...f0.map((p) => uGain * (p + pRef)), ...c0.map(() => 0)]);
    const wired = fitSignature(plan, f0, c0, V, { independent: new Float64Array(n).fill(uTap), common: [gainShift] })!;
    const tapByTap = fitSignature(plan, f0, c0, V, {
      independent: Float64Array.from(gainShift, (d) => Math.hypot(uTap, d)), common: [],
    })!;
    const z = normals(777);
    const eps: number[] = [];
    for (let r = 0; r < 400; r++) {
      const g = z();
      const fit = fitSignature(plan, f0.map((p) => p + g * uGain * (p + pRef) + uTap * z()), c0.map((p) => p + uTap * z()), V)!;
      eps.push(fit.eps);
    }
    const mean = eps.reduce((a, b) => a + b, 0) / eps.length;
    const sd = Math.sqrt(eps.reduce((a, b) => a + (b - mean) ** 2, 0) / (eps.length - 1));
    // Sample sd of 400 normal draws: relative standard error 3.5 %; 12 % ≈ 3.4 of them.
    expect(Math.abs(sd / wired.uEps - 1)).toBeLessThan(0.12);
    expect(Math.abs(sd / tapByTap.uEps - 1)).toBeGreaterThan(0.12);
    // A scalar uCp is the same as equal independent parts and no common ones.
    const scalar = fitSignature(plan, f0, c0, V, uTap)!;
    const spelled = fitSignature(plan, f0, c0, V, { independent: new Float64Array(n).fill(uTap), common: [] })!;
    expect(spelled.uEps).toBeCloseTo(scalar.uEps, 15);
    expect(() => fitSignature(plan, f0, c0, V, { independent: [uTap], common: [] })).toThrow(/expected 48 wall-Cp uncertainties/);
  });

  it('a pure offset common to every wall tap leaves ε alone (the fit\'s offset term takes it)', () => {
    const xs = evenly(-1.5 * h, 1.5 * h, 24);
    const plan = signaturePlan({ floorX: xs, ceilingX: xs, height: h, chord: c });
    const s = { vortex: 0.5 * V * c, source: 0.5 * V * c * 0.02, doublet: 2 * V * 0.0817 * c * c };
    const f0 = wallCp(s, xs, -1, 400);
    const c0 = wallCp(s, xs, 1, 400);
    const n = f0.length + c0.length;
    // In Cp a common offset δ moves b_i by about −δ/(2√(1 − Cp_i)), nearly uniform for |Cp| ≪ 1:
    // its u(ε) is small beside the same offset counted tap by tap (derived here).
    const offset = new Float64Array(n).fill(0.002);
    const common = fitSignature(plan, f0, c0, V, { independent: new Float64Array(n), common: [offset] })!;
    const apart = fitSignature(plan, f0, c0, V, { independent: offset, common: [] })!;
    expect(common.uEps).toBeLessThan(0.2 * apart.uEps);
  });
});
