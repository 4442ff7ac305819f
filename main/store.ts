// The SQLite store (better-sqlite3): one file per user data folder, WAL journal, foreign keys on,
// numbered migrations (PRAGMA user_version + the schema_migrations table).
//
// What is kept: sessions with their setup, the source files (name, SHA-256, bytes), the runs of the
// index, the raw samples (one BLOB per run and channel: little-endian Float64Array bytes, dtype
// 'f64le' — doubles keep every logged value exactly as read, so re-averaging from the store after a
// spike-threshold change reproduces the import-time statistics bit for bit and sample exports match
// the source files; a float32 BLOB would halve the size but round values at ~1e-7 relative), the
// averaged channel statistics per run, every reduction (settings, core version, time, the RunResult
// JSON plus indexed scalar columns for the run table) with its flags, tap overrides, setting
// changes, reviews and an append-only audit trail. Reductions, flags, overrides, reviews and the
// audit trail refuse UPDATE and DELETE by triggers: history is only ever appended to.
//
// Import is ONE transaction (BEGIN IMMEDIATE): on any error nothing is written. Re-importing the
// same files is a no-op (SHA-256 of each source file). A run file whose bytes and samples changed is
// reported in changedFiles and not merged; a runs.csv that only grew by appended lines (live
// acquisition) is accepted and its new runs are imported.
import { mkdirSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import Database from 'better-sqlite3';
import {
  CORE_VERSION,
  type ChannelStats, type Flag, type RawRun, type RunInfo, type RunKind, type RunResult, type Settings, type Setup,
} from '../app/types';
import { averageRun } from '../app/samples';
import { correctedMomentumCl, resolveSettings } from '../app/reduce';
import { settingsPatchSchema } from '../app/log/schema';
import { INDEX_FILE, SETUP_FILE } from '../app/log/session';

// ---------------------------------------------------------------------------------------------
// Public types (STORE_API.md)

export interface SessionRow {
  id: number; title: string; date: string; facility: string; model: string; folder: string | null;
  runCount: number; dataRunCount: number; flaggedCount: number; importedAt: string;
}
export interface RunRow {
  sessionId: number; run: number; kind: RunKind; alphaDeg: number; time: string; baro: number; temperatureC: number;
  humidity: number; file: string | null;
  /** Latest reduction (null when not reduced / zero runs). */
  result: null | {
    resultId: number; reducedAt: string; q: number; Re: number; V: number; cl: number; clMom: number; clWall: number;
    cd: number; cdp: number; cmc4: number; gammaPressure: number; gammaMomentum: number; flags: Flag[]; alphaCorrDeg: number;
  };
  review: null | { verdict: 'accepted' | 'rejected'; comment: string; actor: string; at: string };
}
export interface AuditRow { id: number; at: string; actor: string; action: string; sessionId: number; run: number | null; detail: unknown }
export interface ImportReport {
  sessionId: number;
  /** A new session was created. */
  created: boolean;
  /** Runs stored by this import. */
  importedRuns: number[];
  unchangedFiles: string[];
  /** Files whose content differs from what is stored: reported, not merged. */
  changedFiles: string[];
  /** Runs of the input not stored by this import (already stored, or in a changed file). */
  skippedRuns: number[];
}
export interface ImportProgress {
  phase: 'scan' | 'parse' | 'store' | 'reduce';
  file?: string; bytesDone: number; bytesTotal: number; runsDone: number; runsTotal: number;
}
export interface ParsedSession {
  folder: string | null; setup: Setup; index: RunInfo[]; runs: RawRun[];
  sources: { name: string; sha256: string; bytes: number }[];
  /** Notes from the parser (ignored columns, …); optional extra. */
  warnings?: string[];
}

/** Thrown for an unknown session or run (handlers map it to 'not-found'). */
export class NotFoundError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'NotFoundError';
  }
}

// ---------------------------------------------------------------------------------------------
// Schema

interface Migration { version: number; name: string; sql: string }

const appendOnly = (table: string) => `
CREATE TRIGGER ${table}_no_update BEFORE UPDATE ON ${table}
BEGIN SELECT RAISE(ABORT, '${table} is append-only: UPDATE refused'); END;
CREATE TRIGGER ${table}_no_delete BEFORE DELETE ON ${table}
BEGIN SELECT RAISE(ABORT, '${table} is append-only: DELETE refused'); END;`;

