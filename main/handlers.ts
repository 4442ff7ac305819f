// The handlers behind every contract channel (main/contract.ts): plain async functions over the
// store, the importer, the reduce service, the day sheet and the exports. Both adapters call them
// through dispatch(): the Electron IPC glue (main/electron.ts) and the browser-mode HTTP bridge
// (main/serve.ts). Plain Node: nothing here imports Electron.
import { mkdtemp, mkdir, readFile, rm, stat, writeFile } from 'node:fs/promises';
import { tmpdir, userInfo } from 'node:os';
import path from 'node:path';
import { watch as watchFolder, type FSWatcher } from 'chokidar';
import { z } from 'zod';
import pkg from '../package.json';
import {
  ContractFailure, validatePayload, settingsPatchSchema,
  type Channel, type ContractError, type EventName, type Events, type Payload, type Results,
} from './contract';
import type { Envelope } from './wire';
import { CORE_VERSION, type RunResult } from '../app/types';
import { prepareRuns } from '../app/reduce';
import { keptFor } from '../app/tapCheck';
import { isLogError } from '../app/log/errors';
import { INDEX_FILE, LONG_LOG_DEFAULT, SETUP_FILE } from '../app/log/session';
import { parseRunIndexDetailed } from '../app/log/runIndex';
import type { Store, RunRow, ImportProgress, ImportReport } from './store';
import { folderSource, importSession, importSessionFolder, type SessionSource } from './import';
import { reduceStoredSessionAsync, SAVE_BATCH, sessionSummary, sessionsWithDecisions } from './reduceService';
import { runsNeedingReduction } from './repair';
import { verifyResults } from './verify';
import { zeroRunsFor } from '../app/samples';
import { storedDaySheet } from './daysheetData';
import { listRunsMarked, staleMarks, staleRuns, withStale } from './stale';
import { FLAG_CODES, flagLine } from '../app/flags';
import { exportResultsCsv, exportResultsJson } from './export';

export type Handlers = { [C in Channel]: (payload: Payload<C>) => Promise<Results[C]> };
export type Emit = <E extends EventName>(event: E, data: Events[E]) => void;
export type Paper = 'A4' | 'Letter';

export interface HandlerContext {
  store: Store;
  mode: 'electron' | 'browser';
  emit: Emit;
  demoSessionId: number | null;
  /** Native folder picker (Electron only). */
  pickFolder?: (purpose?: 'import' | 'watch') => Promise<string | null>;
  /** Print HTML to a PDF file (Electron only); asks for a path when none is given; null = cancelled. */
  printPdf?: (html: string, paper: Paper, path?: string, suggestedName?: string) => Promise<string | null>;
  /** Audit actor; default: the OS user name in Electron, 'browser' in browser mode until the
   *  page tells the reviewer's name ('reviewer.set'). */
  actor?: string;
  /** Save bytes through a save dialog (Electron only); null = cancelled. */
  saveFile?: (suggestedName: string, kind: 'svg' | 'png', bytes: Buffer) => Promise<string | null>;
  /** Called after anything that changes the session list or the watch state (menu refresh). */
  onChange?: (what: 'sessions' | 'watch') => void;
  /** Least time between two progress events of one task and phase, ms (default 100). */
  progressIntervalMs?: number;
  /** chokidar's write-finish wait for live mode, ms (default 400). */
  watchStabilityMs?: number;
}

/** The OS user name, for the audit trail. */
export function osActor(): string {
  try {
    const name = userInfo().username;
    if (name) return name;
  } catch {
    /* no passwd entry (containers): fall through */
  }
  return process.env.USER ?? process.env.USERNAME ?? 'unknown';
}

// ---------------------------------------------------------------------------------------------
// Errors

const notFoundPattern = /\b(unknown|no such|not found|does not exist)\b/i;

