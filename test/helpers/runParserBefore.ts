// The run-log scanner as it was before the issue-14 rework (app/log/runParser.ts at f548c0e), kept
// verbatim as the reference the new scanner must match bit for bit (test/import-identical.test.ts).
// Not used by the app.
// Incremental reader of run logs: header `t_s,<channel names…>` (or `run,t_s,…` for a long log
// holding every run), then one line of plain decimal numbers per sample. Chunks go in one by one
// (any split, also inside a line or between CR and LF) as strings or as UTF-8 bytes; only the
// unfinished last line is carried over, so a file of any size streams through with memory bounded
// by the samples kept. Values are converted to SI (Pa, or deg for angle probes) with app/units.ts.
//
// The scanner works on bytes (a string chunk is UTF-8 encoded first), so the Node import path can
// hand file bytes over without decoding them. Numbers are read by hand rather than by csv-parse:
// measured several times faster (figures in docs/LOG-FORMAT.md, "Parser choice"). For decimal
// mantissas of at most 15 digits and |decimal exponent| ≤ 22 the value is m·10^e or m/10^e with
// both operands exact, one correctly rounded IEEE operation (W. D. Clinger, "How to read floating
// point numbers accurately", PLDI 1990: the "fast path"); longer ones go to Number(), so every
// value is the same double Number() would give.
import type { Setup } from '../../app/types';
import { channelToSI } from '../../app/units';
import { LogError, shown } from '../../app/log/errors';
import { parseHeaderLine } from '../../app/log/csv';
import type { BufferPool } from '../../app/bufferPool';

export const TIME_COLUMN = 't_s';
export const RUN_COLUMN = 'run';

export interface RunParserOptions {
  /** true: a long log with a `run` column (required); false: one run per file (no `run` column);
   *  undefined: decided by the header. */
  runColumn?: boolean;
  /** Longest line accepted, in bytes (default 16 MiB). */
  maxLineLength?: number;
  /** Size of the whole file in bytes, if known: the sample buffers of a one-run file are then
   *  sized from it and the first line's length once, instead of growing by doubling. */
  expectedBytes?: number;
  /** Reusable sample buffers: the columns are taken from it (and returned to it when they grow),
   *  so a reader of many files does not allocate fresh ones for each; the caller gives their
   *  buffers back (BufferPool.give(column.buffer)) once it no longer needs the channels. */
  arena?: BufferPool;
}

export type RunChannels = Record<string, Float64Array>;

export interface RunParser<R = Map<number, RunChannels> | RunChannels> {
  /** Feed the next piece of the file: a string, or UTF-8 bytes (not both kinds in one file). */
  push(chunk: string | Uint8Array): void;
  /** Finish: throws LogError for a bad last line or a file without samples. */
  end(): R;
  /** Notes about ignored columns (unknown names in the header). */
  readonly warnings: string[];
  /** Sample lines read so far. */
  readonly samples: number;
  /** Header columns once the header has been read (else null). */
  readonly header: string[] | null;
  /** True once the header showed a `run` column. */
  readonly long: boolean;
}

// Slot of a header column: ≥ 0 mapped channel index, else one of these.
const IGNORE = -1;
const TIME = -2;
const RUN = -3;

const POW10 = [
  1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17,
  1e18, 1e19, 1e20, 1e21, 1e22,
];
const NON_FINITE = /^[+-]?(nan|inf|infinity)$/i;
/** Smallest positive normal double (2^-1022); smaller values lose digits or become 0. */
const MIN_NORMAL = 2.2250738585072014e-308;
const NL = 10;
const CR = 13;
const COMMA = 44;
const SP = 32;
const TAB = 9;

const utf8 = new TextEncoder();
const decoder = new TextDecoder('utf-8');