export const MIGRATIONS: Migration[] = [
  {
    version: 1,
    name: 'initial schema',
    sql: `
CREATE TABLE sessions (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  title TEXT NOT NULL, date TEXT NOT NULL, facility TEXT NOT NULL, model TEXT NOT NULL,
  folder TEXT, created_at TEXT NOT NULL, imported_at TEXT NOT NULL
);
CREATE INDEX sessions_folder ON sessions(folder);
CREATE TABLE setups (
  session_id INTEGER PRIMARY KEY REFERENCES sessions(id),
  setup_json TEXT NOT NULL, sha256 TEXT NOT NULL
);
CREATE INDEX setups_sha ON setups(sha256);
CREATE TABLE source_files (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  session_id INTEGER NOT NULL REFERENCES sessions(id),
  name TEXT NOT NULL,
  role TEXT NOT NULL CHECK (role IN ('setup', 'index', 'runs')),
  sha256 TEXT NOT NULL CHECK (length(sha256) = 64),
  bytes INTEGER NOT NULL CHECK (bytes >= 0),
  imported_at TEXT NOT NULL,
  UNIQUE (session_id, name, sha256)
);
CREATE TABLE runs (
  session_id INTEGER NOT NULL REFERENCES sessions(id),
  run INTEGER NOT NULL CHECK (run >= 0),
  kind TEXT NOT NULL CHECK (kind IN ('zero', 'data')),
  time TEXT NOT NULL, alpha_deg REAL NOT NULL, baro REAL NOT NULL,
  temperature_c REAL NOT NULL, humidity REAL NOT NULL,
  file TEXT, source_id INTEGER REFERENCES source_files(id),
  samples INTEGER NOT NULL, index_pos INTEGER NOT NULL,
  PRIMARY KEY (session_id, run)
);
CREATE TABLE samples (
  id INTEGER PRIMARY KEY,
  session_id INTEGER NOT NULL, run INTEGER NOT NULL, channel TEXT NOT NULL,
  dtype TEXT NOT NULL CHECK (dtype IN ('f64le', 'f32le')),
  n INTEGER NOT NULL, data BLOB NOT NULL,
  UNIQUE (session_id, run, channel),
  FOREIGN KEY (session_id, run) REFERENCES runs(session_id, run)
);
CREATE TABLE channel_stats (
  session_id INTEGER NOT NULL, run INTEGER NOT NULL, channel TEXT NOT NULL,
  spike_k REAL NOT NULL, mean REAL, std REAL, n INTEGER NOT NULL, std_err REAL, rejected INTEGER NOT NULL,
  PRIMARY KEY (session_id, run, channel),
  FOREIGN KEY (session_id, run) REFERENCES runs(session_id, run)
);
CREATE TABLE audit (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  at TEXT NOT NULL, actor TEXT NOT NULL, action TEXT NOT NULL,
  session_id INTEGER, run INTEGER, detail_json TEXT NOT NULL
);
CREATE INDEX audit_session ON audit(session_id, id);
CREATE TABLE reductions (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  session_id INTEGER NOT NULL, run INTEGER NOT NULL,
  reduced_at TEXT NOT NULL, core_version TEXT NOT NULL, actor TEXT NOT NULL,
  audit_id INTEGER NOT NULL REFERENCES audit(id),
  settings_json TEXT NOT NULL, result_json TEXT NOT NULL,
  q REAL, re REAL, v REAL, cl REAL, cl_mom REAL, cl_wall REAL, cd REAL, cdp REAL, cmc4 REAL,
  gamma_pressure REAL, gamma_momentum REAL, alpha_corr_deg REAL,
  flag_count INTEGER NOT NULL,
  FOREIGN KEY (session_id, run) REFERENCES runs(session_id, run)
);
CREATE INDEX reductions_run ON reductions(session_id, run, id);
CREATE TABLE flags (
  reduction_id INTEGER NOT NULL REFERENCES reductions(id),
  seq INTEGER NOT NULL,
  code TEXT NOT NULL, severity TEXT NOT NULL CHECK (severity IN ('warn', 'reject')), reason TEXT NOT NULL,
  PRIMARY KEY (reduction_id, seq)
);
CREATE INDEX flags_code ON flags(code);
CREATE TABLE tap_overrides (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  session_id INTEGER NOT NULL REFERENCES sessions(id),
  tap_id TEXT NOT NULL, bad INTEGER NOT NULL CHECK (bad IN (0, 1)), comment TEXT NOT NULL,
  actor TEXT NOT NULL, at TEXT NOT NULL, audit_id INTEGER NOT NULL REFERENCES audit(id)
);
CREATE TABLE settings_changes (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  session_id INTEGER NOT NULL REFERENCES sessions(id),
  patch_json TEXT NOT NULL, note TEXT NOT NULL,
  actor TEXT NOT NULL, at TEXT NOT NULL, audit_id INTEGER NOT NULL REFERENCES audit(id)
);
CREATE TABLE reviews (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  session_id INTEGER NOT NULL, run INTEGER NOT NULL,
  verdict TEXT CHECK (verdict IS NULL OR verdict IN ('accepted', 'rejected')),
  comment TEXT NOT NULL, result_id INTEGER REFERENCES reductions(id),
  actor TEXT NOT NULL, at TEXT NOT NULL, audit_id INTEGER NOT NULL REFERENCES audit(id),
  FOREIGN KEY (session_id, run) REFERENCES runs(session_id, run)
);
CREATE INDEX reviews_run ON reviews(session_id, run, id);
${['audit', 'reductions', 'flags', 'tap_overrides', 'settings_changes', 'reviews'].map(appendOnly).join('\n')}
CREATE VIEW latest_reductions AS
  SELECT r.* FROM reductions r
  WHERE r.id = (SELECT MAX(x.id) FROM reductions x WHERE x.session_id = r.session_id AND x.run = r.run);
`,
  },
];

export const SCHEMA_VERSION = MIGRATIONS[MIGRATIONS.length - 1].version;

// ---------------------------------------------------------------------------------------------
// Helpers

const now = () => new Date().toISOString();

/** JSON that keeps NaN and ±Infinity (RunResult has NaN for "no wake", for example). */
export function encodeJson(v: unknown): string {
  return JSON.stringify(v, (_k, x) => (typeof x === 'number' && !Number.isFinite(x) ? { $num: String(x) } : x));
}
export function decodeJson<T>(s: string): T {
  return JSON.parse(s, (_k, x) =>
    x && typeof x === 'object' && !Array.isArray(x) && Object.keys(x).length === 1 && typeof x.$num === 'string' ? Number(x.$num) : x,
  ) as T;
}
const num = (x: number | null): number => (x === null ? Number.NaN : x);
const dbNum = (x: number): number | null => (Number.isFinite(x) ? x : null);

