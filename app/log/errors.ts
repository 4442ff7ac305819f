// Errors of the log reader: every message names the file, and where known the line, the
// channel (or column) and what was expected, e.g.
//   runs/run-0007.csv line 1203, channel S_C14: expected a number, found "1.2.3"
// Pure module (runs in a browser worker).

export interface LogErrorDetail {
  file: string;
  line?: number;
  /** Channel or column name. */
  column?: string;
  /** Whether `column` is a mapped channel ('channel') or another column / field ('column'). */
  columnKind?: 'channel' | 'column' | 'field';
  /** What was expected there, e.g. "a number". */
  expected?: string;
  /** What was found instead (already shortened for display). */
  found?: string;
  /** The explanation after the location; defaults to "expected …, found …". */
  reason?: string;
}

/** Shorten a found cell for a message, keeping it recognisable. */
export function shown(text: string, max = 40): string {
  const t = text.length > max ? `${text.slice(0, max)}…` : text;
  return JSON.stringify(t);
}

export class LogError extends Error {
  readonly file: string;
  readonly line?: number;
  readonly column?: string;
  readonly columnKind?: 'channel' | 'column' | 'field';
  readonly expected?: string;
  readonly found?: string;
  /** The explanation, when it is not "expected …, found …" (kept so the error can be rebuilt). */
  readonly reason?: string;

  constructor(d: LogErrorDetail) {
    super(LogError.format(d));
    this.name = 'LogError';
    this.file = d.file;
    this.line = d.line;
    this.column = d.column;
    this.columnKind = d.columnKind;
    this.expected = d.expected;
    this.found = d.found;
    this.reason = d.reason;
  }

  static format(d: LogErrorDetail): string {
    let where = d.file;
    if (d.line !== undefined) where += ` line ${d.line}`;
    if (d.column !== undefined) where += `, ${d.columnKind ?? 'column'} ${d.column}`;
    const why =
      d.reason ??
      [d.expected !== undefined ? `expected ${d.expected}` : '', d.found !== undefined ? `found ${d.found}` : '']
        .filter(Boolean)
        .join(', ');
    return why ? `${where}: ${why}` : where;
  }

  /** Plain object that survives structured cloning (worker → UI) and JSON. */
  toJSON(): LogErrorDetail & { name: 'LogError'; message: string } {
    return {
      name: 'LogError',
      message: this.message,
      file: this.file,
      line: this.line,
      column: this.column,
      columnKind: this.columnKind,
      expected: this.expected,
      found: this.found,
      reason: this.reason,
    };
  }
}

export function isLogError(e: unknown): e is LogError {
  return e instanceof LogError || (typeof e === 'object' && e !== null && (e as { name?: unknown }).name === 'LogError');
}
