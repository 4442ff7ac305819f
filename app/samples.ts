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

// ---- Exact order statistics by bucketing -------------------------------------------------------
// Common practice, no source (the bucketing pass of a distribution/radix-style selection): the
// values are counted into B equal-width buckets over [lo, hi] with the bucket index
// ⌊(v − lo)·s⌋, s = (B − ½)/(hi − lo). Rounded subtraction and multiplication are monotone, so
// the index is a non-decreasing function of v and every value of bucket j is ≤ every value of
// bucket j + 1: the cumulative counts tell which bucket holds a given rank, and only that bucket's
// few values are gathered and selected exactly (recursively, by insertion sort when small, or by
// Hoare's FIND after MAX_DEPTH levels). hi·s rounds to B − ½ within a few ulps, so the index never
// exceeds B − 1. The counting loop has no data-dependent branch (quickselect mispredicts about
// every other comparison on noisy data). The results are exactly the order statistics that a
// sort would give; only ±0 may come back with either sign.

/** At most this many values are sorted by insertion rather than bucketed. */
const SMALL = 40;
/** Bucketing levels before falling back to Hoare's FIND (bounds the cost on pathological data,
 *  e.g. exponentially spaced values where each level peels off only a few). */
const MAX_DEPTH = 3;
const MAX_BUCKETS = 1024;

const counts = new Int32Array(MAX_BUCKETS + 2);
/** levels[d]: the values gathered at bucketing depth d (levels[0] also holds copies of inputs). */
const levels: Float64Array[] = [];
function levelBuffer(d: number, n: number): Float64Array {
  let b = levels[d];
  if (b === undefined || b.length < n) {
    b = new Float64Array(Math.max(n, 64, 2 * (b === undefined ? 0 : b.length)));
    levels[d] = b;
  }
  return b;
}

/** Power of two near n/4 in [16, MAX_BUCKETS]: ~4 values a bucket for evenly spread data. */
function bucketCount(n: number): number {
  let b = 16;
  while (b < MAX_BUCKETS && 4 * b < n) b *= 2;
  return b;
}

// Results of a selection: the values of ranks k and (if asked for) k + 1.
let rankLo = 0;
let rankHi = 0;
// Results of locateRanks.
let bucketLo = 0;
let bucketHi = 0;
let rankBase = 0;
let gatherCount = 0;

/** From counts[0..B): the bucket holding rank k (bucketLo), the bucket holding rank k + 1 if
 *  wantHi (bucketHi, else = bucketLo), the number of values below bucketLo (rankBase) and the
 *  number of values in buckets bucketLo…bucketHi (gatherCount). Requires k (+1) < total count. */
function locateRanks(k: number, wantHi: boolean): void {
  let cum = 0;
  let b = 0;
  while (cum + counts[b] <= k) cum += counts[b++];
  bucketLo = b;
  rankBase = cum;
  let m = counts[b];
  if (wantHi && k + 1 >= cum + m) {
    b++;
    while (counts[b] === 0) b++;
    m += counts[b];
  }
  bucketHi = b;
  gatherCount = m;
}

function insertionSort(v: Float64Array, n: number): void {
  for (let i = 1; i < n; i++) {
    const x = v[i];
    let j = i - 1;
    while (j >= 0 && v[j] > x) {
      v[j + 1] = v[j];
      j--;
    }
    v[j + 1] = x;
  }
}

/** Ranks k (and k + 1 if wantHi) of v[0..n) by Hoare's FIND, into rankLo/rankHi (rearranges v). */
function quickRanks(v: Float64Array, n: number, k: number, wantHi: boolean): void {
  rankLo = selectKth(v, n, k);
  if (wantHi) {
    // After selecting k, every element above index k is ≥ v[k]: rank k + 1 is their minimum.
    let up = Infinity;
    for (let i = k + 1; i < n; i++) if (v[i] < up) up = v[i];
    rankHi = up;
  }
}

/** Ranks k (and k + 1 if wantHi) of v[0..n) into rankLo/rankHi; v is a level buffer at `depth`
 *  (rearranged). */
