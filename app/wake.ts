// Wake-rake drag by Jones' wake-momentum formula (B. M. Jones, "The measurement of profile drag
// by the pitot-traverse method", ARC R&M 1688, 1936; as given in Barlow, Rae & Pope, Low-Speed
// Wind Tunnel Testing, 3rd ed., 1999, ch. 9 — from memory):
//   cd = (2/c) ∫ √((H_w − p_w)/q∞) · (1 − √((H_w − p∞)/q∞)) dy
// H_w local total pressure, p_w local static pressure at the rake, q∞ = H∞ − p∞. Without rake static
// probes the far-wake assumption p_w = p∞ is used (reported as staticUsed = false).
// Integration: composite trapezoid over the probes sorted by y. Wake centre: centroid of the
// total-pressure deficit 1 − cpt, cpt = (H_w − p∞)/q∞; wake width: distance between the points
// where the deficit falls to 5 % of its peak (linear interpolation between probes). The centroid
// and 5 % width definitions are common practice, no source.

import type { WakeResult } from './types';
import { interpLinear, requireFinite, trapezoid } from './quadrature';

export interface WakeProbeInput {
  /** Vertical position, m. */
  y: number;
  /** Total pressure, Pa (same reference as pInf). */
  H: number;
  /** Local static pressure interpolated at y, Pa, if the rake has static probes. */
  ps?: number;
}

export interface JonesArgs {
  probes: WakeProbeInput[];
  pInf: number;
  qInf: number;
  chord: number;
  /** Captured when both edges have |cpt − 1| < edgeTol. */
  edgeTol: number;
}

/** Fraction of the peak deficit that bounds the reported wake width. */
export const WAKE_WIDTH_FRACTION = 0.05;

/**
 * Local static pressure at y from the rake's static probes: linear between probes, constant
 * beyond the outermost ones.
 */
export function interpolateStatic(statics: { y: number; p: number }[], y: number): number {
  if (statics.length === 0) throw new Error('interpolateStatic: the rake has no static probes');
  let sorted = true;
  for (let i = 1; i < statics.length; i++) if (!(statics[i - 1].y - statics[i].y <= 0)) { sorted = false; break; }
  const s = sorted ? statics : [...statics].sort((a, b) => a.y - b.y);
  const ys = new Array<number>(s.length);
  const ps = new Array<number>(s.length);
  for (let i = 0; i < s.length; i++) {
    const q = s[i];
    if (!Number.isFinite(q.y)) requireFinite(q.y, `static probe ${i} y`);
    if (!Number.isFinite(q.p)) requireFinite(q.p, `static probe ${i} (y = ${q.y} m) pressure`);
    ys[i] = q.y;
    ps[i] = q.p;
  }
  return interpLinear(ys, ps, y);
}

/** The Jones integrand √a·(1 − √b) for a = (H_w − p_w)/q∞ and b = (H_w − p∞)/q∞, each radicand
 *  clamped at 0 (shared with the Monte Carlo plan of app/mcPlan.ts). */
export function jonesTerm(a: number, b: number): number {
  if (a < 0) a = 0;
  if (b < 0) b = 0;
  return Math.sqrt(a) * (1 - Math.sqrt(b));
}

/** cd = (2/c) ∫ integrand dy, trapezoid over the probes sorted by y. */
export function jonesIntegral(y: ArrayLike<number>, integrand: ArrayLike<number>, chord: number): number {
  return (2 / chord) * trapezoid(y, integrand);
}

