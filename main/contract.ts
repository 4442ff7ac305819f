// The one typed contract between the renderer and everything behind it (Electron IPC or the
// browser-mode HTTP bridge). Each channel has a zod schema for its payload, validated in main
// before any handler runs, and a result type. The renderer imports this file for types only
// (and may use the schemas for client-side checks); the handlers live in main/handlers.ts.
import { z } from 'zod';
import { settingsPatchSchema } from '../app/log/schema';
import type {
  Flag, RunResult, SessionSummary, Settings, Setup, RawRun, RunInfo, ZeroedRun,
} from '../app/types';
import type { StaleMark } from '../app/stale';

const sessionId = z.number().int().positive();
const runNo = z.number().int().nonnegative();
const paper = z.enum(['A4', 'Letter']);

/** Settings patch: only known keys, each with a sane range (the setup schema's own rules). */
export { settingsPatchSchema };

/** A file handed over from a file input or drag-and-drop (browser side). */
const uploadedFile = z.object({
  name: z.string().min(1).max(512),
  text: z.string().max(512 * 1024 * 1024),
});

/** Every channel: name → payload schema. */
export const channels = {
  /** Version and mode of the back end, and the demo session id if one is loaded. */
  'app.info': z.object({}).strict(),
  'sessions.list': z.object({}).strict(),
  'sessions.get': z.object({ sessionId }).strict(),
  /** Native folder picker (Electron). Browser mode answers { folder: null, supported: false }. */
  'dialog.pickFolder': z.object({ purpose: z.enum(['import', 'watch']) }).strict(),
  /** Import a session folder from disk (path), reduce what was new. Progress on the task events. */
  'sessions.importFolder': z.object({ folder: z.string().min(1).max(4096), taskId: z.string().max(64).optional() }).strict(),
  /** Import files a user dropped or chose (setup.json, runs.csv, run CSVs); parsed in main with
   *  the same parser the worker used for checking. */
  'sessions.importFiles': z.object({ files: z.array(uploadedFile).min(1).max(5000), taskId: z.string().max(64).optional() }).strict(),
  'runs.list': z.object({ sessionId }).strict(),
  'runs.get': z.object({ sessionId, run: runNo }).strict(),
  /** What the renderer's worker needs to re-reduce one run locally. */
  'runs.reductionInput': z.object({ sessionId, run: runNo }).strict(),
  /** Reduce (all, the listed runs, or with `stale: true` the stale runs) in main and store. */
  'runs.reduce': z.object({ sessionId, runs: z.array(runNo).max(100000).optional(), stale: z.literal(true).optional(), taskId: z.string().max(64).optional() }).strict(),
  /** Store results the worker computed (after a tap override, say). Main re-validates the run
   *  numbers and stores them as a new reduction; history is kept. */
  'runs.saveResults': z.object({ sessionId, results: z.array(z.record(z.string(), z.unknown())).min(1).max(100000) }).strict(),
  'runs.review': z.object({ sessionId, run: runNo, verdict: z.enum(['accepted', 'rejected']).nullable(), comment: z.string().max(4000) }).strict(),
  'taps.setBad': z.object({ sessionId, tapId: z.string().min(1).max(64), bad: z.boolean(), comment: z.string().max(4000).optional() }).strict(),
  /** Settle a tap the reduction dropped automatically in a run (docs/TAP-JUDGEMENT.md §5): confirm
   *  (it becomes a session bad tap) or keep it in that run; release takes a keep back. Audited;
   *  the affected runs are then stale ("runs.reduce" with stale: true re-reduces them). */
  'taps.settle': z.object({ sessionId, run: runNo, tapId: z.string().min(1).max(64), decision: z.enum(['confirm', 'keep', 'release']), comment: z.string().max(4000).optional() }).strict(),
  'settings.get': z.object({ sessionId }).strict(),
  'settings.update': z.object({ sessionId, patch: settingsPatchSchema, note: z.string().max(4000).optional() }).strict(),
  'session.summary': z.object({ sessionId }).strict(),
  'audit.list': z.object({ sessionId }).strict(),
  /** The day sheet; cpRuns: runs whose Cp plots the engineer picked (flagged runs always get one). */
  'daysheet.html': z.object({ sessionId, paper, cpRuns: z.array(runNo).max(1000).optional() }).strict(),
  /** Electron: printToPDF and save (dialog when no path). Browser mode: unsupported (use print). */
  'daysheet.pdf': z.object({ sessionId, paper, cpRuns: z.array(runNo).max(1000).optional(), path: z.string().max(4096).optional() }).strict(),
  'export.results': z.object({ sessionId, format: z.enum(['csv', 'json']) }).strict(),
  /** Save an exported plot (SVG or PNG bytes, base64): the desktop app's save dialog. Browser mode
   *  answers { supported: false } and the page downloads the file itself. */
  'file.save': z.object({
    suggestedName: z.string().min(1).max(200).regex(/^[^/\\:*?"<>|]+\.(svg|png)$/, 'a plain file name ending in .svg or .png'),
    kind: z.enum(['svg', 'png']),
    base64: z.string().max(64 * 1024 * 1024).regex(/^[A-Za-z0-9+/]*={0,2}$/, 'base64 text'),
  }).strict(),
  /** The reviewer's name for the audit trail and the day sheet (browser mode asks once per launch). */
  'reviewer.set': z.object({ name: z.string().trim().min(1).max(120) }).strict(),
  'watch.start': z.object({ folder: z.string().min(1).max(4096) }).strict(),
  'watch.stop': z.object({}).strict(),
  'watch.status': z.object({}).strict(),
} as const;

export type Channel = keyof typeof channels;
export type Payload<C extends Channel> = z.infer<(typeof channels)[C]>;

export interface SessionRowLike {
  id: number; title: string; date: string; facility: string; model: string; folder: string | null;
  runCount: number; dataRunCount: number; flaggedCount: number; importedAt: string;
  /** Data runs needing a decision (a flag no session finding explains); sessions.list fills it. */
  decisionCount?: number;
}
export interface RunRowLike {
  sessionId: number; run: number; kind: 'zero' | 'data'; alphaDeg: number; time: string; baro: number;
  temperatureC: number; humidity: number; file: string | null;
  result: null | {
    resultId: number; reducedAt: string; q: number; Re: number; V: number; cl: number; clMom: number;
    clWall: number; cd: number; cdp: number; cmc4: number; gammaPressure: number; gammaMomentum: number;
    flags: Flag[]; alphaCorrDeg: number;
  };
  review: null | { verdict: 'accepted' | 'rejected'; comment: string; actor: string; at: string };
  /** Why the latest result is stale (app/stale.ts); null or absent when it is current. */
  stale?: StaleMark | null;
}
export interface AuditRowLike {
  id: number; at: string; actor: string; action: string; sessionId: number; run: number | null; detail: unknown;
}
export interface ImportReportLike {
  sessionId: number; created: boolean; importedRuns: number[]; unchangedFiles: string[];
  changedFiles: string[]; skippedRuns: number[];
  /** Stored runs whose log had only grown: replaced and reduced again (also in importedRuns). */
  replacedRuns?: number[];
  /** What the import accepted but ignored or changed (extra columns, underflowed values, …). */
  warnings: string[];
}

/** Result type of each channel. */
export interface Results {
  'app.info': { version: string; coreVersion: string; mode: 'electron' | 'browser'; demoSessionId: number | null; dbFile: string;
    /** The name reviews and overrides are recorded under; null until browser mode is told one. */
    reviewer: string | null };
  'sessions.list': SessionRowLike[];
  'sessions.get': { session: SessionRowLike; setup: Setup; settings: Settings };
  'dialog.pickFolder': { folder: string | null; supported: boolean };
  'sessions.importFolder': { report: ImportReportLike; reduced: number };
  'sessions.importFiles': { report: ImportReportLike; reduced: number };
  'runs.list': RunRowLike[];
  'runs.get': { row: RunRowLike; result: RunResult | null; history: { resultId: number; reducedAt: string; coreVersion: string; cl: number; cd: number; flags: Flag[] }[] };
  'runs.reductionInput': { setup: Setup; settings: Settings; zeroed: ZeroedRun };
  'runs.reduce': { reduced: number; summary: SessionSummary };
  'runs.saveResults': { saved: number[] };
  'runs.review': { ok: true };
  'taps.setBad': { settings: Settings };
  'taps.settle': { settings: Settings; stale: number[] };
  'settings.get': Settings;
  'settings.update': Settings;
  'session.summary': SessionSummary;
  'audit.list': AuditRowLike[];
  'daysheet.html': { html: string };
  'daysheet.pdf': { path: string | null; supported: boolean };
  'export.results': { text: string; suggestedName: string; mime: string };
  'file.save': { path: string | null; supported: boolean };
  'reviewer.set': { reviewer: string };
  'watch.start': { folder: string; watching: true };
  'watch.stop': { watching: false };
  'watch.status': { folder: string | null; watching: boolean };
}

/** Events pushed from main to the renderer. */
export interface Events {
  /** Progress of a long task (import, reduce). */
  progress: { taskId: string; phase: 'scan' | 'parse' | 'store' | 'reduce'; done: number; total: number; label: string };
  /** Live mode: a run arrived and was reduced (or failed to import). */
  'watch.run': { sessionId: number | null; run: number | null; ok: boolean; message: string };
  /** Menu commands from the native menu (Electron only). */
  menu: { command: 'open-folder' | 'import' | 'toggle-watch' | 'print-sheet' | 'export-csv' | 'export-json' | 'open-recent'; arg?: string };
}
export type EventName = keyof Events;

/** Errors cross the contract as { error: { kind, message, file?, line?, column? } }. */
export interface ContractError {
  kind: 'validation' | 'input' | 'not-found' | 'unsupported' | 'busy' | 'internal';
  message: string;
  file?: string;
  line?: number;
  column?: string;
}

/** What the preload exposes as window.rakeline, and what the browser-mode client implements. */
export interface RakelineApi {
  call<C extends Channel>(channel: C, payload: Payload<C>): Promise<Results[C]>;
  on<E extends EventName>(event: E, listener: (data: Events[E]) => void): () => void;
}

/** Validate a payload; throws a ContractError-shaped Error with a readable message. */
export function validatePayload<C extends Channel>(channel: string, payload: unknown): Payload<C> {
  if (!Object.prototype.hasOwnProperty.call(channels, channel)) {
    throw new ContractFailure({ kind: 'validation', message: `Unknown channel "${channel}".` });
  }
  const r = channels[channel as C].safeParse(payload ?? {});
  if (!r.success) {
    const issues = r.error.issues
      .map((i) => `${i.path.length ? i.path.join('.') : '(payload)'}: ${i.message}`)
      .join('; ');
    throw new ContractFailure({ kind: 'validation', message: `Invalid payload for "${channel}": ${issues}` });
  }
  return r.data as Payload<C>;
}

export class ContractFailure extends Error {
  readonly detail: ContractError;
  constructor(detail: ContractError) {
    super(detail.message);
    this.detail = detail;
  }
}

// Re-exported so the renderer needs one import for the contract's types (no Node modules here).
export type { Flag, RunResult, SessionSummary, Settings, Setup, RawRun, RunInfo, ZeroedRun, StaleMark };