class RunBuffers {
  n = 0;
  cap: number;
  cols: Float64Array[];
  constructor(ncols: number, cap: number, private readonly arena?: BufferPool) {
    this.cap = cap;
    this.cols = Array.from({ length: ncols }, () => this.alloc(cap));
  }
  /** A column of cap samples, on a buffer from the arena if it has one large enough. */
  private alloc(cap: number): Float64Array {
    const b = this.arena?.take(cap * 8);
    return b ? new Float64Array(b, 0, cap) : new Float64Array(cap);
  }
  grow(): void {
    const cap = this.cap * 2;
    this.cols = this.cols.map((c) => {
      const g = this.alloc(cap);
      g.set(c.subarray(0, this.n));
      this.arena?.give(c.buffer);
      return g;
    });
    this.cap = cap;
  }
  /** Give the columns back to the arena (a buffer that is dropped unread). */
  release(): void {
    if (this.arena) for (const c of this.cols) this.arena.give(c.buffer);
  }
  /** The columns cut to the samples read: views when little is left over (always, with an arena:
   *  the caller gives them back), else copies. */
  trimmed(): Float64Array[] {
    const n = this.n;
    const view = (c: Float64Array) => this.arena !== undefined || c.length - n <= c.length / 8;
    return this.cols.map((c) => (c.length === n ? c : view(c) ? c.subarray(0, n) : c.slice(0, n)));
  }
}

class Scanner {
  readonly warnings: string[] = [];
  header: string[] | null = null;
  long = false;
  samples = 0;

  private slots = new Int32Array(0);
  private ncols = 0;
  private names: string[] = [];
  private factors = new Float64Array(0);
  private row = new Float64Array(0);
  private single: RunBuffers | null = null;
  private readonly byRun = new Map<number, RunBuffers>();
  private lastRun = NaN;
  private lastBuf: RunBuffers | null = null;

  /** Unfinished line carried between chunks. */
  private pend = new Uint8Array(4096);
  private pendLen = 0;
  /** Lines completed so far (the next line is line + 1). */
  private line = 0;
  private started = false;
  private ended = false;
  private readonly maxLine: number;
  private readonly channelUnit: Map<string, Setup['channels'][number]['unit']>;

  constructor(
    private readonly file: string,
    private readonly setup: Setup,
    private readonly opts: RunParserOptions,
  ) {
    this.maxLine = opts.maxLineLength ?? 16 * 1024 * 1024;
    this.channelUnit = new Map(setup.channels.map((c) => [c.name, c.unit]));
  }

  push(chunk: string | Uint8Array): void {
    if (this.ended) throw new Error('createRunParser: push() after end()');
    let b = typeof chunk === 'string' ? utf8.encode(chunk) : chunk;
    if (b.length === 0) return;
    if (!this.started) {
      // A BOM may arrive split over chunks only in pathological feeding; handle the usual case.
      this.started = true;
      if (b.length >= 3 && b[0] === 0xef && b[1] === 0xbb && b[2] === 0xbf) b = b.subarray(3);
    }
    let pos = 0;
    if (this.pendLen > 0 || this.header === null) {
      const nl = b.indexOf(NL);
      if (nl < 0) {
        this.carry(b, 0, b.length);
        return;
      }
      this.carry(b, 0, nl + 1);
      this.flushPending();
      pos = nl + 1;
    }
    const last = b.lastIndexOf(NL);
    if (last >= pos) {
      this.lines(b, pos, last + 1);
      pos = last + 1;
    }
    if (pos < b.length) this.carry(b, pos, b.length);
  }

  end(): Map<number, RunChannels> | RunChannels {
    if (this.ended) throw new Error('createRunParser: end() called twice');
    this.ended = true;
    if (this.header === null && this.pendLen === 0) {
      throw new LogError({ file: this.file, line: 1, expected: `a header line "${TIME_COLUMN},<channel names…>"`, found: 'an empty file' });
    }
    if (this.pendLen > 0) {
      const nl = new Uint8Array([NL]);
      this.carry(nl, 0, 1);
      this.flushPending();
    }
    this.underflowWarnings();
    if (this.samples === 0) {
      throw new LogError({ file: this.file, line: this.line + 1, reason: 'the file has a header but no samples; expected at least one sample line' });
    }
    const pack = (b: RunBuffers): RunChannels => {
      const cols = b.trimmed();
      const out: RunChannels = {};
      this.names.forEach((nm, k) => (out[nm] = cols[k]));
      return out;
    };
    if (this.single) return pack(this.single);
    const m = new Map<number, RunChannels>();
    for (const r of [...this.byRun.keys()].sort((a, b) => a - b)) m.set(r, pack(this.byRun.get(r)!));
    return m;
  }

