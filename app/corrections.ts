// Two-dimensional closed-wall corrections (REDUCTION.md §8), after J. B. Barlow, W. H. Rae, A. Pope,
// Low-Speed Wind Tunnel Testing, 3rd ed., Wiley 1999, ch. 9, and H. J. Allen & W. G. Vincenti,
// "Wall interference in a two-dimensional-flow wind tunnel, with consideration of the effect of
// compressibility", NACA Report 782 (1944) — both from memory:
//   σ = (π²/48)(c/h)²;  ε_sb = K₁ V_model / C^{3/2}, K₁ = 0.74 (model spanning the section),
//   C = h × width;  ε_wb = (c/2h) cd_u;  ε = ε_sb + ε_wb;
//   q = q_u(1 + 2ε);  V = V_u(1 + ε);  Re = Re_u(1 + ε);
//   α = α_u + (57.3σ/2π)(cl_u + 4 cm_c/4,u) [deg];  cl = cl_u(1 − σ − 2ε);
//   cm_c/4 = cm_c/4,u(1 − 2ε) + σ cl/4;  cd = cd_u(1 − 3ε_sb − 2ε_wb).
// 'allen-vincenti': Allen & Vincenti write ε_sb = Λσ with a body-shape factor Λ found from the
// section's pressure distribution; that formula is not implemented here (not recalled with enough
// confidence), so this method currently uses the same ε_sb as 'barlow-rae-pope'. Its wake blockage
// is Thom's ε_wb = (c/4h)·cd_u as Allen & Vincenti give it (memory), which also follows from
// representing the wake by a source of the wake's volume deficit Q = D/(ρV) = ½V·c·cd_u: in a
// channel of height h it raises the far-downstream speed by Q/h and the speed at the model by half
// that, Q/(2h) (derived here by the image argument, common practice). 'barlow-rae-pope' keeps the
// book's (c/2h)·cd_u, as REDUCTION.md §8 prescribes.
// Section area for V_model: shoelace area of the section contour (NACA 4-digit formulas of Abbott &
// von Doenhoff, or user coordinates) from app/panel.ts.

import { geometryPoints } from './panel';
import type { Coefficients, CorrectionMethod, CorrectionResult, Geometry } from './types';

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
  method: CorrectionMethod;
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
  // ε_wb: (c/2h)·cd_u per Barlow, Rae & Pope ch. 9 (REDUCTION.md §8); (c/4h)·cd_u per Allen &
  // Vincenti (Thom's result; see the header).
  const epsWb = (method === 'allen-vincenti' ? ch / 4 : ch / 2) * cdU;
  return { method, sigma, epsSb, epsWb, eps: epsSb + epsWb };
}

const RAD_TO_DEG = 180 / Math.PI; // Barlow's "57.3"

/** Corrected coefficients (REDUCTION.md §8). cmc4U is the uncorrected cm_c/4 that enters α. */
export function applyCorrections(u: Coefficients, c: CorrectionResult, cmc4U: number): Coefficients {
  const { sigma, epsSb, epsWb, eps } = c;
  const cl = u.cl * (1 - sigma - 2 * eps);
  const dragFactor = 1 - 3 * epsSb - 2 * epsWb;
  return {
    cl,
    cd: u.cd * dragFactor,
    // Pressure drag: same blockage factor as the wake drag (REDUCTION.md §8 names only cd).
    cdp: u.cdp * dragFactor,
    cmc4: u.cmc4 * (1 - 2 * eps) + (sigma * cl) / 4,
    alphaDeg: u.alphaDeg + ((RAD_TO_DEG * sigma) / (2 * Math.PI)) * (u.cl + 4 * cmc4U),
    q: u.q * (1 + 2 * eps),
    V: u.V * (1 + eps),
    Re: u.Re * (1 + eps),
  };
}
