// A session folder as a whole: setup.json + runs.csv + the run logs they name. This module plans
// which file holds which runs and matches parsed samples to index lines; reading the bytes is the
// caller's job (main/import.ts streams files from disk; a browser worker passes file texts).
// Pure module (runs in a browser worker).
import type { RawRun, RunInfo, Setup } from '../types';
import { LogError } from './errors';
import { createRunParser, type RunChannels, type RunParser, type RunParserOptions } from './runParser';
import { parseRunIndexDetailed } from './runIndex';
import { parseSetup } from './setup';

export const SETUP_FILE = 'setup.json';
export const INDEX_FILE = 'runs.csv';
/** Where the samples of a run are when its index line has an empty file cell. */
export const LONG_LOG_DEFAULT = 'samples.csv';

export interface RunFilePlan {
  file: string;
  /** Runs whose samples this file holds, in index order. */
  runs: number[];
  /** Index line of each of those runs (for messages). */
  lines: number[];
  /** true: several runs → a long log with a run column; undefined: one run, either layout. */
  long: true | undefined;
}

/** Group the index by file (an empty file cell means the long log samples.csv). Sets info.file. */
export function planRunFiles(index: RunInfo[], lines?: number[]): RunFilePlan[] {
  const byFile = new Map<string, RunFilePlan>();
  index.forEach((info, i) => {
    const f = info.file ?? LONG_LOG_DEFAULT;
    info.file = f;
    let p = byFile.get(f);
    if (!p) {
      p = { file: f, runs: [], lines: [], long: undefined };
      byFile.set(f, p);
    }
    p.runs.push(info.run);
    p.lines.push(lines?.[i] ?? 0);
    if (p.runs.length > 1) p.long = true;
  });
  return [...byFile.values()];
}

export function runParserFor(
  plan: RunFilePlan, setup: Setup, opts: Pick<RunParserOptions, 'expectedBytes' | 'arena'> = {},
): RunParser {
  return createRunParser(plan.file, setup, { ...opts, runColumn: plan.long });
}

/** Match one parsed file to the index runs it should hold. */
export function collectRuns(
  plan: RunFilePlan,
  parsed: Map<number, RunChannels> | RunChannels,
  index: Map<number, RunInfo>,
  warnings: string[],
): RawRun[] {
  if (!(parsed instanceof Map)) {
    return [{ info: index.get(plan.runs[0])!, channels: parsed }];
  }
  const out: RawRun[] = [];
  plan.runs.forEach((run, i) => {
    const ch = parsed.get(run);
    if (!ch) {
      throw new LogError({
        file: plan.file,
        column: 'run',
        reason: `no sample lines for run ${run}, which ${INDEX_FILE}${plan.lines[i] ? ` line ${plan.lines[i]}` : ''} places in this file`,
      });
    }
    out.push({ info: index.get(run)!, channels: ch });
  });
  const wanted = new Set(plan.runs);
  const extra = [...parsed.keys()].filter((r) => !wanted.has(r));
  if (extra.length) {
    warnings.push(`${plan.file}: samples of run${extra.length > 1 ? 's' : ''} ${extra.join(', ')} ignored (not in ${INDEX_FILE} for this file)`);
  }
  return out;
}

export function missingFileError(plan: RunFilePlan): LogError {
  return new LogError({
    file: INDEX_FILE,
    line: plan.lines[0] || undefined,
    column: 'file',
    reason: `the file "${plan.file}" of run ${plan.runs[0]}${plan.runs.length > 1 ? ` (and ${plan.runs.length - 1} more run${plan.runs.length > 2 ? 's' : ''})` : ''} is missing from the session folder`,
  });
}

export interface ParsedTexts {
  setup: Setup;
  index: RunInfo[];
  runs: RawRun[];
  warnings: string[];
}

/** Whole session from file texts (names relative to the session folder, '/' separated). */
export function parseSessionTexts(files: { name: string; text: string }[]): ParsedTexts {
  const byName = new Map(files.map((f) => [f.name.replace(/\\/g, '/'), f.text]));
  const setupText = byName.get(SETUP_FILE);
  if (setupText === undefined) throw new LogError({ file: SETUP_FILE, reason: 'the session has no setup file' });
  const indexText = byName.get(INDEX_FILE);
  if (indexText === undefined) throw new LogError({ file: INDEX_FILE, reason: 'the session has no run index' });
  const setup = parseSetup(setupText, SETUP_FILE);
  const idx = parseRunIndexDetailed(indexText, INDEX_FILE);
  const warnings = [...idx.warnings];
  const byRun = new Map(idx.runs.map((r) => [r.run, r]));
  const runs: RawRun[] = [];
  for (const plan of planRunFiles(idx.runs, idx.lines)) {
    const text = byName.get(plan.file);
    if (text === undefined) throw missingFileError(plan);
    const p = runParserFor(plan, setup);
    p.push(text);
    const parsed = p.end();
    warnings.push(...p.warnings);
    runs.push(...collectRuns(plan, parsed, byRun, warnings));
  }
  const order = new Map(idx.runs.map((r, i) => [r.run, i]));
  runs.sort((a, b) => order.get(a.info.run)! - order.get(b.info.run)!);
  return { setup, index: idx.runs, runs, warnings };
}
