// Tests of the demo scenario generator (resources/demo/scenario.ts): determinism, sizes, laziness,
// and the physics of the generated pressures checked with quick, independent calculations written
// here (not the core's modules), plus the planted faults seen directly in the raw samples.
// The test that the core flags every planted fault is the lead's (it needs the run reducer).
import { describe, expect, it } from 'vitest';
import { demoSession, type DemoSession } from '../resources/demo/scenario';
import { cpStagnation } from '../app/tapCheck';
import { DEFAULT_SETTINGS, type RawRun, type Setup } from '../app/types';

// ------------------------------------------------------------------ helpers (independent of app/)

interface Stat { mean: number; std: number }

function stat(a: Float64Array): Stat {
  let s = 0;
  for (const v of a) s += v;
  const mean = s / a.length;
  let v2 = 0;
  for (const v of a) v2 += (v - mean) ** 2;
  return { mean, std: Math.sqrt(v2 / (a.length - 1)) };
}

/** Per-run channel statistics of a whole session (one RawRun in memory at a time). */
function summarise(d: DemoSession): Map<number, Record<string, Stat>> {
  const out = new Map<number, Record<string, Stat>>();
  for (const r of d.runs()) {
    const rec: Record<string, Stat> = {};
    for (const [k, v] of Object.entries(r.channels)) rec[k] = stat(v);
    out.set(r.info.run, rec);
  }
  return out;
}

/** Zero-corrected channel means of a data run: the wind-off zeros before and after, interpolated
 *  linearly in time (REDUCTION.md §2, common practice). */
function zeroed(d: DemoSession, stats: Map<number, Record<string, Stat>>, run: number): Record<string, number> {
  const t = (r: number) => Date.parse(d.index[r - 1].time);
  const zeros = d.index.filter((i) => i.kind === 'zero').map((i) => i.run);
  const before = zeros.filter((z) => z < run).at(-1)!;
  const after = zeros.find((z) => z > run)!;
  const w = (t(run) - t(before)) / (t(after) - t(before));
  const out: Record<string, number> = {};
  for (const [k, s] of Object.entries(stats.get(run)!)) {
    out[k] = s.mean - ((1 - w) * stats.get(before)![k].mean + w * stats.get(after)![k].mean);
  }
  return out;
}

const trap = (x: number[], y: number[]) => {
  let s = 0;
  for (let i = 1; i < x.length; i++) s += 0.5 * (x[i] - x[i - 1]) * (y[i] + y[i - 1]);
  return s;
};
const gd = (z: number) => Math.atan(Math.sinh(z));

/** Free stream of a zero-corrected run: q = k_q·Δp_ref (REDUCTION.md §1), ρ from the OIML R 111-1
 *  (2004) approximate formula (independent of app/air.ts), μ by Sutherland (ISO 2533 constants). */
function freeStream(setup: Setup, v: Record<string, number>, info: { baro: number; temperatureC: number; humidity: number }) {
  const q = setup.facility.qCalibration * v.REF_DP;
  const pInf = v.REF_PS;
  const t = info.temperatureC;
  const rho = (0.34848 * ((info.baro + pInf) / 100) - 0.009 * info.humidity * Math.exp(0.061 * t)) / (273.15 + t);
  const T = t + 273.15;
  const mu = (1.458e-6 * T ** 1.5) / (T + 110.4);
  const V = Math.sqrt((2 * q) / rho);
  return { q, pInf, rho, V, Re: (rho * V * setup.model.chord) / mu };
}

/** Row cl by a plain trapezoid in x/c on each surface (REDUCTION.md §3; Anderson §1.5, memory):
 *  cn = ∫(Cp_l − Cp_u)dx, ca = ∫(Cp_u dy_u − Cp_l dy_l), the leading-edge tap shared, each surface
 *  extrapolated linearly to x/c = 1 and the two values averaged. */
