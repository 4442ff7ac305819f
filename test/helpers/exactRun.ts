// Test helper: one data run on exact data (REDUCTION.md §11) with known true cl, cm_c/4 and cd —
// a Kármán–Trefftz section by conformal mapping with the Kutta condition (test/helpers/joukowski.ts)
// sampled at `taps` surface taps, and a Gaussian wake-rake profile whose Jones cd is found by a
// fine quadrature of the same formula over the whole wake — and its measured form: every channel's
// reading moved by a normal error of its stated standard uncertainty, optionally α and k_q off by
// theirs. No walls, no wind-off zeros, correction 'none' (the exact values are free-air values).
// The model's geometry is the section's own contour (240 panels of it), as a real setup gives the
// model's: the 'shape' contour rule (app/shapeRule.ts) integrates with it.
// The facility, model and numbers are invented test data.
import type { Channel, RunInfo, Setup, ZeroedRun } from '../../app/types';
import { karmanTrefftz, type ExactAirfoil } from './joukowski';

export interface ExactCase {
  setup: Setup;
  run: ZeroedRun;
  exact: { cl: number; cmc4: number; cd: number };
}

/** `count` sections at random (thickness, camber, trailing-edge angle, α), to be sampled by
 *  exactCase: building one takes tens of milliseconds. */
export function exactSections(count: number, uniform: () => number): { J: ExactAirfoil; alphaDeg: number }[] {
  return Array.from({ length: count }, () => {
    const m = 0.04 + 0.08 * uniform();
    const n = 0.1 * uniform();
    const tau = 8 * uniform();
    const alphaDeg = -2 + 10 * uniform();
    return { J: karmanTrefftz(m, n, alphaDeg, tau), alphaDeg };
  });
}

export interface ExactOptions {
  taps: number;
  /** Sections to pick from (exactSections). */
  sections: { J: ExactAirfoil; alphaDeg: number }[];
  /** Uniform deviates on [0, 1) and normal deviates N(0, 1). */
  uniform: () => number;
  normal: () => number;
  /** Draw the true α and k_q from their stated uncertainties too. */
  alphaAndKq: boolean;
  /** Standard uncertainties: taps, rake, references (Pa). */
  uTap?: number;
  uRake?: number;
  uRef?: number;
  /** The taps, given (e.g. arcTaps of the section picked: a realistic row); else `taps` of them
   *  evenly spaced in the circle plane with a random phase. */
  points?: (J: ExactAirfoil) => { x: number; y: number; cp: number; surface: 'upper' | 'lower' }[];
}

const CHORD = 0.3;
const Q = 950; // Pa
const KQ = 1.02;
const U_KQ = 0.003;
const U_ALPHA = 0.05; // deg
const RAKE_PROBES = 25;
const RAKE_HALF = 0.09; // m

/** Jones' integrand for p_w = p∞: √cpt (1 − √cpt). */
const jones = (cpt: number) => Math.sqrt(cpt) * (1 - Math.sqrt(cpt));

