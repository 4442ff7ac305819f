// Lossless compact storage of logged samples (one BLOB per run and channel).
//
// A run log holds decimal text, read by app/log/runParser.ts as x = (m / 10^E) · f (or m · f for
// E = 0): m the decimal mantissa, E the digits after the point, f the channel's unit → SI factor.
// Each channel is therefore stored as its integer mantissas on one common exponent E (the most
// digits any of its samples needs): the first mantissa as a little-endian double, then the
// differences of successive mantissas zig-zag mapped and packed in blocks of 256: one byte giving the block's width w (0–4 or 7 bytes), then every value
// of the block in w little-endian bytes ('dec' below). Fixed widths inside a block keep the loops
// free of data-dependent branches (measured here ~4× faster than 7-bit varints, for ~15 % more
// bytes). Decoding
// repeats the parser's own arithmetic, (m / 10^E) · f: both operands exact, one correctly rounded
// IEEE division, then the same multiplication, so every sample comes back as the very same double
// (W. D. Clinger, "How to read floating point numbers accurately", PLDI 1990, the exact-operand
// case; m and 10^E ≤ 10^22 are exact doubles). Moving a mantissa to a larger E multiplies it by a
// power of ten, exact while it stays below 2^53, and m·10^k / 10^(E+k) is the same rational number,
// so the same correctly rounded quotient.
// Nothing is assumed: the encoder checks every sample decodes to the identical bits and stores
// the channel as plain little-endian doubles ('f64le') when any does not (values written with all
// 17 digits, a unit factor that does not invert cleanly, −0, …). Zig-zag mapping and block-wise
// fixed-width packing are common practice, no source.
//
// Pure module (no Node APIs): used by the import worker threads and by the store.
import { sizeClass } from '../app/bufferPool';


/** Where one channel's bytes are in a run's packed buffer, and how to read them. */
export interface ChannelPart {
  dtype: 'f64le' | 'dec';
  n: number;
  /** 'dec': digits after the decimal point of the mantissas (0…15); else null. */
  decExp: number | null;
  /** 'dec': unit → SI factor applied after the division; else null. */
  factor: number | null;
  offset: number;
  length: number;
}

const POW10 = [1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15];
const MAX_EXP = 15;
/** Mantissas stay below 2^51 so their zig-zag mapped differences stay exact (< 2^53). */
const MAX_MANT = 2 ** 51;
const TWO32 = 2 ** 32;
/** Samples per packed block. */
const BLOCK = 256;

/** Mantissa of x on exponent e (10^e = p10), or NaN if x is not (m / 10^e)·f for an integer
 *  |m| < 2^51 with the very same bits. `inv` is 1/f (only a guess of m; the check is exact). */
function mantissaAt(x: number, e: number, p10: number, f: number, inv: number): number {
  const m = Math.round(x * inv * p10);
  if (!(m < MAX_MANT && m > -MAX_MANT)) return Number.NaN;
  const d = (e === 0 ? m : m / p10) * f;
  // Same bits: equal, and no −0 (the differences would lose its sign; it is stored as 'f64le').
  return d === x && (x !== 0 || 1 / x > 0) ? m : Number.NaN;
}

let mantScratch = new Float64Array(4096);
/** One block's zig-zag mapped differences (int32 in the usual case, else exact doubles). */
const zz32Scratch = new Int32Array(BLOCK);
const zzScratch = new Float64Array(BLOCK);
const firstScratch = new Float64Array(1);
const firstBytes = new Uint8Array(firstScratch.buffer);

/** A growing byte buffer the channels of one run are packed into, one after the other (one
 *  allocation per run rather than per channel; it can be handed to another thread whole). */
export class PackedRun {
  bytes: Uint8Array;
  length = 0;
  readonly parts: ChannelPart[] = [];
  /** `spare`: a used buffer to pack into if it is large enough (app/bufferPool.ts). */
  constructor(capacity = 1 << 16, spare?: ArrayBuffer | null) {
    // A fresh buffer in a size class (app/bufferPool.ts), so that it fits the next runs once reused.
    this.bytes = spare && spare.byteLength >= capacity ? new Uint8Array(spare) : new Uint8Array(sizeClass(capacity));
  }
  reserve(extra: number): Uint8Array {
    const need = this.length + extra;
    if (need > this.bytes.length) {
      const g = new Uint8Array(Math.max(need, this.bytes.length * 2));
      g.set(this.bytes.subarray(0, this.length));
      this.bytes = g;
    }
    return this.bytes;
  }
  /** The bytes of part k (a view, no copy). */
  view(k: number): Uint8Array {
    const p = this.parts[k];
    return this.bytes.subarray(p.offset, p.offset + p.length);
  }
}