  private carry(b: Uint8Array, from: number, to: number): void {
    const need = this.pendLen + (to - from);
    if (need > this.maxLine) {
      throw new LogError({
        file: this.file,
        line: this.line + 1,
        reason: `line longer than ${this.maxLine} bytes${this.header === null ? ' (no line break where the header should end)' : ''}; is this a CSV run log?`,
      });
    }
    if (need > this.pend.length) {
      const g = new Uint8Array(Math.max(need, this.pend.length * 2));
      g.set(this.pend.subarray(0, this.pendLen));
      this.pend = g;
    }
    this.pend.set(b.subarray(from, to), this.pendLen);
    this.pendLen = need;
  }

  /** The pending buffer holds exactly one line ending in '\n'. */
  private flushPending(): void {
    const p = this.pend;
    const n = this.pendLen;
    this.pendLen = 0;
    if (this.header === null) {
      let end = n - 1;
      if (end > 0 && p[end - 1] === CR) end--;
      this.readHeader(decoder.decode(p.subarray(0, end)));
      this.line++;
    } else this.lines(p, 0, n);
  }

  private readHeader(raw: string): void {
    const { file } = this;
    const lineNo = this.line + 1;
    const cells = parseHeaderLine(raw, file, lineNo);
    if (cells.length === 0 || (cells.length === 1 && cells[0] === '')) {
      throw new LogError({ file, line: lineNo, expected: `a header line "${TIME_COLUMN},<channel names…>"`, found: 'an empty line' });
    }
    const seen = new Set<string>();
    for (const c of cells) {
      if (c === '') throw new LogError({ file, line: lineNo, reason: 'the header has an empty column name' });
      if (seen.has(c)) {
        throw new LogError({ file, line: lineNo, column: c, columnKind: this.channelUnit.has(c) ? 'channel' : 'column', reason: 'this name appears twice in the header' });
      }
      seen.add(c);
    }
    if (!seen.has(TIME_COLUMN)) {
      throw new LogError({ file, line: lineNo, column: TIME_COLUMN, reason: `the header lacks the time column "${TIME_COLUMN}" (expected "${TIME_COLUMN},<channel names…>")` });
    }
    this.long = seen.has(RUN_COLUMN);
    if (this.opts.runColumn === true && !this.long) {
      throw new LogError({ file, line: lineNo, column: RUN_COLUMN, reason: `this file holds several runs, so its header needs a "${RUN_COLUMN}" column` });
    }
    if (this.opts.runColumn === false && this.long) {
      throw new LogError({ file, line: lineNo, column: RUN_COLUMN, reason: `a one-run file must not have a "${RUN_COLUMN}" column (the run index names its run)` });
    }
    const missing = this.setup.channels.filter((c) => !seen.has(c.name)).map((c) => c.name);
    if (missing.length > 0) {
      const also = missing.slice(1, 6).join(', ') + (missing.length > 6 ? `, and ${missing.length - 6} more` : '');
      throw new LogError({
        file,
        line: lineNo,
        column: missing[0],
        columnKind: 'channel',
        reason: `the header lacks this channel of the setup's channel map${missing.length > 1 ? ` (also missing: ${also})` : ''}`,
      });
    }
    this.header = cells;
    this.ncols = cells.length;
    this.slots = new Int32Array(this.ncols);
    const f: number[] = [];
    cells.forEach((c, i) => {
      if (c === TIME_COLUMN) this.slots[i] = TIME;
      else if (c === RUN_COLUMN) this.slots[i] = RUN;
      else {
        const unit = this.channelUnit.get(c);
        if (unit !== undefined) {
          this.slots[i] = this.names.length;
          this.names.push(c);
          f.push(channelToSI(1, unit));
        } else {
          this.slots[i] = IGNORE;
          this.warnings.push(`${file}: column "${c}" is not in the setup's channel map; ignored`);
        }
      }
    });
    this.factors = Float64Array.from(f);
    this.row = new Float64Array(this.names.length);
    if (!this.long) this.single = new RunBuffers(this.names.length, 1024, this.opts.arena);
    this.headerBytes = raw.length + 1;
  }

