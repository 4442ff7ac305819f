// Reading the run index (runs.csv): one line per run with its kind (wind-off zero or data), start
// time, angle of attack, air state and the file holding its samples. Barometric pressure is in Pa
// unless the header names a unit (baro_kPa, baro_hPa, …); it is converted with app/units.ts.
// Pure module (runs in a browser worker).
import type { PressureUnit, RunInfo } from '../types';
import { isPressureUnit, toPascal } from '../units';
import { LogError, shown } from './errors';
import { checkDelimiter, parseTextRecords } from './csv';

export const INDEX_COLUMNS = ['run', 'kind', 'time', 'alpha_deg', 'baro', 'temp_C', 'rh_pct', 'file'] as const;
/** Plausible barometric pressure, Pa: outside it the unit is almost surely wrong. */
const BARO_MIN = 30e3;
const BARO_MAX = 120e3;
const ISO_TIME = /^\d{4}-\d{2}-\d{2}[T ]\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:?\d{2})?$/;

export interface RunIndexResult {
  runs: RunInfo[];
  /** Line number of each run in the file, same order. */
  lines: number[];
  warnings: string[];
}

/** A file name from the index must stay inside the session folder. */
export function checkRelativeName(name: string): string | null {
  if (name.startsWith('/') || name.startsWith('\\') || /^[A-Za-z]:/.test(name)) return 'an absolute path';
  if (name.split(/[\\/]/).some((p) => p === '..')) return 'a path leaving the session folder ("..")';
  if (/[\u0000-\u001f]/.test(name)) return 'control characters';
  return null;
}

export function parseRunIndex(text: string, file: string): RunInfo[] {
  return parseRunIndexDetailed(text, file).runs;
}

