// Measurement uncertainty.
// - Monte Carlo propagation of distributions: JCGM 101:2008 (GUM Supplement 1). Coverage interval:
//   the probabilistically symmetric interval of §7.7 from the sorted model values
//   (q = pM, or ⌊pM + ½⌋ if pM is not an integer; r = (M − q)/2, or (M − q + 1)/2 if that is not an
//   integer; interval [y_(r), y_(r+q)], 1-based) (memory of the clause wording).
// - Linear propagation, uncorrelated inputs: JCGM 100:2008 (GUM) eq. (10), u_c² = Σ (c_i u_i)².
// - Pseudo-random numbers: xoshiro128** of D. Blackman & S. Vigna, "Scrambled linear pseudorandom
//   number generators", ACM Trans. Math. Softw. 47(4) (2021) 36; its state is seeded from the user
//   seed with SplitMix64 (G. L. Steele, D. Lea, C. H. Flood, "Fast splittable pseudorandom number
//   generators", OOPSLA 2014), as Blackman & Vigna recommend.
// - Normal deviates: Box–Muller transform (G. E. P. Box, M. E. Muller, Ann. Math. Statist. 29 (1958)
//   610–611) for gaussian(); the Monte Carlo draws use its polar form (G. Marsaglia, T. A. Bray,
//   "A convenient method for generating normal variables", SIAM Review 6 (1964) 260–264): a point
//   (u, v) uniform in the unit disc, s = u² + v², then u·√(−2 ln s / s) and v·√(−2 ln s / s) are
//   two independent standard normal deviates, with no sine or cosine (measured here: the Monte
//   Carlo reduction of a day ~10 % faster).

import type { InstrumentUncertainty, Interval } from './types';

/** A uniform generator on [0, 1). */
export type Rng = () => number;

/** xoshiro128** on an explicit 128-bit state (four 32-bit words): returns successive uint32 outputs. */
export function xoshiro128ss(s0: number, s1: number, s2: number, s3: number): () => number {
  let a = s0 | 0;
  let b = s1 | 0;
  let c = s2 | 0;
  let d = s3 | 0;
  if ((a | b | c | d) === 0) throw new RangeError('xoshiro128**: the all-zero state is not allowed');
  return () => {
    const m = Math.imul(b, 5);
    const result = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
    const t = b << 9;
    c ^= a;
    d ^= b;
    b ^= c;
    a ^= d;
    c ^= t;
    d = (d << 11) | (d >>> 21);
    return result;
  };
}

const MASK64 = (1n << 64n) - 1n;

/** SplitMix64 sequence from a 64-bit seed: successive 64-bit outputs as bigint. */
export function splitMix64(seed: bigint): () => bigint {
  let x = seed & MASK64;
  return () => {
    x = (x + 0x9e3779b97f4a7c15n) & MASK64;
    let z = x;
    z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & MASK64;
    z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & MASK64;
    return z ^ (z >> 31n);
  };
}

/** The xoshiro128** state for a seed: two SplitMix64 outputs, low word first. */
function seedState(seed: number): [number, number, number, number] {
  if (!Number.isSafeInteger(seed)) {
    throw new RangeError(`createRng: seed must be a safe integer (got ${seed})`);
  }
  const sm = splitMix64(BigInt.asUintN(64, BigInt(seed)));
  const w0 = sm();
  const w1 = sm();
  return [Number(w0 & 0xffffffffn), Number(w0 >> 32n), Number(w1 & 0xffffffffn), Number(w1 >> 32n)];
}

/** Seeded uniform generator on [0, 1) (xoshiro128** seeded by SplitMix64). `seed`: any integer. */
export function createRng(seed: number): Rng {
  const next = xoshiro128ss(...seedState(seed));
  return () => next() / 4294967296;
}

const TWO_PI = 2 * Math.PI;

/** One standard normal deviate by the Box–Muller transform (the cosine branch). */
export function gaussian(rng: Rng): number {
  const u1 = 1 - rng(); // (0, 1]: log is finite
  const u2 = rng();
  return Math.sqrt(-2 * Math.log(u1)) * Math.cos(TWO_PI * u2);
}

/** Mean and sample standard deviation of the finite values. */
function meanStd(v: Float64Array): { mean: number; std: number } {
  let n = 0;
  let mean = 0;
  let m2 = 0;
  for (let i = 0; i < v.length; i++) {
    const x = v[i];
    n++;
    const d = x - mean;
    mean += d / n;
    m2 += d * (x - mean);
  }
  return { mean, std: n > 1 ? Math.sqrt(m2 / (n - 1)) : Number.NaN };
}

/**
 * Probabilistically symmetric coverage interval (JCGM 101:2008 §7.7) of Monte Carlo values;
 * value = mean, u = standard deviation. Non-finite values (draws where the model failed) are left
 * out; with fewer than 2 finite values every field is NaN.
 */