/** Map anything thrown below a handler to the contract's error shape. */
export function toContractError(e: unknown): ContractError {
  if (e instanceof ContractFailure) return e.detail;
  if (isLogError(e)) {
    const le = e as { message: string; file: string; line?: number; column?: string };
    const out: ContractError = { kind: 'input', message: le.message, file: le.file };
    if (le.line !== undefined) out.line = le.line;
    if (le.column !== undefined) out.column = le.column;
    return out;
  }
  if (e && typeof e === 'object') {
    const err = e as { code?: unknown; path?: unknown; message?: unknown; name?: unknown; kind?: unknown };
    const message = typeof err.message === 'string' ? err.message : String(e);
    if (err.name === 'NotFoundError' || err.kind === 'not-found' || err.code === 'NOT_FOUND') {
      return { kind: 'not-found', message };
    }
    if (err.name === 'StoreBusyError') return { kind: 'busy', message };
    if (typeof err.code === 'string' && ['ENOENT', 'ENOTDIR', 'EACCES', 'EPERM', 'EISDIR'].includes(err.code)) {
      const out: ContractError = { kind: 'input', message };
      if (typeof err.path === 'string') out.file = err.path;
      return out;
    }
    if (err.name === 'StoreNotFound' || (err.name === 'Error' && notFoundPattern.test(message) && /session|run/i.test(message))) {
      return { kind: 'not-found', message };
    }
    return { kind: 'internal', message };
  }
  return { kind: 'internal', message: String(e) };
}

function fail(kind: ContractError['kind'], message: string, extra?: Partial<ContractError>): never {
  throw new ContractFailure({ kind, message, ...extra });
}

/** Validate, run the handler, and wrap the answer: { result } or { error }. Never throws. */
export async function dispatch(handlers: Handlers, channel: string, payload: unknown): Promise<Envelope> {
  try {
    const valid = validatePayload(channel, payload);
    const fn = handlers[channel as Channel] as (p: unknown) => Promise<unknown>;
    return { result: await fn(valid) };
  } catch (e) {
    const error = toContractError(e);
    if (error.kind === 'internal') console.error(`rakeline: ${channel} failed:`, e);
    return { error };
  }
}

// ---------------------------------------------------------------------------------------------
// Progress

function mb(bytes: number): string {
  return `${(bytes / 1048576).toFixed(1)} MB`;
}

function progressLabel(p: ImportProgress): string {
  switch (p.phase) {
    case 'scan': return 'Scanning the session folder';
    case 'parse': return `Reading ${p.file ?? 'logs'} (${mb(p.bytesDone)} of ${mb(p.bytesTotal)})`;
    case 'store': return `Storing runs (${p.runsDone} of ${p.runsTotal})`;
    case 'reduce': return `Reducing runs (${p.runsDone} of ${p.runsTotal})`;
    default: return 'Working';
  }
}

/** A throttled ImportProgress → 'progress' event adapter: the first report of each phase and the
 *  last (done = total) always go out, others at most every intervalMs. */
export function progressEmitter(emit: Emit, taskId: string, intervalMs = 100): (p: ImportProgress) => void {
  let lastPhase: string | null = null;
  let lastAt = 0;
  return (p) => {
    const byBytes = p.phase === 'parse' || (p.phase === 'scan' && p.bytesTotal > 0);
    const done = byBytes ? p.bytesDone : p.runsDone;
    const total = byBytes ? p.bytesTotal : p.runsTotal;
    const now = Date.now();
    if (p.phase === lastPhase && done < total && now - lastAt < intervalMs) return;
    lastPhase = p.phase;
    lastAt = now;
    emit('progress', { taskId, phase: p.phase, done, total, label: progressLabel(p) });
  };
}

let taskCounter = 0;
function newTaskId(prefix: string): string {
  taskCounter += 1;
  return `${prefix}-${Date.now().toString(36)}-${taskCounter}`;
}

// ---------------------------------------------------------------------------------------------
// Which runs need reducing after an import

function timeOf(r: RunRow): number {
  const t = Date.parse(r.time);
  return Number.isFinite(t) ? t : 0;
}

/** Data runs whose reduction depends on the given (new or changed) runs: the data runs
 *  themselves, and for a wind-off zero every data run between it and the neighbouring zeros
 *  (zeros are interpolated in time between the bracketing pair, app/samples.ts). */
export function runsAffectedBy(rows: RunRow[], changed: Iterable<number>): number[] {
  const set = new Set(changed);
  const sorted = [...rows].sort((a, b) => timeOf(a) - timeOf(b) || a.run - b.run);
  const out = new Set<number>();
  sorted.forEach((r, i) => {
    if (!set.has(r.run)) return;
    if (r.kind === 'data') {
      out.add(r.run);
      return;
    }
    for (let j = i - 1; j >= 0 && sorted[j].kind !== 'zero'; j--) out.add(sorted[j].run);
    for (let j = i + 1; j < sorted.length && sorted[j].kind !== 'zero'; j++) out.add(sorted[j].run);
  });
  return [...out].sort((a, b) => a - b);
}

// ---------------------------------------------------------------------------------------------
// Structural check of results computed elsewhere (the renderer's worker)

