// Sample statistics and wind-off zeros (REDUCTION.md §2): common practice, no source.
import { describe, expect, it } from 'vitest';
import { applyZeros, averageRun, channelStats, mad, median, unsteadiness } from '../app/samples';
import { createRng, gaussian } from '../app/uncertainty';
import type { ChannelStats, RunInfo } from '../app/types';

function info(run: number, time: string, kind: RunInfo['kind'] = 'data'): RunInfo {
  return { run, kind, time, alphaDeg: 0, baro: 101325, temperatureC: 20, humidity: 50, file: `run${run}.csv` };
}
function st(mean: number): ChannelStats {
  return { mean, std: 0.1, n: 100, stdErr: 0.01, rejected: 0 };
}

describe('median and MAD', () => {
  it('median of odd and even counts', () => {
    expect(median([3, 1, 2])).toBe(2);
    expect(median(new Float64Array([4, 1, 3, 2]))).toBe(2.5);
    expect(Number.isNaN(median([]))).toBe(true);
  });

  it('MAD is scaled by 1.4826: |x − 3| of [1,2,3,4,100] has median 1', () => {
    expect(mad([1, 2, 3, 4, 100])).toBeCloseTo(1.4826, 12);
  });

  it('scaled MAD estimates σ of Gaussian noise', () => {
    // σ̂ from n = 20 000 N(0, 3²) samples; the MAD estimator has sd ≈ 1.17σ/√n ≈ 0.025 here
    // (asymptotic efficiency 37 % of the sd, common practice, no source); 4 sd ≈ 0.1.
    const rng = createRng(7);
    const a = Float64Array.from({ length: 20000 }, () => 3 * gaussian(rng));
    expect(Math.abs(mad(a) - 3)).toBeLessThan(0.1);
  });
});

describe('channelStats: spike rejection', () => {
  const n = 2000;
  const sigma = 2;
  const rng = createRng(42);
  const clean = Array.from({ length: n }, () => 100 + sigma * gaussian(rng));
  const spikeAt = [5, 77, 301, 302, 640, 999, 1200, 1500, 1750, 1998];
  const spiky = clean.slice();
  spikeAt.forEach((i, k) => (spiky[i] += (k % 2 === 0 ? 1 : -1) * 30 * sigma)); // ±30σ spikes

  it('rejects and counts injected spikes, keeps the Gaussian samples', () => {
    const s = channelStats(spiky, 5);
    expect(s.rejected).toBe(spikeAt.length);
    expect(s.n).toBe(n - spikeAt.length);
    // Mean within 4 standard errors (σ/√n ≈ 0.045) of the true 100; std within 4 × σ/√(2n) ≈ 0.13.
    expect(Math.abs(s.mean - 100)).toBeLessThan(4 * sigma / Math.sqrt(n));
    expect(Math.abs(s.std - sigma)).toBeLessThan(4 * sigma / Math.sqrt(2 * n));
    expect(s.stdErr).toBeCloseTo(s.std / Math.sqrt(s.n), 12);
  });

  it('the kept statistics equal those of the clean samples without the spiked indices', () => {
    const kept = clean.filter((_, i) => !spikeAt.includes(i));
    const m = kept.reduce((a, b) => a + b, 0) / kept.length;
    const sd = Math.sqrt(kept.reduce((a, b) => a + (b - m) ** 2, 0) / (kept.length - 1));
    const s = channelStats(new Float64Array(spiky), 5);
    expect(s.mean).toBeCloseTo(m, 10);
    expect(s.std).toBeCloseTo(sd, 10);
  });

  it('with the rejection off (k = ∞) the spikes stay in', () => {
    const s = channelStats(spiky, Number.POSITIVE_INFINITY);
    expect(s.rejected).toBe(0);
    expect(s.std).toBeGreaterThan(2 * sigma);
  });

  it('MAD = 0 keeps every sample', () => {
    const s = channelStats([5, 5, 5, 5, 9], 5);
    expect(s.rejected).toBe(0);
    expect(s.n).toBe(5);
    expect(s.mean).toBeCloseTo(5.8, 12);
  });

  it('a single sample has std 0', () => {
    expect(channelStats([3], 5)).toEqual({ mean: 3, std: 0, n: 1, stdErr: 0, rejected: 0 });
  });
});

