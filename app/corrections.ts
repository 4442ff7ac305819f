// Two-dimensional closed-wall corrections (REDUCTION.md §8, §12; derivations in
// docs/WALL-CORRECTIONS.md), after J. B. Barlow, W. H. Rae, A. Pope, Low-Speed Wind Tunnel Testing,
// 3rd ed., Wiley 1999, ch. 9, and H. J. Allen & W. G. Vincenti, "Wall interference in a
// two-dimensional-flow wind tunnel, with consideration of the effect of compressibility", NACA
// Report 782 (1944) — both from memory:
//   σ = (π²/48)(c/h)²;  ε_sb = K₁ V_model / C^{3/2}, K₁ = 0.74 (model spanning the section),
//   C = h × width;  ε_wb = (c/4h) cd_u;  ε = ε_sb + ε_wb;
//   q = q_u(1 + 2ε);  V = V_u(1 + ε);  Re = Re_u(1 + ε);
//   α = α_u + (57.3σ/2π)(cl_u + 4 cm_c/4,u) [deg];  cl = cl_u(1 − σ − 2ε);
//   cm_c/4 = cm_c/4,u(1 − 2ε) + σ cl/4;  cd = cd_u(1 − 3ε_sb − 2ε_wb).
// WAKE BLOCKAGE, SETTLED (core 0.3.0): ε_wb = (c/4h)·cd_u for both classical methods. The wake is a
// source of its volume deficit Q = D/(ρV) = ½V·c·cd_u; between walls h apart it raises the
// far-downstream speed by Q/h and the speed at the model by Q/2h (its images add nothing at the
// model, app/wallSignature.ts), so ε_wb = Q/(2hV) = (c/4h)·cd_u (Thom; Allen & Vincenti). The
// (c/2h)·cd_u that REDUCTION.md §8 wrote from memory, and that 'barlow-rae-pope' used up to core
// 0.2.0, is twice that: test/wall-signature.test.ts fits exact source + doublet + vortex wall data
// and finds the (c/4h) value to 0.1 %. (c/2h)·θ·cd is Maskell's SEPARATED-flow blockage below — a
// larger effective source — which may be where the c/2h came from.
// 'allen-vincenti': Allen & Vincenti write ε_sb = Λσ with a body-shape factor Λ found from the
// section's pressure distribution; that formula is not implemented here (not recalled with enough
// confidence), so this method uses the same ε_sb as 'barlow-rae-pope' and the two classical methods
// now give the same numbers; both names are kept because sessions and reports name them.
// MASKELL (E. C. Maskell, "A theory of the blockage effects on bluff bodies and stalled wings in a
// closed wind tunnel", ARC R&M 3400, 1965 — from memory, and as the issue quotes it): for separated
// flow the dynamic pressure rises by Δq/q = θ·c_D·S/C, S the model's reference area (c × span) and C
// the section area (h × width), so S/C = c/h in two dimensions and ε_wb = Δq/(2q) = ½θ·cd·c/h.
// θ = 0.96 by default (settings.maskellTheta): Maskell's report gives a two-dimensional factor a
// little less than unity; a published comparison of 2-D correction schemes up to large α (TU Delft,
// "Wind tunnel wall corrections for two-dimensional testing up to large angles of attack") found
// 0.96 good in deep stall for c/h up to 0.27 and 1.03 fitting its data better. We keep the value
// tied to Maskell's analysis rather than one facility's best fit; 1.03 is one setting away. The
// solid blockage and σ terms stay classical. cd is the uncorrected section drag the caller chooses
// (app/correctionChoice.ts: the captured wake drag or the pressure drag, whichever is larger).
// Section area for V_model: shoelace area of the section contour (NACA 4-digit formulas of Abbott &
// von Doenhoff, or user coordinates) from app/panel.ts.

import { geometryPoints } from './panel';
import type { Coefficients, CorrectionResult, Geometry } from './types';

/** Methods computed from the geometry and the drag alone. */
export type FormulaMethod = 'barlow-rae-pope' | 'allen-vincenti' | 'maskell' | 'none';

/** Maskell's 2-D blockage factor used by default (see the header). */
export const MASKELL_THETA = 0.96;

/** Thom/Barlow solid-blockage constant for a two-dimensional model spanning the section. */
export const K1_SPANNING = 0.74;

