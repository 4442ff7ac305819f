// The inviscid shape of a row's pressure distribution at its taps, for the bad-tap test
// (app/tapCheck.ts findRowOutliers, option `shape`; docs/TAP-JUDGEMENT.md §1). The linear-vortex
// panel method of app/panel.ts on the model's geometry gives Cp at any α by superposition: the
// surface speed is V_t(α) = cos α·V₀ + sin α·V₉₀, so with A = V₀², B = V₉₀², C = V₀V₉₀ (from the
// solutions at 0°, 90° and 45°: C = (1 − Cp₄₅) − (A + B)/2),
//     Cp(α) = 1 − (cos²α·A + sin²α·B + 2 sin α cos α·C)
// at each tap, three solutions per geometry serving every α. Each tap takes the values at the
// nearest point of the panel midpoints' polygon, linearly between the two midpoints. The shape's
// own uncertainty at a tap is the change of that Cp from SHAPE_PANELS to half as many panels (the
// method converges at second order, so the finer solution's error is about a third of it;
// taking the whole change is the cautious choice). Pure module.
import { geometryPoints, panelSolve } from './panel';
import type { Geometry } from './types';

/** Panels of the finer solution (and half as many for its uncertainty). */
export const SHAPE_PANELS = 240;

export interface InviscidShape {
  /** Inviscid Cp at each tap (in the order given) at alphaDeg. */
  cp(alphaDeg: number): Float64Array;
  /** Standard uncertainty of that Cp from the discretisation, at alphaDeg. */
  u(alphaDeg: number): Float64Array;
  /** The coarser solution's Cp at each tap (SHAPE_PANELS / 2 panels). */
  coarse(alphaDeg: number): Float64Array;
  /** Each tap's place on the finer and the coarser solution's midpoint polygon (index of the
   *  midpoint before it + fraction along to the next), and its largest distance from the finer
   *  one, in chords. */
  pos: { fine: Float64Array; coarse: Float64Array; maxDist: number };
}

interface Coefs {
  A: Float64Array;
  B: Float64Array;
  C: Float64Array;
  /** Each tap's place on the midpoints' polygon (index of the midpoint before it + fraction) and
   *  its distance from that polygon, in chords (coefsAt only). */
  pos?: Float64Array;
  dist?: Float64Array;
}

function coefsAt(g: Geometry, nPanels: number, taps: readonly { x: number; y: number }[]): Coefs {
  const { x, y } = geometryPoints(g, nPanels);
  const s0 = panelSolve(x, y, 0);
  const s90 = panelSolve(x, y, 90);
  const s45 = panelSolve(x, y, 45);
  const n = taps.length;
  const A = new Float64Array(n);
  const B = new Float64Array(n);
  const C = new Float64Array(n);
  const pos = new Float64Array(n);
  const dist = new Float64Array(n);
  const xm = s0.xm;
  const ym = s0.ym;
  for (let t = 0; t < n; t++) {
    let best = Infinity;
    let bi = 0;
    let bf = 0;
    for (let i = 0; i + 1 < xm.length; i++) {
      const dx = xm[i + 1] - xm[i];
      const dy = ym[i + 1] - ym[i];
      const L2 = dx * dx + dy * dy;
      let f = L2 > 0 ? ((taps[t].x - xm[i]) * dx + (taps[t].y - ym[i]) * dy) / L2 : 0;
      f = Math.max(0, Math.min(1, f));
      const d = Math.hypot(xm[i] + f * dx - taps[t].x, ym[i] + f * dy - taps[t].y);
      if (d < best) {
        best = d;
        bi = i;
        bf = f;
      }
    }
    const lerp = (v: readonly number[]) => v[bi] * (1 - bf) + v[bi + 1] * bf;
    const a = 1 - lerp(s0.cp);
    const b = 1 - lerp(s90.cp);
    A[t] = a;
    B[t] = b;
    C[t] = 1 - lerp(s45.cp) - (a + b) / 2;
    pos[t] = bi + bf;
    dist[t] = best;
  }
  return { A, B, C, pos, dist };
}