function blobOf(a: Float64Array): Buffer {
  return Buffer.from(a.buffer, a.byteOffset, a.byteLength);
}
function samplesOf(b: Buffer, dtype: string): Float64Array {
  const ab = b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength);
  return dtype === 'f32le' ? Float64Array.from(new Float32Array(ab)) : new Float64Array(ab);
}
function sameBytes(a: Float64Array, b: Buffer): boolean {
  return blobOf(a).equals(b);
}
function sameInfo(a: RunInfo, b: RunInfo): boolean {
  return a.run === b.run && a.kind === b.kind && a.time === b.time && a.alphaDeg === b.alphaDeg && a.baro === b.baro &&
    a.temperatureC === b.temperatureC && a.humidity === b.humidity && (a.file ?? null) === (b.file ?? null);
}

interface RunDbRow {
  session_id: number; run: number; kind: RunKind; time: string; alpha_deg: number; baro: number; temperature_c: number;
  humidity: number; file: string | null; source_id: number | null; samples: number; index_pos: number;
}
const infoOf = (r: RunDbRow): RunInfo => {
  const i: RunInfo = { run: r.run, kind: r.kind, time: r.time, alphaDeg: r.alpha_deg, baro: r.baro, temperatureC: r.temperature_c, humidity: r.humidity };
  if (r.file !== null) i.file = r.file;
  return i;
};

type Averaged = { info: RunInfo; stats: Record<string, ChannelStats> };

// ---------------------------------------------------------------------------------------------

export class Store {
  readonly file: string;
  readonly db: Database.Database;

  private constructor(file: string, db: Database.Database) {
    this.file = file;
    this.db = db;
  }

  /** Open (creating and migrating as needed) the store file. */
  static open(file: string): Store {
    const path = resolve(file);
    mkdirSync(dirname(path), { recursive: true });
    const db = new Database(path);
    try {
      db.pragma('journal_mode = WAL');
      db.pragma('foreign_keys = ON');
      db.pragma('synchronous = FULL');
      db.pragma('busy_timeout = 5000');
      const s = new Store(path, db);
      s.migrate();
      return s;
    } catch (e) {
      db.close();
      throw e;
    }
  }

  close(): void {
    if (this.db.open) this.db.close();
  }

  /** Schema version of the open file (PRAGMA user_version). */
  schemaVersion(): number {
    return this.db.pragma('user_version', { simple: true }) as number;
  }

  private migrate(): void {
    const current = this.schemaVersion();
    if (current > SCHEMA_VERSION) {
      throw new Error(`${this.file}: database schema version ${current} is newer than this Rakeline understands (${SCHEMA_VERSION}); use a newer Rakeline`);
    }
    this.db.exec('CREATE TABLE IF NOT EXISTS schema_migrations (version INTEGER PRIMARY KEY, name TEXT NOT NULL, applied_at TEXT NOT NULL)');
    for (const m of MIGRATIONS) {
      if (m.version <= current) continue;
      this.db.transaction(() => {
        this.db.exec(m.sql);
        this.db.prepare('INSERT INTO schema_migrations (version, name, applied_at) VALUES (?, ?, ?)').run(m.version, m.name, now());
        this.db.pragma(`user_version = ${m.version}`);
      }).immediate();
    }
  }

  // ------------------------------------------------------------------ sessions

  listSessions(): SessionRow[] {
    return (this.db.prepare(`${SESSION_SELECT} ORDER BY s.id`).all() as SessionDbRow[]).map(sessionOf);
  }

  getSession(sessionId: number): SessionRow {
    const r = this.db.prepare(`${SESSION_SELECT} WHERE s.id = ?`).get(sessionId) as SessionDbRow | undefined;
    if (!r) throw new NotFoundError(`unknown session ${sessionId}`);
    return sessionOf(r);
  }

  getSetup(sessionId: number): Setup {
    const r = this.db.prepare('SELECT setup_json FROM setups WHERE session_id = ?').get(sessionId) as { setup_json: string } | undefined;
    if (!r) throw new NotFoundError(`unknown session ${sessionId}`);
    return decodeJson<Setup>(r.setup_json);
  }

  /** Settings in force: resolveSettings(setup, stored overrides), the overrides (setting changes
   *  and tap overrides) applied in the order they were made. */
  getSettings(sessionId: number): Settings {
    return resolveSettings(this.getSetup(sessionId), this.overrides(sessionId));
  }

  private overrides(sessionId: number): Partial<Settings> {
    const setup = this.getSetup(sessionId);
    const events = this.db.prepare(`
      SELECT audit_id, patch_json, NULL AS tap_id, NULL AS bad FROM settings_changes WHERE session_id = ?
      UNION ALL
      SELECT audit_id, NULL, tap_id, bad FROM tap_overrides WHERE session_id = ?
      ORDER BY audit_id`).all(sessionId, sessionId) as { patch_json: string | null; tap_id: string | null; bad: number | null }[];
    const over: Partial<Settings> = {};
    for (const e of events) {
      if (e.patch_json !== null) Object.assign(over, decodeJson<Partial<Settings>>(e.patch_json));
      else {
        const bad = new Set(over.badTaps ?? resolveSettings(setup).badTaps);
        if (e.bad) bad.add(e.tap_id!);
        else bad.delete(e.tap_id!);
        over.badTaps = [...bad];
      }
    }
    return over;
  }

