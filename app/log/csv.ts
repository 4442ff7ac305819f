// Text CSV records (the run index, the header line of a run log) read with csv-parse, the
// well-kept CSV library; its browser build carries its own Buffer shim, so this module runs in a
// Web Worker unchanged. Numeric sample lines go through the faster reader in runParser.ts.
import { parse } from 'csv-parse/browser/esm/sync';
import { LogError, shown } from './errors';

export interface TextRecord {
  /** 1-based line number of the record in the file. */
  line: number;
  cells: string[];
}

const BOM = '\uFEFF';

export function stripBom(text: string): string {
  return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
}

const OTHER_DELIMITERS: [string, string][] = [
  [';', 'semicolons (";")'],
  ['\t', 'tabs'],
  ['|', 'vertical bars ("|")'],
];

/** A header that came out as one cell but holds another delimiter: say so plainly. */
export function checkDelimiter(file: string, line: number, cells: string[], raw: string): void {
  if (cells.length !== 1) return;
  for (const [d, name] of OTHER_DELIMITERS) {
    if (raw.includes(d)) {
      throw new LogError({
        file,
        line,
        reason: `the columns are separated by ${name}; expected a comma (",") as the delimiter (and "." as the decimal point)`,
      });
    }
  }
}

/** Parse CSV text records (quotes allowed, no multi-line cells) with line numbers. Blank lines are skipped. */
export function parseTextRecords(text: string, file: string): TextRecord[] {
  const body = text.startsWith(BOM) ? text.slice(1) : text;
  let out: { record: string[]; info: { lines: number } }[];
  try {
    out = parse(body, {
      info: true,
      trim: true,
      skip_empty_lines: true,
      relax_column_count: true,
    }) as unknown as { record: string[]; info: { lines: number } }[];
  } catch (e) {
    const err = e as { message?: string; lines?: number; code?: string };
    throw new LogError({
      file,
      line: typeof err.lines === 'number' ? err.lines : undefined,
      reason: `not readable as comma-separated values (${err.code ?? 'CSV error'}: ${shown(err.message ?? String(e), 120)})`,
    });
  }
  return out.map((r) => ({ line: r.info.lines, cells: r.record }));
}

/** Parse one header line into trimmed column names. */
export function parseHeaderLine(raw: string, file: string, line = 1): string[] {
  const recs = parseTextRecords(raw, file);
  if (recs.length === 0) return [];
  const cells = recs[0].cells;
  checkDelimiter(file, line, cells, raw);
  return cells;
}