  private headerBytes = 0;
  private sized = false;

  /** Size the one-run buffers from the file size and the first sample line (see expectedBytes). */
  private sizeFrom(b: Uint8Array, i: number): void {
    this.sized = true;
    const total = this.opts.expectedBytes;
    if (!total || !this.single || this.single.n !== 0) return;
    const nl = b.indexOf(NL, i);
    if (nl < 0) return;
    const lineLen = nl - i + 1;
    const estimate = Math.ceil(((total - this.headerBytes) / lineLen) * 1.05) + 8;
    if (estimate > this.single.cap && estimate < 1 << 26) {
      this.single.release();
      this.single = new RunBuffers(this.names.length, estimate, this.opts.arena);
    }
  }

  private label(col: number): { column: string; columnKind: 'channel' | 'column' } {
    return { column: this.header![col], columnKind: this.slots[col] >= 0 ? 'channel' : 'column' };
  }

  private cellText(b: Uint8Array, start: number): string {
    let j = start;
    while (j < b.length && b[j] !== COMMA && b[j] !== NL && b[j] !== CR) j++;
    return decoder.decode(b.subarray(start, j)).trim();
  }

  /** Values too small for a double (read as 0) or only as a subnormal: the first per column and
   *  a count, reported as warnings by end(). */
  private readonly underflows = new Map<number, { line: number; text: string; zero: boolean; count: number }>();

  private noteUnderflow(b: Uint8Array, start: number, col: number, lineNo: number, v: number): void {
    const u = this.underflows.get(col);
    if (u) u.count++;
    else this.underflows.set(col, { line: lineNo, text: this.cellText(b, start), zero: v === 0, count: 1 });
  }

  private underflowWarnings(): void {
    for (const [col, u] of this.underflows) {
      const lab = this.label(col);
      const more = u.count > 1 ? ` (${u.count} such values in this column)` : '';
      this.warnings.push(`${this.file} line ${u.line}, ${lab.columnKind} ${lab.column}: ${shown(u.text)} is smaller than the smallest double and was read as ${u.zero ? '0' : 'a subnormal number with fewer significant digits'}${more}`);
    }
    this.underflows.clear();
  }

  private badCell(b: Uint8Array, start: number, col: number, lineNo: number): never {
    const text = this.cellText(b, start);
    const lab = this.label(col);
    const what = this.slots[col] === RUN ? 'a run number' : 'a number';
    if (text === '') throw new LogError({ file: this.file, line: lineNo, ...lab, expected: what, found: 'an empty cell' });
    if (NON_FINITE.test(text) || Math.abs(Number(text)) === Infinity) throw new LogError({ file: this.file, line: lineNo, ...lab, expected: 'a finite number', found: shown(text) });
    throw new LogError({ file: this.file, line: lineNo, ...lab, expected: what, found: shown(text) });
  }

