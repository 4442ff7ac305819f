// Wall-pressure-signature correction for a two-dimensional model between closed walls
// (docs/WALL-CORRECTIONS.md has the derivation; REDUCTION.md §12). A singularity-fitting method of
// the kind published by Hackett & Wilsden (AGARD CP-174, 1975) and Ashill & Keating (Aeronautical
// Journal 92, 1988) — both from memory; what is used here is written out below and checked against
// direct image sums in test/wall-signature.test.ts.
//
// Frame: x downstream from the model quarter chord, y up, walls at y = ±h/2, model on the
// centreline. Complex velocity u − iv of each singularity at z0 = x0 together with its images
// between the walls (method of images, Milne-Thomson, Theoretical Hydrodynamics — closed forms
// derived here from the image rows, checked by summing images in the test):
//   vortex Γ (clockwise-positive = positive lift), images (−1)ⁿΓ at iy = inh:  (iΓ/2h) / sinh(πs/h)
//   source Q (m²/s), images Q at inh:                                     (Q/2h) coth(πs/h)
//   doublet μ (axis upstream, W = μ/2πz, a body), images μ at inh:        −(πμ/2h²) / sinh²(πs/h)
// with s = z − z0. On the walls z = x ± ih/2 these give v = 0 and the wall speed perturbation
//   vortex  ±(Γ/2h) sech(πs/h) (+ ceiling),  source (Q/2h) tanh(πs/h),  doublet (πμ/2h²) sech²(πs/h).
// The fit adds a uniform offset u₀ (the reference pressures against far upstream) and a linear
// gradient k·x (the empty tunnel's own, e.g. wall boundary-layer growth); neither interferes with the
// model. Wall speed from the measured Cp by exact Bernoulli, u/V = √(1 − Cp) (v = 0 on a wall), so
// u/V − 1 is LINEAR in the strengths and the least-squares fit is exact for exact potential-flow
// data: one direct solve (normal equations on scaled columns), no iteration. "Does not converge"
// therefore means an ill-conditioned design (taps that cannot separate the terms): reported as such.
//
// Interference at the model = the images' velocity (own singularity removed) on the centreline:
//   vortex   v_i(x) = −(Γ/2h)[csch w − 1/w],  w = π(x − x0)/h  →  v_i ≈ πΓ(x − x0)/(12h²)
//   source   u_i(x) =  (Q/2h)[coth w − 1/w]                     →  0 at the source
//   doublet  u_i(x) = −(πμ/2h²)[csch² w − 1/w²]                 →  πμ/(6h²) at the doublet
// (the doublet's: Σ_{n≠0} μ/(2π n²h²) = πμ/(6h²), one third of the wall speed-up πμ/(2h²) =
// Σ_n μ/(2π(n − ½)²h²)). Blockage is measured against the far-upstream stream, where the source row
// runs at −Q/2h, so
//   ε_sb = u_i,doublets(0)/V,   ε_wb = [Q/2h + u_i,sources(0)]/V,   ε = ε_sb + ε_wb.
// With Q = D/(ρV) = ½Vc·cd (the wake's volume deficit) this is ε_wb = (c/4h)·cd.
// Upwash and streamline curvature by thin-airfoil theory (the 3/4-chord argument, e.g. Abbott & von
// Doenhoff §4.3 / Allen & Vincenti, from memory): with the images' upwash on the chord
// v_i/V ≈ a + κ(x − c/4) (x from the quarter chord, chord from −c/4 to 3c/4),
//   Δα = a + κc/4 = v_i(c/4)/V  (the mid-chord upwash),  Δcl = −πκc/2,  Δcm_c/4 = +πκc/8,
// κ from the upwash at the leading and trailing edges. For one vortex this is exactly the classical
// Δα = (σ/2π)·cl and Δcl = −σ·cl with σ = (π²/48)(c/h)², Δcm = σ·cl/4 (test).
// All singularities sit at the quarter chord. A singularity off that station by δ shows at the walls
// as itself plus its x-derivative times δ (a source displaced by δ is a source plus a doublet −Qδ, and
// the images' interference at the model follows the same far-field moments to first order in δ/h).
// So the fit carries, besides vortex, source and doublet, the two "shift" terms that matter:
//   vortex shift Γδ:   walls ±(πΓδ/2h²) sech w tanh w;  images' upwash −(πΓδ/2h²)[1/w² − csch w coth w]
//                      → −πΓδ/(12h²) at the model: the load-distribution (cm) part of Δα, which for
//                      Γδ = −cm_c/4·(½Vc²) is the classical (σ/2π)·4cm_c/4 term (test);
//   doublet shift μδ:  walls (π²μδ/h³) sech²w tanh w;  no interference at the model (the doublet's
//                      image speed is even about it) — it only keeps the doublet's displacement from
//                      being read as a wake source.
// (options.terms = 'basic' drops the two shift terms.)

