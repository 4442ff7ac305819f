// The faster import (issue 14) must read and store exactly what the earlier one did. The earlier
// run-log scanner is kept verbatim as a reference (test/helpers/runParserBefore.ts, the scanner
// of f548c0e): (1) on awkward run logs both scanners give the same doubles, bit for bit, the same
// warnings and the same errors (file, line, column, reason), however the bytes are split into
// chunks; (2) a whole session imported with the reference scanner stores the very same rows
// (samples BLOBs, channel statistics, runs, files, index) as one imported now, on the calling
// thread and on worker threads. Bit identity is the requirement of the issue; common practice, no
// source.
import { readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it, vi } from 'vitest';
import fc from 'fast-check';
import { createRunParser } from '../app/log/runParser';
import { createRunParser as referenceParser } from './helpers/runParserBefore';
import { BufferPool, sizeClass } from '../app/bufferPool';
import { miniSetup } from './helpers/mini-session';
import { cleanupTempDirs, comparableContents, miniFolder, tempDir } from './helpers/store-fixtures';
import type { Setup } from '../app/types';

afterAll(() => cleanupTempDirs());

type Parsed = { value?: unknown; warnings: string[]; error?: { name: string; message: string } };

/** Every double as its 64 bits (so −0 ≠ 0 and every last bit counts). */
function bits(x: Float64Array): string {
  return Array.from(new BigUint64Array(x.buffer.slice(x.byteOffset, x.byteOffset + 8 * x.length)), (v) => v.toString(16)).join(' ');
}
function asBits(v: unknown): unknown {
  if (v instanceof Map) return [...v].map(([k, c]) => [k, asBits(c)]);
  return Object.entries(v as Record<string, Float64Array>).map(([k, c]) => [k, bits(c)]);
}

function run(create: typeof createRunParser, file: string, setup: Setup, chunks: (string | Uint8Array)[], opts: { runColumn?: boolean; expectedBytes?: number; arena?: BufferPool } = {}): Parsed {
  const p = create(file, setup, opts);
  try {
    for (const c of chunks) p.push(c);
    const value = asBits(p.end());
    return { value, warnings: [...p.warnings] };
  } catch (e) {
    const err = e as Error;
    return { warnings: [...p.warnings], error: { name: err.name, message: err.message } };
  }
}

/** The bytes split at `cuts` (positions), as Uint8Array chunks. */
function split(bytes: Uint8Array, cuts: number[]): Uint8Array[] {
  const at = [...new Set(cuts.map((c) => Math.max(0, Math.min(bytes.length, c))))].sort((a, b) => a - b);
  const out: Uint8Array[] = [];
  let from = 0;
  for (const c of [...at, bytes.length]) {
    if (c > from) out.push(bytes.subarray(from, c));
    from = c;
  }
  return out;
}

const setup = miniSetup({ taps: 8, rakeProbes: 3, wallTaps: 2, tapUnit: 'mmH2O' });
const names = setup.channels.map((c) => c.name);
const FILE = 'runs/run-0003.csv';
const enc = new TextEncoder();

/** Both scanners on the same text: whole, byte by byte near the start, and in random pieces. */
function expectSame(text: string, opts: { runColumn?: boolean } = {}, seeds = 4): Parsed {
  const bytes = enc.encode(text);
  const ref = run(referenceParser as typeof createRunParser, FILE, setup, [bytes], opts);
  expect(run(createRunParser, FILE, setup, [bytes], opts)).toEqual(ref);
  expect(run(createRunParser, FILE, setup, [text], opts)).toEqual(ref);
  expect(run(createRunParser, FILE, setup, [bytes], { ...opts, expectedBytes: bytes.length, arena: new BufferPool() })).toEqual(ref);
  const firstBytes = Array.from({ length: Math.min(bytes.length, 200) }, (_, k) => k);
  expect(run(createRunParser, FILE, setup, split(bytes, firstBytes), opts)).toEqual(ref);
  let s = 12345;
  for (let k = 0; k < seeds; k++) {
    const cuts = Array.from({ length: 12 }, () => ((s = (s * 1103515245 + 12345) % 2 ** 31), s % (bytes.length + 1)));
    expect(run(createRunParser, FILE, setup, split(bytes, cuts), opts)).toEqual(ref);
  }
  return ref;
}