/** Append x as plain little-endian doubles. */
export function packF64(run: PackedRun, x: Float64Array): ChannelPart {
  const len = x.length * 8;
  const out = run.reserve(len);
  out.set(new Uint8Array(x.buffer, x.byteOffset, len), run.length);
  const part: ChannelPart = { dtype: 'f64le', n: x.length, decExp: null, factor: null, offset: run.length, length: len };
  run.length += len;
  run.parts.push(part);
  return part;
}

/**
 * Append the most compact lossless form of a channel's samples: 'dec' when every sample is a
 * decimal mantissa on a common exponent times `factor` (the channel's unit → SI factor), else
 * 'f64le'.
 */
export function packSamples(run: PackedRun, x: Float64Array, factor: number): ChannelPart {
  const n = x.length;
  if (n === 0 || !(Number.isFinite(factor) && factor !== 0)) return packF64(run, x);
  if (mantScratch.length < n) mantScratch = new Float64Array(Math.max(n, 2 * mantScratch.length));
  const mant = mantScratch;
  const inv = 1 / factor;
  let e = 0;
  let p10 = 1;
  for (let i = 0; i < n; i++) {
    const xi = x[i];
    let m = mantissaAt(xi, e, p10, factor, inv);
    if (m !== m) {
      // More digits needed: find the exponent for this sample, rescale the mantissas so far.
      let e2 = e + 1;
      for (; e2 <= MAX_EXP; e2++) {
        m = mantissaAt(xi, e2, POW10[e2], factor, inv);
        if (m === m) break;
      }
      if (e2 > MAX_EXP) return packF64(run, x);
      const k = POW10[e2 - e];
      for (let j = 0; j < i; j++) {
        const r = mant[j] * k;
        if (!(Math.abs(r) < MAX_MANT)) return packF64(run, x);
        mant[j] = r;
      }
      e = e2;
      p10 = POW10[e];
    }
    mant[i] = m;
  }
  return packDec(run, x, mant, e, factor);
}

/** Append mantissas mant[0, x.length) on exponent e as 'dec' (or x as 'f64le' if no smaller). */
function packDec(run: PackedRun, x: Float64Array, mant: Float64Array, e: number, factor: number): ChannelPart {
  const n = x.length;
  // The first mantissa as a little-endian double (exact: an integer below 2^51), then the
  // zig-zag mapped successive differences, packed block by block.
  const nd = n - 1;
  const nBlocks = Math.ceil(nd / BLOCK);
  const out = run.reserve(8 + nBlocks + nd * 7);
  const start = run.length;
  firstScratch[0] = mant[0];
  out.set(firstBytes, start);
  let p = start + 8;
  const z32 = zz32Scratch;
  // Usual case, |differences| < 2^30: int32 arithmetic, zig-zag without branches, one block at a
  // time (differences, width and bytes in one pass over a block held in a small scratch).
  let b0 = 0;
  for (; b0 < nd; b0 += BLOCK) {
    const b1 = Math.min(nd, b0 + BLOCK);
    let acc = 0;
    let big = false;
    for (let i = b0; i < b1; i++) {
      const d = mant[i + 1] - mant[i];
      if (!(d < 0x3fffffff && d > -0x3fffffff)) {
        big = true;
        break;
      }
      const di = d | 0;
      const z = (di << 1) ^ (di >> 31);
      z32[i - b0] = z;
      acc |= z;
    }
    if (big) break;
    const max = acc >>> 0;
    const len = b1 - b0;
    const w = max === 0 ? 0 : max < 0x100 ? 1 : max < 0x10000 ? 2 : max < 0x1000000 ? 3 : 4;
    out[p++] = w;
    if (w === 1) for (let k = 0; k < len; k++) out[p++] = z32[k];
    else if (w === 2) {
      for (let k = 0; k < len; k++) {
        const v = z32[k];
        out[p] = v;
        out[p + 1] = v >>> 8;
        p += 2;
      }
    } else if (w === 3) {
      for (let k = 0; k < len; k++) {
        const v = z32[k];
        out[p] = v;
        out[p + 1] = v >>> 8;
        out[p + 2] = v >>> 16;
        p += 3;
      }
    } else if (w === 4) {
      for (let k = 0; k < len; k++) {
        const v = z32[k];
        out[p] = v;
        out[p + 1] = v >>> 8;
        out[p + 2] = v >>> 16;
        out[p + 3] = v >>> 24;
        p += 4;
      }
    }
  }
  // Blocks from the first difference beyond 2^30 on: exact double arithmetic (< 2^53).
  const zz = zzScratch;
  for (; b0 < nd; b0 += BLOCK) {
    const b1 = Math.min(nd, b0 + BLOCK);
    let max = 0;
    for (let i = b0; i < b1; i++) {
      const d = mant[i + 1] - mant[i];
      const z = d >= 0 ? 2 * d : -2 * d - 1;
      zz[i - b0] = z;
      if (z > max) max = z;
    }
    const len = b1 - b0;
    const w = max === 0 ? 0 : max < 0x100 ? 1 : max < 0x10000 ? 2 : max < 0x1000000 ? 3 : max < TWO32 ? 4 : 7;
    out[p++] = w;
    for (let k = 0; k < len; k++) {
      if (w === 0) break;
      // v < 2^53: low 32 bits by ToUint32 (exact modulo 2^32), high 21 bits exactly divided.
      const v = zz[k];
      const lo = v >>> 0;
      out[p] = lo;
      if (w >= 2) out[p + 1] = lo >>> 8;
      if (w >= 3) out[p + 2] = lo >>> 16;
      if (w >= 4) out[p + 3] = lo >>> 24;
      if (w === 7) {
        const hi = (v - lo) / TWO32;
        out[p + 4] = hi;
        out[p + 5] = hi >>> 8;
        out[p + 6] = hi >>> 16;
      }
      p += w;
    }
  }
  if (p - start >= n * 8) return packF64(run, x);
  const part: ChannelPart = { dtype: 'dec', n, decExp: e, factor, offset: start, length: p - start };
  run.length = p;
  run.parts.push(part);
  return part;
}