function selectRanks(v: Float64Array, n: number, k: number, wantHi: boolean, depth: number): void {
  if (n <= SMALL) {
    insertionSort(v, n);
    rankLo = v[k];
    if (wantHi) rankHi = v[k + 1];
    return;
  }
  let lo = v[0];
  let hi = lo;
  for (let i = 1; i < n; i++) {
    const x = v[i];
    lo = x < lo ? x : lo;
    hi = x > hi ? x : hi;
  }
  if (lo === hi) {
    rankLo = lo; // a bucket of duplicates
    rankHi = lo;
    return;
  }
  const nb = bucketCount(n);
  const scale = (nb - 0.5) / (hi - lo);
  // A range that overflows (scale 0) or is subnormal-tiny (scale ∞) cannot be bucketed.
  if (depth >= MAX_DEPTH || !(scale > 0 && scale < Infinity)) {
    quickRanks(v, n, k, wantHi);
    return;
  }
  counts.fill(0, 0, nb);
  for (let i = 0; i < n; i++) counts[((v[i] - lo) * scale) | 0]++;
  locateRanks(k, wantHi);
  const b0 = bucketLo;
  const span = bucketHi - b0;
  const base = rankBase;
  const g = levelBuffer(depth + 1, gatherCount + 1);
  let m = 0;
  for (let i = 0; i < n; i++) {
    const x = v[i];
    const t = (((x - lo) * scale) | 0) - b0;
    g[m] = x; // branch-free gather: keep x iff 0 ≤ t ≤ span
    m += 1 - ((t | (span - t)) >>> 31);
  }
  selectRanks(g, m, k - base, wantHi, depth + 1);
}

/** Rank k (and k + 1 if wantHi) of a copy of x[0..n) or of |x[i] − c| (if dev), into rankLo/rankHi. */
function ranksOfCopy(x: Float64Array, n: number, k: number, wantHi: boolean, dev: boolean, c: number): void {
  const v = levelBuffer(0, n);
  if (dev) for (let i = 0; i < n; i++) v[i] = Math.abs(x[i] - c);
  else for (let i = 0; i < n; i++) v[i] = x[i];
  selectRanks(v, n, k, wantHi, 0);
}

// ---- Robust statistics of a channel in two passes ------------------------------------------------
// Pass 1 counts the samples into B buckets over a window estimated from 32 evenly spaced samples
// (their 2nd smallest to 2nd largest, widened by half that range each side; buckets 0 and B + 1
// take everything below and above it, so spikes cannot coarsen the buckets) and sums x − c and
// (x − c)² about the median c of those 32 samples. From the counts alone the median m is known to
// lie in one or two buckets, and walking the counts outward bounds the MAD, and then the spike
// limit, to a few bucket widths. Every bucket then gets a role: holds the middle rank(s); may hold
// the MAD; surely nearer m than the MAD ("inner") or farther ("outer"); surely within the spike
// limit ("core") or not ("tail"). Pass 2 picks out the samples of the few buckets whose role needs
// them, and the rest is exact arithmetic on those:
//   · m and the MAD are selected exactly among the samples of their buckets, the count of the
//     inner buckets giving the rank offset;
//   · the kept sums are those of pass 1 less the tail samples beyond the limit (exact test).
// Each "surely" is then checked exactly with bounds of the bucket contents (|x − m|, rounded, is
// monotone on either side of m, so over a range of x it is largest at the ends); a failed check
// only costs speed: selection in a copy, or a pass over the samples, runs instead. (Sorting-free
// selection by counting into buckets: common practice, no source.)

const GUESS_SAMPLES = 32;

const guess = new Float64Array(GUESS_SAMPLES);
let bucketOf = new Uint16Array(0);
/** Role bits per bucket: 1 holds the middle rank(s), 2 may hold the MAD, 4 tail. */
const roles = new Uint8Array(MAX_BUCKETS + 2);
let picked = new Int32Array(0);
let medCands = new Float64Array(0);
let madCands = new Float64Array(0);
let tailCands = new Float64Array(0);
/** Median and unscaled MAD of the last channelStats call (see channelCentre). */
let lastMedian = Number.NaN;
let lastMad = Number.NaN;
// Pass-1 sums about the shift c.
let sumE = 0;
let sumE2 = 0;

function throwNonFinite(x: Float64Array, n: number): void {
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(x[i])) throw new RangeError(`sample ${i + 1} is not a finite number`);
  }
}