function rowCl(setup: Setup, v: Record<string, number>, q: number, row: string, alphaDeg: number, skip: string[] = []): number {
  const taps = setup.taps.filter((t) => t.row === row && !skip.includes(t.id));
  const cp = (id: string) => (v[`S_${id}`] - v.REF_PS) / q;
  const side = (s: 'upper' | 'lower') => taps.filter((t) => t.surface === s).sort((a, b) => a.x - b.x);
  const up = side('upper');
  const lo = side('lower');
  const le = up[0];
  const lower = lo[0].x > le.x ? [le, ...lo] : lo;
  const te = (s: typeof up) => {
    const [a, b] = s.slice(-2);
    const ca = cp(a.id);
    const cb = cp(b.id);
    return { cp: cb + ((1 - b.x) * (cb - ca)) / (b.x - a.x), y: b.y + ((1 - b.x) * (b.y - a.y)) / (b.x - a.x) };
  };
  const teU = te(up);
  const teL = te(lower);
  const cpTE = 0.5 * (teU.cp + teL.cp);
  const yTE = 0.5 * (teU.y + teL.y);
  const xs = (s: typeof up) => [...s.map((t) => t.x), 1];
  const ys = (s: typeof up) => [...s.map((t) => t.y), yTE];
  const cps = (s: typeof up) => [...s.map((t) => cp(t.id)), cpTE];
  const cn = trap(xs(lower), cps(lower)) - trap(xs(up), cps(up));
  const ca = trap(ys(up), cps(up)) - trap(ys(lower), cps(lower));
  const a = (alphaDeg * Math.PI) / 180;
  return cn * Math.cos(a) - ca * Math.sin(a);
}

/** Momentum lift and wall circulation from the floor and ceiling (REDUCTION.md §5): cl_mom =
 *  (1/c)∫(Cp_floor − Cp_ceiling)dx / F, Γ = ∫(u_ceiling − u_floor)dx / F with u = V√(1 − Cp)
 *  (clockwise-positive: positive lift speeds the ceiling), F = [gd(πx₂/h) − gd(πx₁/h)]/π for a
 *  bound vortex between walls by the method of images (Milne-Thomson, Theoretical Hydrodynamics). */
function wallLift(setup: Setup, v: Record<string, number>, q: number, V: number) {
  const h = setup.facility.sectionHeight;
  const x = setup.floor.map((t) => t.x);
  const cpF = setup.floor.map((t) => (v[`W_${t.id}`] - v.REF_PS) / q);
  const cpC = setup.ceiling.map((t) => (v[`W_${t.id}`] - v.REF_PS) / q);
  const F = (gd((Math.PI * x[x.length - 1]) / h) - gd((Math.PI * x[0]) / h)) / Math.PI;
  const clMom = trap(x, cpF.map((f, i) => f - cpC[i])) / setup.model.chord / F;
  const gamma = trap(x, cpF.map((f, i) => V * (Math.sqrt(1 - cpC[i]) - Math.sqrt(1 - f)))) / F;
  return { clMom, gamma, F };
}

/** Jones wake drag by trapezoid over the total probes, local static linear between the rake static
 *  probes (constant beyond) (REDUCTION.md §4; B. M. Jones, ARC R&M 1688, via Barlow, Rae & Pope
 *  ch. 9, memory). */
function jones(setup: Setup, v: Record<string, number>, q: number) {
  const tot = setup.rake.probes.filter((p) => p.kind === 'total').sort((a, b) => a.y - b.y);
  const st = setup.rake.probes.filter((p) => p.kind === 'static').sort((a, b) => a.y - b.y);
  const pw = (y: number) => {
    const c = st.map((p) => v[`R_${p.id}`]);
    if (y <= st[0].y) return c[0];
    for (let i = 1; i < st.length; i++) {
      if (y <= st[i].y) return c[i - 1] + ((y - st[i - 1].y) * (c[i] - c[i - 1])) / (st[i].y - st[i - 1].y);
    }
    return c[c.length - 1];
  };
  const y = tot.map((p) => p.y);
  const cpt = tot.map((p) => (v[`R_${p.id}`] - v.REF_PS) / q);
  const f = tot.map((p, i) => Math.sqrt(Math.max(0, (v[`R_${p.id}`] - pw(p.y)) / q)) * (1 - Math.sqrt(Math.max(0, cpt[i]))));
  return { cd: (2 / setup.model.chord) * trap(y, f), edges: [cpt[0], cpt[cpt.length - 1]] };
}