/** Samples back from a stored BLOB (throws on a malformed one: the store is then damaged). */
export function decodeSamples(
  dtype: string, bytes: Uint8Array, n: number, decExp: number | null, factor: number | null,
): Float64Array {
  if (dtype === 'f64le') {
    if (bytes.byteLength !== n * 8) throw new Error(`samples BLOB: ${bytes.byteLength} bytes for ${n} doubles`);
    const out = new Float64Array(n);
    new Uint8Array(out.buffer).set(bytes);
    return out;
  }
  if (dtype === 'f32le') {
    if (bytes.byteLength !== n * 4) throw new Error(`samples BLOB: ${bytes.byteLength} bytes for ${n} floats`);
    const ab = bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength);
    return Float64Array.from(new Float32Array(ab));
  }
  if (dtype !== 'dec') throw new Error(`samples BLOB: unknown dtype "${dtype}"`);
  if (decExp === null || factor === null || !(decExp >= 0 && decExp <= MAX_EXP)) {
    throw new Error('samples BLOB: a decimal BLOB needs its exponent and unit factor');
  }
  const out = new Float64Array(n);
  const len = bytes.length;
  const p10 = POW10[decExp];
  const f = factor;
  const div = decExp !== 0;
  if (n === 0) {
    if (len !== 0) throw new Error(`samples BLOB: ${len} bytes for no samples`);
    return out;
  }
  if (len < 8) throw new Error('samples BLOB: shorter than its first sample');
  firstBytes.set(bytes.subarray(0, 8));
  let m = firstScratch[0];
  if (!Number.isSafeInteger(m)) throw new Error('samples BLOB: the first mantissa is not an integer');
  out[0] = (div ? m / p10 : m) * f;
  let p = 8;
  const nd = n - 1;
  for (let b0 = 0; b0 < nd; b0 += BLOCK) {
    const b1 = Math.min(nd, b0 + BLOCK);
    if (p >= len) throw new Error(`samples BLOB: ends after ${b0 + 1} of ${n} samples`);
    const w = bytes[p++];
    if (w !== 0 && w !== 1 && w !== 2 && w !== 3 && w !== 4 && w !== 7) throw new Error(`samples BLOB: bad block width ${w}`);
    if (p + w * (b1 - b0) > len) throw new Error(`samples BLOB: ends inside the block of samples ${b0 + 2}…${b1 + 1}`);
    for (let i = b0; i < b1; i++) {
      let d: number;
      if (w === 0) d = 0;
      else if (w <= 4) {
        let v = bytes[p];
        if (w >= 2) v |= bytes[p + 1] << 8;
        if (w >= 3) v |= bytes[p + 2] << 16;
        if (w === 4) v = (v | (bytes[p + 3] << 24)) >>> 0;
        p += w;
        d = w < 4 ? (v >>> 1) ^ -(v & 1) : v % 2 === 0 ? v / 2 : -(v + 1) / 2;
      } else {
        const lo = (bytes[p] | (bytes[p + 1] << 8) | (bytes[p + 2] << 16) | (bytes[p + 3] << 24)) >>> 0;
        const hi = bytes[p + 4] | (bytes[p + 5] << 8) | (bytes[p + 6] << 16);
        const v = hi * TWO32 + lo;
        p += 7;
        d = v % 2 === 0 ? v / 2 : -(v + 1) / 2;
      }
      m += d;
      out[i + 1] = (div ? m / p10 : m) * f;
    }
  }
  if (p !== len) throw new Error(`samples BLOB: ${len - p} bytes left after ${n} samples`);
  return out;
}