  updateSettings(sessionId: number, patch: Partial<Settings>, actor: string, note = ''): Settings {
    const setup = this.getSetup(sessionId);
    const r = settingsPatchSchema.safeParse(patch);
    if (!r.success) {
      throw new Error(`invalid settings: ${r.error.issues.map((i) => `${i.path.join('.') || '(patch)'}: ${i.message}`).join('; ')}`);
    }
    const taps = new Set(setup.taps.map((t) => t.id));
    for (const t of r.data.badTaps ?? []) if (!taps.has(t)) throw new Error(`invalid settings: badTaps: tap "${t}" is not in the setup`);
    this.db.transaction(() => {
      const auditId = this.audit(actor, 'settings.update', sessionId, null, { patch: r.data, note });
      this.db.prepare('INSERT INTO settings_changes (session_id, patch_json, note, actor, at, audit_id) VALUES (?, ?, ?, ?, ?, ?)')
        .run(sessionId, encodeJson(r.data), note, actor, now(), auditId);
    }).immediate();
    return this.getSettings(sessionId);
  }

  setTapBad(sessionId: number, tapId: string, bad: boolean, actor: string, comment = ''): Settings {
    const setup = this.getSetup(sessionId);
    if (!setup.taps.some((t) => t.id === tapId)) throw new NotFoundError(`unknown tap "${tapId}" in session ${sessionId}`);
    this.db.transaction(() => {
      const auditId = this.audit(actor, bad ? 'tap.bad' : 'tap.good', sessionId, null, { tapId, bad, comment });
      this.db.prepare('INSERT INTO tap_overrides (session_id, tap_id, bad, comment, actor, at, audit_id) VALUES (?, ?, ?, ?, ?, ?, ?)')
        .run(sessionId, tapId, bad ? 1 : 0, comment, actor, now(), auditId);
    }).immediate();
    return this.getSettings(sessionId);
  }

  setReview(sessionId: number, run: number, verdict: 'accepted' | 'rejected' | null, comment: string, actor: string): void {
    this.runRow(sessionId, run);
    const latest = this.db.prepare('SELECT MAX(id) AS id FROM reductions WHERE session_id = ? AND run = ?').get(sessionId, run) as { id: number | null };
    this.db.transaction(() => {
      const auditId = this.audit(actor, verdict === null ? 'review.clear' : `review.${verdict}`, sessionId, run, { verdict, comment, resultId: latest.id });
      this.db.prepare('INSERT INTO reviews (session_id, run, verdict, comment, result_id, actor, at, audit_id) VALUES (?, ?, ?, ?, ?, ?, ?, ?)')
        .run(sessionId, run, verdict, comment, latest.id, actor, now(), auditId);
    }).immediate();
  }

  auditTrail(sessionId: number): AuditRow[] {
    const rows = this.db.prepare('SELECT id, at, actor, action, session_id, run, detail_json FROM audit WHERE session_id = ? ORDER BY id')
      .all(sessionId) as { id: number; at: string; actor: string; action: string; session_id: number; run: number | null; detail_json: string }[];
    return rows.map((r) => ({ id: r.id, at: r.at, actor: r.actor, action: r.action, sessionId: r.session_id, run: r.run, detail: decodeJson(r.detail_json) }));
  }

  private audit(actor: string, action: string, sessionId: number, run: number | null, detail: unknown): number {
    return Number(
      this.db.prepare('INSERT INTO audit (at, actor, action, session_id, run, detail_json) VALUES (?, ?, ?, ?, ?, ?)')
        .run(now(), actor, action, sessionId, run, encodeJson(detail ?? null)).lastInsertRowid,
    );
  }

  // ------------------------------------------------------------------ runs and samples

  listRuns(sessionId: number): RunRow[] {
    this.getSession(sessionId);
    return (this.db.prepare(`${RUN_SELECT} WHERE r.session_id = ? ORDER BY r.index_pos`).all(sessionId) as RunJoinRow[]).map(runRowOf);
  }

  getRun(sessionId: number, run: number): RunRow {
    const r = this.db.prepare(`${RUN_SELECT} WHERE r.session_id = ? AND r.run = ?`).get(sessionId, run) as RunJoinRow | undefined;
    if (!r) throw new NotFoundError(`unknown run ${run} in session ${sessionId}`);
    return runRowOf(r);
  }

  private runRow(sessionId: number, run: number): RunDbRow {
    const r = this.db.prepare('SELECT * FROM runs WHERE session_id = ? AND run = ?').get(sessionId, run) as RunDbRow | undefined;
    if (!r) throw new NotFoundError(`unknown run ${run} in session ${sessionId}`);
    return r;
  }

  /** The run index as stored (index order). Optional extra. */
  getIndex(sessionId: number): RunInfo[] {
    this.getSession(sessionId);
    return (this.db.prepare('SELECT * FROM runs WHERE session_id = ? ORDER BY index_pos').all(sessionId) as RunDbRow[]).map(infoOf);
  }

  getSamples(sessionId: number, run: number, channel: string): Float64Array {
    const r = this.db.prepare('SELECT dtype, data FROM samples WHERE session_id = ? AND run = ? AND channel = ?').get(sessionId, run, channel) as
      | { dtype: string; data: Buffer }
      | undefined;
    if (!r) {
      this.runRow(sessionId, run);
      throw new NotFoundError(`no samples of channel "${channel}" in run ${run} of session ${sessionId}`);
    }
    return samplesOf(r.data, r.dtype);
  }