import { spdInverse } from './quadrature';

export type SignatureTerm = 'vortex' | 'source' | 'doublet' | 'vortexShift' | 'doubletShift';

export interface SignatureOptions {
  /** 'full' (default): vortex, source, doublet, vortex shift, doublet shift, offset, gradient;
   *  'basic': without the two shift terms. */
  terms?: 'full' | 'basic';
}

/** Requirements of the fit (common practice, no source; chosen so that the source's step, which
 *  is 99.6 % complete at |x| = h, is seen on both sides). */
export const SIGNATURE_LIMITS = {
  /** Taps per wall. */
  minTapsPerWall: 5,
  /** Each wall must reach this far upstream and downstream, in units of h. */
  minSpanH: 0.9,
  /** Largest condition number of the scaled normal matrix. */
  maxCondition: 1e8,
};

/** Fit design for one tap layout (built once per setup). */
export interface SignaturePlan {
  height: number;
  chord: number;
  terms: readonly (SignatureTerm | 'offset' | 'gradient')[];
  /** Station of each term, m from the quarter chord (NaN for offset/gradient; all at 0 here). */
  x0: Float64Array;
  /** Floor then ceiling tap x, sorted by x within each wall. */
  xs: Float64Array;
  nFloor: number;
  /** Design matrix, row-major n × k (unit strengths, dimensionless: strengths scaled by h, V). */
  A: Float64Array;
  /** Pseudo-inverse (AᵀA)⁻¹Aᵀ, row-major k × n. */
  pinv: Float64Array;
  /** (AᵀA)⁻¹, k × k, for the strengths' covariance. */
  cov: Float64Array;
  condition: number;
  /** The interference as linear functionals of the wall u/V − 1 vector (n each):
   *  ε_sb, ε_wb, Δα (rad), κc — rows of (interference weights)ᵀ·pinv. */
  rows: { epsSb: Float64Array; epsWb: Float64Array; dAlpha: Float64Array; kappaC: Float64Array };
  /** Why the walls cannot say, in words; null when the layout is usable. */
  unusable: string | null;
}

/** Fitted strengths and what follows at the model. Strengths dimensional (m²/s, m³/s). */
export interface SignatureFit {
  gamma: number;
  /** Γδ (m³/s) and μδ (m⁴/s) of the shift terms (0 when not fitted). */
  gammaShift: number;
  Q: number;
  mu: number;
  muShift: number;
  /** Uniform offset and gradient of u/V (gradient per m). */
  offset: number;
  gradient: number;
  /** Interference at the model. */
  epsSb: number;
  epsWb: number;
  eps: number;
  dAlphaDeg: number;
  /** κc (dimensionless) and the curvature increments. */
  kappaC: number;
  dCl: number;
  dCm: number;
  /** Root-mean-square fit residual in Cp, and the largest one with its tap. */
  residualCp: number;
  worstCp: number;
  worstAt: { wall: 'floor' | 'ceiling'; x: number };
  /** Standard uncertainty of ε from a stated wall-Cp uncertainty (0 when not given). */
  uEps: number;
  condition: number;
  taps: number;
  /** The fitted wall Cp at each tap (plan order: each wall sorted by x), for plotting. */
  fitted: { floor: { x: number; cp: number }[]; ceiling: { x: number; cp: number }[] };
}

