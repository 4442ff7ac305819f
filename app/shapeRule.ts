// The 'shape' contour rule (Settings.contourRule; issue 9 part 5, docs/TAP-JUDGEMENT.md §3): the
// measured Cp of a row integrated as the fitted inviscid shape plus the measured departure from
// it, linear between taps. The shape is the linear-vortex panel solution of the model's geometry
// (app/panel.ts, app/tapShape.ts) at an effective angle α_eff, taken to the run's Mach number by
// the Kármán–Tsien rule; a, b and α_eff are the least-squares fit Cp ≈ a + b·shape(α_eff) over the
// row's good taps (the fit of the shape-aided tap test, app/tapCheck.ts, on the taps kept). Then
//     ∮ Cp = ∮ [a + b·shape] + ∮ lin(Cp − a − b·shape) = ∮ lin(Cp) + b·(∮ shape − ∮ lin(shape)),
// lin(·) being the linear rule's interpolant through the taps and the constant integrating to
// nothing round the closed contour. The linear rule's error on a sparse row comes from the
// suction peak and the nose, which the shape carries; what is left to the taps is the viscous
// departure from it, smoother than Cp itself. This is the classical use of a theoretical
// distribution as the interpolating basis (the defect, not Cp, interpolated; common practice, no
// source). With α_eff fixed the rule is linear in the taps' Cp (b is), so a gain or an offset
// common to every tap moves the loads exactly as under the linear rule.
// α_eff is fitted once, in the nominal pass; the Monte Carlo draws keep it and the shape at each
// tap's nominal place, and refit b per draw (app/mcPlan.ts).
// Where the rule has nothing to stand on the row is integrated by the linear rule and says so
// (SurfaceLoads.rule): fewer than SHAPE_RULE_MIN taps, no panel solution of the geometry, or a
// fit with b ≤ 0 (a shape that does not even rise with the measured Cp).
import { contourIntegrals, karmanTsien, orderContour, type RowShape } from './surface';
import { SHAPE_ALPHA_SPAN, SHAPE_ALPHA_STEP } from './tapCheck';
import { inviscidShape, shapeAtMidpoints } from './tapShape';
import type { Geometry, Surface } from './types';

/** Fewest good taps a row needs for the 'shape' rule (three parameters are fitted; the issue's
 *  sparsest row is 12 taps). */
export const SHAPE_RULE_MIN = 10;

/** The row's shape (see the module comment) from its good taps at the run's α and Mach number,
 *  or null when the rule cannot be used (the row is then integrated by the linear rule). */
export function rowShape(
  geometry: Geometry, taps: readonly { id: string; x: number; y: number; surface: Surface; cp: number }[], alphaDeg: number, mach = 0,
): RowShape | null {
  if (taps.length < SHAPE_RULE_MIN || !Number.isFinite(alphaDeg)) return null;
  if (!taps.some((t) => t.surface === 'upper') || !taps.some((t) => t.surface === 'lower')) return null;
  const ordered = orderContour(taps);
  const map = (c: number) => karmanTsien(c, mach).cp;
  let shape: ReturnType<typeof inviscidShape>;
  try {
    shape = inviscidShape(geometry, ordered);
  } catch {
    return null;
  }
  const n = ordered.length;
  const y = ordered.map((t) => t.cp);
  const v = new Float64Array(n);
  let best = { sse: Infinity, b: 0, alpha: alphaDeg };
  for (let ae = alphaDeg - SHAPE_ALPHA_SPAN; ae <= alphaDeg + SHAPE_ALPHA_SPAN + 1e-9; ae += SHAPE_ALPHA_STEP) {
    const c0 = shape.cp(ae);
    let sx = 0;
    let sy = 0;
    for (let i = 0; i < n; i++) {
      v[i] = map(c0[i]);
      sx += v[i];
      sy += y[i];
    }
    const mx = sx / n;
    const my = sy / n;
    let sxx = 0;
    let sxy = 0;
    let syy = 0;
    for (let i = 0; i < n; i++) {
      sxx += (v[i] - mx) ** 2;
      sxy += (v[i] - mx) * (y[i] - my);
      syy += (y[i] - my) ** 2;
    }
    if (!(sxx > 0)) continue;
    const b = sxy / sxx;
    const sse = Math.max(0, syy - b * sxy);
    if (b > 0 && sse < best.sse) best = { sse, b, alpha: ae };
  }
  if (!Number.isFinite(best.sse)) return null;
  const at = shape.cp(best.alpha);
  const byId = new Map<string, number>();
  for (let i = 0; i < n; i++) byId.set(ordered[i].id, map(at[i]));
  const mid = shapeAtMidpoints(geometry, best.alpha, map);
  const whole = contourIntegrals(mid.x, mid.y, mid.cp, mid.cp.length, mid.nUpper, 0, 'linear');
  if (![whole.cn, whole.ca, whole.cmLE].every(Number.isFinite)) return null;
  return { v: byId, cn: whole.cn, ca: whole.ca, cmLE: whole.cmLE, alphaEffDeg: best.alpha, rms: Math.sqrt(best.sse / n) };
}
