// Sample statistics and wind-off zeros (REDUCTION.md §2): common practice, no source.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { applyZeros, averageRun, channelCentre, channelStats, mad, median, unsteadiness } from '../app/samples';
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

// ---- channelStats against a plain sort-based reference ------------------------------------------
// channelStats finds the median and the MAD by bucketing (exact order statistics, no sort); these
// properties compare it with the definition computed the obvious way: sort a copy, take the middle
// value (mean of the two middle values for an even count), the same for |x − median|; reject
// samples with |x − median| > k·1.4826·MAD (none if the MAD is 0). Common practice, no source.
// Mean and standard deviation of the kept samples are compared with a two-pass reference whose
// mean is summed with Neumaier's compensated summation (A. Neumaier, ZAMM 54 (1974) 39–51, from
// memory), so that the reference itself is accurate to a few 1e-16 relative.

type Ref = { median: number; mad: number; rejected: number; mean: number; std: number };

function sortedMiddle(s: number[]): number {
  const h = s.length >> 1;
  return s.length % 2 === 1 ? s[h] : 0.5 * (s[h - 1] + s[h]);
}

function reference(a: readonly number[], spikeK: number): Ref {
  const median = sortedMiddle([...a].sort((p, q) => p - q));
  const mad = sortedMiddle(a.map((v) => Math.abs(v - median)).sort((p, q) => p - q));
  const sigma = 1.4826 * mad;
  const limit = sigma > 0 && spikeK > 0 ? spikeK * sigma : Number.POSITIVE_INFINITY;
  const kept = a.filter((v) => !(Math.abs(v - median) > limit));
  let sum = 0;
  let comp = 0;
  for (const v of kept) {
    const t = sum + v;
    comp += Math.abs(sum) >= Math.abs(v) ? sum - t + v : v - t + sum;
    sum = t;
  }
  const mean = kept.length > 0 ? (sum + comp) / kept.length : 0;
  let ss = 0;
  for (const v of kept) ss += (v - mean) ** 2;
  const std = kept.length > 1 ? Math.sqrt(ss / (kept.length - 1)) : 0;
  return { median, mad, rejected: a.length - kept.length, mean, std };
}

/** Checks channelStats and channelCentre on `a` (as Float64Array and as number[]) against the
 *  reference; returns a description of the first mismatch, or '' if none. */
function mismatch(a: readonly number[], spikeK: number): string {
  const r = reference(a, spikeK);
  const f64 = Float64Array.from(a);
  const c = channelCentre(f64);
  const s = channelStats(f64, spikeK);
  const s2 = channelStats(a, spikeK);
  // === treats −0 and +0 as equal: the sign of a zero median is not defined by the sort either.
  if (c.median !== r.median) return `median ${c.median} ≠ ${r.median}`;
  if (c.mad !== r.mad) return `MAD ${c.mad} ≠ ${r.mad}`;
  if (s.rejected !== r.rejected) return `rejected ${s.rejected} ≠ ${r.rejected}`;
  if (s.n !== a.length - r.rejected) return `n ${s.n} ≠ ${a.length - r.rejected}`;
  if (JSON.stringify(s2) !== JSON.stringify(s)) return `number[] ${JSON.stringify(s2)} ≠ Float64Array ${JSON.stringify(s)}`;
  // Only where the reference is finite and its squares neither overflow (std < 1e150) nor
  // underflow into subnormals, which keep fewer digits (std ≥ 1e-150, or exactly 0). Tolerances:
  // 1e-12 relative, the mean relative to max(|mean|, std) (its rounding error scales with the
  // spread: the mean of ±1 is 0 ± ~1e-16), and the std with a floor of 1e-15·|mean| (the samples
  // themselves are only resolved to ~1e-16·|x|; a constant set's std is 0 to that resolution).
  if (Number.isFinite(r.mean) && Number.isFinite(r.std) && r.std < 1e150) {
    if (!(Math.abs(s.mean - r.mean) <= 1e-12 * Math.max(Math.abs(r.mean), r.std))) {
      return `mean ${s.mean} ≠ ${r.mean}`;
    }
    if ((r.std === 0 || r.std >= 1e-150) && !(Math.abs(s.std - r.std) <= 1e-12 * r.std + 1e-15 * Math.abs(r.mean))) {
      return `std ${s.std} ≠ ${r.std}`;
    }
  }
  return '';
}

const spikeKs = fc.constantFrom(5, 3, 1, 10, 0.5, Number.POSITIVE_INFINITY);

/** A channel as an instrument records it: offset + Gaussian noise, optionally quantised, with a
 *  drift and a few spikes; lengths on both sides of the 64-sample threshold of the fast route. */
const channel = fc
  .record({
    n: fc.oneof(fc.integer({ min: 1, max: 80 }), fc.integer({ min: 65, max: 2500 })),
    offset: fc.double({ min: -1e6, max: 1e6, noNaN: true }),
    log10Noise: fc.double({ min: -10, max: 4, noNaN: true }),
    quantum: fc.constantFrom(0, 0, 1e-3, 0.1, 1, 50),
    drift: fc.constantFrom(0, 0, 1e-4, 1e-2),
    spikes: fc.integer({ min: 0, max: 40 }),
    log10Spike: fc.double({ min: 0, max: 10, noNaN: true }),
    seed: fc.integer({ min: 0, max: 1_000_000 }),
  })
  .map((p) => {
    const rng = createRng(p.seed);
    const noise = 10 ** p.log10Noise;
    const a = Array.from({ length: p.n }, (_, i) => {
      const v = p.offset + p.drift * i + noise * gaussian(rng);
      return p.quantum > 0 ? Math.round(v / p.quantum) * p.quantum : v;
    });
    for (let s = 0; s < p.spikes && a.length > 0; s++) {
      a[Math.floor(rng() * a.length)] += (rng() < 0.5 ? -1 : 1) * noise * 10 ** (p.log10Spike * rng());
    }
    return a;
  });