function allSamplesEqual(a: RawRun, b: RawRun): boolean {
  if (JSON.stringify(a.info) !== JSON.stringify(b.info)) return false;
  const ka = Object.keys(a.channels);
  if (ka.join() !== Object.keys(b.channels).join()) return false;
  return ka.every((k) => a.channels[k].every((x, i) => x === b.channels[k][i]));
}

// ------------------------------------------------------------------ the default day, once

const day = demoSession();
const dayStats = summarise(day);
const clean = demoSession({ faults: false });
const cleanStats = summarise(clean);
const dataRuns = day.index.filter((i) => i.kind === 'data').map((i) => i.run);
const leak = day.faults.find((f) => f.code === 'leaking-tap')!;

describe('determinism', () => {
  it('the same seed gives the same setup, index, faults and samples; another seed other samples', () => {
    const a = demoSession({ seed: 7, samples: 20 });
    const b = demoSession({ seed: 7, samples: 20 });
    const c = demoSession({ seed: 8, samples: 20 });
    expect(JSON.stringify(a.setup)).toBe(JSON.stringify(b.setup));
    expect(a.index).toEqual(b.index);
    expect(a.faults).toEqual(b.faults);
    const ia = a.runs()[Symbol.iterator]();
    const ib = b.runs()[Symbol.iterator]();
    const ic = c.runs()[Symbol.iterator]();
    let differs = false;
    for (let ra = ia.next(), rb = ib.next(), rc = ic.next(); !ra.done; ra = ia.next(), rb = ib.next(), rc = ic.next()) {
      expect(rb.done).toBe(false);
      expect(allSamplesEqual(ra.value, rb.value as RawRun)).toBe(true);
      if (!allSamplesEqual(ra.value, rc.value as RawRun)) differs = true;
    }
    expect(differs).toBe(true);
    // The instrumentation does not depend on the seed.
    expect(JSON.stringify(c.setup)).toBe(JSON.stringify(a.setup));
  });

  it('iterating twice gives identical runs (no hidden state between iterations)', () => {
    const d = demoSession({ runs: 8, samples: 5 });
    const first = [...d.runs()];
    const second = [...d.runs()];
    first.forEach((r, i) => expect(allSamplesEqual(r, second[i])).toBe(true));
  });
});

