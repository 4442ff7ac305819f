// Sample statistics, robust spike rejection and wind-off zero subtraction (REDUCTION.md §2).
// Common practice, no source: mean / sample standard deviation / standard error; spikes are samples
// beyond median ± k·σ̂ with σ̂ = 1.4826·MAD (the factor makes the MAD a consistent estimator of σ
// for Gaussian noise, 1/Φ⁻¹(3/4)); wind-off zeros are interpolated linearly in time between the
// zero runs bracketing a data run.

import type { ChannelStats, RawRun, RunInfo, ZeroedRun } from './types';

/** MAD → σ for Gaussian data: 1/Φ⁻¹(0.75). */
export const MAD_TO_SIGMA = 1.4826;

type Samples = Float64Array | readonly number[];

function sortedCopy(a: Samples): Float64Array {
  const s = Float64Array.from(a);
  s.sort();
  return s;
}

function medianOfSorted(s: Float64Array): number {
  const n = s.length;
  if (n === 0) return Number.NaN;
  const h = n >> 1;
  return n % 2 === 1 ? s[h] : 0.5 * (s[h - 1] + s[h]);
}

/** Median (NaN for an empty array). */
export function median(a: Samples): number {
  return medianOfSorted(sortedCopy(a));
}

/** k-th smallest (0-based) of buf[0..n), rearranging buf in place: Hoare's selection algorithm
 *  (C. A. R. Hoare, "Algorithm 65: FIND", CACM 4 (1961) 321), expected O(n). */
