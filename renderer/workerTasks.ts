// What the renderer's Web Worker does, as plain functions (worker.ts only wires messages to them;
// tests call them directly). Checking uses the very parser main uses for the import (app/log), so
// an error found here names the same file, line and channel the import would.
import type { RunInfo, RunResult, Settings, Setup, ZeroedRun } from '../app/types';
import { reduceRun } from '../app/reduce';
import { LogError, isLogError, parseSetup, parseRunIndexDetailed } from '../app/log';
import { INDEX_FILE, SETUP_FILE, collectRuns, missingFileError, planRunFiles, runParserFor } from '../app/log/session';

export interface UploadFile { name: string; text: string }

/** An error that survives structured cloning. */
export interface PlainError { message: string; file?: string; line?: number; column?: string }

export type FileStatus = 'ok' | 'error' | 'unused' | 'unchecked';

export interface CheckedFile {
  /** Name as chosen (may include the folder the user picked). */
  chosen: string;
  /** Name relative to the session folder, as it will be sent. */
  name: string;
  bytes: number;
  status: FileStatus;
  note: string;
}

export interface CheckReport {
  ok: boolean;
  files: CheckedFile[];
  errors: PlainError[];
  warnings: string[];
  session: { title: string; date: string; facility: string; model: string } | null;
  runs: number;
  dataRuns: number;
  samples: number;
}

export type Progress = (done: number, total: number, label: string) => void;

export function plainError(e: unknown): PlainError {
  if (isLogError(e)) {
    const l = e as LogError;
    return { message: l.message, file: l.file, line: l.line, column: l.column };
  }
  if (e && typeof e === 'object' && typeof (e as { message?: unknown }).message === 'string') {
    const o = e as { message: string; file?: unknown; line?: unknown; column?: unknown };
    return {
      message: o.message,
      file: typeof o.file === 'string' ? o.file : undefined,
      line: typeof o.line === 'number' ? o.line : undefined,
      column: typeof o.column === 'string' ? o.column : undefined,
    };
  }
  return { message: String(e) };
}

const baseName = (n: string) => n.slice(n.lastIndexOf('/') + 1);
const dirName = (n: string) => (n.includes('/') ? n.slice(0, n.lastIndexOf('/')) : '');
const CHUNK = 1 << 20;

/**
 * Check chosen files as one session: setup.json, runs.csv and every run log the index names.
 * Names are made relative to the folder holding setup.json; a run log chosen without its
 * sub-folder (a flat multi-file pick) is matched to the index by its base name when that is
 * unambiguous. Collects every error it can (one per file), not just the first.
 */