  /** Every channel of one run, SI units (optional extra). */
  getRawRun(sessionId: number, run: number): RawRun {
    const info = infoOf(this.runRow(sessionId, run));
    const rows = this.db.prepare('SELECT channel, dtype, data FROM samples WHERE session_id = ? AND run = ? ORDER BY id').all(sessionId, run) as
      { channel: string; dtype: string; data: Buffer }[];
    const channels: Record<string, Float64Array> = {};
    for (const r of rows) channels[r.channel] = samplesOf(r.data, r.dtype);
    return { info, channels };
  }

  /** Averaged statistics of every run (index order) at the session's spike threshold; statistics
   *  stored for another threshold are recomputed from the samples and the cache is refreshed. */
  getAveraged(sessionId: number): Averaged[] {
    const spikeK = this.getSettings(sessionId).spikeK;
    const runs = this.db.prepare('SELECT * FROM runs WHERE session_id = ? ORDER BY index_pos').all(sessionId) as RunDbRow[];
    const statRows = this.db.prepare('SELECT run, channel, spike_k, mean, std, n, std_err, rejected FROM channel_stats WHERE session_id = ?').all(sessionId) as
      { run: number; channel: string; spike_k: number; mean: number | null; std: number | null; n: number; std_err: number | null; rejected: number }[];
    const byRun = new Map<number, typeof statRows>();
    for (const s of statRows) {
      let l = byRun.get(s.run);
      if (!l) byRun.set(s.run, (l = []));
      l.push(s);
    }
    const stale: RawRun[] = [];
    const out: Averaged[] = runs.map((r) => {
      const rows = byRun.get(r.run) ?? [];
      const info = infoOf(r);
      if (rows.length === 0 || rows.some((s) => s.spike_k !== spikeK)) {
        stale.push(this.getRawRun(sessionId, r.run));
        return { info, stats: {} };
      }
      const stats: Record<string, ChannelStats> = {};
      for (const s of rows) stats[s.channel] = { mean: num(s.mean), std: num(s.std), n: s.n, stdErr: num(s.std_err), rejected: s.rejected };
      return { info, stats };
    });
    if (stale.length) {
      const fresh = new Map(stale.map((raw) => [raw.info.run, averageRun(raw, spikeK)]));
      this.db.transaction(() => {
        for (const a of fresh.values()) this.putStats(sessionId, a, spikeK, true);
      }).immediate();
      for (const o of out) {
        const f = fresh.get(o.info.run);
        if (f) o.stats = f.stats;
      }
    }
    return out;
  }

  private putStats(sessionId: number, a: Averaged, spikeK: number, replace: boolean): void {
    const st = this.db.prepare(`INSERT ${replace ? 'OR REPLACE ' : ''}INTO channel_stats (session_id, run, channel, spike_k, mean, std, n, std_err, rejected) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)`);
    for (const [ch, s] of Object.entries(a.stats)) st.run(sessionId, a.info.run, ch, spikeK, dbNum(s.mean), dbNum(s.std), s.n, dbNum(s.stdErr), s.rejected);
  }

  // ------------------------------------------------------------------ import

  /** Store a parsed session in ONE transaction (see the file header for the rules). */
  importParsed(parsed: ParsedSession, actor: string, opts: { onProgress?: (p: ImportProgress) => void } = {}): ImportReport {
    checkParsed(parsed);
    return this.db.transaction(() => this.importTx(parsed, actor, opts.onProgress)).immediate();
  }

