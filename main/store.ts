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
// reported in changedFiles and not merged — unless the file only grew (its stored bytes are the
// start of the new file: a log still being written when it was imported), in which case its runs
// are replaced by the grown log's (audited, replacedRuns) and reduced again; a runs.csv that only
// grew by appended lines (live acquisition) is accepted and its new runs are imported.
import { accessSync, constants as fsConstants, copyFileSync, existsSync, mkdirSync, mkdtempSync, rmSync, statfsSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, dirname, join, resolve } from 'node:path';
import Database from 'better-sqlite3';
import {
  CORE_VERSION,
  type ChannelStats, type Flag, type RawRun, type ResultDigest, type RunInfo, type RunKind, type RunResult, type Settings, type Setup,
} from '../app/types';
import { averageRun } from '../app/samples';
import { polarIntervals, correctedMomentumCl, resolveSettings } from '../app/reduce';
import { settingsPatchSchema } from '../app/log/schema';
import type { StaleMark } from '../app/stale';
import { INDEX_FILE, SETUP_FILE } from '../app/log/session';
import { prepareRun, type PreparedFile, type PreparedRun } from './runFile';
import { decodeSamples } from './sampleCodec';

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
  /** Set by main/stale.ts (withStale): why the latest result is stale, null when current. */
  stale?: StaleMark | null;
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
  /** Runs stored before whose log only grew since (the old bytes are the start of the new file,
   *  e.g. live acquisition still writing when it was imported): their samples were replaced by
   *  the grown log's (audited); they are also in importedRuns, so they are reduced again.
   *  Absent when there are none. */
  replacedRuns?: number[];
  /** What the import accepted but ignored or changed: columns not in the setup or the index,
   *  values too small for a double, samples of runs the index does not place in a file. */
  warnings: string[];
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
  {
    version: 2,
    name: 'compact samples (decimal mantissas); result digests for the session summary',
    // Samples logged as decimal text are kept as packed integer mantissas with their exponent and
    // unit factor (main/sampleCodec.ts), ~2.5 bytes a sample instead of 8; rows stored before
    // keep their doubles ('f64le'). SQLite cannot alter a CHECK constraint: the table is rebuilt.
    // Each reduction also keeps the digest the session summary needs (NULL for older ones, whose
    // full result is read instead: the table is append-only, so no back-filling).
    sql: `
CREATE TABLE samples_v2 (
  id INTEGER PRIMARY KEY,
  session_id INTEGER NOT NULL, run INTEGER NOT NULL, channel TEXT NOT NULL,
  dtype TEXT NOT NULL CHECK (dtype IN ('f64le', 'f32le', 'dec')),
  n INTEGER NOT NULL, data BLOB NOT NULL,
  dec_exp INTEGER CHECK (dec_exp IS NULL OR dec_exp BETWEEN 0 AND 15),
  unit_factor REAL,
  CHECK (dtype <> 'dec' OR (dec_exp IS NOT NULL AND unit_factor IS NOT NULL)),
  UNIQUE (session_id, run, channel),
  FOREIGN KEY (session_id, run) REFERENCES runs(session_id, run)
);
INSERT INTO samples_v2 (id, session_id, run, channel, dtype, n, data) SELECT id, session_id, run, channel, dtype, n, data FROM samples;
DROP TABLE samples;
ALTER TABLE samples_v2 RENAME TO samples;
ALTER TABLE reductions ADD COLUMN digest_json TEXT;
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
function deepFreeze<T>(o: T): T {
  if (o && typeof o === 'object' && !Object.isFrozen(o)) {
    Object.freeze(o);
    for (const v of Object.values(o as object)) deepFreeze(v);
  }
  return o;
}

export function decodeJson<T>(s: string): T {
  if (!s.includes('"$num"')) return JSON.parse(s) as T; // nothing to revive: the fast path
  return JSON.parse(s, (_k, x) =>
    x && typeof x === 'object' && !Array.isArray(x) && Object.keys(x).length === 1 && typeof x.$num === 'string' ? Number(x.$num) : x,
  ) as T;
}
const num = (x: number | null): number => (x === null ? Number.NaN : x);
const dbNum = (x: number): number | null => (Number.isFinite(x) ? x : null);

interface SampleRow { channel: string; dtype: string; n: number; data: Buffer; dec_exp: number | null; unit_factor: number | null }
function samplesOfRow(r: SampleRow): Float64Array {
  return decodeSamples(r.dtype, r.data, r.n, r.dec_exp, r.unit_factor);
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

/** Connection settings. page_size only takes effect on a new, empty file: 64 KiB pages suit the
 *  ~5 KB sample BLOBs (measured here: ~2× faster to write than the 4 KiB default, and 17 % less
 *  file than 16 KiB pages, where only two BLOBs fit a page). The WAL file is cut
 *  back to 64 MiB after a checkpoint, however large one import made it. */
function configure(db: Database.Database): void {
  db.pragma('page_size = 65536');
  db.pragma('journal_mode = WAL');
  db.pragma('foreign_keys = ON');
  db.pragma('synchronous = FULL');
  db.pragma('busy_timeout = 5000');
  db.pragma('journal_size_limit = 67108864');
}

/** Why `path` (a file or folder) cannot be written, or null. Root passes a chmod check, but not a
 *  read-only mount (EROFS). */
function notWritable(path: string): string | null {
  try {
    accessSync(path, fsConstants.W_OK);
    return null;
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === 'EROFS') return 'is on a read-only file system';
    if (code === 'EACCES' || code === 'EPERM') return 'is not writable (permissions)';
    return null;
  }
}

/** Refuse a database of a newer schema (before anything is written) or one that is not ours. */
function checkVersion(path: string, db: Database.Database, readOnly = false): void {
  const v = db.pragma('user_version', { simple: true }) as number;
  if (v > SCHEMA_VERSION) {
    throw new StoreVersionError(`${path}: database schema version ${v} is newer than this Rakeline understands (${SCHEMA_VERSION}); use a newer Rakeline (the file was not changed)`);
  }
  if (readOnly && v < SCHEMA_VERSION) {
    throw new StoreVersionError(`${path}: database schema version ${v} is older than this Rakeline's (${SCHEMA_VERSION}); a reading command does not upgrade it: run a writing command (e.g. rakeline ingest) on a writable copy first`);
  }
}