function selectKth(buf: Float64Array, n: number, k: number): number {
  let lo = 0;
  let hi = n - 1;
  while (hi > lo) {
    const pivot = buf[(lo + hi) >> 1];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (buf[i] < pivot) i++;
      while (buf[j] > pivot) j--;
      if (i <= j) {
        const t = buf[i]; buf[i] = buf[j]; buf[j] = t;
        i++; j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return buf[k];
  }
  return buf[k];
}

/** Median of buf[0..n) by selection (rearranges buf). */
function selectMedian(buf: Float64Array, n: number): number {
  if (n === 0) return Number.NaN;
  const h = n >> 1;
  const upper = selectKth(buf, n, h);
  if (n % 2 === 1) return upper;
  // After selecting h, every element below index h is ≤ buf[h]: the lower middle is their max.
  let lower = -Infinity;
  for (let i = 0; i < h; i++) if (buf[i] > lower) lower = buf[i];
  return 0.5 * (lower + upper);
}

let scratch = new Float64Array(0);
function scratchOf(n: number): Float64Array {
  if (scratch.length < n) scratch = new Float64Array(Math.max(n, 2 * scratch.length));
  return scratch;
}

/** Median and 1.4826·MAD of the samples, by selection in a reused buffer (no sorting). */
function medianAndSigma(a: Samples): { m: number; sigma: number } {
  const n = a.length;
  const buf = scratchOf(n);
  for (let i = 0; i < n; i++) buf[i] = a[i];
  const m = selectMedian(buf, n);
  for (let i = 0; i < n; i++) buf[i] = Math.abs(a[i] - m);
  return { m, sigma: MAD_TO_SIGMA * selectMedian(buf, n) };
}

/** Median absolute deviation scaled by 1.4826 to estimate σ (NaN for an empty array). */
export function mad(a: Samples): number {
  return madAbout(a, median(a));
}

function madAbout(a: Samples, m: number): number {
  const d = new Float64Array(a.length);
  for (let i = 0; i < a.length; i++) d[i] = Math.abs(a[i] - m);
  d.sort();
  return MAD_TO_SIGMA * medianOfSorted(d);
}

/**
 * Mean, standard deviation (n − 1), count and standard error of the samples kept after rejecting
 * spikes beyond median ± spikeK·σ̂ (σ̂ = 1.4826·MAD). If the MAD is 0 every sample is kept.
 * Throws on an empty array or a non-finite sample (the caller adds run and channel to the message).
 */
export function channelStats(samples: Samples, spikeK: number): ChannelStats {
  const n0 = samples.length;
  if (n0 === 0) throw new RangeError('no samples');
  for (let i = 0; i < n0; i++) {
    if (!Number.isFinite(samples[i])) throw new RangeError(`sample ${i + 1} is not a finite number`);
  }
  const { m, sigma } = medianAndSigma(samples);
  const limit = sigma > 0 && spikeK > 0 ? spikeK * sigma : Number.POSITIVE_INFINITY;

  // Welford's one-pass mean/variance over the kept samples.
  let n = 0;
  let mean = 0;
  let m2 = 0;
  for (let i = 0; i < n0; i++) {
    const x = samples[i];
    if (Math.abs(x - m) > limit) continue;
    n++;
    const d = x - mean;
    mean += d / n;
    m2 += d * (x - mean);
  }
  const std = n > 1 ? Math.sqrt(m2 / (n - 1)) : 0;
  return { mean, std, n, stdErr: std / Math.sqrt(n), rejected: n0 - n };
}

/** Per-channel statistics of one raw run. Errors name the run, its file and the channel. */
export function averageRun(
  raw: RawRun,
  spikeK: number,
): { info: RunInfo; stats: Record<string, ChannelStats> } {
  const stats: Record<string, ChannelStats> = {};
  for (const [name, samples] of Object.entries(raw.channels)) {
    try {
      stats[name] = channelStats(samples, spikeK);
    } catch (e) {
      const where = raw.info.file ? `${raw.info.file}: ` : '';
      throw new RangeError(
        `${where}run ${raw.info.run}, channel "${name}": ${(e as Error).message}`,
      );
    }
  }
  return { info: raw.info, stats };
}

/** Unsteadiness std/|mean| of a channel (Infinity for a zero mean with scatter). */
export function unsteadiness(stats: ChannelStats): number {
  return stats.std / Math.abs(stats.mean);
}

type Averaged = { info: RunInfo; stats: Record<string, ChannelStats> };

function runTime(info: RunInfo): number {
  const t = Date.parse(info.time);
  if (Number.isNaN(t)) {
    const where = info.file ? `${info.file}: ` : '';
    throw new RangeError(`${where}run ${info.run}: start time "${info.time}" is not an ISO 8601 time`);
  }
  return t;
}

/**
 * Subtract wind-off zeros: per channel, the zero interpolated linearly in time between the nearest
 * zero run before and the nearest after the data run (by `info.time`); only one side if only one
 * exists (or only one side holds the channel); none (zero 0) if neither. `drift` is the change of
 * the zero between the two bracketing runs (0 with one side); `zeroRaw` is the channel's mean in the
 * nearest zero run (ties → the earlier). Channels in `skipChannels` (e.g. flow angles) pass through.
 */
export function applyZeros(
  run: Averaged,
  zeros: readonly Averaged[],
  skipChannels?: ReadonlySet<string>,
): ZeroedRun {
  const t = runTime(run.info);
  // Zero runs on each side, nearest first; each channel takes the nearest run that holds it.
  const timed = zeros.map((z) => ({ z, t: runTime(z.info) })).sort((a, b) => a.t - b.t);
  const beforeList = timed.filter((e) => e.t <= t).reverse();
  const afterList = timed.filter((e) => e.t > t);

  const values: Record<string, number> = {};
  const zero: Record<string, number> = {};
  const drift: Record<string, number> = {};
  const zeroRaw: Record<string, number> = {};
  const used = new Set<number>();

  for (const [name, s] of Object.entries(run.stats)) {
    if (skipChannels?.has(name)) {
      values[name] = s.mean;
      zero[name] = 0;
      drift[name] = 0;
      continue;
    }
    const b = beforeList.find((e) => name in e.z.stats);
    const a = afterList.find((e) => name in e.z.stats);
    let z0 = 0;
    let dz = 0;
    if (b && a) {
      const zb = b.z.stats[name].mean;
      const za = a.z.stats[name].mean;
      z0 = zb + ((za - zb) * (t - b.t)) / (a.t - b.t);
      dz = za - zb;
      zeroRaw[name] = t - b.t <= a.t - t ? zb : za;
      used.add(b.z.info.run).add(a.z.info.run);
    } else if (b || a) {
      const e = (b ?? a)!;
      z0 = e.z.stats[name].mean;
      zeroRaw[name] = z0;
      used.add(e.z.info.run);
    }
    values[name] = s.mean - z0;
    zero[name] = z0;
    drift[name] = dz;
  }

  return {
    info: run.info,
    values,
    stats: run.stats,
    zero,
    drift,
    zeroRuns: [...used].sort((x, y) => x - y),
    zeroRaw,
  };
}