  private importTx(p: ParsedSession, actor: string, onProgress?: (p: ImportProgress) => void): ImportReport {
    const src = new Map(p.sources.map((s) => [s.name, s]));
    const setupSrc = src.get(SETUP_FILE)!;
    const indexSrc = src.get(INDEX_FILE)!;
    const report: ImportReport = { sessionId: 0, created: false, importedRuns: [], unchangedFiles: [], changedFiles: [], skippedRuns: [] };
    const rawByRun = new Map(p.runs.map((r) => [r.info.run, r]));
    const at = now();

    let sid: number | undefined;
    if (p.folder !== null) {
      sid = (this.db.prepare('SELECT id FROM sessions WHERE folder = ? ORDER BY id DESC LIMIT 1').get(p.folder) as { id: number } | undefined)?.id;
    } else {
      sid = (this.db.prepare('SELECT session_id AS id FROM setups WHERE sha256 = ? ORDER BY session_id DESC LIMIT 1').get(setupSrc.sha256) as { id: number } | undefined)?.id;
    }

    const latestSource = (sessionId: number, name: string) =>
      this.db.prepare('SELECT id, sha256 FROM source_files WHERE session_id = ? AND name = ? ORDER BY id DESC LIMIT 1').get(sessionId, name) as
        | { id: number; sha256: string }
        | undefined;
    const addSource = (sessionId: number, name: string, role: 'setup' | 'index' | 'runs'): number => {
      const s = src.get(name)!;
      return Number(
        this.db.prepare('INSERT INTO source_files (session_id, name, role, sha256, bytes, imported_at) VALUES (?, ?, ?, ?, ?, ?)')
          .run(sessionId, name, role, s.sha256, s.bytes, at).lastInsertRowid,
      );
    };

    let toImport: RawRun[];
    const runSourceId = new Map<string, number>(); // file → source row of this import
    let spikeK: number;
    const files = [...new Set(p.runs.map((r) => r.info.file!))];

    if (sid === undefined) {
      // A new session: everything goes in.
      const s = p.setup;
      sid = Number(
        this.db.prepare('INSERT INTO sessions (title, date, facility, model, folder, created_at, imported_at) VALUES (?, ?, ?, ?, ?, ?, ?)')
          .run(s.session.title, s.session.date, s.facility.name, s.model.name, p.folder, at, at).lastInsertRowid,
      );
      this.db.prepare('INSERT INTO setups (session_id, setup_json, sha256) VALUES (?, ?, ?)').run(sid, encodeJson(s), setupSrc.sha256);
      addSource(sid, SETUP_FILE, 'setup');
      addSource(sid, INDEX_FILE, 'index');
      for (const f of files) runSourceId.set(f, addSource(sid, f, 'runs'));
      report.created = true;
      toImport = p.index.map((i) => rawByRun.get(i.run)!);
      spikeK = resolveSettings(s).spikeK;
    } else {
      report.sessionId = sid;
      const stored = this.db.prepare('SELECT sha256 FROM setups WHERE session_id = ?').get(sid) as { sha256: string };
      const storedRuns = this.db.prepare('SELECT * FROM runs WHERE session_id = ? ORDER BY index_pos').all(sid) as RunDbRow[];
      const storedSet = new Set(storedRuns.map((r) => r.run));
      const refuse = (file: string): ImportReport => {
        report.changedFiles.push(file);
        report.skippedRuns = p.index.map((i) => i.run);
        return report;
      };
      if (stored.sha256 !== setupSrc.sha256) return refuse(SETUP_FILE);
      report.unchangedFiles.push(SETUP_FILE);
      // The stored index must be the start of the new one, line for line.
      const grown = storedRuns.length <= p.index.length && storedRuns.every((r, i) => sameInfo(infoOf(r), p.index[i]));
      if (!grown) return refuse(INDEX_FILE);
      const idxStored = latestSource(sid, INDEX_FILE);
      const indexChanged = idxStored?.sha256 !== indexSrc.sha256;
      if (!indexChanged) report.unchangedFiles.push(INDEX_FILE);

      const accepted = new Set<number>();
      const newSources: string[] = [];
      for (const f of files) {
        const runsOfFile = p.runs.filter((r) => r.info.file === f);
        const fresh = runsOfFile.filter((r) => !storedSet.has(r.info.run));
        const prev = latestSource(sid, f);
        const storedOfFile = storedRuns.filter((r) => r.file === f);
        if (prev && prev.sha256 === src.get(f)!.sha256) {
          report.unchangedFiles.push(f);
          runSourceId.set(f, prev.id);
          fresh.forEach((r) => accepted.add(r.info.run));
          continue;
        }
        // Bytes differ (or a new file): compare the samples of the runs already stored from it.
        const same = storedOfFile.every((r) => {
          const raw = rawByRun.get(r.run);
          return raw !== undefined && this.sameSamples(sid!, r.run, raw);
        });
        if (!same) {
          report.changedFiles.push(f);
          continue;
        }
        if (prev && fresh.length === 0) report.unchangedFiles.push(f); // same samples, other bytes (e.g. line endings)
        newSources.push(f);
        fresh.forEach((r) => accepted.add(r.info.run));
      }
      toImport = p.index.filter((i) => accepted.has(i.run)).map((i) => rawByRun.get(i.run)!);
      report.skippedRuns = p.index.map((i) => i.run).filter((r) => !accepted.has(r));
      if (toImport.length === 0 && newSources.length === 0 && !indexChanged) return report;
      if (indexChanged) addSource(sid, INDEX_FILE, 'index');
      for (const f of newSources) runSourceId.set(f, addSource(sid, f, 'runs'));
      spikeK = this.getSettings(sid).spikeK;
      this.db.prepare('UPDATE sessions SET imported_at = ? WHERE id = ?').run(at, sid);
    }
    report.sessionId = sid;

    // Store the runs.
    const posBase = (this.db.prepare('SELECT COALESCE(MAX(index_pos), -1) + 1 AS p FROM runs WHERE session_id = ?').get(sid) as { p: number }).p;
    const pos = new Map(p.index.map((i, k) => [i.run, k]));
    const insRun = this.db.prepare(`INSERT INTO runs (session_id, run, kind, time, alpha_deg, baro, temperature_c, humidity, file, source_id, samples, index_pos)
      VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`);
    const insSamples = this.db.prepare('INSERT INTO samples (session_id, run, channel, dtype, n, data) VALUES (?, ?, ?, ?, ?, ?)');
    const bytesTotal = toImport.reduce((s, r) => s + Object.values(r.channels).reduce((t, a) => t + a.byteLength, 0), 0);
    let bytesDone = 0;
    onProgress?.({ phase: 'store', bytesDone, bytesTotal, runsDone: 0, runsTotal: toImport.length });
    toImport.forEach((raw, k) => {
      const i = raw.info;
      const n = Object.values(raw.channels)[0]?.length ?? 0;
      insRun.run(sid, i.run, i.kind, i.time, i.alphaDeg, i.baro, i.temperatureC, i.humidity, i.file ?? null, runSourceId.get(i.file!) ?? null, n,
        report.created ? pos.get(i.run)! : posBase + k);
      for (const c of p.setup.channels) {
        const a = raw.channels[c.name];
        insSamples.run(sid, i.run, c.name, 'f64le', a.length, blobOf(a));
        bytesDone += a.byteLength;
      }
      this.putStats(sid!, averageRun(raw, spikeK), spikeK, false);
      report.importedRuns.push(i.run);
      onProgress?.({ phase: 'store', file: i.file, bytesDone, bytesTotal, runsDone: k + 1, runsTotal: toImport.length });
    });
    this.audit(actor, 'import', sid, null, {
      created: report.created,
      folder: p.folder,
      runs: report.importedRuns,
      files: p.sources.filter((s) => !report.changedFiles.includes(s.name)),
      changedFiles: report.changedFiles,
      warnings: p.warnings ?? [],
    });
    return report;
  }