  /** Read the sample lines of b[from, to); b[to − 1] is '\n'. */
  private lines(b: Uint8Array, from: number, to: number): void {
    let i = from;
    const nslot = this.ncols;
    const sl = this.slots;
    const rv = this.row;
    const nv = rv.length;
    const factors = this.factors;
    if (!this.sized) this.sizeFrom(b, i);
    while (i < to) {
      const lineNo = this.line + 1;
      let c = b[i];
      // blank line (also "\r\n" or blanks only): skipped
      if (c === NL || c === CR || c === SP || c === TAB) {
        let j = i;
        while (c === SP || c === TAB) c = b[++j];
        if (c === CR) c = b[++j];
        if (c === NL) {
          i = j + 1;
          this.line++;
          continue;
        }
      }
      let runNo = -1;
      for (let col = 0; col < nslot; col++) {
        const slot = sl[col];
        if (slot === IGNORE) {
          c = b[i];
          while (c !== COMMA && c !== NL && c !== CR) c = b[++i];
        } else {
          const start = i;
          c = b[i];
          while (c === SP || c === TAB) c = b[++i];
          let neg = false;
          if (c === 45) {
            neg = true;
            c = b[++i];
          } else if (c === 43) c = b[++i];
          let m = 0;
          let nd = 0;
          let frac = 0;
          while (c >= 48 && c <= 57) {
            m = m * 10 + (c - 48);
            nd++;
            c = b[++i];
          }
          if (c === 46) {
            c = b[++i];
            while (c >= 48 && c <= 57) {
              m = m * 10 + (c - 48);
              nd++;
              frac++;
              c = b[++i];
            }
          }
          if (nd === 0) this.badCell(b, start, col, lineNo);
          let e = 0;
          if (c === 101 || c === 69) {
            c = b[++i];
            let eneg = false;
            if (c === 45) {
              eneg = true;
              c = b[++i];
            } else if (c === 43) c = b[++i];
            let ed = 0;
            while (c >= 48 && c <= 57) {
              if (e < 100000) e = e * 10 + (c - 48);
              ed++;
              c = b[++i];
            }
            if (ed === 0) this.badCell(b, start, col, lineNo);
            if (eneg) e = -e;
          }
          while (c === SP || c === TAB) c = b[++i];
          if (c !== COMMA && c !== NL && c !== CR) this.badCell(b, start, col, lineNo);
          e -= frac;
          let v: number;
          if (nd <= 15 && e >= -22 && e <= 22) {
            v = e >= 0 ? m * POW10[e] : m / POW10[-e];
            if (neg) v = -v;
          } else {
            v = Number(decoder.decode(b.subarray(start, i)));
            if (!Number.isFinite(v)) this.badCell(b, start, col, lineNo);
            if (m !== 0 && Math.abs(v) < MIN_NORMAL && slot >= 0) this.noteUnderflow(b, start, col, lineNo, v);
          }
          if (slot >= 0) rv[slot] = v;
          else if (slot === RUN) {
            if (!Number.isInteger(v) || v < 0) {
              throw new LogError({ file: this.file, line: lineNo, column: RUN_COLUMN, expected: 'a run number (a whole number ≥ 0)', found: shown(this.cellText(b, start)) });
            }
            runNo = v;
          }
        }
        // b[i] is ',', '\r' or '\n'
        if (col < nslot - 1) {
          if (c !== COMMA) {
            throw new LogError({
              file: this.file,
              line: lineNo,
              ...this.label(col + 1),
              reason: `the line ends after ${col + 1} of ${nslot} cells (truncated line?); expected a value for every header column`,
            });
          }
          i++;
        } else {
          if (c === COMMA) throw new LogError({ file: this.file, line: lineNo, reason: `the line has more cells than the header's ${nslot} columns` });
          if (c === CR) c = b[++i];
          if (c !== NL) throw new LogError({ file: this.file, line: lineNo, reason: 'a carriage return inside the line; expected a line break ("\\n" or "\\r\\n") only at the end' });
          i++;
        }
      }
      let buf: RunBuffers;
      if (this.single) buf = this.single;
      else if (runNo === this.lastRun && this.lastBuf) buf = this.lastBuf;
      else {
        let r = this.byRun.get(runNo);
        if (!r) {
          r = new RunBuffers(nv, 256, this.opts.arena);
          this.byRun.set(runNo, r);
        }
        buf = r;
        this.lastRun = runNo;
        this.lastBuf = r;
      }
      if (buf.n === buf.cap) buf.grow();
      const n = buf.n;
      const cols = buf.cols;
      for (let k = 0; k < nv; k++) cols[k][n] = rv[k] * factors[k];
      buf.n = n + 1;
      this.samples++;
      this.line++;
    }
  }
}

export function createRunParser(file: string, setup: Setup, opts: RunParserOptions & { runColumn: true }): RunParser<Map<number, RunChannels>>;
export function createRunParser(file: string, setup: Setup, opts: RunParserOptions & { runColumn: false }): RunParser<RunChannels>;
export function createRunParser(file: string, setup: Setup, opts?: RunParserOptions): RunParser;
export function createRunParser(file: string, setup: Setup, opts: RunParserOptions = {}): RunParser {
  const s = new Scanner(file, setup, opts);
  return {
    push: (chunk) => s.push(chunk),
    end: () => s.end(),
    get warnings() {
      return s.warnings;
    },
    get samples() {
      return s.samples;
    },
    get header() {
      return s.header;
    },
    get long() {
      return s.long;
    },
  };
}