const PI = Math.PI;

// Series near w = 0 (to w⁵): coth w − 1/w = w/3 − w³/45 + 2w⁵/945; csch w − 1/w = −w/6 + 7w³/360
// − 31w⁵/15120; csch² w − 1/w² = −1/3 + w²/15 − 2w⁴/189 (standard Laurent series, e.g. Abramowitz &
// Stegun 4.5.64–4.5.67, from memory; the tests check them against the direct differences).
const SMALL = 1e-2;

/** coth w − 1/w. */
export function cothMinusInv(w: number): number {
  if (Math.abs(w) < SMALL) {
    const w2 = w * w;
    return w * (1 / 3 - w2 / 45 + (2 * w2 * w2) / 945);
  }
  return 1 / Math.tanh(w) - 1 / w;
}

/** csch w − 1/w. */
export function cschMinusInv(w: number): number {
  if (Math.abs(w) < SMALL) {
    const w2 = w * w;
    return w * (-1 / 6 + (7 * w2) / 360 - (31 * w2 * w2) / 15120);
  }
  return 1 / Math.sinh(w) - 1 / w;
}

/** csch² w − 1/w². */
export function csch2MinusInv2(w: number): number {
  if (Math.abs(w) < SMALL) {
    const w2 = w * w;
    return -1 / 3 + w2 / 15 - (2 * w2 * w2) / 189;
  }
  const s = Math.sinh(w);
  return 1 / (s * s) - 1 / (w * w);
}

const sech = (w: number): number => 1 / Math.cosh(w);

/** Wall speed perturbation u/V − 1 of unit dimensionless strength (Γ = hV, Q = hV, μ = h²V) at a
 *  wall tap x (m), singularity at x0 (m). ceiling: +1, floor: −1. */
export function wallBasis(term: SignatureTerm | 'offset' | 'gradient', x: number, x0: number, h: number, side: 1 | -1): number {
  const w = (PI * (x - x0)) / h;
  switch (term) {
    case 'vortex':
      return (side * 0.5) * sech(w);
    case 'vortexShift':
      return side * 0.5 * PI * sech(w) * Math.tanh(w);
    case 'doubletShift': {
      const s = sech(w);
      return PI * PI * s * s * Math.tanh(w);
    }
    case 'source':
      return 0.5 * Math.tanh(w);
    case 'doublet': {
      const s = sech(w);
      return 0.5 * PI * s * s;
    }
    case 'offset':
      return 1;
    case 'gradient':
      return x / h;
  }
}

/** 1/w² − csch w coth w (the x0-derivative of the vortex images' upwash); series −1/6 + 7w²/120
 *  − 31w⁴/3024 near 0 (from the series above, from memory; checked against the difference). */
export function vortexShiftKernel(w: number): number {
  if (Math.abs(w) < SMALL) {
    const w2 = w * w;
    return -1 / 6 + (7 * w2) / 120 - (31 * w2 * w2) / 3024;
  }
  return 1 / (w * w) - 1 / (Math.sinh(w) * Math.tanh(w));
}

/** Images' velocity at the centreline point x (m) from a unit dimensionless strength at x0
 *  (Γ = hV, Q = hV, μ = h²V, Γδ = h²V, μδ = h³V): [u_i/V, v_i/V]. */