function cpOf(k: Coefs, alphaDeg: number): Float64Array {
  const a = (alphaDeg * Math.PI) / 180;
  const c = Math.cos(a);
  const s = Math.sin(a);
  const out = new Float64Array(k.A.length);
  for (let i = 0; i < out.length; i++) out[i] = 1 - (c * c * k.A[i] + s * s * k.B[i] + 2 * s * c * k.C[i]);
  return out;
}

const cache = new Map<string, InviscidShape>();
const CACHE_SIZE = 64;

function geometryKey(g: Geometry): string {
  return g.kind === 'naca4' ? `naca4:${g.code.trim()}` : `xy:${g.x.join(',')}|${g.y.join(',')}`;
}

/** The inviscid shape of the model's geometry at these taps (cached by geometry and taps). */
export function inviscidShape(g: Geometry, taps: readonly { x: number; y: number }[]): InviscidShape {
  const key = `${geometryKey(g)}#${taps.map((t) => `${t.x},${t.y}`).join(';')}`;
  let shape = cache.get(key);
  if (shape) {
    cache.delete(key);
  } else {
    const fine = coefsAt(g, SHAPE_PANELS, taps);
    const coarse = coefsAt(g, SHAPE_PANELS / 2, taps);
    shape = {
      cp: (alphaDeg) => cpOf(fine, alphaDeg),
      coarse: (alphaDeg) => cpOf(coarse, alphaDeg),
      pos: { fine: fine.pos!, coarse: coarse.pos!, maxDist: Math.max(0, ...fine.dist!) },
      u: (alphaDeg) => {
        const f = cpOf(fine, alphaDeg);
        const c = cpOf(coarse, alphaDeg);
        for (let i = 0; i < f.length; i++) f[i] = Math.abs(c[i] - f[i]);
        return f;
      },
    };
    if (cache.size >= CACHE_SIZE) cache.delete(cache.keys().next().value!);
  }
  cache.set(key, shape);
  return shape;
}

/** The finer solution's Cp coefficients at its own panel midpoints, with the midpoints' polygon
 *  (TE → upper → LE → lower → TE) and how many of them are on the upper surface. */
interface Midpoints extends Coefs { x: Float64Array; y: Float64Array; nUpper: number }
const midCache = new Map<string, Midpoints>();

function midpointsOf(g: Geometry, panels: number): Midpoints {
  const key = `${panels}#${geometryKey(g)}`;
  let m = midCache.get(key);
  if (m) return m;
  const { x, y } = geometryPoints(g, panels);
  const s0 = panelSolve(x, y, 0);
  const s90 = panelSolve(x, y, 90);
  const s45 = panelSolve(x, y, 45);
  const n = s0.cp.length;
  const A = new Float64Array(n);
  const B = new Float64Array(n);
  const C = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    A[i] = 1 - s0.cp[i];
    B[i] = 1 - s90.cp[i];
    C[i] = 1 - s45.cp[i] - (A[i] + B[i]) / 2;
  }
  let nUpper = 0;
  while (nUpper < n && s0.surface[nUpper] === 'upper') nUpper++;
  m = { A, B, C, x: Float64Array.from(s0.xm), y: Float64Array.from(s0.ym), nUpper };
  if (midCache.size >= CACHE_SIZE) midCache.delete(midCache.keys().next().value!);
  midCache.set(key, m);
  return m;
}

/** The inviscid shape's Cp at the panel midpoints (of the finer solution unless `panels` says) at alphaDeg, passed through
 *  `map` (the compressibility rule), with the midpoints' polygon: what the 'shape' contour rule
 *  integrates as the shape's own integral (app/shapeRule.ts). */
export function shapeAtMidpoints(
  g: Geometry, alphaDeg: number, map: (cp0: number) => number = (c) => c, panels = SHAPE_PANELS,
): { x: Float64Array; y: Float64Array; cp: Float64Array; nUpper: number } {
  const m = midpointsOf(g, panels);
  const cp = cpOf(m, alphaDeg);
  for (let i = 0; i < cp.length; i++) cp[i] = map(cp[i]);
  return { x: m.x, y: m.y, cp, nUpper: m.nUpper };
}
