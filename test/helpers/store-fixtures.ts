// Temp folders, mini session folders on disk and database snapshots for the store/import tests.
import { createHash } from 'node:crypto';
import { cpSync, existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { RawRun, RunInfo, Setup } from '../../app/types';
import { writeSessionFolder, type WriteOptions } from '../../main/logwriter';
import type { Store } from '../../main/store';
import { miniRuns, miniSetup, type MiniOptions, type MiniRunsOptions } from './mini-session';

const dirs: string[] = [];
export function tempDir(prefix = 'rk-store-'): string {
  const d = mkdtempSync(join(tmpdir(), prefix));
  dirs.push(d);
  return d;
}
export function cleanupTempDirs(): void {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
}

export interface MiniFolder { dir: string; setup: Setup; index: RunInfo[]; runs: RawRun[] }

/** A mini session written to `dir` through the log writer. */
export function miniFolder(dir: string, o: { setup?: MiniOptions; runs?: MiniRunsOptions; write?: WriteOptions } = {}): MiniFolder {
  const setup = miniSetup(o.setup);
  const { index, runs } = miniRuns(setup, o.runs);
  writeSessionFolder(dir, setup, index, runs, o.write);
  return { dir, setup, index, runs };
}

export function copyFolder(from: string, to: string): string {
  cpSync(from, to, { recursive: true });
  return to;
}

export function editFile(path: string, f: (text: string) => string): void {
  writeFileSync(path, f(readFileSync(path, 'utf8')));
}

/** SHA-256 of the database file and its -wal after a TRUNCATE checkpoint (the WAL is then empty),
 *  so two snapshots are equal exactly when the committed database bytes are equal. */
export function dbSnapshot(store: Store): string {
  store.db.pragma('wal_checkpoint(TRUNCATE)');
  const h = createHash('sha256');
  h.update(readFileSync(store.file));
  const wal = `${store.file}-wal`;
  h.update(existsSync(wal) ? readFileSync(wal) : Buffer.alloc(0));
  return h.digest('hex');
}

/** Every table's rows (BLOBs as hashes), for readable comparisons. */
export function dbContents(store: Store): Record<string, unknown[]> {
  const tables = store.db.prepare("SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name").all() as { name: string }[];
  const out: Record<string, unknown[]> = {};
  for (const { name } of tables) {
    out[name] = (store.db.prepare(`SELECT * FROM ${name} ORDER BY rowid`).all() as Record<string, unknown>[]).map((r) =>
      Object.fromEntries(Object.entries(r).map(([k, v]) => [k, Buffer.isBuffer(v) ? createHash('sha256').update(v).digest('hex') : v])),
    );
  }
  return out;
}

/** dbContents minus what differs between two imports of the same folder (times, folder path). */
export function comparableContents(store: Store): Record<string, unknown[]> {
  const strip = (rows: unknown[]) => rows.map((r) => {
    const o = { ...(r as Record<string, unknown>) };
    for (const k of ['imported_at', 'created_at', 'at', 'folder', 'detail_json', 'applied_at']) delete o[k];
    return o;
  });
  return Object.fromEntries(Object.entries(dbContents(store)).map(([k, v]) => [k, strip(v)]));
}
