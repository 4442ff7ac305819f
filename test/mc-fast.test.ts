// The Monte Carlo plan of one run (app/mcPlan.ts) against runCore, the model it stands in for.
// Equivalence to the existing model is the check here (common practice, no source): every value
// the plan gives must be the one runCore gives on the same perturbed inputs, and reduceRun's
// coverage intervals must not depend on which of the two evaluated the draws. The reference values
// are always computed here, by runCore, never copied from an earlier output. The demo and mini
// sessions are invented data; the flow-angle readings added below are invented too.
import { beforeAll, describe, expect, it } from 'vitest';
import { demoSession } from '../resources/demo/scenario';
import { averageRuns, prepareRuns, reduceRun, resolveSettings, uncertaintyModel, type McModel } from '../app/reduce';
import { createRng, gaussian, monteCarlo } from '../app/uncertainty';
import type { Channel, Settings, Setup, ZeroedRun } from '../app/types';
import { miniRuns, miniSetup, type MiniOptions } from './helpers/mini-session';

type Out = Record<string, number>;

/** |a − b| ≤ 1e-12·max(|a|, 1): relative, or absolute for values near zero; NaN only with NaN. */
function expectSame(a: Out, b: Out, what: string): void {
  expect(Object.keys(b)).toEqual(Object.keys(a));
  for (const k of Object.keys(a)) {
    const x = a[k];
    const y = b[k];
    if (Number.isNaN(x) || Number.isNaN(y)) {
      expect(Number.isNaN(y), `${what} ${k}: ${x} vs ${y}`).toBe(Number.isNaN(x));
      continue;
    }
    expect(Math.abs(x - y), `${what} ${k}: ${x} vs ${y}`).toBeLessThanOrEqual(1e-12 * Math.max(Math.abs(x), 1));
  }
}

interface Case {
  name: string;
  setup: Setup;
  settings: Settings;
  runs: ZeroedRun[];
}

function caseOf(name: string, setup: Setup, raws: Parameters<typeof averageRuns>[0], overrides: Partial<Settings> = {}): Case {
  const settings = resolveSettings(setup, overrides);
  return { name, setup, settings, runs: prepareRuns(setup, averageRuns(raws, settings)) };
}

/** The demo setup with `n` flow-angle probes added to the rake, and each run's (invented) angle
 *  readings: a downwash that varies across the rake, so the angle-flux term is not zero. */
function withAngleProbes(c: Case, n: number): Case {
  const probes = Array.from({ length: n }, (_, i) => ({ id: `A${i + 1}`, y: -0.1 + (0.2 * i) / (n - 1), kind: 'angle' as const }));
  const channels: Channel[] = probes.map((p) => ({
    name: `ANG_${p.id}`, target: { kind: 'rake', id: p.id }, unit: 'deg',
    uncertainty: { fullScale: 30, percentFullScale: 0.2, offset: 0.05 },
  }));
  const setup: Setup = {
    ...c.setup,
    rake: { ...c.setup.rake, probes: [...c.setup.rake.probes, ...probes] },
    channels: [...c.setup.channels, ...channels],
  };
  const runs = c.runs.map((r) => {
    const values = { ...r.values };
    probes.forEach((p, i) => { values[`ANG_${p.id}`] = -0.3 * r.info.alphaDeg - 1.5 + 0.4 * Math.sin(i); });
    return { ...r, values };
  });
  return { name: `${c.name} + ${n} flow-angle probes`, setup, settings: c.settings, runs };
}

function miniCase(name: string, o: MiniOptions, dataRuns = 3): Case {
  const setup = miniSetup(o);
  return caseOf(name, setup, miniRuns(setup, { dataRuns, samples: 20, seed: 7 }).runs);
}

/** Random inputs of one draw, `scale` times the model's standard uncertainties (own generator). */
function drawInputs(m: McModel, alphaDeg: number, rand: () => number, scale: number, tapScale = scale) {
  const vals = Float64Array.from(m.mean, (x, k) => x + scale * m.sd[k] * gaussian(rand));
  const tapDx = Float64Array.from({ length: m.tapCount }, () => tapScale * m.tapSd * gaussian(rand));
  return { vals, tapDx, alphaDeg: alphaDeg + scale * m.alphaSd * gaussian(rand), kq: m.kq + scale * m.kqSd * gaussian(rand) };
}

/** Draws through both paths; returns how many used the plan and how many of those reordered taps. */
function compareDraws(c: Case, run: ZeroedRun, draws: number, scale: number, seed: number, tapScale = scale) {
  const m = uncertaintyModel(c.setup, run, c.settings);
  expect(m.hasPlan, `${c.name}: run ${run.info.run} has a plan`).toBe(true);
  const rand = createRng(seed);
  let plan = 0;
  let reordered = 0;
  for (let i = 0; i < draws; i++) {
    const d = drawInputs(m, run.info.alphaDeg, rand, scale, tapScale);
    const ref = m.core(d.vals, d.tapDx, d.alphaDeg, d.kq);
    const fast = m.evaluate(d.vals, d.tapDx, d.alphaDeg, d.kq);
    expectSame(ref, fast, `${c.name}, run ${run.info.run}, draw ${i}`);
    if (m.last.path === 'plan') plan++;
    if (m.last.reordered) reordered++;
  }
  return { plan, reordered };
}