/** An error of opening the database, naming the file and what SQLite or the disk said. */
function storeOpenError(path: string, e: unknown): Error {
  if (e instanceof StoreVersionError || e instanceof StoreReadOnlyError || e instanceof StoreFullError) return e;
  const code = (e as { code?: unknown }).code;
  const msg = e instanceof Error ? e.message : String(e);
  if (code === 'SQLITE_NOTADB') return new Error(`${path}: not an SQLite database (${msg})`);
  if (typeof code === 'string' && code.startsWith('SQLITE_READONLY')) return new StoreReadOnlyError(path, `cannot be written (${msg})`);
  if (isDiskFull(e, path)) return new StoreFullError(path, msg);
  if (msg.includes(path)) return e as Error;
  const out = new Error(`${path}: ${msg}`);
  (out as { code?: unknown }).code = code;
  return out;
}

/** SQLITE_FULL or ENOSPC, however it was wrapped. */
export function isDiskFull(e: unknown, file?: string): boolean {
  const code = (e as { code?: unknown } | null)?.code;
  if (code === 'SQLITE_FULL' || code === 'ENOSPC') return true;
  const msg = e instanceof Error ? e.message : String(e);
  if (/database or disk is full|ENOSPC|no space left on device/i.test(msg)) return true;
  // SQLite says only "disk I/O error" when the -shm index or the -wal cannot grow on a full disk
  // (it keeps no errno): an I/O error with next to no room left where the database lies is that.
  if (file !== undefined && typeof code === 'string' && code.startsWith('SQLITE_IOERR')) {
    const free = freeBytes(dirname(file));
    return free !== null && free < DISK_NEARLY_FULL;
  }
  return false;
}

/** Free space below which an SQLite I/O error is taken as a full disk (a few database pages). */
const DISK_NEARLY_FULL = 1024 * 1024;

function freeBytes(dir: string): number | null {
  try {
    const s = statfsSync(dir);
    return s.bavail * s.bsize;
  } catch {
    return null;
  }
}

/** A database newer than this program, or older than a reading command can use. */
export class StoreVersionError extends Error {
  override name = 'StoreVersionError';
}

/** A write refused because the database cannot be written (read-only file, folder or medium, or
 *  a store opened for reading). */
export class StoreReadOnlyError extends Error {
  override name = 'StoreReadOnlyError';
  constructor(readonly file: string, why: string, what?: string) {
    super(`${what ? `${what}: ` : ''}the database ${file} ${why}; commands that write (ingest, reduce, tap, review, follow) cannot use it, reading ones (sessions, runs, settings, export, sheet) can`);
  }
}

/** The disk (or the database's size limit) is full: nothing of the write was kept. */
export class StoreFullError extends Error {
  override name = 'StoreFullError';
  constructor(readonly file: string, detail: string, what?: string) {
    super(`${what ? `${what}: ` : ''}the disk holding the database ${file} is full (${detail}); nothing of this write was kept — free some space and run the command again`);
  }
}

// ---------------------------------------------------------------------------------------------

export class Store {
  readonly file: string;
  readonly db: Database.Database;

  private constructor(file: string, db: Database.Database) {
    this.file = file;
    this.db = db;
  }

  /** Opened read-only (reading commands; no write is ever attempted, see open()). */
  readonly readOnly: boolean = false;
  /** A private copy read instead of a database on a read-only medium (removed by close()). */
  private copyDir: string | null = null;

  /**
   * Open the store file. Writing (the default): created if missing and migrated; a database that
   * cannot be written is refused at once, naming the file (StoreReadOnlyError). `readOnly`: the
   * file must exist, nothing is written (no WAL switch, no migration, no statistics cache); a
   * WAL database on a read-only medium is read from a private copy. Either way a database of a
   * newer schema is refused before anything is written to it, and a file that is not an SQLite
   * database is named as such.
   */
  static open(file: string, opts: { readOnly?: boolean } = {}): Store {
    const path = resolve(file);
    if (opts.readOnly) return Store.openReadOnly(path);
    const existed = existsSync(path);
    if (existed) {
      const why = notWritable(path);
      if (why) throw new StoreReadOnlyError(path, why);
    } else {
      mkdirSync(dirname(path), { recursive: true });
      const why = notWritable(dirname(path));
      if (why) throw new StoreReadOnlyError(path, `its folder ${why}`);
    }
    // A failed open (a full disk: the -shm index could not be sized) must not leave the -wal and
    // -shm files it began: the ones that were not there before, while the -wal holds nothing.
    const sideFiles = [`${path}-wal`, `${path}-shm`].filter((f) => !existsSync(f));
    const dropSideFiles = () => {
      const wal = `${path}-wal`;
      if (existsSync(wal) && (!sideFiles.includes(wal) || statSync(wal).size > 0)) return;
      for (const f of sideFiles) rmSync(f, { force: true });
    };
    let db: Database.Database;
    try {
      db = new Database(path);
    } catch (e) {
      dropSideFiles();
      throw storeOpenError(path, e);
    }
    try {
      checkVersion(path, db);
      configure(db);
      const s = new Store(path, db);
      s.migrate();
      return s;
    } catch (e) {
      db.close();
      dropSideFiles();
      throw storeOpenError(path, e);
    }
  }