  private sameSamples(sessionId: number, run: number, raw: RawRun): boolean {
    const rows = this.db.prepare('SELECT channel, dtype, data FROM samples WHERE session_id = ? AND run = ?').all(sessionId, run) as
      { channel: string; dtype: string; data: Buffer }[];
    if (rows.length !== Object.keys(raw.channels).length) return false;
    return rows.every((r) => {
      const a = raw.channels[r.channel];
      return a !== undefined && (r.dtype === 'f64le' ? sameBytes(a, r.data) : samplesOf(r.data, r.dtype).every((v, i) => v === a[i]));
    });
  }

  // ------------------------------------------------------------------ results

  /** Store reductions (one transaction, one audit entry); history is kept. Returns the result ids. */
  saveResults(sessionId: number, results: RunResult[], actor: string): number[] {
    this.getSession(sessionId);
    const kinds = new Map((this.db.prepare('SELECT run, kind FROM runs WHERE session_id = ?').all(sessionId) as { run: number; kind: RunKind }[]).map((r) => [r.run, r.kind]));
    for (const r of results) checkResult(r, kinds, sessionId);
    const ins = this.db.prepare(`INSERT INTO reductions (session_id, run, reduced_at, core_version, actor, audit_id, settings_json, result_json,
      q, re, v, cl, cl_mom, cl_wall, cd, cdp, cmc4, gamma_pressure, gamma_momentum, alpha_corr_deg, flag_count)
      VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`);
    const insFlag = this.db.prepare('INSERT INTO flags (reduction_id, seq, code, severity, reason) VALUES (?, ?, ?, ?, ?)');
    return this.db.transaction(() => {
      const at = now();
      const auditId = this.audit(actor, 'reduce', sessionId, results.length === 1 ? results[0].run : null, {
        runs: results.map((r) => r.run),
        coreVersion: [...new Set(results.map((r) => r.coreVersion))].join(', ') || CORE_VERSION,
      });
      const ids = results.map((r) => {
        const c = r.corrected;
        const id = Number(
          ins.run(sessionId, r.run, at, r.coreVersion, actor, auditId, encodeJson(r.settings), encodeJson(r),
            dbNum(c.q), dbNum(c.Re), dbNum(c.V), dbNum(c.cl), dbNum(correctedMomentumCl(r)), dbNum(r.walls?.clWall ?? NaN), dbNum(c.cd), dbNum(c.cdp),
            dbNum(c.cmc4), dbNum(r.circulation.pressure), dbNum(r.circulation.momentum), dbNum(c.alphaDeg), r.flags.length).lastInsertRowid,
        );
        r.flags.forEach((f, k) => insFlag.run(id, k, f.code, f.severity, f.reason));
        return id;
      });
      return ids;
    }).immediate();
  }

  latestResult(sessionId: number, run: number): RunResult | null {
    this.runRow(sessionId, run);
    const r = this.db.prepare('SELECT result_json FROM reductions WHERE session_id = ? AND run = ? ORDER BY id DESC LIMIT 1').get(sessionId, run) as
      | { result_json: string }
      | undefined;
    return r ? decodeJson<RunResult>(r.result_json) : null;
  }

  /** Latest result of every reduced run, index order (optional extra). */
  latestResults(sessionId: number): RunResult[] {
    this.getSession(sessionId);
    const rows = this.db.prepare(`SELECT lr.result_json FROM latest_reductions lr JOIN runs r ON r.session_id = lr.session_id AND r.run = lr.run
      WHERE lr.session_id = ? ORDER BY r.index_pos`).all(sessionId) as { result_json: string }[];
    return rows.map((r) => decodeJson<RunResult>(r.result_json));
  }

  /** Every reduction of a run, oldest first. */
  resultHistory(sessionId: number, run: number): { resultId: number; reducedAt: string; coreVersion: string; cl: number; cd: number; flags: Flag[] }[] {
    this.runRow(sessionId, run);
    const rows = this.db.prepare(`SELECT id, reduced_at, core_version, cl, cd, ${FLAGS_JSON('reductions.id')} AS flags_json
      FROM reductions WHERE session_id = ? AND run = ? ORDER BY id`).all(sessionId, run) as
      { id: number; reduced_at: string; core_version: string; cl: number | null; cd: number | null; flags_json: string }[];
    return rows.map((r) => ({ resultId: r.id, reducedAt: r.reduced_at, coreVersion: r.core_version, cl: num(r.cl), cd: num(r.cd), flags: JSON.parse(r.flags_json) as Flag[] }));
  }
}

// ---------------------------------------------------------------------------------------------
// Row mapping

const FLAGS_JSON = (reductionId: string) => `(SELECT json_group_array(json_object('code', f.code, 'reason', f.reason, 'severity', f.severity))
  FROM (SELECT code, reason, severity FROM flags WHERE reduction_id = ${reductionId} ORDER BY seq) f)`;

interface SessionDbRow {
  id: number; title: string; date: string; facility: string; model: string; folder: string | null; imported_at: string;
  run_count: number; data_run_count: number; flagged_count: number;
}
const SESSION_SELECT = `SELECT s.id, s.title, s.date, s.facility, s.model, s.folder, s.imported_at,
  (SELECT COUNT(*) FROM runs r WHERE r.session_id = s.id) AS run_count,
  (SELECT COUNT(*) FROM runs r WHERE r.session_id = s.id AND r.kind = 'data') AS data_run_count,
  (SELECT COUNT(*) FROM latest_reductions lr WHERE lr.session_id = s.id AND lr.flag_count > 0) AS flagged_count
  FROM sessions s`;