let demo: Case;
let demoAngle: Case;
let minis: Case[];

beforeAll(() => {
  const d = demoSession({ runs: 'day', samples: 30 });
  demo = caseOf('demo day', d.setup, [...d.runs()]);
  demoAngle = withAngleProbes(demo, 7);
  minis = [
    miniCase('mini', {}),
    miniCase('mini, 12 taps a side, 9 rake probes, 6 wall taps', { taps: 12, rakeProbes: 9, wallTaps: 6 }, 4),
    miniCase('mini, no wake (2 total probes), no walls', { taps: 8, rakeProbes: 2, wallTaps: 0 }),
  ];
});

/** A spread of the demo's data runs over the α sweep (stalled and faulty runs included). */
function someRuns(c: Case, k: number): ZeroedRun[] {
  const step = Math.max(1, Math.floor(c.runs.length / k));
  return c.runs.filter((_, i) => i % step === 0);
}

describe('Monte Carlo plan = runCore, draw by draw', () => {
  it('demo day (three spanwise rows, rake statics, walls, a leaking tap): ordinary draws', () => {
    expect(new Set(demo.setup.taps.map((t) => t.row)).size).toBeGreaterThan(1);
    let plan = 0;
    let total = 0;
    someRuns(demo, 8).forEach((run, i) => {
      const r = compareDraws(demo, run, 60, 1, 100 + i);
      plan += r.plan;
      total += 60;
    });
    // Ordinary draws are all the plan's (none left to runCore).
    expect(plan).toBe(total);
  });

  it('demo day, every wall-correction method: the plan corrects as runCore does', () => {
    // auto (the default) applies the wall signature on the demo day; Maskell and classical by setting.
    for (const correction of ['auto', 'maskell', 'barlow-rae-pope', 'none'] as const) {
      const c = { ...demo, settings: { ...demo.settings, correction } };
      for (const [i, run] of someRuns(c, 3).entries()) {
        expect(compareDraws(c, run, 30, 1, 700 + i).plan, correction).toBe(30);
      }
    }
  });

  it('demo day with flow-angle probes (rake-plane control volume)', () => {
    const m = uncertaintyModel(demoAngle.setup, demoAngle.runs[0], demoAngle.settings);
    // The angle term is present: cl_mom changes when the angle readings change.
    const names = m.names;
    const a = Float64Array.from(m.mean);
    const b = Float64Array.from(m.mean);
    names.forEach((n, k) => { if (n.startsWith('ANG_')) b[k] += 2; });
    const dx = new Float64Array(m.tapCount);
    expect(m.core(a, dx, 0, m.kq).clMom).not.toBe(m.core(b, dx, 0, m.kq).clMom);
    for (const [i, run] of someRuns(demoAngle, 5).entries()) {
      const r = compareDraws(demoAngle, run, 60, 1, 200 + i);
      expect(r.plan).toBe(60);
    }
  });

  it('mini sessions (with and without wake and walls)', () => {
    for (const c of minis) {
      for (const [i, run] of c.runs.entries()) {
        const r = compareDraws(c, run, 80, 1, 300 + i);
        expect(r.plan, c.name).toBe(80);
      }
    }
  });

  it('large perturbations: up to 5 standard uncertainties on every input', () => {
    for (const c of [demo, demoAngle, ...minis]) {
      for (const [i, run] of someRuns(c, 3).entries()) compareDraws(c, run, 40, 5, 400 + i);
    }
  });

  it('tap perturbations that reorder the taps: the plan re-sorts as orderContour does', () => {
    // Demo: taps at x/c −0.00011 and 0 near the leading edge are closer than the 0.0005 x/c
    // position uncertainty, so ordinary draws swap them.
    let reordered = 0;
    for (const [i, run] of someRuns(demo, 4).entries()) reordered += compareDraws(demo, run, 60, 1, 500 + i).reordered;
    expect(reordered).toBeGreaterThan(0);
    // Mini, 12 taps a side (spacing 1/12): perturbations of 40 × 0.001 x/c reorder many taps.
    const c = minis[1];
    let many = 0;
    for (const [i, run] of c.runs.entries()) many += compareDraws(c, run, 60, 1, 600 + i, 40).reordered;
    expect(many).toBeGreaterThan(20);
  });

  it('draws the plan does not cover are left to runCore: same values, same errors', () => {
    const c = minis[1];
    const run = c.runs[0];
    const m = uncertaintyModel(c.setup, run, c.settings);
    const iDp = m.names.indexOf(c.setup.channels.find((ch) => ch.target.kind === 'reference' && ch.target.ref === 'dpRef')!.name);
    const dx = new Float64Array(m.tapCount);
    // Negative q∞ (reference lines swapped in a draw): runCore's wake refuses it.
    const neg = Float64Array.from(m.mean);
    neg[iDp] = -neg[iDp];
    let coreError = '';
    try {
      m.core(neg, dx, run.info.alphaDeg, m.kq);
    } catch (e) {
      coreError = (e as Error).message;
    }
    expect(coreError).toMatch(/q∞ must be positive/);
    expect(() => m.evaluate(neg, dx, run.info.alphaDeg, m.kq)).toThrow(coreError);
    expect(m.last.path).toBe('core');
    // A non-finite reading: runCore's contour check names the tap.
    const bad = Float64Array.from(m.mean);
    const iTap = m.names.indexOf(c.setup.channels.find((ch) => ch.target.kind === 'tap')!.name);
    bad[iTap] = Number.POSITIVE_INFINITY;
    let tapError = '';
    try {
      m.core(bad, dx, run.info.alphaDeg, m.kq);
    } catch (e) {
      tapError = (e as Error).message;
    }
    expect(tapError).toMatch(/non-finite cp/);
    expect(() => m.evaluate(bad, dx, run.info.alphaDeg, m.kq)).toThrow(tapError);
    expect(m.last.path).toBe('core');

    // Without wake and walls runCore accepts q∞ < 0 (V∞ = NaN): the fallback gives its values.
    const w = minis[2];
    const mw = uncertaintyModel(w.setup, w.runs[0], w.settings);
    const jw = mw.names.indexOf(w.setup.channels.find((ch) => ch.target.kind === 'reference' && ch.target.ref === 'dpRef')!.name);
    const negW = Float64Array.from(mw.mean);
    negW[jw] = -negW[jw];
    const dxW = new Float64Array(mw.tapCount);
    const ref = mw.core(negW, dxW, 1, mw.kq);
    expect(Number.isNaN(ref.gammaPressure)).toBe(true);
    expectSame(ref, mw.evaluate(negW, dxW, 1, mw.kq), 'q∞ < 0 without wake and walls');
    expect(mw.last.path).toBe('core');
  });
});