export function coverageInterval(values: readonly number[] | Float64Array, p = 0.95): Interval {
  if (!(p > 0 && p < 1)) throw new RangeError(`coverageInterval: p must be in (0, 1) (got ${p})`);
  let nFinite = 0;
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) nFinite++;
  if (nFinite < 2) return { value: Number.NaN, u: Number.NaN, lo: Number.NaN, hi: Number.NaN };
  const y = new Float64Array(nFinite);
  for (let i = 0, j = 0; i < values.length; i++) if (Number.isFinite(values[i])) y[j++] = values[i];
  const { mean, std } = meanStd(y);
  y.sort();
  const M = nFinite;
  const pM = p * M;
  const q = Number.isInteger(pM) ? pM : Math.floor(pM + 0.5);
  let r = Number.isInteger((M - q) / 2) ? (M - q) / 2 : (M - q + 1) / 2;
  r = Math.max(1, Math.min(r, M - q)); // keep [y_(r), y_(r+q)] inside 1..M for tiny M
  const hiIndex = Math.min(r + q, M);
  return { value: mean, u: std, lo: y[r - 1], hi: y[hiIndex - 1] };
}

/**
 * Standard uncertainty (Pa, or deg for angle channels with unitToPa = 1) of one channel reading from
 * its instrument specification: %FS and offset, both k = 1 and in the channel's own unit, combined in
 * quadrature (JCGM 100:2008 eq. 10 with unit sensitivities). `value` is the reading (Pa); the
 * %FS + offset model does not depend on it (kept so a percent-of-reading term can be added later).
 */
export function instrumentStd(u: InstrumentUncertainty, value: number, unitToPa: number): number {
  void value;
  const fs = (u.percentFullScale / 100) * u.fullScale;
  return Math.hypot(fs, u.offset) * Math.abs(unitToPa);
}

/** JCGM 100:2008 eq. (10): combined standard uncertainty of a linear model, uncorrelated inputs. */
export function gumLinear(sensitivities: readonly number[], u: readonly number[]): number {
  if (sensitivities.length !== u.length) {
    throw new RangeError(
      `gumLinear: ${sensitivities.length} sensitivities but ${u.length} uncertainties`,
    );
  }
  let s = 0;
  for (let i = 0; i < u.length; i++) s += (sensitivities[i] * u[i]) ** 2;
  return Math.sqrt(s);
}

/** Random inputs for one Monte Carlo draw, all from one seeded stream. */
export interface Draw {
  /** 0-based number of the current draw. */
  readonly index: number;
  /** A normal deviate N(mean, std²); std = 0 returns mean (and still advances the stream). */
  normal(mean: number, std: number): number;
  /** A uniform deviate on [lo, hi). */
  uniform(lo: number, hi: number): number;
}

/** Draw implementation: polar Box–Muller pairs (Marsaglia & Bray), the second one cached for the
 *  next call. The uniforms
 *  are createRng(seed)'s (xoshiro128** on the same seeded state, inlined here because a Monte Carlo
 *  run draws hundreds of thousands of them). */
class StreamDraw implements Draw {
  index = 0;
  private spare = 0;
  private hasSpare = false;
  private a: number;
  private b: number;
  private c: number;
  private d: number;
  constructor(seed: number) {
    const [s0, s1, s2, s3] = seedState(seed);
    this.a = s0 | 0;
    this.b = s1 | 0;
    this.c = s2 | 0;
    this.d = s3 | 0;
    if ((this.a | this.b | this.c | this.d) === 0) throw new RangeError('xoshiro128**: the all-zero state is not allowed');
  }

  /** Next uniform on [0, 1): xoshiro128** (as xoshiro128ss) divided by 2³². */
  private uniform01(): number {
    const b = this.b;
    const m = Math.imul(b, 5);
    const result = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
    const t = b << 9;
    const c = this.c ^ this.a;
    const d = this.d ^ b;
    this.b = b ^ c;
    this.a ^= d;
    this.c = c ^ t;
    this.d = (d << 11) | (d >>> 21);
    return result / 4294967296;
  }

  normal(mean: number, std: number): number {
    let z: number;
    if (this.hasSpare) {
      z = this.spare;
      this.hasSpare = false;
    } else {
      let u: number;
      let v: number;
      let s: number;
      do {
        u = 2 * this.uniform01() - 1;
        v = 2 * this.uniform01() - 1;
        s = u * u + v * v;
      } while (s >= 1 || s === 0);
      const f = Math.sqrt((-2 * Math.log(s)) / s);
      z = u * f;
      this.spare = v * f;
      this.hasSpare = true;
    }
    return mean + std * z;
  }

  uniform(lo: number, hi: number): number {
    return lo + (hi - lo) * this.uniform01();
  }
}