export function imageVelocity(term: SignatureTerm, x: number, x0: number, h: number): [number, number] {
  const w = (PI * (x - x0)) / h;
  switch (term) {
    case 'vortex':
      return [0, -0.5 * cschMinusInv(w)];
    case 'vortexShift':
      return [0, 0.5 * PI * vortexShiftKernel(w)];
    case 'doubletShift':
      return [0, 0];
    case 'source':
      return [0.5 * cothMinusInv(w), 0];
    case 'doublet':
      return [-0.5 * PI * csch2MinusInv2(w), 0];
  }
}

// ---- small dense linear algebra (k ≤ 6) ----

/** Eigenvalues of a symmetric k × k matrix (cyclic Jacobi; Golub & Van Loan §8.5). */
function symEigenvalues(M: Float64Array, k: number): number[] {
  const a = Float64Array.from(M);
  for (let sweep = 0; sweep < 60; sweep++) {
    let off = 0;
    for (let i = 0; i < k; i++) for (let j = i + 1; j < k; j++) off += a[i * k + j] ** 2;
    if (off < 1e-30) break;
    for (let p = 0; p < k; p++) {
      for (let q = p + 1; q < k; q++) {
        const apq = a[p * k + q];
        if (apq === 0) continue;
        const theta = (a[q * k + q] - a[p * k + p]) / (2 * apq);
        const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        for (let r = 0; r < k; r++) {
          const arp = a[r * k + p];
          const arq = a[r * k + q];
          a[r * k + p] = c * arp - s * arq;
          a[r * k + q] = s * arp + c * arq;
        }
        for (let r = 0; r < k; r++) {
          const apr = a[p * k + r];
          const aqr = a[q * k + r];
          a[p * k + r] = c * apr - s * aqr;
          a[q * k + r] = s * apr + c * aqr;
        }
      }
    }
  }
  return Array.from({ length: k }, (_, i) => a[i * k + i]);
}

function span(xs: readonly number[]): [number, number] {
  return [Math.min(...xs), Math.max(...xs)];
}

const fmtM = (x: number): string => `${x.toFixed(2)} m`;

/**
 * The fit design for a tap layout. Never throws for a poor layout: `unusable` then says why in words
 * (too few taps, not spanning the model by about ±h, an ill-conditioned design).
 */