const num = z.union([z.number(), z.nan()]);
const coefficientsSchema = z.looseObject({ cl: num, cd: num, cdp: num, cmc4: num, alphaDeg: num, q: num, V: num, Re: num });
const surfaceSchema = z.looseObject({ cn: num, ca: num, cl: num, cdp: num, cmLE: num, cmc4: num });
const resultSchema = z.looseObject({
  run: z.number().int().nonnegative(),
  coreVersion: z.string().min(1).max(64),
  settings: settingsPatchSchema.required(),
  air: z.looseObject({ p: num, T: num, rh: num, rho: num, mu: num, a: num }),
  M: num,
  taps: z.array(z.looseObject({ id: z.string(), x: num, cp: num, bad: z.boolean(), surface: z.enum(['upper', 'lower']), row: z.string() })),
  rows: z.array(surfaceSchema.extend({ row: z.string(), z: num })),
  surface: surfaceSchema,
  wake: z.looseObject({ cd: num, captured: z.boolean() }).nullable(),
  walls: z.looseObject({ clMom: num, gammaWall: num, clWall: num }).nullable(),
  circulation: z.looseObject({ pressure: num, momentum: num, wall: num }),
  correction: z.looseObject({ method: z.enum(['barlow-rae-pope', 'allen-vincenti', 'maskell', 'wall-signature', 'none']), sigma: num, eps: num }),
  uncorrected: coefficientsSchema,
  corrected: coefficientsSchema,
  clMomentum: num,
  spanwise: z.looseObject({ spread: num, CL: num }).nullable(),
  uncertainty: z.record(z.string(), z.looseObject({ value: num, u: num, lo: num, hi: num })),
  flags: z.array(z.looseObject({ code: z.enum(FLAG_CODES), reason: z.string(), severity: z.enum(['warn', 'reject']) })),
  inviscid: z.array(z.looseObject({ x: num, cp: num })),
});

/** Check that results belong to the session's data runs and have the shape of a RunResult;
 *  throws a validation ContractFailure naming the field. */
export function checkResults(store: Store, sessionId: number, results: unknown[]): RunResult[] {
  const rows = store.listRuns(sessionId);
  const kinds = new Map(rows.map((r) => [r.run, r.kind]));
  const tapIds = new Set(store.getSetup(sessionId).taps.map((t) => t.id));
  const seen = new Set<number>();
  const problems: string[] = [];
  results.forEach((raw, i) => {
    const r = resultSchema.safeParse(raw);
    if (!r.success) {
      for (const issue of r.error.issues.slice(0, 5)) {
        problems.push(`results.${i}.${issue.path.join('.')}: ${issue.message}`);
      }
      return;
    }
    const run = r.data.run;
    if (!kinds.has(run)) problems.push(`results.${i}.run: run ${run} is not a run of session ${sessionId}`);
    else if (kinds.get(run) !== 'data') problems.push(`results.${i}.run: run ${run} is a wind-off zero, not a data run`);
    if (seen.has(run)) problems.push(`results.${i}.run: run ${run} appears twice`);
    seen.add(run);
    const foreign = r.data.taps.find((t) => !tapIds.has(t.id));
    if (foreign) problems.push(`results.${i}.taps: tap "${foreign.id}" is not a tap of session ${sessionId}`);
  });
  if (problems.length) {
    fail('validation', `Invalid payload for "runs.saveResults": ${problems.slice(0, 10).join('; ')}`);
  }
  return results as RunResult[];
}

// ---------------------------------------------------------------------------------------------
// Uploaded files → a temporary session folder

/** Normalise an uploaded file name (may carry a relative folder, e.g. "day1/runs/run-0003.csv")
 *  to safe path segments; throws on absolute paths or "..". */
function safeSegments(name: string): string[] {
  const parts = name.replace(/\\/g, '/').split('/');
  if (/^[a-zA-Z]:$/.test(parts[0] ?? '') || name.startsWith('/')) {
    fail('validation', `Invalid payload for "sessions.importFiles": files: "${name}" is an absolute path`);
  }
  const segs = parts.filter((p) => p !== '' && p !== '.');
  if (segs.length === 0 || segs.some((s) => s === '..' || s.includes('\0'))) {
    fail('validation', `Invalid payload for "sessions.importFiles": files: "${name}" is not a plain relative file name`);
  }
  return segs;
}