/** Pass 1: counts of the buckets j = ⌊clamp((x − lo)·s + 1, −½, B + 1½)⌋ (truncated toward 0:
 *  0…B + 1), a non-decreasing function of x (rounded subtraction, multiplication and addition are
 *  monotone; NaN → 0); Σ(x − c), Σ(x − c)² into sumE, sumE2 (a non-finite sample makes them
 *  non-finite). (Math.min/max keep the value a double: a conditional mixing it with an integer
 *  made V8 box every value in a heap number.) */
function countBuckets(x: Float64Array, n: number, lo: number, scale: number, topF: number, c: number): void {
  let s1 = 0;
  let s2 = 0;
  for (let i = 0; i < n; i++) {
    const v = x[i];
    const j = Math.min(Math.max((v - lo) * scale + 1, -0.5), topF) | 0;
    counts[j]++;
    const e = v - c;
    s1 += e;
    s2 += e * e;
  }
  sumE = s1;
  sumE2 = s2;
}

/** Pass 2: the indices (into out) and buckets (into bof) of the samples whose bucket has a role,
 *  the bucket computed as in pass 1. With few of them a branch is cheaper; with many (heavily
 *  quantized samples) a branch-free store. */
function pickRoles(
  x: Float64Array, n: number, lo: number, scale: number, topF: number, bof: Uint16Array,
  out: Int32Array, many: boolean,
): number {
  let g = 0;
  if (many) {
    for (let i = 0; i < n; i++) {
      const j = Math.min(Math.max((x[i] - lo) * scale + 1, -0.5), topF) | 0;
      bof[g] = j;
      out[g] = i;
      g += +(roles[j] !== 0);
    }
  } else {
    for (let i = 0; i < n; i++) {
      const j = Math.min(Math.max((x[i] - lo) * scale + 1, -0.5), topF) | 0;
      if (roles[j] !== 0) {
        bof[g] = j;
        out[g++] = i;
      }
    }
  }
  return g;
}

function countRange(from: number, to: number): number {
  let s = 0;
  for (let j = from; j <= to; j++) s += counts[j];
  return s;
}

// Bounds of the samples of bucket j: j ≤ u < j + 1 with u = fl(fl(fl(x − lo)·s) + 1) gives, with
// unit roundoff ε, lo + (j − 1)/s − 4(j + 1)ε/s ≤ x < lo + j/s + 4(j + 1)ε/s (from fl monotone
// and |fl(a ∘ b) − a ∘ b| ≤ ε|a ∘ b|, worked through by hand; bucket 0 has only the upper bound,
// B + 1 only the lower). bSlack covers that and the rounding of evaluating the bounds, generously:
// 16·2⁻⁵²·(|lo| + (B + 2)/s), i.e. 32ε.
let bLo = 0;
let bScale = 1;
let bSlack = 0;
/** A float ≤ every sample of bucket j, 1 ≤ j ≤ B + 1. */
function bucketFloor(j: number): number {
  return lo1(j - 1) - bSlack;
}
/** A float ≥ every sample of bucket j, 0 ≤ j ≤ B. */
function bucketCeil(j: number): number {
  return lo1(j) + bSlack;
}
function lo1(j: number): number {
  return bLo + j / bScale;
}

/** Statistics of the samples with |x − m| ≤ limit (all if limit = ∞) by the corrected two-pass
 *  algorithm (T. F. Chan, G. H. Golub, R. J. LeVeque, "Algorithms for computing the sample
 *  variance: analysis and recommendations", Am. Statistician 37 (1983) 242–247, from memory):
 *  x̄ = Σx/n, then Σ(x − x̄)² − (Σ(x − x̄))²/n, the second term cancelling most of the rounding
 *  error of x̄. */
function keptTwoPass(x: Float64Array, n0: number, m: number, limit: number): ChannelStats {
  let n = 0;
  let sum = 0;
  for (let i = 0; i < n0; i++) {
    const v = x[i];
    if (Math.abs(v - m) > limit) continue;
    n++;
    sum += v;
  }
  const mean = n > 0 ? sum / n : 0; // nothing kept (spikeK < 0.6745 can reject all): 0 as before
  let s1 = 0;
  let s2 = 0;
  for (let i = 0; i < n0; i++) {
    const v = x[i];
    if (Math.abs(v - m) > limit) continue;
    const d = v - mean;
    s1 += d;
    s2 += d * d;
  }
  return finish(mean, s2 - (s1 * s1) / n, n, n0);
}