describe('sizes', () => {
  it('default day: 52 runs (42 data, 10 zeros), 183 channels, 80 taps, 40 rake probes, 30 + 30 wall taps, 200 samples', () => {
    expect(day.index).toHaveLength(52);
    expect(dataRuns).toHaveLength(42);
    expect(day.setup.channels).toHaveLength(3 + 80 + 40 + 60);
    const rows = (r: string) => day.setup.taps.filter((t) => t.row === r);
    expect(rows('C')).toHaveLength(60);
    expect(rows('P')).toHaveLength(10);
    expect(rows('S')).toHaveLength(10);
    expect(rows('P').every((t) => t.z === -0.15) && rows('S').every((t) => t.z === 0.15)).toBe(true);
    const probes = day.setup.rake.probes;
    expect(probes.filter((p) => p.kind === 'total')).toHaveLength(37);
    expect(probes.filter((p) => p.kind === 'static')).toHaveLength(3);
    expect(Math.min(...probes.map((p) => p.y))).toBeCloseTo(-0.12, 9);
    expect(Math.max(...probes.map((p) => p.y))).toBeCloseTo(0.12, 9);
    expect(day.setup.floor).toHaveLength(30);
    expect(day.setup.ceiling).toHaveLength(30);
    expect(day.setup.floor[0].x).toBe(-1.8);
    expect(day.setup.floor[29].x).toBe(1.8);
    const names = day.setup.channels.map((c) => c.name);
    expect(new Set(names).size).toBe(names.length);
    for (const s of dayStats.values()) expect(Object.keys(s).sort()).toEqual([...names].sort());
    const units = new Set(day.setup.channels.map((c) => c.unit));
    expect([...units].sort()).toEqual(['Pa', 'inH2O', 'kPa', 'mmH2O']);
    expect(day.setup.session.operators).toEqual(['M. Okonkwo', 'T. Lindqvist']);
    expect(day.setup.session.date).toBe('2026-11-18');
  });

  it('zeros at the start, at the end and after every five data runs; times 1.5–4 min apart', () => {
    expect(day.index[0].kind).toBe('zero');
    expect(day.index.at(-1)!.kind).toBe('zero');
    let since = 0;
    for (const i of day.index) {
      since = i.kind === 'zero' ? 0 : since + 1;
      expect(since).toBeLessThanOrEqual(5);
    }
    for (let k = 1; k < day.index.length; k++) {
      const dt = (Date.parse(day.index[k].time) - Date.parse(day.index[k - 1].time)) / 60000;
      expect(dt).toBeGreaterThanOrEqual(1.5);
      expect(dt).toBeLessThanOrEqual(4);
    }
    const alphas = dataRuns.map((r) => day.index[r - 1].alphaDeg);
    expect(Math.min(...alphas)).toBe(-6);
    expect(Math.max(...alphas)).toBe(18);
  });

  it('options set the sizes', () => {
    const d = demoSession({ runs: 20, taps: 40, rakeProbes: 12, wallTaps: 11, samples: 7 });
    expect(d.index).toHaveLength(20);
    expect(d.setup.taps).toHaveLength(40);
    expect(d.setup.rake.probes).toHaveLength(12);
    expect(d.setup.floor).toHaveLength(11);
    expect(d.setup.ceiling).toHaveLength(11);
    expect(d.setup.channels).toHaveLength(3 + 40 + 12 + 22);
    let n = 0;
    for (const r of d.runs()) {
      n++;
      expect(Object.keys(r.channels)).toHaveLength(77);
      for (const a of Object.values(r.channels)) expect(a.length).toBe(7);
    }
    expect(n).toBe(20);
    expect(() => demoSession({ samples: 1 })).toThrow(/samples/);
    expect(() => demoSession({ runs: 2.5 })).toThrow(/runs/);
  });
});

describe('laziness', () => {
  it('a 300-run session is produced one run at a time', () => {
    const d = demoSession({ runs: 300, samples: 10 });
    expect(d.index).toHaveLength(300);
    const it = d.runs();
    expect(Array.isArray(it)).toBe(false);
    const iter = it[Symbol.iterator]();
    const first = iter.next();
    expect(first.done).toBe(false);
    expect(first.value!.info).toEqual(d.index[0]);
    let count = 1;
    let last = 0;
    for (let r = iter.next(); !r.done; r = iter.next()) {
      count++;
      expect(r.value.info.run).toBe(last + 2);
      last++;
    }
    expect(count).toBe(300);
    // The faults of the first day are planted in longer sessions too; the leak spans every data run.
    expect(d.faults.map((f) => f.code)).toEqual(day.faults.map((f) => f.code));
    expect(d.faults[0].runs).toHaveLength(d.index.filter((i) => i.kind === 'data').length);
  });
});