async function writeUploadedFolder(files: { name: string; text: string }[]): Promise<string> {
  const entries = files.map((f) => ({ segs: safeSegments(f.name), text: f.text }));
  const setups = entries.filter((e) => e.segs[e.segs.length - 1].toLowerCase() === 'setup.json');
  if (setups.length === 0) fail('input', 'None of the chosen files is a setup.json; choose the whole session folder or its files.', { file: 'setup.json' });
  if (setups.length > 1) fail('input', `Several setup.json files were chosen (${setups.map((s) => s.segs.join('/')).join(', ')}); import one session at a time.`, { file: 'setup.json' });
  // The folder holding setup.json is the session root; strip it from every name.
  const root = setups[0].segs.slice(0, -1);
  const dir = await mkdtemp(path.join(tmpdir(), 'rakeline-upload-'));
  const names = new Set<string>();
  for (const e of entries) {
    const under = root.every((s, i) => e.segs[i] === s) && e.segs.length > root.length;
    if (!under) {
      await rm(dir, { recursive: true, force: true });
      fail('input', `"${e.segs.join('/')}" is outside the session folder of setup.json ("${root.join('/') || '.'}").`, { file: e.segs.join('/') });
    }
    const rel = e.segs.slice(root.length);
    const key = rel.join('/').toLowerCase();
    if (names.has(key)) {
      await rm(dir, { recursive: true, force: true });
      fail('input', `"${rel.join('/')}" was chosen twice.`, { file: rel.join('/') });
    }
    names.add(key);
    const target = path.join(dir, ...rel);
    await mkdir(path.dirname(target), { recursive: true });
    await writeFile(target, e.text, 'utf8');
  }
  return dir;
}

async function requireDirectory(folder: string): Promise<string> {
  const abs = path.resolve(folder);
  let s;
  try {
    s = await stat(abs);
  } catch {
    fail('input', `Folder not found: ${abs}`, { file: abs });
  }
  if (!s.isDirectory()) fail('input', `Not a folder: ${abs}`, { file: abs });
  return abs;
}

// ---------------------------------------------------------------------------------------------
// Import + reduce, shared by importFolder, importFiles, live mode and the demo import

async function reduceAfterImport(
  store: Store, report: ImportReport, actor: string, onProgress?: (p: ImportProgress) => void,
): Promise<number> {
  // This import's runs and the runs they bracket, and any data run an earlier import left without a
  // current result (its reduction interrupted: main/repair.ts).
  const affected = report.importedRuns.length ? runsAffectedBy(store.listRuns(report.sessionId), report.importedRuns) : [];
  const runs = [...new Set([...affected, ...runsNeedingReduction(store, report.sessionId)])].sort((a, b) => a - b);
  if (runs.length === 0) return 0;
  return (await reduceStoredSessionAsync(store, report.sessionId, { runs, actor, onProgress, batches: { size: SAVE_BATCH } })).reduced;
}

/** Import the bundled demo session unless the db already holds it (same folder); reduce it.
 *  Returns the demo session id, or null if the folder has no setup.json. */
export async function ensureDemoSession(
  store: Store, folder: string, opts?: { actor?: string; onProgress?: (p: ImportProgress) => void },
): Promise<number | null> {
  const abs = path.resolve(folder);
  const known = store.listSessions().find((s) => s.folder !== null && path.resolve(s.folder) === abs);
  if (known) return known.id;
  try {
    await stat(path.join(abs, 'setup.json'));
  } catch {
    return null;
  }
  const actor = opts?.actor ?? 'rakeline';
  const report = await importSessionFolder(store, abs, { actor, onProgress: opts?.onProgress });
  await reduceAfterImport(store, report, actor, opts?.onProgress);
  return report.sessionId;
}

// ---------------------------------------------------------------------------------------------
// Live mode

/**
 * The session folder as far as it is ready: the run index cut before the first run whose log has
 * not landed yet, or is still being written (modified less than `settleMs` ago). Acquisition may
 * write the index line first or the log first; either way a run is taken only once its log has
 * stood still for `settleMs`. A log that grows again after it was taken (a pause longer than
 * that) only grew, so the import replaces the stored run with the grown log's samples (audited,
 * ImportReport.replacedRuns) and it is reduced again: half a run is never kept. null when
 * setup.json or runs.csv is missing or no run has landed (`source` null: the first run is still
 * being written); `retryInMs` says when a run held as still
 * being written becomes ready if nothing else changes.
 */