  private static openReadOnly(path: string): Store {
    if (!existsSync(path)) throw new Error(`no database at ${path}`);
    // On a writable folder a read-write connection that never writes: a read-only one would
    // leave its -wal and -shm files behind when it closes.
    const writable = !notWritable(path) && !notWritable(dirname(path));
    const connect = (f: string, readonly = !writable) => {
      const db = new Database(f, { readonly, fileMustExist: true });
      try {
        checkVersion(path, db, true);
        db.pragma('foreign_keys = ON');
        db.pragma('busy_timeout = 5000');
        return db;
      } catch (e) {
        db.close();
        throw e;
      }
    };
    let db: Database.Database;
    let copyDir: string | null = null;
    try {
      try {
        db = connect(path);
      } catch (e) {
        // An older schema on a writable file is upgraded first, as a writing open would.
        if (!(e instanceof StoreVersionError) || !/is older/.test(e.message) || !writable) throw e;
        Store.open(path).close();
        db = connect(path);
      }
    } catch (e) {
      const code = (e as { code?: unknown }).code;
      // A WAL database needs its -shm index file, which a read-only folder cannot hold: read a
      // private copy of the database (and its -wal) instead.
      if (!(typeof code === 'string' && /^SQLITE_(CANTOPEN|IOERR|READONLY)/.test(code) && notWritable(dirname(path)))) throw storeOpenError(path, e);
      copyDir = mkdtempSync(join(tmpdir(), 'rakeline-readonly-'));
      try {
        const copy = join(copyDir, basename(path));
        copyFileSync(path, copy);
        if (existsSync(`${path}-wal`)) copyFileSync(`${path}-wal`, `${copy}-wal`);
        db = connect(copy, true);
      } catch (e2) {
        rmSync(copyDir, { recursive: true, force: true });
        throw storeOpenError(path, e2);
      }
    }
    const s = new Store(path, db);
    (s as { readOnly: boolean }).readOnly = true;
    s.copyDir = copyDir;
    return s;
  }

  close(): void {
    if (this.db.open) this.db.close();
    if (this.copyDir) rmSync(this.copyDir, { recursive: true, force: true });
    this.copyDir = null;
  }

  /** Schema version of the open file (PRAGMA user_version). */
  schemaVersion(): number {
    return this.db.pragma('user_version', { simple: true }) as number;
  }

