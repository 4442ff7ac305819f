// The Monte Carlo in columns (app/reduce.ts runUncertainty: every deviate of every draw in one pass,
// outputs into Float64Array columns) and the staged budget (app/budget.ts runBudget, stages reused
// by app/mcPlan.ts evalPlanStages) against the earlier per-draw form kept as the reference
// (ReduceOptions.mcEngine 'per-draw': one Draw object, one model call per draw, every budget
// evaluation in full). The claim is bit-identity (common practice, no source): the same deviates
// in the same order through the same arithmetic, so every stored number of the result is the same
// double — checked with Object.is on every number, nothing within a tolerance. Demo and mini
// sessions are invented data; the awkward readings planted below are invented too.
import { beforeAll, describe, expect, it } from 'vitest';
import { demoSession } from '../resources/demo/scenario';
import { averageRuns, prepareRuns, reduceRun, resolveSettings } from '../app/reduce';
import { createRng, normalDeviates, NormalStream, type Draw } from '../app/uncertainty';
import { monteCarlo } from '../app/uncertainty';
import type { RawRun, Settings, Setup, ZeroedRun } from '../app/types';
import { miniRuns, miniSetup } from './helpers/mini-session';

/** Every place where `a` and `b` differ: numbers by Object.is (NaN = NaN, 0 ≠ −0), the same keys
 *  in the same order, the same array lengths. */
function differences(a: unknown, b: unknown, path: string, out: string[]): void {
  if (out.length > 20) return;
  if (typeof a === 'number' || typeof b === 'number') {
    if (!Object.is(a, b)) out.push(`${path}: ${String(a)} vs ${String(b)}`);
    return;
  }
  if (a === null || b === null || typeof a !== 'object' || typeof b !== 'object') {
    if (a !== b) out.push(`${path}: ${String(a)} vs ${String(b)}`);
    return;
  }
  if (Array.isArray(a) !== Array.isArray(b)) {
    out.push(`${path}: array vs object`);
    return;
  }
  const ka = Object.keys(a);
  const kb = Object.keys(b);
  if (ka.join('|') !== kb.join('|')) {
    out.push(`${path}: keys ${ka.join(',')} vs ${kb.join(',')}`);
    return;
  }
  for (const k of ka) differences((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], `${path}.${k}`, out);
}

/** How many numbers a result holds (so a comparison of nothing cannot pass). */
function countNumbers(a: unknown): number {
  if (typeof a === 'number') return 1;
  if (a === null || typeof a !== 'object') return 0;
  let n = 0;
  for (const v of Object.values(a)) n += countNumbers(v);
  return n;
}

interface Case { name: string; setup: Setup; settings: Settings; runs: ZeroedRun[] }

function caseOf(name: string, setup: Setup, raws: RawRun[], overrides: Partial<Settings> = {}): Case {
  const settings = resolveSettings(setup, overrides);
  return { name, setup, settings, runs: prepareRuns(setup, averageRuns(raws, settings)) };
}

/** Both engines on every run of `c`; every number identical; returns how many were compared. */
function expectIdentical(c: Case, runs = c.runs): number {
  expect(runs.length, c.name).toBeGreaterThan(0);
  let numbers = 0;
  for (const run of runs) {
    const cols = reduceRun(c.setup, run, c.settings);
    const ref = reduceRun(c.setup, run, c.settings, { mcEngine: 'per-draw' });
    const diff: string[] = [];
    differences(cols, ref, `${c.name}, run ${run.info.run}`, diff);
    expect(diff).toEqual([]);
    // The Monte Carlo and the budget really ran.
    expect(Object.keys(ref.uncertainty).length, `${c.name} run ${run.info.run}: intervals`).toBeGreaterThan(3);
    expect(ref.budget?.lines.length ?? 0, `${c.name} run ${run.info.run}: budget lines`).toBeGreaterThan(3);
    numbers += countNumbers(ref);
  }
  return numbers;
}

let demo: Case;

beforeAll(() => {
  const d = demoSession({ runs: 'day', samples: 30 });
  demo = caseOf('demo day', d.setup, [...d.runs()]);
});