export async function readySource(
  folder: string, opts: { settleMs?: number; now?: number } = {},
): Promise<{ source: SessionSource | null; waiting: string[]; retryInMs: number | null } | null> {
  const settleMs = opts.settleMs ?? 0;
  const now = opts.now ?? Date.now();
  const base = folderSource(folder);
  if ((await base.size(SETUP_FILE)) === null || (await base.size(INDEX_FILE)) === null) return null;
  const text = await readFile(path.join(folder, INDEX_FILE), 'utf8');
  if (text.split('\n').filter((l) => l.trim() !== '').length < 2) return null; // no run line yet
  const idx = parseRunIndexDetailed(text, INDEX_FILE);
  const ready = new Map<string, boolean>();
  let retryInMs: number | null = null;
  const isReady = async (f: string): Promise<boolean> => {
    if ((await base.size(f)) === null) return false; // not landed yet
    if (settleMs <= 0) return true;
    const age = now - (await stat(base.path!(f)!)).mtimeMs;
    if (age >= settleMs) return true;
    retryInMs = Math.max(1, Math.ceil(settleMs - age));
    return false; // still being written
  };
  let cut = -1;
  for (let i = 0; i < idx.runs.length; i++) {
    const f = idx.runs[i].file ?? LONG_LOG_DEFAULT;
    if (!ready.has(f)) ready.set(f, await isReady(f));
    if (!ready.get(f)) {
      cut = i;
      break;
    }
  }
  if (cut === 0) return retryInMs === null ? null : { source: null, waiting: [...new Set(idx.runs.map((r) => r.file ?? LONG_LOG_DEFAULT))], retryInMs };
  if (cut < 0) return { source: base, waiting: [], retryInMs: null };
  const waiting = [...new Set(idx.runs.slice(cut).map((r) => r.file ?? LONG_LOG_DEFAULT))];
  const indexBytes = Buffer.from(text.split('\n').slice(0, idx.lines[cut] - 1).join('\n') + '\n', 'utf8');
  return { source: withIndex(base, indexBytes), waiting, retryInMs };
}

/** A source whose runs.csv is these bytes. */
function withIndex(base: SessionSource, indexBytes: Buffer): SessionSource {
  return {
    folder: base.folder,
    size: async (name) => (name === INDEX_FILE ? indexBytes.byteLength : base.size(name)),
    open: (name) => (name === INDEX_FILE ? (async function* () { yield indexBytes; })() : base.open(name)),
    path: (name) => (name === INDEX_FILE ? null : base.path!(name)),
  };
}

interface LiveState {
  folder: string;
  watcher: FSWatcher;
  timer: ReturnType<typeof setTimeout> | null;
  running: Promise<void> | null;
  again: boolean;
  lastError: string | null;
  stopped: boolean;
  /** A run log modified less than this long ago is still being written (ms). */
  settleMs: number;
  /** The pass that takes a run held as still being written. */
  retry: ReturnType<typeof setTimeout> | null;
}

function fmt(x: number, digits: number): string {
  return Number.isFinite(x) ? x.toFixed(digits) : '—';
}

/** The live log's line for a run just stored (flags in the words of app/flags.ts). */
export function watchMessage(row: RunRow, rereduced: number): string {
  if (row.kind === 'zero') {
    const more = rereduced > 0 ? `; ${rereduced} data run${rereduced === 1 ? '' : 's'} re-reduced` : '';
    return `Wind-off zero run ${row.run} stored${more}.`;
  }
  const head = `Run ${row.run} (α ${fmt(row.alphaDeg, 1)}°)`;
  const res = row.result;
  if (!res) return `${head} stored, not reduced.`;
  const base = `${head} reduced: cl ${fmt(res.cl, 3)}, cd ${fmt(res.cd, 4)}, cm c/4 ${fmt(res.cmc4, 3)}`;
  if (res.flags.length === 0) return `${base}.`;
  return `${base} — flagged: ${res.flags.map((f) => flagLine(f, 'reason')).join('; ')}`;
}

// ---------------------------------------------------------------------------------------------

const disposers = new WeakMap<object, () => Promise<void>>();

/** Stop whatever the handlers keep running (the live-mode watcher). */
export async function disposeHandlers(handlers: Handlers): Promise<void> {
  await disposers.get(handlers)?.();
}