/** Panels used to compute the section area (area error of the polygon < 1e-5 c² here). */
const AREA_PANELS = 400;

/** Cross-sectional area of the section in units of c² (shoelace formula on the contour). */
export function sectionArea(geometry: Geometry): number {
  const { x, y } = geometryPoints(geometry, AREA_PANELS);
  let a2 = 0;
  for (let i = 0, n = x.length; i < n; i++) {
    const j = (i + 1) % n;
    a2 += x[i] * y[j] - x[j] * y[i];
  }
  return Math.abs(a2) / 2;
}

/** Blockage and streamline-curvature parameters of REDUCTION.md §8. Lengths in m. */
export function wallCorrections(args: {
  chord: number;
  height: number;
  width: number;
  sectionAreaC2: number;
  cdU: number;
  method: FormulaMethod;
  /** Maskell's θ (method 'maskell' only), default MASKELL_THETA. */
  maskellTheta?: number;
}): CorrectionResult {
  const { chord, height, width, sectionAreaC2, cdU, method } = args;
  if (method === 'none') return { method, sigma: 0, epsSb: 0, epsWb: 0, eps: 0 };
  for (const [name, v] of [['chord', chord], ['section height', height], ['section width', width]] as const) {
    if (!(v > 0)) throw new RangeError(`wall corrections: ${name} must be > 0 m (got ${v})`);
  }
  if (!(sectionAreaC2 >= 0)) {
    throw new RangeError(`wall corrections: section area must be ≥ 0 (got ${sectionAreaC2})`);
  }
  if (!Number.isFinite(cdU)) {
    throw new RangeError(
      `wall corrections: uncorrected drag coefficient must be finite (got ${cdU}); ` +
        'pass the pressure drag cd_p when there is no wake measurement',
    );
  }
  const ch = chord / height;
  const sigma = ((Math.PI * Math.PI) / 48) * ch * ch;
  // V_model = section area × span (the model spans the section width); C = h × width.
  const vModel = sectionAreaC2 * chord * chord * width;
  const C = height * width;
  const epsSb = (K1_SPANNING * vModel) / C ** 1.5; // same for 'allen-vincenti' (see header)
  let epsWb: number;
  if (method === 'maskell') {
    const theta = args.maskellTheta ?? MASKELL_THETA;
    if (!(theta > 0 && theta < 5)) throw new RangeError(`wall corrections: Maskell's θ must be in (0, 5) (got ${theta})`);
    epsWb = 0.5 * theta * ch * cdU; // Δq/q = θ·cd·c/h, ε = Δq/2q
  } else {
    epsWb = (ch / 4) * cdU; // the source between walls (header), both classical methods
  }
  return { method, sigma, epsSb, epsWb, eps: epsSb + epsWb };
}

const RAD_TO_DEG = 180 / Math.PI; // Barlow's "57.3"

/** Corrected coefficients (REDUCTION.md §8). cmc4U is the uncorrected cm_c/4 that enters α. With
 *  measured upwash and curvature (c.measured, the wall-signature method) those replace the σ terms:
 *  α = α_u + Δα, cl = cl_u(1 − 2ε) + Δcl, cm = cm_u(1 − 2ε) + Δcm (app/wallSignature.ts). */
export function applyCorrections(u: Coefficients, c: CorrectionResult, cmc4U: number): Coefficients {
  const { sigma, epsSb, epsWb, eps, measured } = c;
  const cl = measured ? u.cl * (1 - 2 * eps) + measured.dCl : u.cl * (1 - sigma - 2 * eps);
  const dragFactor = 1 - 3 * epsSb - 2 * epsWb;
  return {
    cl,
    cd: u.cd * dragFactor,
    // Pressure drag: same blockage factor as the wake drag (REDUCTION.md §8 names only cd).
    cdp: u.cdp * dragFactor,
    cmc4: measured ? u.cmc4 * (1 - 2 * eps) + measured.dCm : u.cmc4 * (1 - 2 * eps) + (sigma * cl) / 4,
    alphaDeg: measured
      ? u.alphaDeg + measured.dAlphaDeg
      : u.alphaDeg + ((RAD_TO_DEG * sigma) / (2 * Math.PI)) * (u.cl + 4 * cmc4U),
    q: u.q * (1 + 2 * eps),
    V: u.V * (1 + eps),
    Re: u.Re * (1 + eps),
  };
}