export function signaturePlan(args: {
  floorX: readonly number[];
  ceilingX: readonly number[];
  height: number;
  chord: number;
  options?: SignatureOptions;
}): SignaturePlan {
  const { height: h, chord } = args;
  if (!(h > 0) || !(chord > 0)) {
    throw new RangeError(`wall signature: section height and chord must be > 0 m (got ${h}, ${chord})`);
  }
  const floorX = [...args.floorX].sort((a, b) => a - b);
  const ceilingX = [...args.ceilingX].sort((a, b) => a - b);
  const terms: (SignatureTerm | 'offset' | 'gradient')[] = args.options?.terms === 'basic'
    ? ['vortex', 'source', 'doublet', 'offset', 'gradient']
    : ['vortex', 'source', 'doublet', 'vortexShift', 'doubletShift', 'offset', 'gradient'];
  const k = terms.length;
  const x0 = Float64Array.from(terms, (t) => (t === 'offset' || t === 'gradient' ? NaN : 0));
  const xs = Float64Array.from([...floorX, ...ceilingX]);
  const n = xs.length;
  const nFloor = floorX.length;

  const problems: string[] = [];
  for (const [name, list] of [['floor', floorX], ['ceiling', ceilingX]] as const) {
    if (list.length < SIGNATURE_LIMITS.minTapsPerWall) {
      problems.push(`the ${name} has ${list.length} static tap${list.length === 1 ? '' : 's'}, fewer than the ${SIGNATURE_LIMITS.minTapsPerWall} the fit needs`);
      continue;
    }
    const [lo, hi] = span(list);
    const need = SIGNATURE_LIMITS.minSpanH * h;
    if (lo > -need || hi < need) {
      problems.push(
        `the ${name} taps run from ${fmtM(lo)} to ${fmtM(hi)}, not spanning the model by about ±h (±${fmtM(h)}; at least ±${fmtM(need)} needed)`,
      );
    }
  }
  if (n < k + 3) problems.push(`${n} wall taps in all cannot fit ${k} terms with a residual to judge`);

  const A = new Float64Array(n * k);
  for (let i = 0; i < n; i++) {
    const side: 1 | -1 = i < nFloor ? -1 : 1;
    for (let j = 0; j < k; j++) A[i * k + j] = wallBasis(terms[j], xs[i], x0[j], h, side);
  }
  // Normal equations on unit-norm columns (the scaling is undone below).
  const scale = new Float64Array(k);
  for (let j = 0; j < k; j++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += A[i * k + j] ** 2;
    scale[j] = s > 0 ? 1 / Math.sqrt(s) : 0;
  }
  const N = new Float64Array(k * k);
  for (let a = 0; a < k; a++) {
    for (let b = 0; b < k; b++) {
      let s = 0;
      for (let i = 0; i < n; i++) s += A[i * k + a] * A[i * k + b];
      N[a * k + b] = s * scale[a] * scale[b];
    }
  }
  const eig = n ? symEigenvalues(N, k) : [0];
  const eMax = Math.max(...eig);
  const eMin = Math.min(...eig);
  const condition = eMin > 0 ? eMax / eMin : Infinity;
  const Ninv = n ? spdInverse(N, k) : null;
  if (!Ninv || !(condition < SIGNATURE_LIMITS.maxCondition)) {
    if (!problems.length) {
      problems.push(
        `the taps cannot tell the singularities apart (condition number ${Number.isFinite(condition) ? condition.toExponential(1) : '∞'}, limit ${SIGNATURE_LIMITS.maxCondition.toExponential(0)}): the fit has no unique solution`,
      );
    }
  }
  const cov = new Float64Array(k * k);
  const pinv = new Float64Array(k * n);
  if (Ninv) {
    for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) cov[a * k + b] = Ninv[a * k + b] * scale[a] * scale[b];
    for (let a = 0; a < k; a++) {
      for (let i = 0; i < n; i++) {
        let s = 0;
        for (let b = 0; b < k; b++) s += cov[a * k + b] * A[i * k + b];
        pinv[a * n + i] = s;
      }
    }
  }
  const base = { height: h, chord, terms, x0 };
  const rows = { epsSb: new Float64Array(n), epsWb: new Float64Array(n), dAlpha: new Float64Array(n), kappaC: new Float64Array(n) };
  for (let j = 0; j < k; j++) {
    const e = new Float64Array(k);
    e[j] = 1;
    const w = interferenceOf(base, e);
    for (let i = 0; i < n; i++) {
      const p = pinv[j * n + i];
      rows.epsSb[i] += w.epsSb * p;
      rows.epsWb[i] += w.epsWb * p;
      rows.dAlpha[i] += w.dAlpha * p;
      rows.kappaC[i] += w.kappaC * p;
    }
  }
  return {
    height: h,
    chord,
    terms,
    x0,
    xs,
    nFloor,
    A,
    pinv,
    cov,
    condition,
    rows,
    unusable: problems.length ? `The walls cannot say: ${problems.join('; ')}.` : null,
  };
}

/** Interference at the model from dimensionless strengths (by term of the plan). */
export function interferenceOf(plan: Pick<SignaturePlan, 'height' | 'chord' | 'terms' | 'x0'>, strengths: ArrayLike<number>): {
  epsSb: number; epsWb: number; dAlpha: number; kappaC: number;
} {
  const { height: h, chord: c, terms, x0 } = plan;
  let epsSb = 0;
  let epsWb = 0;
  let vMid = 0;
  let vLE = 0;
  let vTE = 0;
  for (let j = 0; j < terms.length; j++) {
    const t = terms[j];
    if (t === 'offset' || t === 'gradient') continue;
    const s = strengths[j];
    if (t === 'doublet') epsSb += s * imageVelocity(t, 0, x0[j], h)[0];
    else if (t === 'source') epsWb += s * (0.5 + imageVelocity(t, 0, x0[j], h)[0]);
    else if (t === 'vortex' || t === 'vortexShift') {
      vMid += s * imageVelocity(t, c / 4, x0[j], h)[1];
      vLE += s * imageVelocity(t, -c / 4, x0[j], h)[1];
      vTE += s * imageVelocity(t, (3 * c) / 4, x0[j], h)[1];
    }
  }
  return { epsSb, epsWb, dAlpha: vMid, kappaC: vTE - vLE };
}