describe('physics of a clean attached run (α = 4°, run 14), checked independently', () => {
  const run = 14;
  const info = clean.index[run - 1];
  const v = zeroed(clean, cleanStats, run);
  const truth = clean.truth(run)!;
  const fs = freeStream(clean.setup, v, info);

  it('free stream: H∞ − p∞ = k_q·Δp_ref, V ≈ 45 m/s, Re ≈ 7.5e5', () => {
    expect(info.alphaDeg).toBe(4);
    expect(truth.stalled).toBe(false);
    // q from the tunnel reference equals total minus static (REDUCTION.md §1 and §4: q∞ = H∞ − p∞).
    expect(Math.abs(v.REF_PT - v.REF_PS - fs.q) / fs.q).toBeLessThan(0.003);
    expect(fs.q).toBeGreaterThan(1100);
    expect(fs.q).toBeLessThan(1300);
    // OIML density vs the generator's CIPM density: agree to 0.1 % (REDUCTION.md §1).
    expect(Math.abs(fs.rho - truth.rho) / truth.rho).toBeLessThan(0.001);
    expect(fs.V).toBeGreaterThan(44);
    expect(fs.V).toBeLessThan(46);
    expect(fs.Re).toBeGreaterThan(7.1e5);
    expect(fs.Re).toBeLessThan(7.9e5);
  });

  it('floor − ceiling integral gives the generated cl, the wall circulation the generated Γ (within F)', () => {
    const w = wallLift(clean.setup, v, fs.q, fs.V);
    // F for taps at ±2h: [gd(2π) − gd(−2π)]/π ≈ 0.9976 (REDUCTION.md §5).
    expect(w.F).toBeCloseTo((2 * Math.atan(Math.sinh(2 * Math.PI))) / Math.PI, 12);
    expect(w.F).toBeGreaterThan(0.997);
    expect(Math.abs(w.clMom - truth.cl)).toBeLessThan(0.005);
    expect(Math.abs(w.gamma - truth.gamma) / truth.gamma).toBeLessThan(0.005);
    // Kutta–Joukowski, Γ = ½ V c cl (REDUCTION.md §6): the generated Γ is smaller by the blockage-
    // raised local speed (1 + b̄), b̄ of order 1 %.
    const gKJ = 0.5 * fs.V * clean.setup.model.chord * truth.cl;
    expect(w.gamma / gKJ).toBeGreaterThan(0.98);
    expect(w.gamma / gKJ).toBeLessThan(1.0);
  });

  it('ceiling faster than floor for positive lift; blockage terms cancel in the difference', () => {
    const mid = clean.setup.floor.findIndex((t) => Math.abs(t.x) < 0.07);
    const cpF = (v[`W_${clean.setup.floor[mid].id}`] - v.REF_PS) / fs.q;
    const cpC = (v[`W_${clean.setup.ceiling[mid].id}`] - v.REF_PS) / fs.q;
    expect(cpC).toBeLessThan(cpF);
    // Far upstream both walls read free stream; far downstream both read the same wake-blockage
    // suction (symmetric terms only).
    const cpUpF = (v.W_F01 - v.REF_PS) / fs.q;
    const cpUpC = (v.W_U01 - v.REF_PS) / fs.q;
    const cpDnF = (v.W_F30 - v.REF_PS) / fs.q;
    const cpDnC = (v.W_U30 - v.REF_PS) / fs.q;
    expect(Math.abs(cpUpF - cpUpC)).toBeLessThan(0.003);
    expect(Math.abs(cpDnF - cpDnC)).toBeLessThan(0.003);
    expect((cpDnF + cpDnC) / 2).toBeLessThan(0);
  });

  it('tap integration of row C reproduces the generated cl; the side rows agree within the spread tolerance', () => {
    const clC = rowCl(clean.setup, v, fs.q, 'C', info.alphaDeg);
    expect(Math.abs(clC - truth.cl)).toBeLessThan(0.02);
    // Plausibility: thin-airfoil cl = 2π(α − α_L0) with α_L0 ≈ −4° for the 4412 (Abbott & von
    // Doenhoff §4.3, memory) gives 0.88 at 4°; the viscous section carries somewhat less.
    expect(clC).toBeGreaterThan(0.75);
    expect(clC).toBeLessThan(0.88);
    for (const r of ['P', 'S']) {
      expect(Math.abs(rowCl(clean.setup, v, fs.q, r, info.alphaDeg) - clC)).toBeLessThan(DEFAULT_SETTINGS.spanSpreadTol);
    }
  });

  it('Jones drag of the rake equals the generated wake drag; edges at free-stream total; statics below p∞', () => {
    const j = jones(clean.setup, v, fs.q);
    expect(Math.abs(j.cd - truth.cdWake) / truth.cdWake).toBeLessThan(0.03);
    // Plausible attached profile drag (brief: 0.008–0.012; Abbott & von Doenhoff, memory).
    expect(j.cd).toBeGreaterThan(0.008);
    expect(j.cd).toBeLessThan(0.012);
    for (const e of j.edges) expect(Math.abs(e - 1)).toBeLessThan(DEFAULT_SETTINGS.wakeEdgeTol / 5);
    for (const p of clean.setup.rake.probes.filter((p) => p.kind === 'static')) {
      expect(v[`R_${p.id}`]).toBeLessThan(v.REF_PS);
    }
  });
});