const header = `t_s,${names.join(',')}`;
/** A line of `names.length` cells from `cell(k)`. */
const line = (t: string, cell: (k: number) => string) => [t, ...names.map((_, k) => cell(k))].join(',');

describe('the scanner reads what the earlier one read, bit for bit', () => {
  it('awkward but valid cells: exponents, −0, signs, blanks, 16–40 digits, subnormals, CRLF, blank lines', () => {
    const cells = [
      '1.5e3', '-2E-5', '+7', '-0', '-0.000', '0', '+0.0', '1e22', '1e23', '-1e-22', '1e-30', '4.9e-324', '2e-310',
      '0.30000000000000004', '123456789012345.6', '1234567890123456', '9007199254740993', ' 12.5 ', '\t-3.25\t',
      '00012.0100', '.5', '5.', '1.7976931348623157e308', '0.000000000000000000000000000000000000001234567',
      '101325', '-1727.85', '1.17628', '6.02214076E+23', '1e+0', '3e-0',
    ];
    const rows: string[] = [];
    for (let i = 0; i < 40; i++) rows.push(line(String(i / 100), (k) => cells[(i * 7 + k * 3) % cells.length]));
    const text = [header, ...rows.slice(0, 10), '', '   ', '\t', ...rows.slice(10)].join('\r\n') + '\r\n';
    const r = expectSame(text);
    expect(r.error).toBeUndefined(); // valid input (a check that the test reads what it means to)
    expect(r.warnings.some((w) => /smaller than the smallest double/.test(w))).toBe(true);
    // Mixed line endings and no final line break.
    expectSame(`${header}\n${rows[0]}\r\n${rows[1]}\n${rows[2]}`);
  });

  it('a long log with a run column (runs interleaved), and a column the setup does not know', () => {
    const rows = [`run,${header},EXTRA`];
    for (let i = 0; i < 60; i++) rows.push(`${[4, 2, 9][i % 3]},${line(String(i), (k) => (k * 1.25 - i / 7).toPrecision(6))},junk${i}`);
    const r = expectSame(rows.join('\n') + '\n', { runColumn: true });
    expect(r.error).toBeUndefined();
    expect(r.warnings).toEqual([`${FILE}: column "EXTRA" is not in the setup's channel map; ignored`]);
  });

  it('long lines: 40-digit cells, and a line longer than the 1 MiB chunks the import reads', () => {
    const long = '1' + '0'.repeat(38) + '.5';
    const rows = [header];
    for (let i = 0; i < 8; i++) rows.push(line(String(i), (k) => (k % 2 ? long : `-${long.slice(0, 20)}e-${k}`)));
    expectSame(rows.join('\n') + '\n');
    const pad = ' '.repeat(1_200_000);
    const bytes = enc.encode([header, line("0", (k) => (k === 1 ? `${pad}${k}.5` : `${k}.5`)), line('1', () => '2')].join('\n') + '\n');
    const ref = run(referenceParser as typeof createRunParser, FILE, setup, split(bytes, [1 << 20, 2 << 20]));
    expect(ref.error).toBeUndefined();
    expect(run(createRunParser, FILE, setup, split(bytes, [1 << 20, 2 << 20]))).toEqual(ref);
  });

  it('bad input: the same error (file, line, column, reason) from both', () => {
    const good = line('0.01', (k) => String(k + 0.5));
    const bad: [string, string][] = [
      ['semicolons', [header.replaceAll(',', ';'), good.replaceAll(',', ';')].join('\n') + '\n'],
      ['semicolon cells', [header, good.replace(',', ';')].join('\n') + '\n'],
      ['glitched tap', [header, good, line('0.02', (k) => (k === 3 ? '1.2.3' : '1'))].join('\n') + '\n'],
      ['nan', [header, line('0', (k) => (k === 1 ? 'NaN' : '1'))].join('\n') + '\n'],
      ['overflow', [header, line('0', (k) => (k === 2 ? '1e400' : '1'))].join('\n') + '\n'],
      ['empty cell', [header, line('0', (k) => (k === 4 ? '' : '1'))].join('\n') + '\n'],
      ['truncated', [header, good, good.slice(0, 9)].join('\n') + '\n'],
      ['extra cell', [header, good + ',7'].join('\n') + '\n'],
      ['CR inside', [header, good.replace(',', '\r,')].join('\n') + '\n'],
      ['lone exponent', [header, line('0', (k) => (k === 0 ? '1e' : '1'))].join('\n') + '\n'],
      ['sign only', [header, line('0', (k) => (k === 5 ? '-' : '1'))].join('\n') + '\n'],
      ['two signs', [header, line('0', (k) => (k === 5 ? '-+5' : '1'))].join('\n') + '\n'],
      ['two signs, other order', [header, line('0', (k) => (k === 6 ? '+-5' : '1'))].join('\n') + '\n'],
      ['double minus', [header, line('0', (k) => (k === 2 ? '--5' : '1'))].join('\n') + '\n'],
      ['no samples', header + '\n'],
      ['empty', ''],
    ];
    for (const [what, text] of bad) {
      const r = expectSame(text, {}, 2);
      expect(r.error, what).toBeDefined();
      if (what !== 'empty') expect(r.error!.message, what).toContain(FILE);
    }
    const glitch = expectSame([header, good, line('0.02', (k) => (k === 3 ? '1.2.3' : '1'))].join('\n') + '\n');
    expect(glitch.error!.message).toContain('line 3');
    expect(glitch.error!.message).toContain(`channel ${names[3]}:`);
    const runBad = expectSame([`run,${header}`, `1.5,${good}`].join('\n') + '\n', { runColumn: true });
    expect(runBad.error!.message).toContain('run');
  });

  it('random cells in every notation (property test, fast-check)', () => {
    const cell = fc.oneof(
      fc.double({ noNaN: true, noDefaultInfinity: true }).map((x) => String(x)),
      fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e6, max: 1e6 }).chain((x) => fc.integer({ min: 1, max: 17 }).map((p) => x.toPrecision(p))),
      fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e6, max: 1e6 }).chain((x) => fc.integer({ min: 0, max: 20 }).map((p) => x.toExponential(p))),
      fc.integer({ min: -1e9, max: 1e9 }).chain((m) => fc.integer({ min: 0, max: 12 }).map((d) => (m / 10 ** d).toFixed(d))),
      fc.constantFrom('-0', '+1', '0.0', '1E5', '  3', '-0e0', '007.50'),
    );
    fc.assert(
      fc.property(fc.array(fc.array(cell, { minLength: names.length, maxLength: names.length }), { minLength: 1, maxLength: 12 }), fc.boolean(), (rows, crlf) => {
        const eol = crlf ? '\r\n' : '\n';
        const text = [header, ...rows.map((r, i) => `${i},${r.join(',')}`)].join(eol) + eol;
        const bytes = enc.encode(text);
        const ref = run(referenceParser as typeof createRunParser, FILE, setup, [bytes]);
        expect(run(createRunParser, FILE, setup, split(bytes, [7, 50, 51, 300]))).toEqual(ref);
      }),
      { numRuns: 150, seed: 14 },
    );
  });
});