describe('channelStats: exact median, MAD and rejection (fast-check)', () => {
  it('realistic channels: noise levels, offsets, quantisation, drift, spikes', () => {
    fc.assert(
      fc.property(channel, spikeKs, (a, k) => {
        expect(mismatch(a, k)).toBe('');
      }),
      { numRuns: 400 },
    );
  });

  it('arbitrary doubles, subnormal to ±1.8e308, ±0 included', () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ noNaN: true, noDefaultInfinity: true }), { minLength: 1, maxLength: 400 }),
        spikeKs,
        (a, k) => {
          expect(mismatch(a, k)).toBe('');
        },
      ),
      { numRuns: 300 },
    );
  });

  it('small integers: many duplicates, odd and even counts', () => {
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: -4, max: 4 }), { minLength: 1, maxLength: 1500 }),
        spikeKs,
        (a, k) => {
          expect(mismatch(a, k)).toBe('');
        },
      ),
      { numRuns: 300 },
    );
  });

  it('mostly one value (a bucket holding most samples), a few others', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 2000 }),
        fc.double({ min: -1e3, max: 1e3, noNaN: true }),
        fc.array(fc.double({ min: -1e3, max: 1e3, noNaN: true }), { maxLength: 900 }),
        fc.integer({ min: 0, max: 1_000_000 }),
        spikeKs,
        (n, value, others, seed, k) => {
          const rng = createRng(seed);
          const a: number[] = Array.from({ length: n }, () => value);
          for (const o of others) a.splice(Math.floor(rng() * (a.length + 1)), 0, o);
          expect(mismatch(a, k)).toBe('');
        },
      ),
      { numRuns: 200 },
    );
  });

  it('two clusters far apart: the middle values of an even count lie in different clusters', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 1000 }),
        fc.double({ min: 1, max: 1e9, noNaN: true }),
        fc.integer({ min: 0, max: 1_000_000 }),
        spikeKs,
        (half, gap, seed, k) => {
          const rng = createRng(seed);
          const a = Array.from({ length: 2 * half }, (_, i) => (i % 2 === 0 ? 0 : gap) + gaussian(rng));
          expect(mismatch(a, k)).toBe('');
        },
      ),
      { numRuns: 150 },
    );
  });
});

describe('channelStats: edge cases against the reference', () => {
  const cases: Record<string, number[]> = {
    'one sample': [4.5],
    'two samples': [1, 4],
    'constant, long': Array.from({ length: 3000 }, () => 0.1),
    'constant but one, long': Array.from({ length: 2001 }, (_, i) => (i === 1234 ? 7 : 0.1)),
    '±0 only': Array.from({ length: 999 }, (_, i) => (i % 3 === 0 ? -0 : 0)),
    '±0 and a few values': Array.from({ length: 1000 }, (_, i) => (i % 7 === 0 ? i : i % 2 === 0 ? -0 : 0)),
    'near ±MAX_VALUE': Array.from({ length: 500 }, (_, i) => (i % 2 === 0 ? 1 : -1) * Number.MAX_VALUE * (1 - i * 1e-4)),
    'huge spike among small values': Array.from({ length: 2000 }, (_, i) => (i === 77 ? 1.7e308 : Math.sin(i))),
    subnormal: Array.from({ length: 700 }, (_, i) => (i - 350) * Number.MIN_VALUE),
    'exponentially spaced': Array.from({ length: 1500 }, (_, i) => 1.4 ** (i % 700) * (i % 2 === 0 ? 1 : -1)),
    'integers 0…n−1 shuffled': (() => {
      const rng = createRng(3);
      const a = Array.from({ length: 4096 }, (_, i) => i);
      for (let i = a.length - 1; i > 0; i--) {
        const j = Math.floor(rng() * (i + 1));
        [a[i], a[j]] = [a[j], a[i]];
      }
      return a;
    })(),
  };
  for (const [name, a] of Object.entries(cases)) {
    it(name, () => {
      for (const k of [5, 1, Number.POSITIVE_INFINITY]) expect(mismatch(a, k)).toBe('');
    });
  }

  it('two samples: median is their mean, MAD half their distance', () => {
    expect(channelCentre([1, 4])).toEqual({ median: 2.5, mad: 1.5 });
  });

  it('spikeK 0, negative or NaN rejects nothing, as ∞ does', () => {
    const rng = createRng(11);
    const a = Float64Array.from({ length: 2000 }, (_, i) => gaussian(rng) + (i % 100 === 0 ? 1e6 : 0));
    const all = channelStats(a, Number.POSITIVE_INFINITY);
    expect(all.rejected).toBe(0);
    for (const k of [0, -3, Number.NaN]) expect(channelStats(a, k)).toEqual(all);
    expect(channelStats(a, 5).rejected).toBe(20);
  });

  it('a non-finite sample is reported by its first position, in short and long arrays', () => {
    for (const n of [5, 64, 65, 2000]) {
      for (const bad of [Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY]) {
        for (const at of [0, Math.floor(n / 2), n - 1]) {
          const a = Array.from({ length: n }, (_, i) => 10 + Math.cos(i));
          a[at] = bad;
          if (at + 1 < n) a[n - 1] = Number.NaN; // a later one too: the first is named
          const msg = `sample ${at + 1} is not a finite number`;
          expect(() => channelStats(a, 5)).toThrow(msg);
          expect(() => channelStats(Float64Array.from(a), 5)).toThrow(msg);
        }
      }
    }
  });
});