describe('the whole clean day', () => {
  it('no tap reads above stagnation; no channel exceeds its instrument full scale', () => {
    for (const run of dataRuns) {
      const v = zeroed(clean, cleanStats, run);
      const q = clean.setup.facility.qCalibration * v.REF_DP;
      for (const t of clean.setup.taps) {
        // Cp_stag ≤ 1.0101 for M ≤ 0.2 (isentropic, NACA Report 1135, memory; app/tapCheck.ts).
        expect((v[`S_${t.id}`] - v.REF_PS) / q).toBeLessThan(cpStagnation(0.2));
      }
      for (const c of clean.setup.channels) {
        const pa = { Pa: 1, kPa: 1000, inH2O: 249.0889, mmH2O: 9.80665 }[c.unit as 'Pa'];
        expect(Math.abs(cleanStats.get(run)![c.name].mean) / pa).toBeLessThan(c.uncertainty.fullScale);
      }
    }
  });

  it('surface and wall-momentum lift agree within the default tolerance on every run; q is steady', () => {
    for (const run of dataRuns) {
      const info = clean.index[run - 1];
      const v = zeroed(clean, cleanStats, run);
      const fs = freeStream(clean.setup, v, info);
      const clP = rowCl(clean.setup, v, fs.q, 'C', info.alphaDeg);
      const w = wallLift(clean.setup, v, fs.q, fs.V);
      expect(Math.abs(w.clMom - clP)).toBeLessThan(DEFAULT_SETTINGS.liftTolAbs + DEFAULT_SETTINGS.liftTolRel * Math.abs(clP));
      const s = cleanStats.get(run)!.REF_DP;
      expect(s.std / s.mean).toBeLessThan(DEFAULT_SETTINGS.unsteadyThreshold / 2);
      const j = jones(clean.setup, v, fs.q);
      for (const e of j.edges) expect(Math.abs(e - 1)).toBeLessThan(DEFAULT_SETTINGS.wakeEdgeTol);
    }
  });

  it('the generated polar is plausible for a NACA 4412 at Re ≈ 7.5e5 (invented data, bands from memory)', () => {
    const pts = dataRuns.map((r) => clean.truth(r)!);
    const lin = pts.filter((p) => p.alphaDeg >= -4 && p.alphaDeg <= 6 && !p.stalled);
    const n = lin.length;
    const ma = lin.reduce((s, p) => s + p.alphaDeg, 0) / n;
    const mc = lin.reduce((s, p) => s + p.cl, 0) / n;
    const slope = lin.reduce((s, p) => s + (p.alphaDeg - ma) * (p.cl - mc), 0) / lin.reduce((s, p) => s + (p.alphaDeg - ma) ** 2, 0);
    // Lift-curve slope ≈ 0.10–0.11 per degree (REDUCTION.md §11.6, Abbott & von Doenhoff, memory).
    expect(slope).toBeGreaterThan(0.095);
    expect(slope).toBeLessThan(0.112);
    const up = pts.slice(0, 25);
    const clMax = Math.max(...up.map((p) => p.cl));
    const aMax = up.find((p) => p.cl === clMax)!.alphaDeg;
    expect(clMax).toBeGreaterThan(1.3);
    expect(clMax).toBeLessThan(1.6);
    expect(aMax).toBeGreaterThanOrEqual(13);
    expect(aMax).toBeLessThanOrEqual(16);
    // Stall: lift drops above α_stall, drag rises steeply.
    const at = (a: number, stalled: boolean) => pts.find((p) => p.alphaDeg === a && p.stalled === stalled)!;
    expect(at(16, true).cl).toBeLessThan(clMax - 0.15);
    expect(at(16, true).cdWake).toBeGreaterThan(3 * at(10, false).cdWake);
    // Hysteresis: the down-sweep stays stalled at 13–14° where the up-sweep was attached.
    expect(at(13, false).cl - at(13, true).cl).toBeGreaterThan(0.1);
    expect(at(14, false).cl - at(14, true).cl).toBeGreaterThan(0.1);
    const cdMin = Math.min(...pts.map((p) => p.cdWake));
    expect(cdMin).toBeGreaterThan(0.007);
    expect(cdMin).toBeLessThan(0.011);
    // cm_c/4 of a 4412: about −0.08 to −0.1 attached (Abbott & von Doenhoff, memory).
    for (const p of pts.filter((p) => !p.stalled && p.alphaDeg <= 8)) {
      expect(p.cmc4).toBeGreaterThan(-0.11);
      expect(p.cmc4).toBeLessThan(-0.06);
    }
    // Attached pressure drag is a small part of the profile drag.
    for (const p of pts.filter((p) => !p.stalled)) {
      expect(p.cdp).toBeGreaterThan(0);
      expect(p.cdp).toBeLessThan(p.cdWake);
    }
  });

  it('with faults off: no leak, no zero step, no fault list', () => {
    expect(clean.faults).toEqual([]);
    for (const z of clean.index.filter((i) => i.kind === 'zero')) {
      const s = cleanStats.get(z.run)!;
      const tapZeros = clean.setup.taps.map((t) => s[`S_${t.id}`].mean).sort((a, b) => a - b);
      const med = tapZeros[tapZeros.length >> 1];
      for (const t of clean.setup.taps) expect(Math.abs(s[`S_${t.id}`].mean - med)).toBeLessThan(DEFAULT_SETTINGS.leakPa);
    }
  });
});

