// The run-log reader (app/log/runParser.ts): values, units, chunking, and every malformed case
// with its message (file, line, channel, expected).
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { createRunParser } from '../app/log/runParser';
import { BufferPool } from '../app/bufferPool';
import { LogError } from '../app/log/errors';
import { miniSetup } from './helpers/mini-session';
import type { Setup } from '../app/types';

const setup: Setup = miniSetup({ taps: 2, rakeProbes: 1, wallTaps: 1 });
const names = setup.channels.map((c) => c.name);
const FILE = 'runs/run-0007.csv';

function rowOf(vals: (string | number)[]): string {
  return vals.join(',');
}
function simpleLog(rows: number, eol = '\n'): string {
  const lines = [`t_s,${names.join(',')}`];
  for (let i = 0; i < rows; i++) lines.push(rowOf([i / 100, ...names.map((_, k) => k + i / 10)]));
  return lines.join(eol) + eol;
}
function parse(text: string | string[], opts?: { runColumn?: boolean }) {
  const p = createRunParser(FILE, setup, opts);
  for (const c of Array.isArray(text) ? text : [text]) p.push(c);
  return { result: p.end(), warnings: p.warnings };
}
function err(text: string, opts?: { runColumn?: boolean }): LogError {
  try {
    parse(text, opts);
  } catch (e) {
    expect(e).toBeInstanceOf(LogError);
    return e as LogError;
  }
  throw new Error('expected a LogError');
}
/** Replace one cell (line is 1-based, header = line 1; col = header index). */
function withCell(text: string, line: number, col: number, cell: string): string {
  const lines = text.split('\n');
  const cells = lines[line - 1].split(',');
  cells[col] = cell;
  lines[line - 1] = cells.join(',');
  return lines.join('\n');
}