describe('averageRun', () => {
  it('gives statistics per channel', () => {
    const r = averageRun(
      { info: info(4, '2026-11-18T10:00:00Z'), channels: { a: new Float64Array([1, 2, 3]), b: new Float64Array([10, 10]) } },
      5,
    );
    expect(r.stats.a.mean).toBe(2);
    expect(r.stats.a.std).toBe(1);
    expect(r.stats.b).toEqual({ mean: 10, std: 0, n: 2, stdErr: 0, rejected: 0 });
    expect(r.info.run).toBe(4);
  });

  it('errors name the file, run and channel', () => {
    expect(() =>
      averageRun({ info: info(9, '2026-11-18T10:00:00Z'), channels: { P17: new Float64Array(0) } }, 5),
    ).toThrow(/run9\.csv: run 9, channel "P17": no samples/);
    expect(() =>
      averageRun({ info: info(9, '2026-11-18T10:00:00Z'), channels: { P3: new Float64Array([1, NaN]) } }, 5),
    ).toThrow(/channel "P3": sample 2 is not a finite number/);
  });
});

describe('applyZeros', () => {
  const z1 = { info: info(1, '2026-11-18T10:00:00Z', 'zero'), stats: { p1: st(2.0), p2: st(-1.0), alpha: st(0.3) } };
  const z3 = { info: info(3, '2026-11-18T10:30:00Z', 'zero'), stats: { p1: st(5.0), p2: st(-1.0), alpha: st(0.5) } };
  const run = { info: info(2, '2026-11-18T10:10:00Z'), stats: { p1: st(103.0), p2: st(49.0), alpha: st(4.0) } };

  it('linear drift between two zeros is interpolated exactly', () => {
    // zero(10:10) = 2 + (5 − 2)·(10 min / 30 min) = 3.0 → value 103 − 3 = 100.
    const z = applyZeros(run, [z3, z1]);
    expect(z.zero.p1).toBeCloseTo(3.0, 12);
    expect(z.values.p1).toBeCloseTo(100.0, 12);
    expect(z.drift.p1).toBeCloseTo(3.0, 12);
    expect(z.zeroRaw?.p1).toBe(2.0); // nearest zero is run 1 (10 min before vs 20 after)
    expect(z.values.p2).toBeCloseTo(50.0, 12);
    expect(z.drift.p2).toBe(0);
    expect(z.zeroRuns).toEqual([1, 3]);
    expect(z.stats).toBe(run.stats);
  });

  it('one-sided: only the zero before (or after) is used, drift 0', () => {
    const b = applyZeros(run, [z1]);
    expect(b.zero.p1).toBe(2.0);
    expect(b.values.p1).toBe(101.0);
    expect(b.drift.p1).toBe(0);
    expect(b.zeroRuns).toEqual([1]);
    const a = applyZeros(run, [z3]);
    expect(a.values.p1).toBe(98.0);
    expect(a.zeroRuns).toEqual([3]);
  });

  it('no zeros: nothing subtracted', () => {
    const z = applyZeros(run, []);
    expect(z.values).toEqual({ p1: 103, p2: 49, alpha: 4 });
    expect(z.zero).toEqual({ p1: 0, p2: 0, alpha: 0 });
    expect(z.zeroRuns).toEqual([]);
  });

  it('the nearest zeros are chosen among several', () => {
    const z0 = { info: info(0, '2026-11-18T09:00:00Z', 'zero'), stats: { p1: st(-50) } };
    const z9 = { info: info(9, '2026-11-18T12:00:00Z', 'zero'), stats: { p1: st(70) } };
    const z = applyZeros(run, [z9, z1, z0, z3]);
    expect(z.zero.p1).toBeCloseTo(3.0, 12);
    expect(z.zeroRuns).toEqual([1, 3]);
  });

  it('skipChannels pass through unzeroed', () => {
    const z = applyZeros(run, [z1, z3], new Set(['alpha']));
    expect(z.values.alpha).toBe(4.0);
    expect(z.zero.alpha).toBe(0);
    expect(z.zeroRaw?.alpha).toBeUndefined();
  });

  it('a channel missing from one zero run is zeroed from the other side only', () => {
    const z3b = { info: z3.info, stats: { p1: st(5.0) } };
    const z = applyZeros(run, [z1, z3b]);
    expect(z.zero.p2).toBe(-1.0);
    expect(z.drift.p2).toBe(0);
  });

  it('a bad time names the run and file', () => {
    const bad = { info: info(5, 'yesterday', 'zero'), stats: { p1: st(1) } };
    expect(() => applyZeros(run, [bad])).toThrow(/run5\.csv: run 5: start time "yesterday"/);
  });
});

describe('unsteadiness', () => {
  it('is std/|mean|', () => {
    expect(unsteadiness({ mean: -400, std: 8, n: 10, stdErr: 1, rejected: 0 })).toBeCloseTo(0.02, 14);
  });
});