const sessionOf = (r: SessionDbRow): SessionRow => ({
  id: r.id, title: r.title, date: r.date, facility: r.facility, model: r.model, folder: r.folder,
  runCount: r.run_count, dataRunCount: r.data_run_count, flaggedCount: r.flagged_count, importedAt: r.imported_at,
});

interface RunJoinRow extends RunDbRow {
  rid: number | null; reduced_at: string | null; q: number | null; re: number | null; v: number | null; cl: number | null; cl_mom: number | null;
  cl_wall: number | null; cd: number | null; cdp: number | null; cmc4: number | null; gamma_pressure: number | null; gamma_momentum: number | null;
  alpha_corr_deg: number | null; flags_json: string | null;
  verdict: 'accepted' | 'rejected' | null; review_comment: string | null; review_actor: string | null; review_at: string | null;
}
/** The run table: each run with its latest reduction and latest review, in one query. */
const RUN_SELECT = `SELECT r.*, lr.id AS rid, lr.reduced_at, lr.q, lr.re, lr.v, lr.cl, lr.cl_mom, lr.cl_wall, lr.cd, lr.cdp, lr.cmc4,
  lr.gamma_pressure, lr.gamma_momentum, lr.alpha_corr_deg,
  CASE WHEN lr.id IS NULL THEN NULL ELSE ${FLAGS_JSON('lr.id')} END AS flags_json,
  rv.verdict, rv.comment AS review_comment, rv.actor AS review_actor, rv.at AS review_at
  FROM runs r
  LEFT JOIN latest_reductions lr ON lr.session_id = r.session_id AND lr.run = r.run
  LEFT JOIN reviews rv ON rv.id = (SELECT MAX(x.id) FROM reviews x WHERE x.session_id = r.session_id AND x.run = r.run)`;
const runRowOf = (r: RunJoinRow): RunRow => ({
  sessionId: r.session_id, run: r.run, kind: r.kind, alphaDeg: r.alpha_deg, time: r.time, baro: r.baro, temperatureC: r.temperature_c,
  humidity: r.humidity, file: r.file,
  result: r.rid === null ? null : {
    resultId: r.rid, reducedAt: r.reduced_at!, q: num(r.q), Re: num(r.re), V: num(r.v), cl: num(r.cl), clMom: num(r.cl_mom), clWall: num(r.cl_wall),
    cd: num(r.cd), cdp: num(r.cdp), cmc4: num(r.cmc4), gammaPressure: num(r.gamma_pressure), gammaMomentum: num(r.gamma_momentum),
    flags: JSON.parse(r.flags_json ?? '[]') as Flag[], alphaCorrDeg: num(r.alpha_corr_deg),
  },
  review: r.verdict === null ? null : { verdict: r.verdict, comment: r.review_comment!, actor: r.review_actor!, at: r.review_at! },
});

// ---------------------------------------------------------------------------------------------
// Input checks (programming errors, not log errors: the parser has already vouched for the files)

function checkParsed(p: ParsedSession): void {
  const names = new Set(p.sources.map((s) => s.name));
  for (const need of [SETUP_FILE, INDEX_FILE]) if (!names.has(need)) throw new Error(`importParsed: sources lack ${need}`);
  for (const s of p.sources) if (!/^[0-9a-f]{64}$/.test(s.sha256)) throw new Error(`importParsed: source ${s.name} has no SHA-256`);
  const byRun = new Map(p.runs.map((r) => [r.info.run, r]));
  if (byRun.size !== p.runs.length) throw new Error('importParsed: a run appears twice in runs');
  const seen = new Set<number>();
  for (const i of p.index) {
    if (seen.has(i.run)) throw new Error(`importParsed: run ${i.run} appears twice in the index`);
    seen.add(i.run);
    const raw = byRun.get(i.run);
    if (!raw) throw new Error(`importParsed: no samples for run ${i.run}`);
    if (!raw.info.file || !names.has(raw.info.file)) throw new Error(`importParsed: run ${i.run}: its file "${raw.info.file ?? ''}" is not among the sources`);
    let n = -1;
    for (const c of p.setup.channels) {
      const a = raw.channels[c.name];
      if (!(a instanceof Float64Array)) throw new Error(`importParsed: run ${i.run} lacks channel ${c.name}`);
      if (n >= 0 && a.length !== n) throw new Error(`importParsed: run ${i.run}: channel ${c.name} has ${a.length} samples, others ${n}`);
      n = a.length;
    }
    if (n <= 0) throw new Error(`importParsed: run ${i.run} has no samples`);
  }
  if (p.runs.length !== p.index.length) throw new Error('importParsed: runs not listed in the index');
}

function checkResult(r: RunResult, kinds: Map<number, RunKind>, sessionId: number): void {
  if (!r || typeof r !== 'object' || !Number.isInteger(r.run)) throw new Error('saveResults: a result without a run number');
  const k = kinds.get(r.run);
  if (k === undefined) throw new NotFoundError(`saveResults: unknown run ${r.run} in session ${sessionId}`);
  if (k !== 'data') throw new Error(`saveResults: run ${r.run} is a wind-off zero; only data runs have results`);
  if (typeof r.coreVersion !== 'string' || !r.settings || !r.corrected || !Array.isArray(r.flags) || !r.circulation) {
    throw new Error(`saveResults: run ${r.run}: not a RunResult (coreVersion, settings, corrected, circulation, flags needed)`);
  }
}