describe('run log values', () => {
  it('sizing the sample buffers from the file size changes nothing read (any size hint, any chunking)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 400 }), fc.integer({ min: 0, max: 3 }), fc.integer({ min: 1, max: 5000 }), (rows, hintKind, chunk) => {
        const text = simpleLog(rows);
        const bytes = Buffer.byteLength(text);
        // Exact size, too small, far too large, or none.
        const hint = [bytes, Math.floor(bytes / 3), bytes * 7, undefined][hintKind];
        const plain = parse(text).result as Record<string, Float64Array>;
        const p = createRunParser(FILE, setup, { expectedBytes: hint });
        for (let i = 0; i < text.length; i += chunk) p.push(text.slice(i, i + chunk));
        const sized = p.end() as Record<string, Float64Array>;
        for (const n of names) expect(Array.from(sized[n])).toEqual(Array.from(plain[n]));
      }),
      { numRuns: 60 },
    );
  });

  it('reads every channel, converting to Pa with the channel unit', () => {
    const { result } = parse(simpleLog(3));
    const r = result as Record<string, Float64Array>;
    expect(Object.keys(r)).toEqual(names);
    // DP_REF is logged in kPa: 1 kPa = 1000 Pa (SI prefix kilo = 10^3, SI Brochure 9th ed., Table 7).
    const kDp = names.indexOf('DP_REF');
    expect(Array.from(r.DP_REF)).toEqual([0, 0.1, 0.2].map((v) => (kDp + v) * 1000));
    // P_STAT in mbar: 1 mbar = 100 Pa (NIST SP 811 (2008) B.8, exact).
    const kPs = names.indexOf('P_STAT');
    expect(r.P_STAT[2]).toBeCloseTo((kPs + 0.2) * 100, 9);
    // W_F01 in inH2O (conventional): 249.0889 Pa (NIST SP 811 B.8, 7 digits).
    const kW = names.indexOf('W_F01');
    expect(r.W_F01[1] / (kW + 0.1)).toBeCloseTo(249.0889, 3);
    // A Pa channel passes through unchanged.
    expect(r.S_CU01[1]).toBe(names.indexOf('S_CU01') + 0.1);
  });

  it('gives the same double as Number() for any decimal text (fast path and fallback)', () => {
    const pa = miniSetup({ taps: 2, rakeProbes: 1, wallTaps: 1, tapUnit: 'Pa' });
    const onlyPa = { ...pa, channels: pa.channels.filter((c) => c.unit === 'Pa') };
    const numText = fc.oneof(
      fc.double({ noNaN: true, noDefaultInfinity: true }).map((v) => String(v)),
      fc.tuple(fc.boolean(), fc.stringMatching(/^[0-9]{1,25}$/), fc.stringMatching(/^[0-9]{0,25}$/), fc.option(fc.integer({ min: -330, max: 330 })))
        .map(([neg, a, b, e]) => `${neg ? '-' : ''}${a}${b ? '.' + b : ''}${e === null ? '' : 'e' + e}`),
    ).filter((s) => Number.isFinite(Number(s)));
    fc.assert(
      fc.property(fc.array(numText, { minLength: 1, maxLength: 30 }), (cells) => {
        const ch = onlyPa.channels[0].name;
        const text = `t_s,${ch}\n` + cells.map((c, i) => `${i},${c}`).join('\n') + '\n';
        const p = createRunParser('f.csv', { ...onlyPa, channels: [onlyPa.channels[0]] }, { runColumn: false });
        p.push(text);
        const got = p.end()[ch];
        cells.forEach((c, i) => expect(Object.is(got[i], Number(c))).toBe(true));
      }),
      { numRuns: 300 },
    );
  });

  it('does not depend on how the text is split into chunks (strings or bytes)', () => {
    const text = simpleLog(40, '\r\n');
    const whole = parse(text).result as Record<string, Float64Array>;
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 0, max: text.length }), { maxLength: 20 }), fc.boolean(), (cuts, bytes) => {
        const pts = [...new Set(cuts)].sort((a, b) => a - b);
        const pieces: string[] = [];
        let last = 0;
        for (const p of pts) {
          pieces.push(text.slice(last, p));
          last = p;
        }
        pieces.push(text.slice(last));
        const p = createRunParser(FILE, setup, { runColumn: false });
        for (const piece of pieces) p.push(bytes ? new TextEncoder().encode(piece) : piece);
        const got = p.end();
        for (const n of names) expect(Array.from(got[n])).toEqual(Array.from(whole[n]));
      }),
      { numRuns: 200 },
    );
  });

  it('accepts a BOM and CRLF line endings, blanks around cells, blank lines and no final newline', () => {
    const base = parse(simpleLog(5)).result as Record<string, Float64Array>;
    const crlf = parse('\uFEFF' + simpleLog(5, '\r\n')).result as Record<string, Float64Array>;
    expect(crlf).toEqual(base);
    const spaced = simpleLog(5).replace(/,/g, ' , ').replace(/\n(?=.)/, '\n\n  \n');
    expect(parse(spaced.trimEnd()).result).toEqual(base);
  });

  it('reusing sample buffers from one file to the next (BufferPool) changes nothing read', () => {
    // Common practice, no source: a free list must hand back buffers whose stale contents never
    // show. Files of different lengths, one-run and long logs, buffers grown past their first size.
    const arena = new BufferPool();
    const long = (rows: number) => {
      const lines = [`run,t_s,${names.join(',')}`];
      for (let i = 0; i < rows; i++) lines.push(rowOf([3 + (i % 2), i, ...names.map((_, k) => -k - i / 4)]));
      return lines.join('\n') + '\n';
    };
    const given = new Set<ArrayBufferLike>();
    let checked = 0;
    for (const [text, runColumn] of [[simpleLog(3000), false], [simpleLog(40), false], [long(2500), true], [simpleLog(700), false]] as const) {
      const plain = parse(text, { runColumn }).result;
      const p = createRunParser(FILE, setup, { runColumn, arena, expectedBytes: runColumn ? undefined : Buffer.byteLength(text) });
      for (let i = 0; i < text.length; i += 4096) p.push(text.slice(i, i + 4096));
      const got = p.end();
      const sets = (r: typeof got) => (r instanceof Map ? [...r.values()] : [r]);
      expect(sets(got).length).toBe(sets(plain).length);
      sets(got).forEach((ch, k) => {
        for (const n of names) expect(Array.from(ch[n])).toEqual(Array.from(sets(plain)[k][n]));
      });
      if (given.size && !runColumn) {
        // A one-run file after the first: every column is a buffer given back before.
        for (const n of names) expect(given.has((got as Record<string, Float64Array>)[n].buffer)).toBe(true);
        checked++;
      }
      for (const ch of sets(got)) {
        for (const n of names) {
          given.add(ch[n].buffer);
          arena.give(ch[n].buffer);
        }
      }
    }
    expect(checked).toBe(2);
  });

  it('reads a long log with a run column into one set of channels per run', () => {
    const lines = [`run,t_s,${names.join(',')}`];
    for (const run of [3, 4, 3]) lines.push(rowOf([run, 0, ...names.map((_, k) => run * 100 + k)]));
    const { result } = parse(lines.join('\n') + '\n', { runColumn: true });
    const m = result as Map<number, Record<string, Float64Array>>;
    expect([...m.keys()]).toEqual([3, 4]);
    expect(Array.from(m.get(3)!.S_CU01)).toEqual([300 + names.indexOf('S_CU01'), 300 + names.indexOf('S_CU01')]);
    expect(m.get(4)!.S_CU01.length).toBe(1);
  });

  it('ignores unknown extra columns with a warning', () => {
    const text = `t_s,spare_1,${names.join(',')},note\n0,abc,${names.map(() => 1).join(',')},x y z\n`;
    const { result, warnings } = parse(text);
    expect(Object.keys(result)).toEqual(names);
    expect(warnings).toEqual([
      `${FILE}: column "spare_1" is not in the setup's channel map; ignored`,
      `${FILE}: column "note" is not in the setup's channel map; ignored`,
    ]);
  });
});

