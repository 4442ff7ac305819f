// The store's compact sample encoding (main/sampleCodec.ts) must give back every sample as the very
// double the log parser produced: exact round trips are the whole check (common practice, no
// source). The samples here come from decimal text read by the real parser, in every unit the
// setup allows, plus values the decimal form cannot hold (which must fall back to plain doubles).
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { PackedRun, decodeSamples, packSamples } from '../main/sampleCodec';
import { channelToSI } from '../app/units';
import { createRunParser } from '../app/log/runParser';
import { miniSetup } from './helpers/mini-session';
import type { ChannelUnit } from '../app/types';

const UNITS: ChannelUnit[] = ['Pa', 'kPa', 'mmH2O', 'inH2O', 'deg'];

function roundTrip(x: Float64Array, factor: number) {
  const run = new PackedRun(16);
  const part = packSamples(run, x, factor);
  const back = decodeSamples(part.dtype, run.view(0), part.n, part.decExp, part.factor);
  return { part, back };
}

/** Bitwise equality (tells −0 from 0). */
function sameBits(a: Float64Array, b: Float64Array): boolean {
  if (a.length !== b.length) return false;
  return Buffer.from(a.buffer, a.byteOffset, a.byteLength).equals(Buffer.from(b.buffer, b.byteOffset, b.byteLength));
}

/** Parse one column of decimal texts with the real run-log parser, in the given unit. */
function parsedColumn(texts: string[], unit: ChannelUnit): Float64Array {
  const setup = miniSetup({ taps: 2, rakeProbes: 1, wallTaps: 1 });
  const ch = setup.channels[0];
  ch.unit = unit;
  const names = setup.channels.map((c) => c.name);
  const lines = [`t_s,${names.join(',')}`, ...texts.map((t, i) => `${i},${names.map((n) => (n === ch.name ? t : '1')).join(',')}`)];
  const p = createRunParser('x.csv', setup, { runColumn: false });
  p.push(lines.join('\n') + '\n');
  return p.end()[ch.name];
}

describe('sample codec', () => {
  it('decimal texts of every unit come back bit for bit, and compactly', () => {
    const decimal = fc.tuple(fc.integer({ min: -99999999, max: 99999999 }), fc.integer({ min: 0, max: 7 }))
      .map(([m, d]) => (d === 0 ? String(m) : (m / 10 ** d).toFixed(d)));
    fc.assert(
      fc.property(fc.array(decimal, { minLength: 1, maxLength: 700 }), fc.constantFrom(...UNITS), (texts, unit) => {
        const x = parsedColumn(texts, unit);
        const { part, back } = roundTrip(x, channelToSI(1, unit));
        expect(sameBits(back, x)).toBe(true);
        if (part.dtype === 'dec') expect(part.length).toBeLessThan(x.length * 8);
      }),
      { numRuns: 150 },
    );
  });

  it('scanner-like logs (6 significant digits, noise) take far fewer than 8 bytes a sample', () => {
    const texts: string[] = [];
    let v = 1234.56;
    for (let i = 0; i < 2000; i++) {
      v += Math.sin(i * 12.9898) * 3;
      texts.push(String(Number(v.toPrecision(6))));
    }
    for (const unit of UNITS) {
      const x = parsedColumn(texts, unit);
      const { part, back } = roundTrip(x, channelToSI(1, unit));
      expect(sameBits(back, x)).toBe(true);
      expect(part.dtype).toBe('dec');
      expect(part.length / x.length).toBeLessThan(4);
    }
  });

  it('values the decimal form cannot hold fall back to plain doubles, still exact', () => {
    const cases: Float64Array[] = [
      Float64Array.from([Math.PI, Math.E, 1 / 3]), // 17 significant digits
      Float64Array.from([0, -0, 1]), // −0 must keep its sign
      Float64Array.from([1e300, -1e-300]),
      Float64Array.from([2 ** 60, 1]),
    ];
    for (const x of cases) {
      const { part, back } = roundTrip(x, 1);
      expect(part.dtype).toBe('f64le');
      expect(sameBits(back, x)).toBe(true);
    }
    fc.assert(
      fc.property(fc.array(fc.double({ noNaN: true, noDefaultInfinity: true }), { minLength: 1, maxLength: 300 }), fc.double({ min: 0.001, max: 1000, noNaN: true }), (arr, f) => {
        const x = Float64Array.from(arr);
        expect(sameBits(roundTrip(x, f).back, x)).toBe(true);
      }),
      { numRuns: 200 },
    );
  });

  it('large mantissas and steps (beyond 32 bits) round-trip', () => {
    const x = Float64Array.from([0, 2 ** 51 - 1, -(2 ** 51 - 1), 1, 2 ** 40, -(2 ** 33), 12345678901234]);
    const { part, back } = roundTrip(x, 1);
    expect(part.dtype).toBe('dec');
    expect(sameBits(back, x)).toBe(true);
  });

  it('channels packed one after another in a run buffer each decode on their own', () => {
    const run = new PackedRun(8);
    const a = parsedColumn(['1.5', '2.25', '-3.125'], 'kPa');
    const b = Float64Array.from([Math.PI, 2]);
    packSamples(run, a, 1000);
    packSamples(run, b, 1);
    const [pa, pb] = run.parts;
    expect(sameBits(decodeSamples(pa.dtype, run.view(0), pa.n, pa.decExp, pa.factor), a)).toBe(true);
    expect(sameBits(decodeSamples(pb.dtype, run.view(1), pb.n, pb.decExp, pb.factor), b)).toBe(true);
  });

  it('a damaged BLOB is refused, not misread', () => {
    const x = parsedColumn(Array.from({ length: 600 }, (_, i) => String(i * 1.5)), 'Pa');
    const run = new PackedRun(8);
    const p = packSamples(run, x, 1);
    expect(p.dtype).toBe('dec');
    const bytes = run.view(0);
    expect(() => decodeSamples('dec', bytes.subarray(0, bytes.length - 1), p.n, p.decExp, p.factor)).toThrow(/samples BLOB/);
    expect(() => decodeSamples('dec', bytes, p.n + 1, p.decExp, p.factor)).toThrow(/samples BLOB/);
    expect(() => decodeSamples('dec', bytes, p.n, null, p.factor)).toThrow(/exponent/);
    expect(() => decodeSamples('f64le', new Uint8Array(7), 1, null, null)).toThrow(/7 bytes/);
  });
});