function finish(mean: number, m2: number, n: number, n0: number): ChannelStats {
  const std = n > 1 ? Math.sqrt(m2 > 0 ? m2 / (n - 1) : 0) : 0;
  return { mean, std, n, stdErr: std / Math.sqrt(n), rejected: n0 - n };
}

function spikeLimit(mad: number, spikeK: number): number {
  const sigma = MAD_TO_SIGMA * mad;
  return sigma > 0 && spikeK > 0 ? spikeK * sigma : Number.POSITIVE_INFINITY;
}

/** As the end of robustStats, summing the kept samples about c in a pass of their own. */
function keptShifted(x: Float64Array, n0: number, m: number, limit: number, c: number): ChannelStats {
  let n = 0;
  let s1 = 0;
  let s2 = 0;
  for (let i = 0; i < n0; i++) {
    const v = x[i];
    if (Math.abs(v - m) > limit) continue;
    const e = v - c;
    n++;
    s1 += e;
    s2 += e * e;
  }
  const corr = (s1 * s1) / n;
  if (!(n > 0 && corr <= 0.5 * s2)) return keptTwoPass(x, n0, m, limit);
  return finish(c + s1 / n, s2 - corr, n, n0);
}

/** MAD by selection in a copy, then the two-pass statistics, for a known median m. */
function statsAbout(x: Float64Array, n: number, m: number, spikeK: number): ChannelStats {
  const odd = (n & 1) === 1;
  const k = odd ? n >> 1 : (n >> 1) - 1;
  ranksOfCopy(x, n, k, !odd, true, m);
  const mad = odd ? rankLo : 0.5 * (rankLo + rankHi);
  lastMedian = m;
  lastMad = mad;
  return keptTwoPass(x, n, m, spikeLimit(mad, spikeK));
}

/** The general route: median and MAD by selection in copies, then the two-pass statistics. */
function statsBySelection(x: Float64Array, n: number, spikeK: number): ChannelStats {
  const odd = (n & 1) === 1;
  const k = odd ? n >> 1 : (n >> 1) - 1;
  ranksOfCopy(x, n, k, !odd, false, 0);
  return statsAbout(x, n, odd ? rankLo : 0.5 * (rankLo + rankHi), spikeK);
}