export function exactCase(o: ExactOptions): ExactCase {
  const { uniform: U, normal: N } = o;
  const uTap = o.uTap ?? 2;
  const uRake = o.uRake ?? 1.5;
  const uRef = o.uRef ?? 1;
  // A section and a tap phase at random: the reduction's own errors differ run to run.
  const { J, alphaDeg: alphaTrue } = o.sections[Math.floor(U() * o.sections.length)];
  const phase = U();
  const pts = o.points ? o.points(J) : Array.from({ length: o.taps }, (_, k) => J.at(J.thetaTE + (2 * Math.PI * (k + phase)) / o.taps));
  // Gaussian wake: peak deficit D of Cpt, spread s, centre yc.
  const D = 0.1 + 0.2 * U();
  const s = 0.012 + 0.015 * U();
  const yc = 0.02 * (2 * U() - 1);
  const cptAt = (y: number) => 1 - D * Math.exp(-0.5 * ((y - yc) / s) ** 2);
  // Exact Jones cd: composite Simpson over ±12 s (the integrand is below 1e-30 beyond), 4000 panels
  // (Simpson's error bound h⁴/180·max|f⁗|·L is below 1e-12 of cd here).
  const M = 4000;
  const a = yc - 12 * s;
  const h = (24 * s) / M;
  let sum = jones(cptAt(a)) + jones(cptAt(a + M * h));
  for (let i = 1; i < M; i++) sum += (i % 2 ? 4 : 2) * jones(cptAt(a + i * h));
  const cdExact = ((2 / CHORD) * sum * h) / 3;

  const kqTrue = o.alphaAndKq ? KQ + U_KQ * N() : KQ;
  const alphaLogged = o.alphaAndKq ? alphaTrue + U_ALPHA * N() : alphaTrue;
  const pInf = -420; // gauge, Pa
  const unc = (u: number) => ({ fullScale: 1000, percentFullScale: u / 10, offset: 0 });
  const channels: Channel[] = [
    { name: 'DP', target: { kind: 'reference', ref: 'dpRef' }, unit: 'Pa', uncertainty: unc(uRef) },
    { name: 'PS', target: { kind: 'reference', ref: 'pStatic' }, unit: 'Pa', uncertainty: unc(uRef) },
  ];
  const values: Record<string, number> = { DP: Q / kqTrue + uRef * N(), PS: pInf + uRef * N() };
  const taps: Setup['taps'] = pts.map((p, k) => ({ id: `T${k + 1}`, x: p.x, y: p.y, surface: p.surface, row: 'C', z: 0 }));
  pts.forEach((p, k) => {
    channels.push({ name: `S${k + 1}`, target: { kind: 'tap', id: `T${k + 1}` }, unit: 'Pa', uncertainty: unc(uTap) });
    values[`S${k + 1}`] = pInf + Q * p.cp + uTap * N();
  });
  const probes: Setup['rake']['probes'] = [];
  for (let i = 0; i < RAKE_PROBES; i++) {
    const y = -RAKE_HALF + (2 * RAKE_HALF * i) / (RAKE_PROBES - 1);
    probes.push({ id: `R${i + 1}`, y, kind: 'total' });
    channels.push({ name: `H${i + 1}`, target: { kind: 'rake', id: `R${i + 1}` }, unit: 'Pa', uncertainty: unc(uRake) });
    values[`H${i + 1}`] = pInf + Q * cptAt(y) + uRake * N();
  }
  const setup: Setup = {
    formatVersion: 1,
    session: { title: 'exact-data check', date: '2026-12-02', operators: ['test'] },
    facility: { name: 'test section', sectionHeight: 1.2, sectionWidth: 0.8, qCalibration: KQ, qCalibrationUncertainty: o.alphaAndKq ? U_KQ : 0 },
    model: {
      name: 'Kármán–Trefftz section', chord: CHORD, span: 0.8, geometry: { kind: 'coordinates', ...J.nodes(240) },
      alphaUncertaintyDeg: o.alphaAndKq ? U_ALPHA : 0, tapPositionUncertainty: 0,
    },
    taps,
    rake: { x: 0.6, probes },
    floor: [],
    ceiling: [],
    channels,
    settings: { correction: 'none' },
  };
  const info: RunInfo = { run: 1, kind: 'data', time: '2026-12-02T10:00:00Z', alphaDeg: alphaLogged, baro: 101325, temperatureC: 20, humidity: 50 };
  const stats = Object.fromEntries(Object.keys(values).map((k) => [k, { mean: values[k], std: 0, n: 1000, stdErr: 0, rejected: 0 }]));
  const run: ZeroedRun = {
    info,
    values,
    stats,
    zero: Object.fromEntries(Object.keys(values).map((k) => [k, 0])),
    drift: Object.fromEntries(Object.keys(values).map((k) => [k, 0])),
    zeroRuns: [],
  };
  return { setup, run, exact: { cl: J.cl, cmc4: J.cmc4, cd: cdExact } };
}