/** Jones wake-momentum drag, wake centre, width and capture test from a rake traverse. */
export function jonesDrag(args: JonesArgs): WakeResult {
  const { pInf, qInf, chord, edgeTol } = args;
  requireFinite(pInf, 'Wake: free-stream static p∞');
  requireFinite(qInf, 'Wake: free-stream dynamic pressure q∞');
  requireFinite(chord, 'Wake: chord');
  if (!(qInf > 0)) throw new Error(`Wake: q∞ must be positive (got ${qInf} Pa)`);
  if (!(chord > 0)) throw new Error(`Wake: chord must be positive (got ${chord} m)`);
  if (args.probes.length < 2) {
    throw new Error(`Wake: need at least 2 total-pressure probes (got ${args.probes.length})`);
  }
  const probes = [...args.probes];
  let sorted = true;
  for (let i = 1; i < probes.length; i++) if (!(probes[i - 1].y - probes[i].y <= 0)) { sorted = false; break; }
  if (!sorted) probes.sort((a, b) => a.y - b.y);
  const withStatic = probes.filter((p) => p.ps !== undefined).length;
  if (withStatic !== 0 && withStatic !== probes.length) {
    throw new Error(
      `Wake: ${withStatic} of ${probes.length} total probes have a local static; give all or none`,
    );
  }
  const staticUsed = withStatic === probes.length;
  probes.forEach((p, i) => {
    if (!Number.isFinite(p.y)) requireFinite(p.y, `Wake probe ${i} y`);
    if (!Number.isFinite(p.H)) requireFinite(p.H, `Wake probe at y = ${p.y} m total pressure`);
    if (p.ps !== undefined && !Number.isFinite(p.ps)) requireFinite(p.ps, `Wake probe at y = ${p.y} m local static`);
  });

  const y = probes.map((p) => p.y);
  const cpt = probes.map((p) => (p.H - pInf) / qInf);
  let clamped = 0;
  const integrand = probes.map((p, i) => {
    const pw = staticUsed ? (p.ps as number) : pInf;
    const a = (p.H - pw) / qInf;
    const b = cpt[i];
    if (a < 0) clamped++;
    if (b < 0) clamped++;
    return jonesTerm(a, b);
  });
  const cd = jonesIntegral(y, integrand, chord);

  const n = probes.length;
  const edgeCpt: [number, number] = [cpt[0], cpt[n - 1]];
  // Captured: both edges at free-stream total pressure within edgeTol, and the largest deficit
  // inside the rake, not on either of its two outermost probes at each end (a wake that has run
  // off the rake can leave only its faint fringe on the edge probes; common practice, no source).
  let iPeak = 0;
  for (let i = 1; i < n; i++) if (cpt[i] < cpt[iPeak]) iPeak = i;
  const peakInside = n < 5 || (iPeak >= 2 && iPeak <= n - 3);
  const captured = Math.abs(edgeCpt[0] - 1) < edgeTol && Math.abs(edgeCpt[1] - 1) < edgeTol && peakInside;

  const { centre, width } = wakeShape(y, cpt);

  return {
    cd,
    centre,
    width,
    captured,
    staticUsed,
    edgeCpt,
    profile: probes.map((p, i) => ({ y: p.y, cpt: cpt[i] })),
    clampedRadicands: clamped,
  };
}

/**
 * Centre (deficit-weighted centroid, negative deficits weighted 0) and width (between the 5 %-of-
 * peak deficit points, found walking outwards from the peak and interpolated linearly; if the
 * deficit never falls that low on one side the edge probe bounds the width there).
 * NaN for both when there is no positive deficit.
 */
function wakeShape(y: number[], cpt: number[]): { centre: number; width: number } {
  const d = cpt.map((c) => Math.max(0, 1 - c));
  const area = trapezoid(y, d);
  let iPeak = 0;
  for (let i = 1; i < d.length; i++) if (d[i] > d[iPeak]) iPeak = i;
  const peak = d[iPeak];
  if (!(peak > 0) || !(area > 0)) return { centre: NaN, width: NaN };
  const centre = trapezoid(y, d.map((di, i) => di * y[i])) / area;

  const level = WAKE_WIDTH_FRACTION * peak;
  const crossing = (i: number, j: number): number => {
    // d[i] >= level > d[j]; linear interpolation for the level crossing.
    const t = (d[i] - level) / (d[i] - d[j]);
    return y[i] + t * (y[j] - y[i]);
  };
  let lo = y[0];
  for (let i = iPeak; i > 0; i--) {
    if (d[i - 1] < level) { lo = crossing(i, i - 1); break; }
  }
  let hi = y[y.length - 1];
  for (let i = iPeak; i < y.length - 1; i++) {
    if (d[i + 1] < level) { hi = crossing(i, i + 1); break; }
  }
  return { centre, width: hi - lo };
}