describe('columns Monte Carlo and staged budget = the per-draw reference, bit for bit', () => {
  it('the whole demo day (three spanwise rows, walls, transducer groups, a leaking tap, stalled runs)', () => {
    expect(demo.runs.length).toBeGreaterThan(20);
    expect(demo.setup.transducerGroups?.length ?? 0).toBeGreaterThan(0);
    expect(demo.setup.facility.qCalibrationUncertainty ?? 0).toBeGreaterThan(0);
    const n = expectIdentical(demo);
    expect(n).toBeGreaterThan(10000);
  });

  it('demo day by every wall-correction method (the plan\'s fixed correction parts)', () => {
    const step = Math.max(1, Math.floor(demo.runs.length / 4));
    const runs = demo.runs.filter((_, i) => i % step === 0);
    for (const correction of ['maskell', 'barlow-rae-pope', 'allen-vincenti', 'none'] as const) {
      expectIdentical({ ...demo, name: `demo day, ${correction}`, settings: { ...demo.settings, correction } }, runs);
    }
  });

  it('sparse and awkward runs: 10 taps a side, a stagnation tap at Cp 1.05, a glitched tap, a stalled wake, no zeros', () => {
    const setup = miniSetup({ taps: 10, rakeProbes: 7, wallTaps: 4 });
    const { runs: raws } = miniRuns(setup, { dataRuns: 4, samples: 16, seed: 11 });
    const base = caseOf('mini 20 taps', setup, raws, { mcDraws: 150 });
    expect(setup.taps.length).toBe(20);
    const tapCh = (id: string) => setup.channels.find((c) => c.target.kind === 'tap' && c.target.id === id)!.name;
    const ref = (r: 'dpRef' | 'pStatic') => setup.channels.find((c) => c.target.kind === 'reference' && c.target.ref === r)!.name;
    const rake = setup.channels.filter((c) => c.target.kind === 'rake' && c.target.id.startsWith('T')).map((c) => c.name);
    const planted = base.runs.map((run, i) => {
      const v = { ...run.values };
      const q = v[ref('dpRef')] * setup.facility.qCalibration;
      const pInf = v[ref('pStatic')];
      // Lower-surface tap nearest the leading edge reads Cp 1.05 (a stagnation tap).
      v[tapCh('L01')] = pInf + 1.05 * q;
      // One glitched tap: a reading 4 q off its neighbours.
      v[tapCh('U05')] += 4 * q;
      // A stalled wake on the later runs: the deficit reaches the rake's edges.
      if (i >= 2) for (const name of rake) v[name] -= 0.35 * q;
      return { ...run, values: v };
    });
    const awkward: Case = { ...base, name: 'mini, awkward', runs: planted };
    expectIdentical(awkward);
    // The glitch was dropped and the stalled wake flagged: the awkward paths were exercised.
    const r = reduceRun(setup, planted[3], awkward.settings);
    expect((r.dropped ?? []).map((d) => d.id)).toContain('U05');
    // … and the stagnation tap at 1.05 was kept (it points at the references, issue 9).
    expect((r.dropped ?? []).map((d) => d.id)).not.toContain('L01');
    expect(r.flags.map((f) => f.code)).toContain('wake-not-captured');
    // No wind-off zero at all.
    const noZero = caseOf('mini, no zeros', setup, raws.filter((x) => x.info.kind !== 'zero'), { mcDraws: 120 });
    expect(noZero.runs.every((z) => z.zeroRuns.length === 0)).toBe(true);
    expectIdentical(noZero);
    // No wake and no walls (2 total probes, no wall taps).
    const bare = miniSetup({ taps: 8, rakeProbes: 2, wallTaps: 0 });
    expectIdentical(caseOf('mini, no wake, no walls', bare, miniRuns(bare, { dataRuns: 3, samples: 16, seed: 5 }).runs, { mcDraws: 80 }));
  });
});

describe('normalDeviates and NormalStream: the z of successive Draw.normal calls', () => {
  it('equals monteCarlo\'s Draw on the same seed, odd counts included', () => {
    for (const [seed, count] of [[1, 1], [42, 7], [987654321, 1000], [-5, 333]] as const) {
      const got = new Float64Array(count);
      normalDeviates(seed, count, got);
      const want: number[] = [];
      monteCarlo(2, seed, (d: Draw) => {
        if (d.index === 0) for (let i = 0; i < count; i++) want.push(d.normal(0, 1));
        return { x: 0 };
      });
      expect(Array.from(got)).toEqual(want);
      // The same deviates in blocks of odd and even sizes (the spare of a pair carried over).
      const stream = new NormalStream(seed);
      const blocks: number[] = [];
      for (let at = 0, size = 1; at < count; size = (size % 5) + 1) {
        const part = new Float64Array(Math.min(size, count - at));
        stream.fill(part, part.length);
        blocks.push(...part);
        at += part.length;
      }
      expect(blocks).toEqual(want);
    }
    // Not a constant: the deviates of two seeds differ and look standard normal (mean ≈ 0, sd ≈ 1
    // for 20000 of them: 5 standard errors; common practice, no source).
    const z = new Float64Array(20000);
    normalDeviates(3, z.length, z);
    let s = 0;
    let s2 = 0;
    for (const x of z) { s += x; s2 += x * x; }
    const mean = s / z.length;
    expect(Math.abs(mean)).toBeLessThan(5 / Math.sqrt(z.length));
    expect(Math.abs(Math.sqrt(s2 / z.length - mean * mean) - 1)).toBeLessThan(5 / Math.sqrt(2 * z.length));
    expect(createRng(3)()).not.toBe(createRng(4)());
  });
});