describe('planted faults, seen in the raw samples', () => {
  const zeroRuns = day.index.filter((i) => i.kind === 'zero').map((i) => i.run);

  it('lists exactly the five faults with their runs', () => {
    expect(day.faults.map((f) => [f.code, f.run])).toEqual([
      ['leaking-tap', 2],
      ['wake-not-captured', 11],
      ['unsteady', 17],
      ['lift-mismatch', 30],
      ['zero-drift', 44],
    ]);
    expect(leak.scope).toBe('session');
    expect(leak.runs).toEqual(dataRuns);
    expect(leak.tap).toBe('C19');
    expect(day.faults.find((f) => f.code === 'zero-drift')!.runs).toEqual([44, 45, 46, 47, 48]);
    expect(day.faults.find((f) => f.code === 'zero-drift')!.zeroRun).toBe(49);
    for (const f of day.faults) for (const r of f.runs) expect(day.index[r - 1].kind).toBe('data');
  });

  it('leaking tap: its wind-off zero departs from the taps\' median by more than leakPa; wind on it is pulled toward the reference', () => {
    for (const z of zeroRuns) {
      const s = dayStats.get(z)!;
      const tapZeros = day.setup.taps.map((t) => s[`S_${t.id}`].mean).sort((a, b) => a - b);
      const med = tapZeros[tapZeros.length >> 1];
      for (const t of day.setup.taps) {
        const dev = Math.abs(s[`S_${t.id}`].mean - med);
        if (t.id === leak.tap) expect(dev).toBeGreaterThan(2 * DEFAULT_SETTINGS.leakPa);
        else expect(dev).toBeLessThan(DEFAULT_SETTINGS.leakPa);
      }
    }
    // Wind on: the leaking tap's gauge pressure is smaller in magnitude than the clean day's.
    const v = zeroed(day, dayStats, 21);
    const vc = zeroed(clean, cleanStats, 21);
    expect(Math.abs(v[`S_${leak.tap}`])).toBeLessThan(0.8 * Math.abs(vc[`S_${leak.tap}`]));
  });

  it('zero drift: zero runs 43 and 49 differ by more than 1 % of q on every surface tap; other pairs do not', () => {
    const q = day.truth(44)!.q;
    for (let k = 1; k < zeroRuns.length; k++) {
      const a = dayStats.get(zeroRuns[k - 1])!;
      const b = dayStats.get(zeroRuns[k])!;
      for (const c of day.setup.channels) {
        const d = Math.abs(b[c.name].mean - a[c.name].mean);
        if (zeroRuns[k] === 49 && c.target.kind === 'tap') expect(d).toBeGreaterThan(DEFAULT_SETTINGS.zeroDriftFraction * q);
        else expect(d).toBeLessThan(DEFAULT_SETTINGS.zeroDriftFraction * q);
      }
    }
  });

  it('unsteady run: std(Δp_ref)/mean above the threshold only in run 17', () => {
    for (const r of dataRuns) {
      const s = dayStats.get(r)!.REF_DP;
      if (r === 17) expect(s.std / s.mean).toBeGreaterThan(2 * DEFAULT_SETTINGS.unsteadyThreshold);
      else expect(s.std / s.mean).toBeLessThan(DEFAULT_SETTINGS.unsteadyThreshold / 2);
    }
  });

  it('wake off the rake: an edge probe reads a deficit beyond the edge tolerance only in run 11', () => {
    for (const r of dataRuns) {
      const v = zeroed(day, dayStats, r);
      const q = day.setup.facility.qCalibration * v.REF_DP;
      const worst = Math.max(...jones(day.setup, v, q).edges.map((e) => Math.abs(e - 1)));
      if (r === 11) expect(worst).toBeGreaterThan(3 * DEFAULT_SETTINGS.wakeEdgeTol);
      else expect(worst).toBeLessThan(DEFAULT_SETTINGS.wakeEdgeTol);
    }
  });

  it('lift mismatch: the walls see more lift than the taps in run 30 only (leaking tap left out)', () => {
    for (const r of dataRuns) {
      const info = day.index[r - 1];
      const v = zeroed(day, dayStats, r);
      const fs = freeStream(day.setup, v, info);
      const clP = rowCl(day.setup, v, fs.q, 'C', info.alphaDeg, [leak.tap!]);
      const w = wallLift(day.setup, v, fs.q, fs.V);
      const tol = DEFAULT_SETTINGS.liftTolAbs + DEFAULT_SETTINGS.liftTolRel * Math.abs(clP);
      if (r === 30) expect(w.clMom - clP).toBeGreaterThan(2 * tol);
      else expect(Math.abs(w.clMom - clP)).toBeLessThan(tol);
    }
    // The three rows agree with each other in the stall-cell run (no span-spread story).
    const v = zeroed(day, dayStats, 30);
    const q = day.setup.facility.qCalibration * v.REF_DP;
    const cls = ['C', 'P', 'S'].map((r) => rowCl(day.setup, v, q, r, 18, [leak.tap!]));
    expect(Math.max(...cls) - Math.min(...cls)).toBeLessThan(DEFAULT_SETTINGS.spanSpreadTol);
  });
});