export function checkFiles(input: UploadFile[], progress?: Progress): CheckReport {
  const files: (CheckedFile & { text: string })[] = input.map((f) => {
    const n = f.name.replace(/\\/g, '/').replace(/^(\.\/)+/, '');
    return { chosen: f.name, name: n, bytes: f.text.length, status: 'unchecked', note: '', text: f.text };
  });
  const errors: PlainError[] = [];
  const warnings: string[] = [];
  const report = (): CheckReport => ({
    ok: errors.length === 0,
    files: files.map(({ text: _t, ...rest }) => rest),
    errors, warnings, session, runs, dataRuns, samples,
  });
  let session: CheckReport['session'] = null;
  let runs = 0;
  let dataRuns = 0;
  let samples = 0;

  const setups = files.filter((f) => baseName(f.name).toLowerCase() === SETUP_FILE);
  if (setups.length !== 1) {
    errors.push({
      file: SETUP_FILE,
      message: setups.length === 0
        ? `${SETUP_FILE}: none of the chosen files is the setup file; choose the whole session folder or all its files.`
        : `${SETUP_FILE}: ${setups.length} setup files were chosen (${setups.map((s) => s.name).join(', ')}); import one session at a time.`,
    });
    return report();
  }
  const root = dirName(setups[0].name);
  for (const f of files) {
    if (!root) continue;
    if (f.name.startsWith(`${root}/`)) f.name = f.name.slice(root.length + 1);
    else {
      f.status = 'error';
      f.note = `outside the session folder "${root}"`;
      errors.push({ file: f.name, message: `${f.name}: outside the session folder "${root}" of ${SETUP_FILE}` });
    }
  }
  const setupFile = setups[0];
  let setup: Setup;
  try {
    setup = parseSetup(setupFile.text, SETUP_FILE);
    setupFile.status = 'ok';
    setupFile.note = `${setup.channels.length} channels, ${setup.taps.length} taps, ${setup.rake.probes.length} rake probes`;
    session = { title: setup.session.title, date: setup.session.date, facility: setup.facility.name, model: setup.model.name };
  } catch (e) {
    const pe = plainError(e);
    setupFile.status = 'error';
    setupFile.note = pe.message;
    errors.push(pe);
    return report();
  }

  const indexFile = files.find((f) => f.name === INDEX_FILE);
  if (!indexFile) {
    errors.push({ file: INDEX_FILE, message: `${INDEX_FILE}: the session has no run index among the chosen files` });
    return report();
  }
  let index: RunInfo[];
  let lines: number[];
  try {
    const idx = parseRunIndexDetailed(indexFile.text, INDEX_FILE);
    index = idx.runs;
    lines = idx.lines;
    warnings.push(...idx.warnings);
    indexFile.status = 'ok';
    runs = index.length;
    dataRuns = index.filter((r) => r.kind === 'data').length;
    indexFile.note = `${runs} runs (${dataRuns} data, ${runs - dataRuns} wind-off zeros)`;
  } catch (e) {
    const pe = plainError(e);
    indexFile.status = 'error';
    indexFile.note = pe.message;
    errors.push(pe);
    return report();
  }

  const byRun = new Map(index.map((r) => [r.run, r]));
  const plans = planRunFiles(index, lines);
  const byName = new Map(files.map((f) => [f.name, f]));
  // Match every planned file first (so the progress total is known), then parse.
  const claimed = new Set<CheckedFile>();
  const matched = plans.map((plan) => {
    let f = byName.get(plan.file);
    if (!f) {
      // Flat pick: the same base name, once, and not already claimed by another index entry.
      const cands = files.filter((c) => c.status === 'unchecked' && !claimed.has(c) && baseName(c.name) === baseName(plan.file));
      if (cands.length === 1) {
        f = cands[0];
        byName.delete(f.name);
        f.name = plan.file;
        byName.set(f.name, f);
      }
    }
    if (f) claimed.add(f);
    return { plan, f };
  });
  const total = matched.reduce((s, m) => s + (m.f?.bytes ?? 0), 0) || 1;
  let done = 0;
  for (const { plan, f } of matched) {
    if (!f) {
      errors.push(plainError(missingFileError(plan)));
      continue;
    }
    try {
      const parser = runParserFor(plan, setup);
      for (let i = 0; i < f.text.length; i += CHUNK) {
        parser.push(f.text.slice(i, i + CHUNK));
        progress?.(done + Math.min(i + CHUNK, f.text.length), total, `Checking ${f.name}`);
      }
      const parsed = parser.end();
      warnings.push(...parser.warnings);
      const got = collectRuns(plan, parsed, byRun, warnings);
      samples += parser.samples;
      f.status = 'ok';
      f.note = `${got.length} run${got.length === 1 ? '' : 's'} (${plan.runs.join(', ')}), ${parser.samples} samples`;
    } catch (e) {
      const pe = plainError(e);
      f.status = 'error';
      f.note = pe.message;
      errors.push(pe);
    }
    done += f.bytes;
    progress?.(done, total, `Checked ${f.name}`);
  }
  for (const f of files) {
    if (f.status === 'unchecked') {
      f.status = 'unused';
      f.note = 'not named in the run index; it will be ignored';
    }
  }
  return report();
}

/** Re-reduce one run (tap override, setting change) exactly as main would. */
export function reduceOne(setup: Setup, zeroed: ZeroedRun, settings: Settings): RunResult {
  return reduceRun(setup, zeroed, settings);
}

/** Names to send with sessions.importFiles, after checking (relative to the session folder). */
export function uploadNames(report: CheckReport): Map<string, string> {
  return new Map(report.files.map((f) => [f.chosen, f.name]));
}