export function createHandlers(ctx: HandlerContext): Handlers {
  const { store, emit } = ctx;
  let actor = ctx.actor ?? (ctx.mode === 'electron' ? osActor() : 'browser');
  let named = ctx.actor !== undefined || ctx.mode === 'electron';
  const interval = ctx.progressIntervalMs ?? 100;
  const changed = (what: 'sessions' | 'watch') => ctx.onChange?.(what);
  let live: LiveState | null = null;

  const importAndReduce = async (folder: string, taskId: string, asUpload = false) => {
    const onProgress = progressEmitter(emit, taskId, interval);
    let report: ImportReport;
    if (asUpload) {
      // Same import as a folder; the temporary folder is not a place to remember.
      report = await importSession(store, folderSource(folder), { actor, onProgress, folder: null });
    } else {
      report = await importSessionFolder(store, folder, { actor, onProgress });
    }
    const reduced = await reduceAfterImport(store, report, actor, onProgress);
    changed('sessions');
    return { report, reduced };
  };

  const livePass = async (state: LiveState) => {
    try {
      const ready = await readySource(state.folder, { settleMs: state.settleMs });
      if (!ready || state.stopped) return;
      if (state.retry) clearTimeout(state.retry);
      state.retry = ready.retryInMs === null ? null : setTimeout(() => schedule(state, 0), ready.retryInMs + 20);
      if (ready.source === null) return; // the first run is still being written
      const onProgress = progressEmitter(emit, 'watch', interval);
      const report = await importSession(store, ready.source, { actor, onProgress });
      if (state.stopped) return;
      const refused = report.changedFiles.length
        ? `Not imported from ${state.folder}: ${report.changedFiles.join(', ')} changed after it was imported (the stored runs are kept).`
        : null;
      if (refused && refused !== state.lastError) emit('watch.run', { sessionId: report.sessionId, run: null, ok: false, message: refused });
      state.lastError = refused;
      if (report.importedRuns.length === 0) return;
      const replaced = new Set(report.replacedRuns ?? []);
      const fresh = new Set(report.importedRuns);
      const affected = runsAffectedBy(store.listRuns(report.sessionId), report.importedRuns);
      if (affected.length) await reduceStoredSessionAsync(store, report.sessionId, { runs: affected, actor, onProgress });
      const rereduced = affected.filter((r) => !fresh.has(r)).length;
      for (const run of [...report.importedRuns].sort((a, b) => a - b)) {
        const row = store.getRun(report.sessionId, run);
        const msg = watchMessage(row, rereduced);
        emit('watch.run', {
          sessionId: report.sessionId, run, ok: true,
          message: replaced.has(run) ? `Run ${run}'s log grew after it was imported; samples replaced. ${msg}` : msg,
        });
      }
      changed('sessions');
    } catch (e) {
      if (state.stopped) return;
      const err = toContractError(e);
      if (err.message !== state.lastError) {
        state.lastError = err.message;
        emit('watch.run', { sessionId: null, run: null, ok: false, message: `Could not import from ${state.folder}: ${err.message}` });
      }
    }
  };

  const schedule = (state: LiveState, delayMs = 150) => {
    if (state.stopped) return;
    if (state.running) {
      state.again = true;
      return;
    }
    if (state.timer) clearTimeout(state.timer);
    state.timer = setTimeout(() => {
      state.timer = null;
      state.running = livePass(state).finally(() => {
        state.running = null;
        if (state.again) {
          state.again = false;
          schedule(state, 0);
        }
      });
    }, delayMs);
  };

  const stopLive = async () => {
    const state = live;
    if (!state) return;
    live = null;
    state.stopped = true;
    if (state.timer) clearTimeout(state.timer);
    if (state.retry) clearTimeout(state.retry);
    await state.watcher.close();
    await state.running;
  };

  const sessionTitleSlug = (sessionId: number) => {
    const s = store.getSession(sessionId);
    const slug = `${s.title}-${s.date}`.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '');
    return slug || `session-${sessionId}`;
  };

  const handlers: Handlers = {
    'app.info': async () => ({
      version: pkg.version, coreVersion: CORE_VERSION, mode: ctx.mode, demoSessionId: ctx.demoSessionId, dbFile: store.file,
      reviewer: named ? actor : null,
    }),
    'reviewer.set': async ({ name }) => {
      actor = name.trim();
      named = true;
      return { reviewer: actor };
    },
    'file.save': async ({ suggestedName, kind, base64 }) => {
      if (!ctx.saveFile) return { path: null, supported: false };
      return { path: await ctx.saveFile(suggestedName, kind, Buffer.from(base64, 'base64')), supported: true };
    },
    // With each session, its runs needing a decision, the count the Day log shows.
    'sessions.list': async () => sessionsWithDecisions(store),
    'sessions.get': async ({ sessionId }) => ({
      session: store.getSession(sessionId), setup: store.getSetup(sessionId), settings: store.getSettings(sessionId),
    }),
    'dialog.pickFolder': async ({ purpose }) => {
      if (!ctx.pickFolder) return { folder: null, supported: false };
      return { folder: await ctx.pickFolder(purpose), supported: true };
    },
    'sessions.importFolder': async ({ folder, taskId }) => {
      const abs = await requireDirectory(folder);
      return importAndReduce(abs, taskId ?? newTaskId('import'));
    },
    'sessions.importFiles': async ({ files, taskId }) => {
      const dir = await writeUploadedFolder(files);
      try {
        return await importAndReduce(dir, taskId ?? newTaskId('upload'), true);
      } finally {
        await rm(dir, { recursive: true, force: true });
      }
    },
    'runs.list': async ({ sessionId }) => listRunsMarked(store, sessionId),
    'runs.get': async ({ sessionId, run }) => ({
      row: withStale([store.getRun(sessionId, run)], staleMarks(store, sessionId))[0],
      result: store.latestResult(sessionId, run),
      history: store.resultHistory(sessionId, run),
    }),
    'runs.reductionInput': async ({ sessionId, run }) => {
      const row = store.getRun(sessionId, run);
      if (row.kind !== 'data') fail('validation', `Invalid payload for "runs.reductionInput": run: run ${run} is a wind-off zero, not a data run`);
      const setup = store.getSetup(sessionId);
      const settings = store.getSettings(sessionId);
      const needed = zeroRunsFor(store.getIndex(sessionId), new Set([run]));
      const zeroed = prepareRuns(setup, store.getAveraged(sessionId, needed)).find((z) => z.info.run === run);
      if (!zeroed) fail('not-found', `Run ${run} of session ${sessionId} has no stored samples.`);
      return { setup, settings, zeroed };
    },
    'runs.reduce': async ({ sessionId, runs: listed, stale, taskId }) => {
      store.getSession(sessionId);
      if (stale && listed?.length) fail('validation', 'Invalid payload for "runs.reduce": give either runs or stale, not both');
      const runs = stale ? staleRuns(store, sessionId) : listed;
      if (stale && !runs?.length) return { reduced: 0, summary: sessionSummary(store, sessionId) };
      if (runs?.length) {
        const kinds = new Map(store.listRuns(sessionId).map((r) => [r.run, r.kind]));
        const bad = runs.find((r) => kinds.get(r) !== 'data');
        if (bad !== undefined) {
          fail('validation', `Invalid payload for "runs.reduce": runs: run ${bad} is ${kinds.has(bad) ? 'a wind-off zero' : `not a run of session ${sessionId}`}`);
        }
      }
      const { results, summary } = await reduceStoredSessionAsync(store, sessionId, {
        runs: runs?.length ? runs : undefined, actor, onProgress: progressEmitter(emit, taskId ?? newTaskId('reduce'), interval),
      });
      changed('sessions');
      return { reduced: results.length, summary };
    },
    'runs.saveResults': async ({ sessionId, results }) => {
      // Never stored on the page's word: main reduces again and stores its own results when they
      // agree (main/verify.ts); a result that differs refuses the request, nothing stored.
      const checked = verifyResults(store, sessionId, checkResults(store, sessionId, results));
      const saved = store.saveResults(sessionId, checked, actor);
      changed('sessions');
      return { saved };
    },
    'runs.review': async ({ sessionId, run, verdict, comment }) => {
      store.getRun(sessionId, run);
      store.setReview(sessionId, run, verdict, comment, actor);
      return { ok: true };
    },
    'taps.setBad': async ({ sessionId, tapId, bad, comment }) => {
      const taps = new Set(store.getSetup(sessionId).taps.map((t) => t.id));
      if (!taps.has(tapId)) fail('validation', `Invalid payload for "taps.setBad": tapId: "${tapId}" is not a tap of session ${sessionId}`);
      return { settings: store.setTapBad(sessionId, tapId, bad, actor, comment) };
    },
    'taps.settle': async ({ sessionId, run, tapId, decision, comment }) => {
      const where = `Invalid payload for "taps.settle"`;
      if (!store.getSetup(sessionId).taps.some((t) => t.id === tapId)) fail('validation', `${where}: tapId: "${tapId}" is not a tap of session ${sessionId}`);
      const row = store.listRuns(sessionId).find((r) => r.run === run);
      if (!row || row.kind !== 'data') fail('validation', `${where}: run: run ${run} is ${row ? 'a wind-off zero' : `not a run of session ${sessionId}`}`);
      const latest = store.latestResult(sessionId, run);
      let suggestion: Record<string, unknown> | null = null;
      if (decision === 'release') {
        if (!keptFor(store.getSettings(sessionId).keptTaps, run).has(tapId)) fail('validation', `${where}: tap ${tapId} is not kept in run ${run}`);
      } else {
        const drop = latest?.dropped?.find((d) => d.id === tapId && d.by === 'auto');
        if (!drop) fail('validation', `${where}: tap ${tapId} was not dropped automatically in the latest result of run ${run}`);
        suggestion = { ...drop };
      }
      const settings = store.settleTap(sessionId, run, tapId, decision, actor, comment ?? '', suggestion);
      changed('sessions');
      return { settings, stale: staleRuns(store, sessionId) };
    },
    'settings.get': async ({ sessionId }) => store.getSettings(sessionId),
    'settings.update': async ({ sessionId, patch, note }) => {
      if (patch.badTaps) {
        const taps = new Set(store.getSetup(sessionId).taps.map((t) => t.id));
        const unknown = patch.badTaps.find((t) => !taps.has(t));
        if (unknown !== undefined) fail('validation', `Invalid payload for "settings.update": patch.badTaps: "${unknown}" is not a tap of session ${sessionId}`);
      }
      return store.updateSettings(sessionId, patch, actor, note);
    },
    'session.summary': async ({ sessionId }) => {
      store.getSession(sessionId);
      return sessionSummary(store, sessionId);
    },
    'audit.list': async ({ sessionId }) => {
      store.getSession(sessionId);
      return store.auditTrail(sessionId);
    },
    'daysheet.html': async ({ sessionId, paper, cpRuns }) => ({ html: sheetHtml(store, sessionId, paper, cpRuns) }),
    'daysheet.pdf': async ({ sessionId, paper, cpRuns, path: target }) => {
      if (!ctx.printPdf) return { path: null, supported: false };
      if (target !== undefined && (!path.isAbsolute(target) || !/\.pdf$/i.test(target))) {
        fail('validation', `Invalid payload for "daysheet.pdf": path: must be an absolute path ending in .pdf`);
      }
      const html = sheetHtml(store, sessionId, paper, cpRuns);
      const out = await ctx.printPdf(html, paper, target, `${sessionTitleSlug(sessionId)}-day-sheet.pdf`);
      return { path: out, supported: true };
    },
    'export.results': async ({ sessionId, format }) => {
      const setup = store.getSetup(sessionId);
      const base = sessionTitleSlug(sessionId);
      if (format === 'csv') {
        const text = exportResultsCsv(listRunsMarked(store, sessionId), setup, store.latestResults(sessionId));
        return { text, suggestedName: `${base}-results.csv`, mime: 'text/csv' };
      }
      return { text: exportResultsJson(store, sessionId), suggestedName: `${base}-results.json`, mime: 'application/json' };
    },
    'watch.start': async ({ folder }) => {
      const abs = await requireDirectory(folder);
      await stopLive();
      const watcher = watchFolder(abs, {
        ignoreInitial: true,
        depth: 3,
        ignored: (p: string) => /(^|[\\/])\.[^\\/]+$|\.(sqlite|sqlite-wal|sqlite-shm|tmp|part|swp)$|~$/i.test(p),
        awaitWriteFinish: { stabilityThreshold: ctx.watchStabilityMs ?? 400, pollInterval: 50 },
      });
      const state: LiveState = {
        folder: abs, watcher, timer: null, running: null, again: false, lastError: null, stopped: false,
        settleMs: ctx.watchStabilityMs ?? 400, retry: null,
      };
      live = state;
      await new Promise<void>((resolve, reject) => {
        watcher.once('ready', () => resolve());
        watcher.once('error', (err) => reject(err));
      });
      const onFile = () => schedule(state);
      watcher.on('add', onFile).on('change', onFile).on('unlink', () => undefined);
      watcher.on('error', (err) => {
        emit('watch.run', { sessionId: null, run: null, ok: false, message: `Watching ${abs} failed: ${err instanceof Error ? err.message : String(err)}` });
      });
      schedule(state, 0); // whatever is already there
      changed('watch');
      return { folder: abs, watching: true };
    },
    'watch.stop': async () => {
      await stopLive();
      changed('watch');
      return { watching: false };
    },
    'watch.status': async () => ({ folder: live?.folder ?? null, watching: live !== null }),
  };
  disposers.set(handlers, stopLive);
  return handlers;
}

function sheetHtml(store: Store, sessionId: number, paper: Paper, cpRuns?: number[]): string {
  return storedDaySheet(store, sessionId, { paper, appVersion: pkg.version, ...(cpRuns ? { cpRuns } : {}) });
}