describe('a whole session stores the same rows as with the earlier scanner', () => {
  /** The store's rows after importing `dir` with the earlier scanner in place of the current one. */
  async function importedWithReference(dir: string, db: string): Promise<Record<string, unknown[]>> {
    vi.resetModules();
    vi.doMock('../app/log/runParser', () => import('./helpers/runParserBefore'));
    try {
      const { Store } = await import('../main/store');
      const { importSessionFolder } = await import('../main/import');
      const store = Store.open(db);
      await importSessionFolder(store, dir, { actor: 'x', workers: 0 });
      const rows = comparableContents(store);
      store.close();
      return rows;
    } finally {
      vi.doUnmock('../app/log/runParser');
      vi.resetModules();
    }
  }

  async function importedNow(dir: string, db: string, workers: number): Promise<Record<string, unknown[]>> {
    const { Store } = await import('../main/store');
    const { importSessionFolder } = await import('../main/import');
    const store = Store.open(db);
    await importSessionFolder(store, dir, { actor: 'x', workers });
    const rows = comparableContents(store);
    store.close();
    return rows;
  }

  it('sparse awkward session (CRLF, 18 taps in mmH2O, one glitched tap, exponents, −0, 17 digits), on this thread and on 2 threads', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { setup: { taps: 9, tapUnit: 'mmH2O' }, runs: { dataRuns: 7, samples: 240 }, write: { digits: 6, eol: '\r\n' } });
    const runsDir = join(f.dir, 'runs');
    const files = readdirSync(runsDir).sort();
    // Awkward cells written into the logs: −0, exponent notation, one glitched tap (a spike in
    // exponent notation) and 17-digit cells.
    const tapCol = 4;
    for (const [k, name] of files.entries()) {
      const p = join(runsDir, name);
      const lines = readFileSync(p, 'utf8').split('\r\n');
      for (let i = 1; i < lines.length - 1; i++) {
        const cells = lines[i].split(',');
        if (i % 17 === 0) cells[tapCol] = '-0';
        if (i % 29 === 0) cells[tapCol + 1] = `${Number(cells[tapCol + 1]) * 1e3}e-3`;
        if (k === 2 && i === 100) cells[tapCol + 2] = '9.87654321e4'; // the glitched tap
        if (i % 31 === 0) cells[cells.length - 1] = Number(cells[cells.length - 1]).toPrecision(17);
        lines[i] = cells.join(',');
      }
      writeFileSync(p, lines.join('\r\n'));
    }
    const ref = await importedWithReference(f.dir, join(dir, 'ref.sqlite'));
    expect((ref.samples_v2 ?? ref.samples).length).toBeGreaterThan(0);
    expect(await importedNow(f.dir, join(dir, 'now.sqlite'), 0)).toEqual(ref);
    expect(await importedNow(f.dir, join(dir, 'now2.sqlite'), 2)).toEqual(ref);
  }, 60_000);

  it('one long log holding every run (run column), 6 digits', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { setup: { taps: 11 }, runs: { dataRuns: 5, samples: 180 }, write: { singleFile: true, digits: 6 } });
    const ref = await importedWithReference(f.dir, join(dir, 'ref.sqlite'));
    expect(await importedNow(f.dir, join(dir, 'now.sqlite'), 0)).toEqual(ref);
  }, 60_000);
});