describe('malformed run logs', () => {
  const good = simpleLog(5);
  const col = (name: string) => 1 + names.indexOf(name);

  it('non-numeric cell: names file, line and channel', () => {
    const e = err(withCell(good, 4, col('S_CU02'), '1.2.3'));
    expect(e.message).toBe(`${FILE} line 4, channel S_CU02: expected a number, found "1.2.3"`);
    expect([e.file, e.line, e.column, e.expected]).toEqual([FILE, 4, 'S_CU02', 'a number']);
  });

  it('NaN and Inf are refused', () => {
    for (const bad of ['NaN', 'Inf', '-inf', 'Infinity']) {
      const e = err(withCell(good, 3, col('DP_REF'), bad));
      expect(e.message).toBe(`${FILE} line 3, channel DP_REF: expected a finite number, found "${bad}"`);
    }
    // Overflowing text is not finite either.
    expect(err(withCell(good, 3, col('DP_REF'), '1e999')).message).toBe(`${FILE} line 3, channel DP_REF: expected a finite number, found "1e999"`);
  });

  it('empty cell, bad time cell', () => {
    expect(err(withCell(good, 2, col('R_T01'), '')).message).toBe(`${FILE} line 2, channel R_T01: expected a number, found an empty cell`);
    expect(err(withCell(good, 6, 0, '0:01')).message).toBe(`${FILE} line 6, column t_s: expected a number, found "0:01"`);
  });

  it('truncated last line: fewer cells than the header, the line named', () => {
    const cut = good.slice(0, good.trimEnd().lastIndexOf(',') - 2); // last line loses its last cells
    const e = err(cut);
    expect(e.line).toBe(6);
    expect(e.message).toMatch(new RegExp(`^${FILE} line 6, channel ${names[names.length - 1]}: the line ends after ${names.length} of ${names.length + 1} cells \\(truncated line\\?\\)`));
  });

  it('a line with more cells than the header', () => {
    const lines = good.split('\n');
    lines[2] += ',5';
    expect(err(lines.join('\n')).message).toBe(`${FILE} line 3: the line has more cells than the header's ${names.length + 1} columns`);
  });

  it('missing channel: the header lacks a mapped channel', () => {
    const text = good.replace(',S_CL02', ',S_XX02');
    const e = err(text);
    expect(e.message).toBe(`${FILE} line 1, channel S_CL02: the header lacks this channel of the setup's channel map`);
    const two = good.replace(',S_CL02', ',a').replace(',R_S01', ',b');
    expect(err(two).message).toBe(`${FILE} line 1, channel S_CL02: the header lacks this channel of the setup's channel map (also missing: R_S01)`);
  });

  it('wrong delimiter: semicolons (with decimal commas) get a clear message', () => {
    const semi = good.replace(/,/g, ';').replace(/(\d)\.(\d)/g, '$1,$2');
    expect(err(semi).message).toBe(
      `${FILE} line 1: the columns are separated by semicolons (";"); expected a comma (",") as the delimiter (and "." as the decimal point)`,
    );
    expect(err(good.replace(/,/g, '\t')).message).toMatch(/separated by tabs; expected a comma/);
  });

  it('empty file and header only', () => {
    expect(err('').message).toBe(`${FILE} line 1: expected a header line "t_s,<channel names…>", found an empty file`);
    expect(err('\uFEFF').message).toBe(`${FILE} line 1: expected a header line "t_s,<channel names…>", found an empty file`);
    const header = good.split('\n')[0];
    expect(err(header + '\n').message).toBe(`${FILE} line 2: the file has a header but no samples; expected at least one sample line`);
    expect(err(header).message).toBe(`${FILE} line 2: the file has a header but no samples; expected at least one sample line`);
    expect(err(header + '\r\n\r\n').message).toMatch(/has a header but no samples/);
  });

  it('header problems: no t_s, duplicate names, run column where none belongs', () => {
    expect(err(good.replace('t_s,', 'time,')).message).toBe(`${FILE} line 1, column t_s: the header lacks the time column "t_s" (expected "t_s,<channel names…>")`);
    expect(err(good.replace(',S_CL02', ',S_CU01')).message).toBe(`${FILE} line 1, channel S_CU01: this name appears twice in the header`);
    expect(err(`run,${good}`, { runColumn: false }).message).toMatch(/^runs\/run-0007\.csv line 1, column run: a one-run file must not have a "run" column/);
    expect(err(good, { runColumn: true }).message).toMatch(/^runs\/run-0007\.csv line 1, column run: this file holds several runs/);
  });

  it('a bad run number in a long log', () => {
    const text = `run,t_s,${names.join(',')}\n1.5,0,${names.map(() => 0).join(',')}\n`;
    expect(err(text).message).toBe(`${FILE} line 2, column run: expected a run number (a whole number ≥ 0), found "1.5"`);
  });

  it('a line longer than the limit is refused rather than buffered forever', () => {
    const p = createRunParser(FILE, setup, { maxLineLength: 1000 });
    p.push(good.split('\n')[0] + '\n');
    expect(() => {
      for (let i = 0; i < 20; i++) p.push('1111111111'.repeat(10));
    }).toThrow(/line 2: line longer than 1000 bytes/);
  });

  it('random bytes: every outcome is channels or a LogError, never another exception', () => {
    const header = new TextEncoder().encode(good.split('\n')[0] + '\n');
    const alphabet = fc.constantFrom(...'0123456789.,-+eE \r\n\t;"xN'.split(''));
    const csvish = fc.array(alphabet, { maxLength: 400 }).map((a) => a.join(''));
    fc.assert(
      fc.property(
        fc.oneof(fc.uint8Array({ maxLength: 2000 }), csvish.map((s) => new TextEncoder().encode(s))),
        fc.boolean(),
        fc.integer({ min: 1, max: 64 }),
        (bytes, withHeader, chunk) => {
          const p = createRunParser(FILE, setup);
          const all = withHeader ? new Uint8Array([...header, ...bytes]) : bytes;
          try {
            for (let i = 0; i < all.length; i += chunk) p.push(all.subarray(i, i + chunk));
            const r = p.end();
            expect(r instanceof Map || typeof r === 'object').toBe(true);
          } catch (e) {
            if (!(e instanceof LogError)) throw e;
            expect(e.message.startsWith(FILE)).toBe(true);
          }
        },
      ),
      { numRuns: 1500 },
    );
  });
});
