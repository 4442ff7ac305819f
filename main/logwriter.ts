// Writes a session folder in the Rakeline log format (docs/LOG-FORMAT.md): setup.json, the run
// logs (one per run, or one long log with a run column) and runs.csv. Runs are written one by one
// through a small write buffer, so a generator of runs never needs the whole day in memory.
// Samples arrive in SI (Pa, deg) and are written in each channel's unit (app/units.ts fromPascal).
import { closeSync, mkdirSync, openSync, writeFileSync, writeSync } from 'node:fs';
import { dirname, join } from 'node:path';
import type { PressureUnit, RawRun, RunInfo, Setup } from '../app/types';
import { fromPascal } from '../app/units';
import { INDEX_COLUMNS } from '../app/log/runIndex';
import { INDEX_FILE, LONG_LOG_DEFAULT, SETUP_FILE } from '../app/log/session';
import { RUN_COLUMN, TIME_COLUMN } from '../app/log/runParser';

export interface WriteOptions {
  /** One long log (samples.csv, with a run column) instead of one file per run. */
  singleFile?: boolean;
  /** Significant digits of the sample values (default: shortest text that reads back exactly). */
  digits?: number;
  /** Sample rate for the t_s column, Hz (default 100). */
  sampleRateHz?: number;
  /** Unit of the barometric pressure column (default Pa: header "baro"). */
  baroUnit?: PressureUnit;
  /** Line ending (default "\n"). */
  eol?: '\n' | '\r\n';
}

/** Default run log name of a run. */
export function runFileName(run: number): string {
  return `runs/run-${String(run).padStart(4, '0')}.csv`;
}

class BufferedFile {
  private fd: number;
  private parts: string[] = [];
  private size = 0;
  constructor(path: string, flags: 'w' | 'a' = 'w') {
    mkdirSync(dirname(path), { recursive: true });
    this.fd = openSync(path, flags);
  }
  write(s: string): void {
    this.parts.push(s);
    this.size += s.length;
    if (this.size > 1 << 20) this.flush();
  }
  flush(): void {
    if (this.parts.length) writeSync(this.fd, this.parts.join(''));
    this.parts = [];
    this.size = 0;
  }
  close(): void {
    this.flush();
    closeSync(this.fd);
  }
}

function formatter(digits: number | undefined): (v: number) => string {
  if (digits === undefined) return (v) => String(v);
  return (v) => String(Number(v.toPrecision(digits)));
}

function indexHeader(baroUnit: PressureUnit): string {
  return INDEX_COLUMNS.map((c) => (c === 'baro' && baroUnit !== 'Pa' ? `baro_${baroUnit}` : c)).join(',');
}

function csvCell(s: string): string {
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** One runs.csv line (no line ending). */
export function indexLine(info: RunInfo, file: string, baroUnit: PressureUnit = 'Pa'): string {
  const baro = baroUnit === 'Pa' ? info.baro : Number(fromPascal(info.baro, baroUnit).toPrecision(10));
  return [info.run, info.kind, info.time, info.alphaDeg, baro, info.temperatureC, info.humidity, csvCell(file)].join(',');
}

function writeRunLines(out: BufferedFile, setup: Setup, raw: RawRun, o: WriteOptions, withRun: boolean): void {
  const eol = o.eol ?? '\n';
  const fmt = formatter(o.digits);
  const rate = o.sampleRateHz ?? 100;
  const cols = setup.channels.map((c) => {
    const a = raw.channels[c.name];
    if (!a) throw new Error(`writeSessionFolder: run ${raw.info.run} has no samples for channel ${c.name}`);
    return { a, unit: c.unit };
  });
  const n = cols.length ? cols[0].a.length : 0;
  for (const c of cols) {
    if (c.a.length !== n) throw new Error(`writeSessionFolder: run ${raw.info.run}: channels have different sample counts`);
  }
  const prefix = withRun ? `${raw.info.run},` : '';
  for (let i = 0; i < n; i++) {
    let line = prefix + String(Number((i / rate).toFixed(6)));
    for (const c of cols) line += ',' + fmt(c.unit === 'deg' ? c.a[i] : fromPascal(c.a[i], c.unit));
    out.write(line + eol);
  }
}

function runHeader(setup: Setup, withRun: boolean): string {
  return [...(withRun ? [RUN_COLUMN] : []), TIME_COLUMN, ...setup.channels.map((c) => c.name)].join(',');
}

/** Write a whole session folder (creates it; overwrites setup.json, runs.csv and the run logs). */
export function writeSessionFolder(dir: string, setup: Setup, index: RunInfo[], runs: Iterable<RawRun>, opts: WriteOptions = {}): void {
  const eol = opts.eol ?? '\n';
  mkdirSync(dir, { recursive: true });
  writeFileSync(join(dir, SETUP_FILE), JSON.stringify(setup, null, 2) + '\n');
  const fileOf = new Map<number, string>();
  for (const info of index) fileOf.set(info.run, opts.singleFile ? LONG_LOG_DEFAULT : (info.file ?? runFileName(info.run)));
  let long: BufferedFile | null = null;
  if (opts.singleFile) {
    long = new BufferedFile(join(dir, LONG_LOG_DEFAULT));
    long.write(runHeader(setup, true) + eol);
  }
  try {
    for (const raw of runs) {
      const file = fileOf.get(raw.info.run);
      if (file === undefined) throw new Error(`writeSessionFolder: run ${raw.info.run} is not in the index`);
      if (long) writeRunLines(long, setup, raw, opts, true);
      else {
        writeRunFile(join(dir, file), setup, raw, opts, eol);
      }
    }
  } finally {
    long?.close();
  }
  const lines = [indexHeader(opts.baroUnit ?? 'Pa'), ...index.map((i) => indexLine(i, fileOf.get(i.run)!, opts.baroUnit))];
  writeFileSync(join(dir, INDEX_FILE), lines.join(eol) + eol);
}

/** One run log file: header line, then one line per sample. */
function writeRunFile(path: string, setup: Setup, raw: RawRun, opts: WriteOptions, eol: string): void {
  const out = new BufferedFile(path);
  try {
    out.write(runHeader(setup, false) + eol);
    writeRunLines(out, setup, raw, opts, false);
  } finally {
    out.close();
  }
}

/** Live acquisition: write one more run log and append its line to runs.csv (the run log first,
 *  so a watcher that sees the index line finds the file complete). The folder must exist with a
 *  runs.csv written by writeSessionFolder (same baroUnit and line ending). */
export function appendRunToFolder(dir: string, setup: Setup, raw: RawRun, opts: Omit<WriteOptions, 'singleFile'> = {}): void {
  const eol = opts.eol ?? '\n';
  const file = raw.info.file ?? runFileName(raw.info.run);
  writeRunFile(join(dir, file), setup, raw, opts, eol);
  const idx = new BufferedFile(join(dir, INDEX_FILE), 'a');
  idx.write(indexLine(raw.info, file, opts.baroUnit) + eol);
  idx.close();
}