/** channelStats of x[0..n) (not yet checked for finiteness). */
function robustStats(x: Float64Array, n: number, spikeK: number): ChannelStats {
  if (n <= 2 * GUESS_SAMPLES) {
    throwNonFinite(x, n);
    return statsBySelection(x, n, spikeK);
  }
  const odd = (n & 1) === 1;
  const k = odd ? n >> 1 : (n >> 1) - 1; // ranks k (and k + 1 if even) make the median
  const wantHi = !odd;
  const need = k + (wantHi ? 2 : 1);

  // Window and shift from evenly spaced samples (a NaN among them is caught after pass 1).
  for (let j = 0; j < GUESS_SAMPLES; j++) guess[j] = x[Math.floor((j * n) / GUESS_SAMPLES)];
  insertionSort(guess, GUESS_SAMPLES);
  let a = guess[1];
  let b = guess[GUESS_SAMPLES - 2];
  const c = 0.5 * (guess[GUESS_SAMPLES / 2 - 1] + guess[GUESS_SAMPLES / 2]);
  if (!(b > a)) {
    // (Nearly) constant samples: the exact range instead.
    throwNonFinite(x, n);
    a = x[0];
    b = a;
    for (let i = 1; i < n; i++) {
      const v = x[i];
      a = v < a ? v : a;
      b = v > b ? v : b;
    }
    if (a === b) {
      lastMedian = a;
      lastMad = 0;
      return finish(a, 0, n, n);
    }
    const w = 0.245 * (b - a); // the window below then exceeds a…b by 1 % each side
    a += w;
    b -= w;
  }
  const nb = bucketCount(n);
  const lo = a - 0.5 * (b - a);
  const scale = nb / (2 * (b - a));
  const top = nb + 1;
  if (!(scale < Infinity && lo > -Infinity && Number.isFinite(c))) {
    throwNonFinite(x, n);
    return statsBySelection(x, n, spikeK); // a range near overflow (or underflow)
  }

  counts.fill(0, 0, top + 1);
  if (bucketOf.length < n) {
    const len = Math.max(n, 2 * bucketOf.length);
    bucketOf = new Uint16Array(len);
    picked = new Int32Array(len);
    medCands = new Float64Array(len);
    madCands = new Float64Array(len);
    tailCands = new Float64Array(len);
  }
  countBuckets(x, n, lo, scale, top + 0.5, c);
  if (!(Number.isFinite(sumE) && Number.isFinite(sumE2))) {
    throwNonFinite(x, n);
    return statsBySelection(x, n, spikeK); // the sums overflowed
  }
  locateRanks(k, wantHi);
  const b0 = bucketLo;
  const b1 = bucketHi;
  const base = rankBase;
  if (b0 === 0 || b1 === top) return statsBySelection(x, n, spikeK); // the window missed m

  // In bucket units (u = (x − lo)·s + 1, bucket j nominally [j, j + 1)), m is at pt ± δ.
  const delta = 0.5 * (b1 - b0 + 1);
  const pt = b0 + delta;
  const cb = Math.floor(pt);
  const f = pt - cb;
  // A: at most k samples lie nearer pt than A (buckets by nearest distance: cb 0, j < cb
  // f + cb − 1 − j, j > cb j − cb − f; A that of the bucket lifting the count above k).
  let A = 0;
  let cum = counts[cb];
  if (cum <= k) {
    let l = cb - 1;
    let r = cb + 1;
    for (;;) {
      const al = l >= 0 ? f + (cb - 1 - l) : Infinity;
      const ar = r <= top ? r - cb - f : Infinity;
      if (l >= 0 && (al <= ar || r > top)) {
        cum += counts[l--];
        A = al;
      } else if (r <= top) {
        cum += counts[r++];
        A = ar;
      } else {
        break; // (cannot happen: all n > k counted)
      }
      if (cum > k) break;
    }
  }
  // U: at least `need` samples lie within U of pt (buckets by farthest distance: cb max(f, 1 − f),
  // j < cb f + cb − j, j > cb j + 1 − cb − f, the end buckets ∞).
  let U = Math.max(f, 1 - f);
  cum = counts[cb];
  if (cum < need) {
    let l = cb - 1;
    let r = cb + 1;
    for (;;) {
      const bl = l >= 1 ? f + (cb - l) : Infinity;
      const br = r <= nb ? r + 1 - cb - f : Infinity;
      if (l >= 0 && (bl <= br || r > top)) {
        cum += counts[l--];
        U = bl;
      } else if (r <= top) {
        cum += counts[r++];
        U = br;
      } else {
        break; // (cannot happen: all n ≥ need counted)
      }
      if (cum >= need) break;
    }
  }
  // So the MAD is in [A − δ, U + δ]. Inner buckets: within A − 2δ − ¼ of pt (so within the MAD
  // of m); outer: beyond U + 2δ + ¼; candidates in between. Index ranges: inner iL…iR, outer
  // 0…oL and oR…top.
  const rI = A - 2 * delta - 0.25;
  const rO = U + 2 * delta + 0.25;
  let iL = Math.max(1, Math.ceil(pt - rI));
  let iR = Math.min(nb, Math.floor(pt + rI) - 1);
  if (!(rI > 0 && iL <= iR)) {
    iL = 1;
    iR = 0; // none
  }
  const oL = rO < Infinity ? Math.min(Math.floor(pt - rO) - 1, (iL <= iR ? iL : b0) - 1) : -1;
  const oR = rO < Infinity ? Math.max(Math.ceil(pt + rO), (iL <= iR ? iR : b1) + 1) : top + 1;
  const inner = iL <= iR;
  // Spike limit ≥ spikeK·1.4826·(A − δ) in buckets: the core buckets, within that less δ + ¼ of
  // pt, are surely kept; the others ("tails") are tested sample by sample.
  let kL = 1;
  let kR = 0; // no core
  if (spikeK > 0 && spikeK < Infinity && A - delta > 0.25) {
    const rK = spikeK * MAD_TO_SIGMA * (A - delta - 0.25) - delta - 0.25;
    if (rK > 0) {
      kL = Math.max(1, Math.ceil(pt - rK));
      kR = Math.min(nb, Math.floor(pt + rK) - 1);
    }
  }
  const core = kL <= kR;
  // Roles.
  roles.fill(0, 0, top + 1);
  for (let j = b0; j <= b1; j++) roles[j] |= 1;
  if (inner) {
    for (let j = oL + 1; j < iL; j++) roles[j] |= 2;
    for (let j = iR + 1; j < oR; j++) roles[j] |= 2;
  } else {
    for (let j = oL + 1; j < oR; j++) roles[j] |= 2;
  }
  if (core) {
    for (let j = 0; j < kL; j++) roles[j] |= 4;
    for (let j = kR + 1; j <= top; j++) roles[j] |= 4;
  }

  // (Counts needed later: selectRanks below reuses the counts array.)
  const below = inner ? countRange(iL, iR) : 0;
  const outerLeft = oL >= 0 ? countRange(0, oL) : 0;
  const outerRight = oR <= top ? countRange(oR, top) : 0;

  // Pass 2, then the picked samples by role.
  let toPick = 0;
  for (let j = 0; j <= top; j++) toPick += roles[j] !== 0 ? counts[j] : 0;
  const bof = bucketOf;
  const np = pickRoles(x, n, lo, scale, top + 0.5, bof, picked, toPick > n >> 3);
  if (np !== toPick) return statsBySelection(x, n, spikeK); // (cannot happen: same buckets)
  const gm = medCands;
  const ga = madCands;
  const gt = tailCands;
  let cm = 0;
  let ca = 0;
  let ct = 0;
  for (let q = 0; q < np; q++) {
    const i = picked[q];
    const role = roles[bof[q]];
    const v = x[i];
    gm[cm] = v; // branch-free: kept in a list iff its role bit is set
    cm += role & 1;
    ga[ca] = v;
    ca += (role >> 1) & 1;
    gt[ct] = v;
    ct += role >> 2;
  }

  // Median: ranks k (and k + 1) among the samples of buckets b0…b1.
  selectRanks(gm, cm, k - base, wantHi, 0);
  const m = odd ? rankLo : 0.5 * (rankLo + rankHi);

  // MAD: the inner samples are below the candidates' ranks.
  const kc = k - below;
  if (!(kc >= 0 && kc + (wantHi ? 1 : 0) < ca)) return statsAbout(x, n, m, spikeK);
  for (let q = 0; q < ca; q++) ga[q] = Math.abs(ga[q] - m);
  selectRanks(ga, ca, kc, wantHi, 0);
  const vLo = rankLo;
  const vHi = wantHi ? rankHi : rankLo;
  // Check, by the bucket bounds (|x − m| rounded is monotone on either side of m, so largest at
  // the ends of a range): every inner |x − m| ≤ vLo; every outer-left x ≤ m with m − x ≥ vHi,
  // outer-right x ≥ m with x − m ≥ vHi. Then the candidates hold ranks k − below (and + 1).
  bLo = lo;
  bScale = scale;
  bSlack = 16 * Number.EPSILON * (Math.abs(lo) + (top + 1) / scale);
  if (inner) {
    const lI = bucketFloor(iL);
    const hI = bucketCeil(iR);
    if (!(Math.abs(lI - m) <= vLo && Math.abs(hI - m) <= vLo)) return statsAbout(x, n, m, spikeK);
  }
  if (outerLeft > 0) {
    const h = bucketCeil(oL);
    if (!(h <= m && m - h >= vHi)) return statsAbout(x, n, m, spikeK);
  }
  if (outerRight > 0) {
    const l = bucketFloor(oR);
    if (!(l >= m && l - m >= vHi)) return statsAbout(x, n, m, spikeK);
  }
  lastMedian = m;
  lastMad = odd ? vLo : 0.5 * (vLo + vHi);
  const limit = spikeLimit(lastMad, spikeK);

  // Kept sums: all of pass 1 less the tail samples beyond the limit (the core, checked at its
  // extremes, is kept whole).
  let nk = n;
  let s1 = sumE;
  let s2 = sumE2;
  if (limit < Infinity) {
    if (!core || !(Math.abs(bucketFloor(kL) - m) <= limit && Math.abs(bucketCeil(kR) - m) <= limit)) {
      return keptShifted(x, n, m, limit, c);
    }
    let r1 = 0;
    let r2 = 0;
    for (let q = 0; q < ct; q++) {
      const v = gt[q];
      if (Math.abs(v - m) > limit) {
        const e = v - c;
        nk--;
        r1 += e;
        r2 += e * e;
      }
    }
    s1 -= r1;
    s2 -= r2;
    // Σ over all samples carries rounding of order n·ε·Σ(x − c)² over all samples: small while
    // the rejected part is not much the larger one; else sum the kept samples afresh.
    if (!(r2 <= 4 * s2)) return keptShifted(x, n, m, limit, c);
  }
  // Σ(x − c)² − (Σ(x − c))²/n: the corrected two-pass formula of Chan, Golub & LeVeque (above)
  // with the shift c in place of x̄. Its rounding error grows with κ² = Σ(x − c)²/Σ(x − x̄)²
  // (ibid., from memory); c, the median of 32 samples, is usually well within a standard
  // deviation of the mean (κ² ≈ 1); if κ² > 2 the two-pass algorithm runs instead.
  const corr = (s1 * s1) / nk;
  if (!(nk > 0 && corr <= 0.5 * s2)) return keptTwoPass(x, n, m, limit);
  return finish(c + s1 / nk, s2 - corr, nk, n);
}