/** Wall u/V − 1 from Cp by exact Bernoulli, clamped at Cp = 1. */
export function wallSpeedPert(cp: number): number {
  return Math.sqrt(Math.max(0, 1 - cp)) - 1;
}

/** Uncertainty of the wall Cp as the wall channels are wired (app/instruments.ts), in the order of
 *  the Cp given to fitSignature (floor, then ceiling). */
export interface WallCpUncertainty {
  /** Independent standard uncertainty of each wall Cp (own instrument or linearity, standard error
   *  of the mean, zero-drift residual). */
  independent: ArrayLike<number>;
  /** Correlated parts: for each transducer group's gain and (where it still counts) zero, the
   *  change of every wall Cp for one standard uncertainty of that error (0 outside the group). */
  common: ArrayLike<number>[];
}

/**
 * Fit one run's wall signature. floorCp and ceilingCp are in the plan's order (sorted by x within
 * each wall). V (m/s) only scales the strengths reported; uCp gives uEps: either one standard
 * uncertainty for every wall Cp (independent), or the wall Cp's uncertainty as the channels are
 * wired (WallCpUncertainty: independent parts and the transducer groups' common gain and zero).
 * Returns null when the plan is
 * unusable.
 */
export function fitSignature(
  plan: SignaturePlan, floorCp: ArrayLike<number>, ceilingCp: ArrayLike<number>, V: number, uCp: number | WallCpUncertainty = 0,
): SignatureFit | null {
  if (plan.unusable) return null;
  const { terms, pinv, A, xs, nFloor, height: h } = plan;
  const n = xs.length;
  const k = terms.length;
  if (floorCp.length !== nFloor || ceilingCp.length !== n - nFloor) {
    throw new Error(`wall signature: expected ${nFloor} floor and ${n - nFloor} ceiling Cp (got ${floorCp.length}, ${ceilingCp.length})`);
  }
  const b = new Float64Array(n);
  for (let i = 0; i < n; i++) b[i] = wallSpeedPert(i < nFloor ? floorCp[i] : ceilingCp[i - nFloor]);
  const s = new Float64Array(k);
  for (let a = 0; a < k; a++) {
    let acc = 0;
    for (let i = 0; i < n; i++) acc += pinv[a * n + i] * b[i];
    s[a] = acc;
  }
  let ss = 0;
  let worst = 0;
  let worstI = 0;
  const fitted: SignatureFit['fitted'] = { floor: [], ceiling: [] };
  for (let i = 0; i < n; i++) {
    let f = 0;
    for (let a = 0; a < k; a++) f += A[i * k + a] * s[a];
    (i < nFloor ? fitted.floor : fitted.ceiling).push({ x: xs[i], cp: 1 - (1 + f) * (1 + f) });
    // Residual in Cp: Cp = 1 − (1 + u)², so dCp = −2(1 + u)·du.
    const r = 2 * (1 + b[i]) * (b[i] - f);
    ss += r * r;
    if (Math.abs(r) > Math.abs(worst)) {
      worst = r;
      worstI = i;
    }
  }
  const inter = interferenceOf(plan, s);
  // Standard uncertainty of ε from the wall Cp (JCGM 100:2008 §5.2, the law of propagation with
  // correlated inputs). ε is linear in b = u/V − 1 (rows.epsSb + rows.epsWb, the interference
  // weights times the pseudo-inverse), and b = √(1 − Cp) − 1, so ∂ε/∂Cp_i = −w_i/(2√(1 − Cp_i)).
  // Independent parts add as Σ(c_i·u_i)²; each correlated part (one group gain or zero moving all
  // its taps together, by δCp_i) as (Σ c_i·δCp_i)²: a common gain does not average away over the
  // taps, and a common offset is taken up by the fit's offset term.
  let uEps = 0;
  const uc: WallCpUncertainty | null = typeof uCp === 'number'
    ? (uCp > 0 ? { independent: new Float64Array(n).fill(uCp), common: [] } : null)
    : uCp;
  if (uc) {
    if (uc.independent.length !== n || uc.common.some((v) => v.length !== n)) {
      throw new Error(`wall signature: expected ${n} wall-Cp uncertainties (got ${uc.independent.length})`);
    }
    const c = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const cp = i < nFloor ? floorCp[i] : ceilingCp[i - nFloor];
      c[i] = -(plan.rows.epsSb[i] + plan.rows.epsWb[i]) / (2 * Math.sqrt(Math.max(1e-6, 1 - cp)));
    }
    let v = 0;
    for (let i = 0; i < n; i++) v += (c[i] * uc.independent[i]) ** 2;
    for (const d of uc.common) {
      let t = 0;
      for (let i = 0; i < n; i++) t += c[i] * d[i];
      v += t * t;
    }
    uEps = Math.sqrt(v);
  }
  const at = (t: SignatureTerm | 'offset' | 'gradient'): number => {
    const j = terms.indexOf(t);
    return j < 0 ? 0 : s[j];
  };
  const kappaC = inter.kappaC;
  return {
    gamma: at('vortex') * h * V,
    gammaShift: at('vortexShift') * h * h * V,
    Q: at('source') * h * V,
    mu: at('doublet') * h * h * V,
    muShift: at('doubletShift') * h * h * h * V,
    offset: at('offset'),
    gradient: at('gradient') / h,
    epsSb: inter.epsSb,
    epsWb: inter.epsWb,
    eps: inter.epsSb + inter.epsWb,
    dAlphaDeg: (inter.dAlpha * 180) / PI,
    kappaC,
    dCl: (-PI * kappaC) / 2,
    dCm: (PI * kappaC) / 8,
    residualCp: Math.sqrt(ss / n),
    worstCp: worst,
    worstAt: { wall: worstI < nFloor ? 'floor' : 'ceiling', x: xs[worstI] },
    uEps,
    condition: plan.condition,
    taps: n,
    fitted,
  };
}

/** The interference alone (ε_sb, ε_wb, Δα in degrees, Δcl, Δcm) from wall Cp in the plan's order,
 *  without allocation: the Monte Carlo path (app/mcPlan.ts). Same arithmetic as fitSignature's
 *  interference to rounding (test). */
export function signatureInterference(
  plan: SignaturePlan, floorCp: ArrayLike<number>, ceilingCp: ArrayLike<number>,
): { epsSb: number; epsWb: number; dAlphaDeg: number; dCl: number; dCm: number } {
  const { rows, nFloor } = plan;
  const n = plan.xs.length;
  let sb = 0;
  let wb = 0;
  let da = 0;
  let kc = 0;
  for (let i = 0; i < n; i++) {
    const b = wallSpeedPert(i < nFloor ? floorCp[i] : ceilingCp[i - nFloor]);
    sb += rows.epsSb[i] * b;
    wb += rows.epsWb[i] * b;
    da += rows.dAlpha[i] * b;
    kc += rows.kappaC[i] * b;
  }
  return { epsSb: sb, epsWb: wb, dAlphaDeg: (da * 180) / PI, dCl: (-PI * kc) / 2, dCm: (PI * kc) / 8 };
}