  private migrate(): void {
    const current = this.schemaVersion();
    checkVersion(this.file, this.db);
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

  /** NotFoundError unless the session exists (a cheap check: getSession also counts runs and flags). */
  assertSession(sessionId: number): void {
    if (!this.db.prepare('SELECT 1 FROM sessions WHERE id = ?').get(sessionId)) throw new NotFoundError(`unknown session ${sessionId}`);
  }

  /** The session's setup. A setup never changes once stored, so it is decoded once and the same
   *  (deeply frozen) object is handed out after that; the core's per-setup caches then hold too. */
  getSetup(sessionId: number): Setup {
    const hit = this.setups.get(sessionId);
    if (hit) return hit;
    const r = this.db.prepare('SELECT setup_json FROM setups WHERE session_id = ?').get(sessionId) as { setup_json: string } | undefined;
    if (!r) throw new NotFoundError(`unknown session ${sessionId}`);
    const setup = deepFreeze(decodeJson<Setup>(r.setup_json));
    this.setups.set(sessionId, setup);
    return setup;
  }

  private readonly setups = new Map<number, Setup>();

  /** Runs whose latest review rejects them. */
  rejectedRuns(sessionId: number): Set<number> {
    const rows = this.db.prepare(`SELECT rv.run FROM reviews rv WHERE rv.session_id = ? AND rv.verdict = 'rejected'
      AND rv.id = (SELECT MAX(x.id) FROM reviews x WHERE x.session_id = rv.session_id AND x.run = rv.run)`).all(sessionId) as { run: number }[];
    return new Set(rows.map((r) => r.run));
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
    this.assertWritable('updateSettings');
    const setup = this.getSetup(sessionId);
    const r = settingsPatchSchema.safeParse(patch);
    if (!r.success) {
      throw new Error(`invalid settings: ${r.error.issues.map((i) => `${i.path.join('.') || '(patch)'}: ${i.message}`).join('; ')}`);
    }
    const taps = new Set(setup.taps.map((t) => t.id));
    for (const t of r.data.badTaps ?? []) if (!taps.has(t)) throw new Error(`invalid settings: badTaps: tap "${t}" is not in the setup`);
    for (const e of r.data.keptTaps ?? []) {
      const t = e.slice(0, e.lastIndexOf('@'));
      if (!taps.has(t)) throw new Error(`invalid settings: keptTaps: tap "${t}" (in "${e}") is not in the setup`);
    }
    this.db.transaction(() => {
      const auditId = this.audit(actor, 'settings.update', sessionId, null, { patch: r.data, note });
      this.db.prepare('INSERT INTO settings_changes (session_id, patch_json, note, actor, at, audit_id) VALUES (?, ?, ?, ?, ?, ?)')
        .run(sessionId, encodeJson(r.data), note, actor, now(), auditId);
    }).immediate();
    return this.getSettings(sessionId);
  }

  setTapBad(sessionId: number, tapId: string, bad: boolean, actor: string, comment = ''): Settings {
    this.assertWritable('setTapBad');
    const setup = this.getSetup(sessionId);
    if (!setup.taps.some((t) => t.id === tapId)) throw new NotFoundError(`unknown tap "${tapId}" in session ${sessionId}`);
    this.db.transaction(() => {
      const auditId = this.audit(actor, bad ? 'tap.bad' : 'tap.good', sessionId, null, { tapId, bad, comment });
      this.db.prepare('INSERT INTO tap_overrides (session_id, tap_id, bad, comment, actor, at, audit_id) VALUES (?, ?, ?, ?, ?, ?, ?)')
        .run(sessionId, tapId, bad ? 1 : 0, comment, actor, now(), auditId);
    }).immediate();
    return this.getSettings(sessionId);
  }

  /** The engineer settles a tap the reduction dropped automatically in one run (issue 9 part 3,
   *  docs/TAP-JUDGEMENT.md §5): 'confirm' marks it bad for the session (a tap override, audited as
   *  'tap.confirm'); 'keep' records "tap@run" in Settings.keptTaps (audited as 'tap.keep') so the
   *  automatic test no longer drops it in that run; 'release' takes a keep back ('tap.release').
   *  `suggestion` (the automatic drop's reason and figures) goes into the audit detail. */
  settleTap(
    sessionId: number, run: number, tapId: string, decision: 'confirm' | 'keep' | 'release', actor: string,
    comment = '', suggestion: Record<string, unknown> | null = null,
  ): Settings {
    this.assertWritable('settleTap');
    const setup = this.getSetup(sessionId);
    if (!setup.taps.some((t) => t.id === tapId)) throw new NotFoundError(`unknown tap "${tapId}" in session ${sessionId}`);
    this.runRow(sessionId, run);
    const detail = { tapId, run, decision, comment, suggestion };
    this.db.transaction(() => {
      const auditId = this.audit(actor, `tap.${decision}`, sessionId, run, detail);
      if (decision === 'confirm') {
        this.db.prepare('INSERT INTO tap_overrides (session_id, tap_id, bad, comment, actor, at, audit_id) VALUES (?, ?, ?, ?, ?, ?, ?)')
          .run(sessionId, tapId, 1, comment, actor, now(), auditId);
      } else {
        const key = `${tapId}@${run}`;
        const list = this.getSettings(sessionId).keptTaps ?? [];
        const next = decision === 'keep' ? [...new Set([...list, key])] : list.filter((e) => e !== key);
        this.db.prepare('INSERT INTO settings_changes (session_id, patch_json, note, actor, at, audit_id) VALUES (?, ?, ?, ?, ?, ?)')
          .run(sessionId, encodeJson({ keptTaps: next }), comment, actor, now(), auditId);
      }
    }).immediate();
    return this.getSettings(sessionId);
  }

  setReview(sessionId: number, run: number, verdict: 'accepted' | 'rejected' | null, comment: string, actor: string): void {
    this.assertWritable('setReview');
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
    this.assertSession(sessionId);
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
    this.assertSession(sessionId);
    return (this.db.prepare('SELECT * FROM runs WHERE session_id = ? ORDER BY index_pos').all(sessionId) as RunDbRow[]).map(infoOf);
  }

  getSamples(sessionId: number, run: number, channel: string): Float64Array {
    const r = this.db.prepare('SELECT channel, dtype, n, data, dec_exp, unit_factor FROM samples WHERE session_id = ? AND run = ? AND channel = ?')
      .get(sessionId, run, channel) as SampleRow | undefined;
    if (!r) {
      this.runRow(sessionId, run);
      throw new NotFoundError(`no samples of channel "${channel}" in run ${run} of session ${sessionId}`);
    }
    return samplesOfRow(r);
  }

  /** Every channel of one run, SI units (optional extra). */
  getRawRun(sessionId: number, run: number): RawRun {
    const info = infoOf(this.runRow(sessionId, run));
    const rows = this.db.prepare('SELECT channel, dtype, n, data, dec_exp, unit_factor FROM samples WHERE session_id = ? AND run = ? ORDER BY id')
      .all(sessionId, run) as SampleRow[];
    const channels: Record<string, Float64Array> = {};
    for (const r of rows) channels[r.channel] = samplesOfRow(r);
    return { info, channels };
  }

  /** Averaged statistics of every run (index order), or of the runs listed, at the session's spike
   *  threshold; statistics stored for another threshold are recomputed from the samples and the
   *  cache is refreshed. */
  getAveraged(sessionId: number, only?: Iterable<number>): Averaged[] {
    const spikeK = this.getSettings(sessionId).spikeK;
    type StatRow = { run: number; channel: string; spike_k: number; mean: number | null; std: number | null; n: number; std_err: number | null; rejected: number };
    let runs = this.db.prepare('SELECT * FROM runs WHERE session_id = ? ORDER BY index_pos').all(sessionId) as RunDbRow[];
    let statRows: StatRow[];
    if (only === undefined) {
      statRows = this.db.prepare('SELECT run, channel, spike_k, mean, std, n, std_err, rejected FROM channel_stats WHERE session_id = ?').all(sessionId) as StatRow[];
    } else {
      const want = new Set(only);
      runs = runs.filter((r) => want.has(r.run));
      const q = this.db.prepare('SELECT run, channel, spike_k, mean, std, n, std_err, rejected FROM channel_stats WHERE session_id = ? AND run = ?');
      statRows = runs.flatMap((r) => q.all(sessionId, r.run) as StatRow[]);
    }
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
      // The cache is refreshed unless an import holds the database (then only computed).
      if (!this.importing && !this.readOnly) {
        this.db.transaction(() => {
          for (const a of fresh.values()) this.putStats(sessionId, a, spikeK, true);
        }).immediate();
      }
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

  /** Store a session parsed in memory (dropped files, tests) in ONE transaction (file header). */
  importParsed(parsed: ParsedSession, actor: string, opts: { onProgress?: (p: ImportProgress) => void } = {}): ImportReport {
    checkParsed(parsed);
    const src = new Map(parsed.sources.map((s) => [s.name, s]));
    const w = this.beginImport({
      folder: parsed.folder, setup: parsed.setup, index: parsed.index,
      setupSource: src.get(SETUP_FILE)!, indexSource: src.get(INDEX_FILE)!,
    }, actor, { onProgress: opts.onProgress, ownConnection: false });
    try {
      if (!w.refused) {
        // Progress in bytes of samples (8 per value), as they are stored.
        const sampleBytes = (r: RawRun) => Object.values(r.channels).reduce((u, a) => u + a.byteLength, 0);
        w.bytes.total = parsed.runs.reduce((t, r) => t + sampleBytes(r), 0);
        const byFile = new Map<string, RawRun[]>();
        const rawOf = new Map(parsed.runs.map((r) => [r.info.run, r]));
        for (const i of parsed.index) {
          const raw = rawOf.get(i.run)!;
          const f = raw.info.file!;
          if (!byFile.has(f)) byFile.set(f, []);
          byFile.get(f)!.push(raw);
        }
        for (const [f, raws] of byFile) {
          const s = src.get(f)!;
          w.addFile({
            name: f, sha256: s.sha256, bytes: s.bytes, warnings: [],
            runs: raws.map((r) => {
              w.bytes.done += sampleBytes(r);
              return prepareRun(parsed.setup, r.info, r.channels, w.spikeK);
            }),
          });
        }
      }
      return w.finish(parsed.warnings ?? []);
    } catch (e) {
      w.abort();
      throw e;
    }
  }

  /**
   * Start an import: ONE transaction, on a connection of its own (ownConnection, the default: the
   * import may span many event-loop turns while files stream in, and the rest of the app keeps
   * reading the committed state meanwhile; writes through this Store are refused until it ends)
   * or on this Store's connection (a synchronous caller). Add the run logs one by one with
   * addFile(), then finish() commits, or abort() leaves the database as it was.
   */
  beginImport(start: ImportStart, actor: string, opts: { onProgress?: (p: ImportProgress) => void; ownConnection?: boolean } = {}): ImportWriter {
    this.assertWritable('import');
    let db = this.db;
    if (opts.ownConnection !== false) {
      db = new Database(this.file);
      configure(db);
      // Not at COMMIT: release() checkpoints (or leaves it to another thread).
      db.pragma('wal_autocheckpoint = 0');
    }
    const store = db === this.db ? this : new Store(this.file, db);
    try {
      db.exec('BEGIN IMMEDIATE');
    } catch (e) {
      if (db !== this.db) db.close();
      throw e;
    }
    this.importing = true;
    /** Called once the transaction has ended; `later`: the caller checkpoints on another thread
     *  (an import on this Store's own connection leaves it to SQLite's automatic checkpoint). */
    const release = (later: boolean) => {
      this.importing = false;
      if (db !== this.db) {
        try {
          // The import's pages are in the WAL: copy them into the database file now, while the
          // import is still the caller's work, rather than at some later small write.
          if (!later) db.pragma('wal_checkpoint(TRUNCATE)');
        } catch {
          /* another reader holds an old snapshot: the next checkpoint will do it */
        }
        db.close();
      }
    };
    try {
      return new ImportWriter(store, start, actor, opts.onProgress, release);
    } catch (e) {
      db.exec('ROLLBACK');
      release(false);
      throw e;
    }
  }

  private readonly background = new Set<Promise<unknown>>();

  /** Keep track of work on this database done on another thread (a checkpoint after an import). */
  track(p: Promise<unknown>): void {
    const q = p.catch(() => undefined).finally(() => this.background.delete(q));
    this.background.add(q);
  }

  /** Resolves once the work handed to track() has finished. */
  async settled(): Promise<void> {
    while (this.background.size) await Promise.all([...this.background]);
  }

  /** Whether an import transaction is open on this database through this Store. */
  get importInProgress(): boolean {
    return this.importing;
  }

  private importing = false;

  /** Writes are refused while an import holds the database (they would wait for it, blocking). */
  assertWritable(what: string): void {
    if (this.readOnly) throw new StoreReadOnlyError(this.file, 'was opened for reading only', what);
    if (this.importing) {
      throw new StoreBusyError(`${what}: an import into this database is in progress; try again when it has finished`);
    }
  }

  /** (import) The stored samples of a run equal these prepared ones, bit for bit. */
  sameSamples(sessionId: number, run: number, prepared: PreparedRun): boolean {
    const rows = this.db.prepare('SELECT channel, dtype, n, data, dec_exp, unit_factor FROM samples WHERE session_id = ? AND run = ?').all(sessionId, run) as SampleRow[];
    if (rows.length !== prepared.names.length) return false;
    const k = new Map(prepared.names.map((nm, i) => [nm, i]));
    return rows.every((r) => {
      const i = k.get(r.channel);
      if (i === undefined) return false;
      const p = prepared.parts[i];
      const a = decodeSamples(p.dtype, prepared.bytes.subarray(p.offset, p.offset + p.length), p.n, p.decExp, p.factor);
      const b = samplesOfRow(r);
      if (a.length !== b.length) return false;
      return Buffer.from(a.buffer, a.byteOffset, a.byteLength).equals(Buffer.from(b.buffer, b.byteOffset, b.byteLength));
    });
  }

  /** (import) Source row of a file. */
  addSource(sessionId: number, s: SourceInfo, role: 'setup' | 'index' | 'runs', at: string): number {
    return Number(
      this.db.prepare('INSERT INTO source_files (session_id, name, role, sha256, bytes, imported_at) VALUES (?, ?, ?, ?, ?, ?)')
        .run(sessionId, s.name, role, s.sha256, s.bytes, at).lastInsertRowid,
    );
  }

  /** (import) The source row of a file name with these bytes, if stored before. */
  sourceWithHash(sessionId: number, name: string, sha256: string): number | undefined {
    const r = this.db.prepare('SELECT id FROM source_files WHERE session_id = ? AND name = ? AND sha256 = ?').get(sessionId, name, sha256) as { id: number } | undefined;
    return r?.id;
  }

  /** (import) Latest source row of a file name. */
  latestSource(sessionId: number, name: string): { id: number; sha256: string; bytes: number } | undefined {
    return this.db.prepare('SELECT id, sha256, bytes FROM source_files WHERE session_id = ? AND name = ? ORDER BY id DESC LIMIT 1').get(sessionId, name) as
      | { id: number; sha256: string; bytes: number }
      | undefined;
  }

  /** (import) Store one prepared run: its index row, packed samples and statistics. */
  insertRun(sessionId: number, p: PreparedRun, sourceId: number | null, indexPos: number, spikeK: number): void {
    const i = p.info;
    this.db.prepare(`INSERT INTO runs (session_id, run, kind, time, alpha_deg, baro, temperature_c, humidity, file, source_id, samples, index_pos)
      VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`)
      .run(sessionId, i.run, i.kind, i.time, i.alphaDeg, i.baro, i.temperatureC, i.humidity, i.file ?? null, sourceId, p.n, indexPos);
    const ins = this.db.prepare('INSERT INTO samples (session_id, run, channel, dtype, n, data, dec_exp, unit_factor) VALUES (?, ?, ?, ?, ?, ?, ?, ?)');
    const buf = Buffer.from(p.bytes.buffer, p.bytes.byteOffset, p.bytes.byteLength);
    p.parts.forEach((part, k) => {
      ins.run(sessionId, i.run, p.names[k], part.dtype, part.n, buf.subarray(part.offset, part.offset + part.length), part.decExp, part.factor);
    });
    this.putStats(sessionId, { info: i, stats: p.stats }, spikeK, false);
  }

  /** (import) Replace a stored run's samples and statistics by a grown log's (the index row and
   *  the reductions stay: the reductions are history, and main/repair.ts sees them as older). */
  replaceRun(sessionId: number, p: PreparedRun, sourceId: number, spikeK: number): void {
    const i = p.info;
    this.db.prepare('DELETE FROM samples WHERE session_id = ? AND run = ?').run(sessionId, i.run);
    this.db.prepare('DELETE FROM channel_stats WHERE session_id = ? AND run = ?').run(sessionId, i.run);
    this.db.prepare('UPDATE runs SET source_id = ?, samples = ? WHERE session_id = ? AND run = ?').run(sourceId, p.n, sessionId, i.run);
    const ins = this.db.prepare('INSERT INTO samples (session_id, run, channel, dtype, n, data, dec_exp, unit_factor) VALUES (?, ?, ?, ?, ?, ?, ?, ?)');
    const buf = Buffer.from(p.bytes.buffer, p.bytes.byteOffset, p.bytes.byteLength);
    p.parts.forEach((part, k) => {
      ins.run(sessionId, i.run, p.names[k], part.dtype, part.n, buf.subarray(part.offset, part.offset + part.length), part.decExp, part.factor);
    });
    this.putStats(sessionId, { info: i, stats: p.stats }, spikeK, false);
  }

  /** (import) One audit row. */
  auditImport(actor: string, sessionId: number, detail: unknown): void {
    this.audit(actor, 'import', sessionId, null, detail);
  }

  // ------------------------------------------------------------------ results

  /** Store reductions (one transaction, one audit entry); history is kept. Returns the result ids. */
  saveResults(sessionId: number, results: RunResult[], actor: string): number[] {
    this.assertWritable('saveResults');
    this.assertSession(sessionId);
    const kinds = new Map((this.db.prepare('SELECT run, kind FROM runs WHERE session_id = ?').all(sessionId) as { run: number; kind: RunKind }[]).map((r) => [r.run, r.kind]));
    for (const r of results) checkResult(r, kinds, sessionId);
    const ins = this.db.prepare(`INSERT INTO reductions (session_id, run, reduced_at, core_version, actor, audit_id, settings_json, result_json,
      q, re, v, cl, cl_mom, cl_wall, cd, cdp, cmc4, gamma_pressure, gamma_momentum, alpha_corr_deg, flag_count, digest_json)
      VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`);
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
            dbNum(c.q), dbNum(c.Re), dbNum(c.V), dbNum(c.cl), dbNum(correctedMomentumCl(r)), dbNum((r.walls?.clWall ?? NaN) * (1 - r.correction.sigma - 2 * r.correction.eps)), dbNum(c.cd), dbNum(c.cdp),
            dbNum(c.cmc4), dbNum((r.circulationCorrected ?? r.circulation).pressure), dbNum((r.circulationCorrected ?? r.circulation).momentum), dbNum(c.alphaDeg), r.flags.length,
            encodeJson(resultDigest(r))).lastInsertRowid,
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

  /** What each data run's latest result was computed from (its settings and when it was reduced)
   *  and when each run was stored: the inputs of the stale rule (app/stale.ts via main/stale.ts). */
  reductionBasis(sessionId: number): { results: Map<number, { settings: Partial<Settings>; reducedAt: string }>; storedAt: Map<number, string | null> } {
    this.assertSession(sessionId);
    const res = this.db.prepare('SELECT run, settings_json, reduced_at FROM latest_reductions WHERE session_id = ?').all(sessionId) as
      { run: number; settings_json: string; reduced_at: string }[];
    const stored = this.db.prepare('SELECT r.run, s.imported_at FROM runs r LEFT JOIN source_files s ON s.id = r.source_id WHERE r.session_id = ?').all(sessionId) as
      { run: number; imported_at: string | null }[];
    return {
      results: new Map(res.map((r) => [r.run, { settings: decodeJson<Partial<Settings>>(r.settings_json), reducedAt: r.reduced_at }])),
      storedAt: new Map(stored.map((r) => [r.run, r.imported_at])),
    };
  }

  /** Latest result of every reduced run, index order (optional extra). */
  latestResults(sessionId: number): RunResult[] {
    this.assertSession(sessionId);
    const rows = this.db.prepare(`SELECT lr.result_json FROM latest_reductions lr JOIN runs r ON r.session_id = lr.session_id AND r.run = lr.run
      WHERE lr.session_id = ? ORDER BY r.index_pos`).all(sessionId) as { result_json: string }[];
    return rows.map((r) => decodeJson<RunResult>(r.result_json));
  }

  /** Digest of the latest result of every reduced run, index order (the session summary's input). */
  latestDigests(sessionId: number): ResultDigest[] {
    this.assertSession(sessionId);
    const rows = this.db.prepare(`SELECT lr.digest_json, CASE WHEN lr.digest_json IS NULL THEN lr.result_json END AS result_json
      FROM latest_reductions lr JOIN runs r ON r.session_id = lr.session_id AND r.run = lr.run
      WHERE lr.session_id = ? ORDER BY r.index_pos`).all(sessionId) as { digest_json: string | null; result_json: string | null }[];
    return rows.map((r) => (r.digest_json !== null ? decodeJson<ResultDigest>(r.digest_json) : resultDigest(decodeJson<RunResult>(r.result_json!))));
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
// Import transaction

/** A file of the session as read: name, SHA-256 of its bytes, size. */
export interface SourceInfo { name: string; sha256: string; bytes: number }

/** What an import knows before any run log is read. */
export interface ImportStart {
  folder: string | null;
  setup: Setup;
  index: RunInfo[];
  setupSource: SourceInfo;
  indexSource: SourceInfo;
}

/** Thrown for a write while an import holds the database (handlers map it to 'busy'). */
export class StoreBusyError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'StoreBusyError';
  }
}

/**
 * One import transaction (Store.beginImport). The rules of the file header: a new session takes
 * everything; for a session already stored, setup.json must be the same and the stored index the
 * start of the new one (else the import is refused: `refused`, nothing written), a run log with the
 * same bytes adds only its runs not stored yet, one whose bytes changed is compared sample by
 * sample with the stored runs and, if any differs, reported in changedFiles and not merged.
 */
export class ImportWriter {
  /** Spike threshold the run statistics must be computed with. */
  readonly spikeK: number;
  /** The import is refused before any run log is needed (setup.json or runs.csv changed). */
  readonly refused: boolean = false;
  /** Bytes read so far and in all (kept up to date by the caller, for progress). */
  readonly bytes = { done: 0, total: 0 };

  private readonly report: ImportReport = { sessionId: 0, created: false, importedRuns: [], unchangedFiles: [], changedFiles: [], skippedRuns: [], warnings: [] };
  /** Run logs the caller found to have only grown since they were stored (markGrown). */
  private readonly grown = new Set<string>();
  private readonly replaced = new Set<number>();
  private readonly sid: number;
  private readonly at = now();
  private readonly pos: Map<number, number>;
  private storedRuns: RunDbRow[] = [];
  private storedSet = new Set<number>();
  private posBase = 0;
  private indexChanged = false;
  private newSources = 0;
  private readonly accepted = new Set<number>();
  private readonly sources: SourceInfo[];
  private readonly warnings: string[] = [];
  private ended = false;

  constructor(
    private readonly store: Store,
    private readonly start: ImportStart,
    private readonly actor: string,
    private readonly onProgress: ((p: ImportProgress) => void) | undefined,
    private readonly release: (later: boolean) => void,
  ) {
    const db = store.db;
    const s = start.setup;
    this.pos = new Map(start.index.map((i, k) => [i.run, k]));
    this.sources = [start.setupSource, start.indexSource];
    let sid: number | undefined;
    if (start.folder !== null) {
      sid = (db.prepare('SELECT id FROM sessions WHERE folder = ? ORDER BY id DESC LIMIT 1').get(start.folder) as { id: number } | undefined)?.id;
    } else {
      sid = (db.prepare('SELECT session_id AS id FROM setups WHERE sha256 = ? ORDER BY session_id DESC LIMIT 1').get(start.setupSource.sha256) as { id: number } | undefined)?.id;
    }
    if (sid === undefined) {
      sid = Number(
        db.prepare('INSERT INTO sessions (title, date, facility, model, folder, created_at, imported_at) VALUES (?, ?, ?, ?, ?, ?, ?)')
          .run(s.session.title, s.session.date, s.facility.name, s.model.name, start.folder, this.at, this.at).lastInsertRowid,
      );
      db.prepare('INSERT INTO setups (session_id, setup_json, sha256) VALUES (?, ?, ?)').run(sid, encodeJson(s), start.setupSource.sha256);
      store.addSource(sid, start.setupSource, 'setup', this.at);
      store.addSource(sid, start.indexSource, 'index', this.at);
      this.report.created = true;
      this.spikeK = resolveSettings(s).spikeK;
    } else {
      const stored = db.prepare('SELECT sha256 FROM setups WHERE session_id = ?').get(sid) as { sha256: string };
      this.storedRuns = db.prepare('SELECT * FROM runs WHERE session_id = ? ORDER BY index_pos').all(sid) as RunDbRow[];
      this.storedSet = new Set(this.storedRuns.map((r) => r.run));
      this.spikeK = store.getSettings(sid).spikeK;
      // The stored index must be the start of the new one, line for line.
      const grown = this.storedRuns.length <= start.index.length && this.storedRuns.every((r, i) => sameInfo(infoOf(r), start.index[i]));
      if (stored.sha256 !== start.setupSource.sha256 || !grown) {
        this.refused = true;
        this.report.changedFiles.push(stored.sha256 !== start.setupSource.sha256 ? SETUP_FILE : INDEX_FILE);
        this.report.skippedRuns = start.index.map((i) => i.run);
        if (stored.sha256 === start.setupSource.sha256) this.report.unchangedFiles.push(SETUP_FILE);
      } else {
        this.report.unchangedFiles.push(SETUP_FILE);
        // Unchanged when these bytes are the latest stored copy, or were stored once before under
        // this name (A → B → A again: the earlier source row serves, as for run logs).
        this.indexChanged =
          store.latestSource(sid, INDEX_FILE)?.sha256 !== start.indexSource.sha256 &&
          store.sourceWithHash(sid, INDEX_FILE, start.indexSource.sha256) === undefined;
        if (!this.indexChanged) this.report.unchangedFiles.push(INDEX_FILE);
        else store.addSource(sid, start.indexSource, 'index', this.at);
        this.posBase = (db.prepare('SELECT COALESCE(MAX(index_pos), -1) + 1 AS p FROM runs WHERE session_id = ?').get(sid) as { p: number }).p;
      }
    }
    this.sid = sid;
    this.report.sessionId = sid;
    if (!this.refused) onProgress?.({ phase: 'store', bytesDone: 0, bytesTotal: 0, runsDone: 0, runsTotal: start.index.length });
  }

  /**
   * Whether a run log can be taken as unchanged without parsing it: the session was stored before,
   * the latest stored copy of this file has `bytes` bytes and every run the index places in it is
   * stored already. The caller then only hashes the file and hands addFile() no runs if the hash
   * matches (`sha256` here), which is what live mode needs to stay cheap as the day grows.
   */
  unchangedCandidate(name: string, bytes: number, runs: number[]): { sha256: string } | null {
    if (this.refused || this.report.created) return null;
    if (!runs.every((r) => this.storedSet.has(r))) return null;
    const prev = this.store.latestSource(this.sid, name);
    return prev && prev.bytes === bytes ? { sha256: prev.sha256 } : null;
  }

  /**
   * The latest stored copy of a run log when the file now on disk is larger (it may have grown by
   * appending); null otherwise. The caller hashes the file's first `bytes` bytes and, if that hash
   * is `sha256`, calls markGrown(name) before addFile().
   */
  grownCandidate(name: string, bytes: number): { sha256: string; bytes: number } | null {
    if (this.refused || this.report.created) return null;
    const prev = this.store.latestSource(this.sid, name);
    return prev && prev.bytes < bytes ? { sha256: prev.sha256, bytes: prev.bytes } : null;
  }

  /** This run log's stored bytes are the start of the new file (see grownCandidate). */
  markGrown(name: string): void {
    this.grown.add(name);
  }

  /** Store (or compare, or refuse, or replace a grown log's runs) the runs of one run log. */
  addFile(f: PreparedFile): void {
    if (this.ended) throw new Error('ImportWriter: addFile() after the import ended');
    if (this.refused) return;
    // SQLite ends a transaction itself on some errors (a full disk): nothing may then be written
    // outside it, one statement at a time.
    if (!this.store.db.inTransaction) throw new Error(`import into ${this.store.file}: the import transaction ended before ${f.name} could be stored; nothing of this import was kept`);
    const { store, sid } = this;
    this.sources.push({ name: f.name, sha256: f.sha256, bytes: f.bytes });
    this.warnings.push(...f.warnings);
    let sourceId: number;
    let take: PreparedRun[];
    if (this.report.created) {
      sourceId = store.addSource(sid, f, 'runs', this.at);
      take = f.runs;
    } else {
      const fresh = f.runs.filter((r) => !this.storedSet.has(r.info.run));
      const prev = store.latestSource(sid, f.name);
      if (prev && prev.sha256 === f.sha256) {
        this.report.unchangedFiles.push(f.name);
        sourceId = prev.id;
      } else {
        // Bytes differ (or a new file): compare the samples of the runs already stored from it.
        const same = this.storedRuns.filter((r) => r.file === f.name).every((r) => {
          const p = f.runs.find((x) => x.info.run === r.run);
          return p !== undefined && store.sameSamples(sid, r.run, p);
        });
        if (!same) {
          const storedHere = this.storedRuns.filter((r) => r.file === f.name);
          const all = storedHere.every((r) => f.runs.some((x) => x.info.run === r.run));
          if (!this.grown.has(f.name) || !all) {
            this.report.changedFiles.push(f.name);
            return;
          }
          // The log only grew since it was stored: its runs take the grown log's samples.
          const earlier = store.sourceWithHash(sid, f.name, f.sha256);
          sourceId = earlier ?? store.addSource(sid, f, 'runs', this.at);
          if (earlier === undefined) this.newSources++;
          for (const r of storedHere) {
            const p = f.runs.find((x) => x.info.run === r.run)!;
            if (store.sameSamples(sid, r.run, p)) continue;
            store.replaceRun(sid, p, sourceId, this.spikeK);
            this.replaced.add(r.run);
          }
          for (const p of fresh) this.insertFresh(p, sourceId, f.name);
          return;
        }
        if (prev && fresh.length === 0) this.report.unchangedFiles.push(f.name); // same samples, other bytes (e.g. line endings)
        // Bytes stored once before under this name (A → B → A again): that source row serves.
        const earlier = store.sourceWithHash(sid, f.name, f.sha256);
        if (earlier !== undefined) sourceId = earlier;
        else {
          sourceId = store.addSource(sid, f, 'runs', this.at);
          this.newSources++;
        }
      }
      take = fresh;
    }
    for (const p of take) this.insertFresh(p, sourceId, f.name);
  }

  private insertFresh(p: PreparedRun, sourceId: number, file: string): void {
    const k = this.pos.get(p.info.run);
    if (k === undefined) throw new Error(`ImportWriter: run ${p.info.run} is not in the index`);
    const indexPos = this.report.created ? k : this.posBase + (k - this.storedRuns.length);
    this.store.insertRun(this.sid, p, sourceId, indexPos, this.spikeK);
    this.accepted.add(p.info.run);
    this.onProgress?.({
      phase: 'store', file, bytesDone: this.bytes.done, bytesTotal: this.bytes.total,
      runsDone: this.accepted.size, runsTotal: this.start.index.length,
    });
  }

  /** True once finish() has committed. */
  committed = false;

  /**
   * Commit (or, when nothing changed or the import was refused, leave the database untouched).
   * `checkpoint: 'later'`: the caller copies the WAL into the database file on another thread
   * after the commit (see ImportPool.checkpointAndClose), so neither this COMMIT nor the closing
   * of the import's connection does it here.
   */
  finish(warnings: string[] = [], opts: { checkpoint?: 'now' | 'later' } = {}): ImportReport {
    if (this.ended) throw new Error('ImportWriter: finish() after the import ended');
    const r = this.report;
    const index = this.start.index;
    r.warnings = [...new Set([...warnings, ...this.warnings])];
    try {
      if (this.refused) {
        this.rollback();
        return r;
      }
      if (this.replaced.size) r.replacedRuns = index.map((i) => i.run).filter((run) => this.replaced.has(run));
      r.importedRuns = index.map((i) => i.run).filter((run) => this.accepted.has(run) || this.replaced.has(run));
      r.skippedRuns = index.map((i) => i.run).filter((run) => !this.accepted.has(run) && !this.replaced.has(run));
      if (r.created && r.skippedRuns.length) {
        throw new Error(`import: no samples were read for run${r.skippedRuns.length > 1 ? 's' : ''} ${r.skippedRuns.join(', ')} of the index`);
      }
      if (!r.created && this.accepted.size === 0 && this.replaced.size === 0 && this.newSources === 0 && !this.indexChanged) {
        this.rollback();
        return r;
      }
      if (!r.created) this.store.db.prepare('UPDATE sessions SET imported_at = ? WHERE id = ?').run(this.at, this.sid);
      this.store.auditImport(this.actor, this.sid, {
        created: r.created,
        folder: this.start.folder,
        runs: r.importedRuns,
        ...(r.replacedRuns?.length ? { replacedRuns: r.replacedRuns, why: 'the run log grew after it was imported; its samples were replaced' } : {}),
        files: this.sources.filter((s) => !r.changedFiles.includes(s.name)),
        changedFiles: r.changedFiles,
        warnings: r.warnings,
      });
      this.store.db.exec('COMMIT');
      this.committed = true;
      this.ended = true;
      this.release(opts.checkpoint === 'later');
      return r;
    } catch (e) {
      if (!this.ended) this.abort();
      throw e;
    }
  }

  /** Leave the database as it was before the import. */
  abort(): void {
    if (this.ended) return;
    this.rollback();
  }

  private rollback(): void {
    this.ended = true;
    try {
      if (this.store.db.inTransaction) this.store.db.exec('ROLLBACK');
    } finally {
      this.release(false);
    }
  }
}

/** What the session summary needs of a result (ResultDigest). */
export function resultDigest(r: RunResult): ResultDigest {
  const intervals = polarIntervals(r);
  return {
    run: r.run,
    corrected: r.corrected,
    uncorrected: r.uncorrected,
    correction: r.correction,
    clMomentum: r.clMomentum,
    flags: r.flags,
    ...(r.dropped ? { dropped: r.dropped.map((d) => ({ id: d.id, reason: d.reason, by: d.by })) } : {}),
    ...(intervals ? { intervals } : {}),
    rows: r.rows.map((x) => ({ row: x.row, z: x.z, cl: x.cl })),
    settings: { spanSpreadTol: r.settings.spanSpreadTol },
  };
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