export function parseRunIndexDetailed(text: string, file: string): RunIndexResult {
  const recs = parseTextRecords(text, file);
  if (recs.length === 0) {
    throw new LogError({ file, line: 1, expected: `a header line "${INDEX_COLUMNS.join(',')}"`, found: 'an empty file' });
  }
  const head = recs[0];
  checkDelimiter(file, head.line, head.cells, text.split('\n', 1)[0]);
  const col = new Map<string, number>();
  const warnings: string[] = [];
  let baroCol = -1;
  let baroUnit: PressureUnit = 'Pa';
  const seen = new Set<string>();
  head.cells.forEach((c, i) => {
    if (seen.has(c)) throw new LogError({ file, line: head.line, column: c, reason: 'this column appears twice in the header' });
    const m = /^baro(?:_(.+))?$/.exec(c);
    if (m) {
      if (baroCol >= 0) throw new LogError({ file, line: head.line, column: c, reason: `a second barometric pressure column (already have ${head.cells[baroCol]})` });
      const unit = m[1] ?? 'Pa';
      if (!isPressureUnit(unit)) {
        throw new LogError({ file, line: head.line, column: c, reason: `unknown pressure unit ${shown(unit)} in the column name; use e.g. baro (Pa), baro_kPa or baro_hPa` });
      }
      baroCol = i;
      baroUnit = unit;
    } else if ((INDEX_COLUMNS as readonly string[]).includes(c)) col.set(c, i);
    else warnings.push(`${file}: column "${c}" is not an index column; ignored`);
    seen.add(c);
  });
  for (const need of INDEX_COLUMNS) {
    if (need === 'file') continue;
    if (need === 'baro' ? baroCol < 0 : !col.has(need)) {
      throw new LogError({ file, line: head.line, column: need, reason: `the header lacks this column (expected ${INDEX_COLUMNS.join(',')})` });
    }
  }
  const ncols = head.cells.length;
  const runs: RunInfo[] = [];
  const lines: number[] = [];
  const firstLine = new Map<number, number>();
  // Values too small for a double (1e-400 → 0, or a subnormal with fewer digits): the first per
  // column and a count, as warnings (like the run logs' underflows, app/log/runParser.ts).
  const underflows = new Map<string, { line: number; text: string; zero: boolean; count: number }>();
  for (const r of recs.slice(1)) {
    if (r.cells.length < ncols) {
      throw new LogError({
        file,
        line: r.line,
        column: head.cells[r.cells.length],
        reason: `the line has ${r.cells.length} of ${ncols} cells (truncated line?)`,
      });
    }
    if (r.cells.length > ncols) throw new LogError({ file, line: r.line, reason: `the line has more cells than the header's ${ncols} columns` });
    const cell = (name: string) => r.cells[name === 'baro' ? baroCol : col.get(name)!];
    const num = (name: string, what = 'a number'): number => {
      const t = cell(name);
      const v = t === '' ? NaN : Number(t);
      if (!Number.isFinite(v)) {
        throw new LogError({ file, line: r.line, column: name === 'baro' ? head.cells[baroCol] : name, expected: /^[+-]?(nan|inf)/i.test(t) ? `a finite number` : what, found: t === '' ? 'an empty cell' : shown(t) });
      }
      if (underflowed(t, v)) {
        const column = name === 'baro' ? head.cells[baroCol] : name;
        if (name === 'run') throw new LogError({ file, line: r.line, column, expected: 'a run number (a whole number ≥ 0)', found: `${shown(t)}, too small for a double` });
        const u = underflows.get(column);
        if (u) u.count++;
        else underflows.set(column, { line: r.line, text: t, zero: v === 0, count: 1 });
      }
      return v;
    };
    const run = num('run', 'a run number');
    if (!Number.isInteger(run) || run < 0) throw new LogError({ file, line: r.line, column: 'run', expected: 'a run number (a whole number ≥ 0)', found: shown(cell('run')) });
    const prev = firstLine.get(run);
    if (prev !== undefined) throw new LogError({ file, line: r.line, column: 'run', reason: `run ${run} is listed twice (first on line ${prev})` });
    firstLine.set(run, r.line);
    const kind = cell('kind');
    if (kind !== 'zero' && kind !== 'data') throw new LogError({ file, line: r.line, column: 'kind', expected: '"zero" (wind-off) or "data"', found: shown(kind) });
    const time = cell('time');
    if (!ISO_TIME.test(time) || !Number.isFinite(Date.parse(time))) {
      throw new LogError({ file, line: r.line, column: 'time', expected: 'an ISO 8601 start time such as 2026-11-18T09:30:00Z', found: time === '' ? 'an empty cell' : shown(time) });
    }
    const alphaDeg = num('alpha_deg');
    if (Math.abs(alphaDeg) > 90) throw new LogError({ file, line: r.line, column: 'alpha_deg', expected: 'an angle of attack within ±90°', found: shown(cell('alpha_deg')) });
    const baro = toPascal(num('baro'), baroUnit);
    if (baro < BARO_MIN || baro > BARO_MAX) {
      throw new LogError({
        file,
        line: r.line,
        column: head.cells[baroCol],
        reason: `barometric pressure ${cell('baro')} ${baroUnit}${baroUnit === 'Pa' ? '' : ` (= ${baro} Pa)`} is outside ${BARO_MIN / 1000}–${BARO_MAX / 1000} kPa; is the unit right? (name it in the header: baro_kPa, baro_hPa, …)`,
      });
    }
    const temperatureC = num('temp_C');
    if (temperatureC < -60 || temperatureC > 90) throw new LogError({ file, line: r.line, column: 'temp_C', expected: 'an air temperature in °C between −60 and 90', found: shown(cell('temp_C')) });
    const humidity = num('rh_pct');
    if (humidity < 0 || humidity > 100) throw new LogError({ file, line: r.line, column: 'rh_pct', expected: 'a relative humidity in % between 0 and 100', found: shown(cell('rh_pct')) });
    const info: RunInfo = { run, kind, time, alphaDeg, baro, temperatureC, humidity };
    if (col.has('file')) {
      const f = cell('file');
      if (f !== '') {
        const bad = checkRelativeName(f);
        if (bad) throw new LogError({ file, line: r.line, column: 'file', reason: `the file name ${shown(f)} is ${bad}; expected a name relative to the session folder` });
        info.file = f;
      }
    }
    runs.push(info);
    lines.push(r.line);
  }
  if (runs.length === 0) {
    throw new LogError({ file, line: head.line + 1, reason: 'the index has a header but no runs; expected at least one run line' });
  }
  for (const [column, u] of underflows) {
    const more = u.count > 1 ? ` (${u.count} such values in this column)` : '';
    warnings.push(`${file} line ${u.line}, column ${column}: ${shown(u.text)} is smaller than the smallest double and was read as ${u.zero ? '0' : 'a subnormal number with fewer significant digits'}${more}`);
  }
  return { runs, lines, warnings };
}

/** A decimal text with a nonzero digit in its mantissa that reads as 0 or a subnormal double. */
function underflowed(text: string, v: number): boolean {
  if (v !== 0 && Math.abs(v) >= 2.2250738585072014e-308) return false;
  const mantissa = text.trim().replace(/^[+-]/, '').split(/[eE]/)[0];
  return /[1-9]/.test(mantissa);
}
