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
import { orderContour, type RowShape } from './surface';
import { SHAPE_ALPHA_SPAN, SHAPE_ALPHA_STEP } from './tapCheck';
import { inviscidShape, shapeAtMidpoints, SHAPE_PANELS } from './tapShape';
import type { Geometry, Surface } from './types';

/** Fewest good taps a row needs for the 'shape' rule (three parameters are fitted; the issue's
 *  sparsest row is 12 taps). */
export const SHAPE_RULE_MIN = 10;
/** Taps aft of this x/c are not fitted, and the shape's departure is not added there (see
 *  rowShape). */
export const SHAPE_FIT_X = 0.95;
/** Largest distance of a tap from the model's contour (the finer panel solution's midpoint
 *  polygon), in chords, for the rule to be used: 0.5 mm on a 250 mm chord. */
export const SHAPE_ON_CONTOUR = 0.002;

/** The row's shape (see the module comment) from its good taps at the run's α and Mach number,
 *  or null when the rule cannot be used (the row is then integrated by the linear rule). */
export function rowShape(
  geometry: Geometry, taps: readonly { id: string; x: number; y: number; surface: Surface; cp: number }[], alphaDeg: number, mach = 0,
): RowShape | null {
  if (taps.length < SHAPE_RULE_MIN || !Number.isFinite(alphaDeg)) return null;
  if (!taps.some((t) => t.surface === 'upper') || !taps.some((t) => t.surface === 'lower')) return null;
  const ordered = orderContour(taps);
  // karmanTsien(c, mach).cp, without an object per call (the grid below makes thousands).
  const beta = Math.sqrt(1 - mach * mach);
  const kt = (mach * mach) / (1 + beta) / 2;
  const map = mach > 0 ? (c: number) => c / Math.max(beta / 4, beta + kt * c) : (c: number) => c;
  let shape: ReturnType<typeof inviscidShape>;
  try {
    shape = inviscidShape(geometry, ordered);
  } catch {
    return null;
  }
  // Taps that do not lie on the model's contour say the geometry is not this model's (or the
  // taps' coordinates are not): the shape would then add its own error, not take one away.
  if (!(shape.pos.maxDist <= SHAPE_ON_CONTOUR)) return null;
  const n = ordered.length;
  const y = ordered.map((t) => t.cp);
  const v = new Float64Array(n);
  // Taps aft of SHAPE_FIT_X are left out of the fit (not of the integral): the inviscid solution
  // of a finite-angle trailing edge has a stagnation point there that no real flow shows, and
  // the boundary layer departs from the shape most there; a tap next to the edge otherwise pulls
  // b far from 1 even on exact inviscid data.
  const w = Float64Array.from(ordered, (t) => (t.x <= SHAPE_FIT_X ? 1 : 0));
  let nFit = 0;
  for (let i = 0; i < n; i++) nFit += w[i];
  if (nFit < SHAPE_RULE_MIN) return null;
  let best = { sse: Infinity, b: 0, alpha: alphaDeg };
  for (let ae = alphaDeg - SHAPE_ALPHA_SPAN; ae <= alphaDeg + SHAPE_ALPHA_SPAN + 1e-9; ae += SHAPE_ALPHA_STEP) {
    const c0 = shape.cp(ae);
    let sx = 0;
    let sy = 0;
    for (let i = 0; i < n; i++) {
      v[i] = map(c0[i]);
      sx += w[i] * v[i];
      sy += w[i] * y[i];
    }
    const mx = sx / nFit;
    const my = sy / nFit;
    let sxx = 0;
    let sxy = 0;
    let syy = 0;
    for (let i = 0; i < n; i++) {
      sxx += w[i] * (v[i] - mx) ** 2;
      sxy += w[i] * (v[i] - mx) * (y[i] - my);
      syy += w[i] * (y[i] - my) ** 2;
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
  const fine = departure(ordered, shape.pos.fine, mid, Float64Array.from(at, map));
  const coarse = departure(ordered, shape.pos.coarse, shapeAtMidpoints(geometry, best.alpha, map, SHAPE_PANELS / 2), Float64Array.from(shape.coarse(best.alpha), map));
  if (!fine || !coarse) return null;
  // The same for the row's two interleaved halves (every other tap from the first and from the
  // second), which the integration estimate integrates by this rule (app/reductionErrors.ts).
  const half = (start: number) => {
    const idx: number[] = [];
    for (let k = start; k < n; k += 2) idx.push(k);
    return departure(idx.map((k) => ordered[k]), Float64Array.from(idx, (k) => shape.pos.fine[k]), mid, Float64Array.from(idx, (k) => map(at[k])));
  };
  const h0 = half(0);
  const h1 = half(1);
  if (!h0 || !h1) return null;
  // The shape's own error: the departure again with the coarser panel solution; its whole change
  // (times b) is taken as the standard uncertainty (second-order convergence would make the finer
  // solution's error about a third of it: the cautious choice, as for the shape's Cp in
  // app/tapShape.ts).
  const a = (alphaDeg * Math.PI) / 180;
  const dcn = best.b * (fine.cn - coarse.cn);
  const dca = best.b * (fine.ca - coarse.ca);
  const dcm = best.b * (fine.cmLE - coarse.cmLE);
  const u = {
    cl: Math.abs(dcn * Math.cos(a) - dca * Math.sin(a)),
    cdp: Math.abs(dcn * Math.sin(a) + dca * Math.cos(a)),
    cmc4: Math.abs(dcm + dcn / 4),
  };
  return { v: byId, cn: fine.cn, ca: fine.ca, cmLE: fine.cmLE, alphaEffDeg: best.alpha, rms: Math.sqrt(best.sse / nFit), u, fitX: SHAPE_FIT_X, halves: [h0, h1] };
}

/**
 * The shape's departure from the linear rule between taps: for each pair of neighbouring taps
 * (contour order) both at x/c ≤ SHAPE_FIT_X, the integrals (cn, ca, cm_LE) of the shape along
 * the model's contour between them (the panel midpoints' polygon, with the shape's Cp there)
 * less those of the straight segment with the shape linear along it. Aft of SHAPE_FIT_X, and on
 * the trailing-edge closure, nothing is added: the linear rule stands there. Null when the taps'
 * places on the polygon do not run in contour order (back by more than POS_REVERSAL panels).
 */
const POS_REVERSAL = 3;
function departure(
  ordered: readonly { x: number; y: number }[], pos: Float64Array,
  mid: { x: Float64Array; y: Float64Array; cp: Float64Array }, v: Float64Array,
): { cn: number; ca: number; cmLE: number } | null {
  let dDx = 0;
  let dDy = 0;
  let dMom = 0;
  const n = ordered.length;
  // Two taps at the nose can sit in the other order along the panels than in contour order (a tap
  // a hair ahead of x/c 0 on a cambered nose, which orderContour's x order puts after the nose
  // tap): the path then runs back along the panels between them. A larger reversal says the taps
  // are not in order.
  for (let k = 0; k + 1 < n; k++) if (!(pos[k + 1] >= pos[k] - POS_REVERSAL)) return null;
  const seg = (px: number, py: number, pf: number, qx: number, qy: number, qf: number, sign: number) => {
    const dx = qx - px;
    const dy = qy - py;
    dDx += sign * 0.5 * (pf + qf) * dx;
    dDy += sign * 0.5 * (pf + qf) * dy;
    dMom += sign * ((dx / 6) * (pf * (2 * px + qx) + qf * (px + 2 * qx)) + (dy / 6) * (pf * (2 * py + qy) + qf * (py + 2 * qy)));
  };
  for (let k = 0; k + 1 < n; k++) {
    const p = ordered[k];
    const q = ordered[k + 1];
    if (!(p.x <= SHAPE_FIT_X && q.x <= SHAPE_FIT_X)) continue;
    // Along the contour: the tap, the midpoints between, the next tap (backwards along the panels
    // when the next tap's place is behind this one's, so that the path covers the contour once
    // however the taps zigzag).
    let px = p.x;
    let py = p.y;
    let pf = v[k];
    const step = (i: number) => {
      seg(px, py, pf, mid.x[i], mid.y[i], mid.cp[i], 1);
      px = mid.x[i];
      py = mid.y[i];
      pf = mid.cp[i];
    };
    if (pos[k + 1] >= pos[k]) {
      for (let i = Math.floor(pos[k]) + 1; i <= Math.floor(pos[k + 1]) && i < mid.cp.length; i++) step(i);
    } else {
      for (let i = Math.floor(pos[k]); i > Math.floor(pos[k + 1]) && i >= 0; i--) step(i);
    }
    seg(px, py, pf, q.x, q.y, v[k + 1], 1);
    // Less the straight segment.
    seg(p.x, p.y, v[k], q.x, q.y, v[k + 1], -1);
  }
  if (![dDx, dDy, dMom].every(Number.isFinite)) return null;
  return { cn: dDx, ca: -dDy, cmLE: -dMom };
}