describe('buffer size classes (app/bufferPool.ts)', () => {
  it('a class holds the bytes asked for, wastes at most 1/8, and nearby sizes share a class', () => {
    for (let n = 1; n < 5e7; n = Math.ceil(n * 1.37) + 1) {
      const c = sizeClass(n);
      expect(c).toBeGreaterThanOrEqual(n);
      if (n > 4096) expect(c).toBeLessThanOrEqual(n * 1.125);
    }
    expect(sizeClass(2000 * 8)).toBe(sizeClass(2010 * 8)); // run logs a few samples apart
    // 243 columns of one file taken, given back, and the next file's (a few samples longer) fit.
    const pool = new BufferPool();
    const first = Array.from({ length: 243 }, () => new ArrayBuffer(sizeClass(2000 * 8)));
    for (const b of first) pool.give(b);
    const taken = Array.from({ length: 243 }, () => pool.take(2011 * 8));
    expect(taken.every((b) => b !== null && first.includes(b))).toBe(true);
    expect(pool.keptBytes).toBe(0);
  });

  it('a pool keeps no more bytes than its bound', () => {
    const pool = new BufferPool(4096, 100_000);
    for (let k = 0; k < 50; k++) pool.give(new ArrayBuffer(16_384));
    expect(pool.keptBytes).toBeLessThanOrEqual(100_000);
    expect(pool.keptBytes).toBe(6 * 16_384);
  });
});