describe('reduceRun: the same coverage intervals by the plan and by runCore', () => {
  function compareIntervals(c: Case, runs: ZeroedRun[], mcDraws: number): void {
    const settings = { ...c.settings, mcDraws };
    for (const run of runs) {
      const fast = reduceRun(c.setup, run, settings);
      const slow = reduceRun(c.setup, run, settings, { mcPath: 'core' });
      const keys = Object.keys(slow.uncertainty);
      expect(keys.length).toBeGreaterThan(0);
      expect(Object.keys(fast.uncertainty)).toEqual(keys);
      for (const k of keys as (keyof typeof slow.uncertainty)[]) {
        expectSame({ ...slow.uncertainty[k]! }, { ...fast.uncertainty[k]! }, `${c.name}, run ${run.info.run}, ${k}`);
      }
      // Everything else comes from the nominal pass and is untouched.
      expect({ ...fast, uncertainty: null }).toEqual({ ...slow, uncertainty: null });
    }
  }

  it('demo day, default 400 draws', () => {
    compareIntervals(demo, someRuns(demo, 4), demo.settings.mcDraws);
  });

  it('demo with flow-angle probes and the mini sessions', () => {
    compareIntervals(demoAngle, someRuns(demoAngle, 2), 200);
    for (const c of minis) compareIntervals(c, c.runs.slice(0, 2), 200);
  });
});

describe('Monte Carlo draws come from createRng by the polar Box–Muller method', () => {
  it('monteCarlo normal and uniform deviates equal the documented construction on createRng', () => {
    // Reference built here from the documentation of Draw/StreamDraw: (u, v) = (2u₁ − 1, 2u₂ − 1)
    // until 0 < s = u² + v² < 1, then the pair (u f, v f) with f = √(−2 ln s / s) (Marsaglia & Bray,
    // SIAM Review 6 (1964) 260), the second value kept for the next normal; uniform(lo, hi) =
    // lo + (hi − lo) u.
    const seed = 987654321;
    const got: number[] = [];
    monteCarlo(50, seed, (d) => {
      got.push(d.normal(1, 2), d.normal(0, 1), d.normal(0, 1), d.uniform(-1, 3), d.normal(5, 0));
      return { x: got[got.length - 1] };
    });
    const u = createRng(seed);
    let spare: number | null = null;
    const normal = (mean: number, std: number): number => {
      let z: number;
      if (spare !== null) {
        z = spare;
        spare = null;
      } else {
        let a: number;
        let b: number;
        let s: number;
        do {
          a = 2 * u() - 1;
          b = 2 * u() - 1;
          s = a * a + b * b;
        } while (s >= 1 || s === 0);
        const f = Math.sqrt((-2 * Math.log(s)) / s);
        z = a * f;
        spare = b * f;
      }
      return mean + std * z;
    };
    const want: number[] = [];
    for (let i = 0; i < 50; i++) want.push(normal(1, 2), normal(0, 1), normal(0, 1), -1 + 4 * u(), normal(5, 0));
    expect(got).toEqual(want);
  });
});