/**
 * The standard normal deviates of the stream seeded by `seed`, in blocks: exactly the z of
 * successive Draw.normal calls (normal(mean, std) = mean + std·z), same uniforms, same polar pairs,
 * same arithmetic, the second of a pair kept across blocks as Draw keeps it across calls — so a
 * Monte Carlo can draw its inputs a block of draws at a time and keep the per-draw order.
 */
const NO_DEVIATES = new Float64Array(0);

export class NormalStream {
  private a: number;
  private b: number;
  private c: number;
  private d: number;
  private spare = 0;
  private hasSpare = false;
  constructor(seed: number) {
    const [s0, s1, s2, s3] = seedState(seed);
    this.a = s0 | 0;
    this.b = s1 | 0;
    this.c = s2 | 0;
    this.d = s3 | 0;
    if ((this.a | this.b | this.c | this.d) === 0) throw new RangeError('xoshiro128**: the all-zero state is not allowed');
    // No deviate and no change of state, but fill's write-back of the fields runs once in the
    // interpreter before its loop gets hot. Otherwise V8 optimised fill on-stack inside its first
    // long loop with no type feedback for the stores after it, and that code was entered again
    // and thrown away at the stores at almost every call (164 deoptimisations in a 100-run
    // reduction of the compiled build, --trace-deopt).
    this.fill(NO_DEVIATES, 0);
  }

  /** The next `count` deviates into out[0, count). */
  fill(out: Float64Array, count: number): void {
    if (out.length < count) throw new RangeError(`NormalStream: ${count} deviates do not fit in ${out.length}`);
    // Every field is read into a local and written back once, unconditionally: a store to a
    // field on a branch that a call rarely takes (the odd deviate kept for the next call) left
    // the optimised code without type feedback there, and V8 threw it away and rebuilt it at
    // almost every call (~480 deoptimisations in a 100-run reduction, measured with --trace-deopt).
    let i = 0;
    let spare = this.spare;
    let hasSpare = this.hasSpare;
    if (count > 0 && hasSpare) {
      out[i++] = spare;
      hasSpare = false;
    }
    let a = this.a;
    let b = this.b;
    let c = this.c;
    let d = this.d;
    while (i < count) {
      let u: number;
      let v: number;
      let s: number;
      do {
        // Two xoshiro128** steps (as StreamDraw.uniform01).
        let m = Math.imul(b, 5);
        let r = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
        let t = b << 9;
        c ^= a;
        d ^= b;
        b ^= c;
        a ^= d;
        c ^= t;
        d = (d << 11) | (d >>> 21);
        u = 2 * (r / 4294967296) - 1;
        m = Math.imul(b, 5);
        r = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
        t = b << 9;
        c ^= a;
        d ^= b;
        b ^= c;
        a ^= d;
        c ^= t;
        d = (d << 11) | (d >>> 21);
        v = 2 * (r / 4294967296) - 1;
        s = u * u + v * v;
      } while (s >= 1 || s === 0);
      const f = Math.sqrt((-2 * Math.log(s)) / s);
      out[i++] = u * f;
      if (i < count) out[i++] = v * f;
      else {
        spare = v * f;
        hasSpare = true;
      }
    }
    this.a = a;
    this.b = b;
    this.c = c;
    this.d = d;
    this.spare = spare;
    this.hasSpare = hasSpare;
  }
}

/** The first `count` deviates of NormalStream(seed), into `out`. */
export function normalDeviates(seed: number, count: number, out: Float64Array): void {
  new NormalStream(seed).fill(out, count);
}

/**
 * JCGM 101 Monte Carlo: call `model` `draws` times with one reusable Draw on a stream seeded by
 * `seed`, and return the coverage interval (95 %) of each output. The output keys are those of the
 * first draw; a key missing from a later draw counts as a failed (NaN) value for that draw.
 */
export function monteCarlo<K extends string>(
  draws: number,
  seed: number,
  model: (draw: Draw) => Record<K, number>,
): Record<K, Interval> {
  if (!Number.isInteger(draws) || draws < 2) {
    throw new RangeError(`monteCarlo: draws must be an integer ≥ 2 (got ${draws})`);
  }
  const draw = new StreamDraw(seed);
  let keys: K[] = [];
  let columns: Float64Array[] = [];
  for (let i = 0; i < draws; i++) {
    draw.index = i;
    const out = model(draw);
    if (i === 0) {
      keys = Object.keys(out) as K[];
      columns = keys.map(() => new Float64Array(draws));
    }
    for (let k = 0; k < keys.length; k++) {
      const v = out[keys[k]];
      columns[k][i] = typeof v === 'number' ? v : Number.NaN;
    }
  }
  const result = {} as Record<K, Interval>;
  for (let k = 0; k < keys.length; k++) result[keys[k]] = coverageInterval(columns[k]);
  return result;
}