/** Copy of a plain array (the hot input is already a Float64Array and is read in place). */
let copyBuf = new Float64Array(0);

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
 * The exact median and the unscaled median absolute deviation of the samples, as channelStats
 * computes them on its way (it rejects spikes beyond median ± spikeK·1.4826·MAD). Throws as
 * channelStats does.
 */
export function channelCentre(samples: Samples): { median: number; mad: number } {
  channelStats(samples, 5);
  return { median: lastMedian, mad: lastMad };
}

/**
 * Mean, standard deviation (n − 1), count and standard error of the samples kept after rejecting
 * spikes beyond median ± spikeK·σ̂ (σ̂ = 1.4826·MAD). If the MAD is 0 every sample is kept.
 * Throws on an empty array or a non-finite sample (the caller adds run and channel to the message).
 * The median and MAD are exact order statistics (as a sort would give), found by bucketing.
 */
export function channelStats(samples: Samples, spikeK: number): ChannelStats {
  const n0 = samples.length;
  if (n0 === 0) throw new RangeError('no samples');
  let x: Float64Array;
  if (samples instanceof Float64Array) {
    x = samples;
  } else {
    if (copyBuf.length < n0) copyBuf = new Float64Array(Math.max(n0, 2 * copyBuf.length));
    x = copyBuf;
    for (let i = 0; i < n0; i++) {
      const v = samples[i];
      if (!Number.isFinite(v)) throw new RangeError(`sample ${i + 1} is not a finite number`);
      x[i] = v;
    }
  }
  return robustStats(x, n0, spikeK);
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

/**
 * The runs a reduction of `wanted` needs: those runs, and for each data run among them the
 * wind-off zeros nearest before and after it in time (every zero run at those two times), which
 * are all applyZeros (above) ever uses. Times that do not parse are left to applyZeros to
 * report: then every zero run is included.
 */
export function zeroRunsFor(index: RunInfo[], wanted: ReadonlySet<number>): Set<number> {
  const out = new Set<number>(wanted);
  const zeros = index.filter((i) => i.kind === 'zero').map((z) => ({ run: z.run, t: Date.parse(z.time) }));
  if (zeros.some((z) => Number.isNaN(z.t))) {
    for (const z of zeros) out.add(z.run);
    return out;
  }
  for (const info of index) {
    if (!wanted.has(info.run) || info.kind !== 'data') continue;
    const t = Date.parse(info.time);
    if (Number.isNaN(t)) {
      for (const z of zeros) out.add(z.run);
      continue;
    }
    let before = -Infinity;
    let after = Infinity;
    for (const z of zeros) {
      if (z.t <= t && z.t > before) before = z.t;
      if (z.t > t && z.t < after) after = z.t;
    }
    for (const z of zeros) if (z.t === before || z.t === after) out.add(z.run);
  }
  return out;
}
