// The store itself on real SQLite files: migrations, pragmas, append-only history, settings,
// tap overrides, reviews, not-found errors.
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MIGRATIONS, NotFoundError, SCHEMA_VERSION, Store } from '../main/store';
import { importSessionFolder } from '../main/import';
import { DEFAULT_SETTINGS } from '../app/types';
import { cleanupTempDirs, miniFolder, tempDir } from './helpers/store-fixtures';

let dir: string;
let store: Store;
beforeAll(async () => {
  dir = tempDir();
  store = Store.open(join(dir, 'nested', 'rakeline.sqlite'));
  await importSessionFolder(store, miniFolder(join(dir, 's')).dir, { actor: 'M. Okonkwo' });
});
afterAll(() => {
  store.close();
  cleanupTempDirs();
});

describe('schema and pragmas', () => {
  it('migrates a new file to the latest version, with WAL and foreign keys on', () => {
    expect(store.schemaVersion()).toBe(SCHEMA_VERSION);
    expect(store.db.prepare('SELECT version, name FROM schema_migrations ORDER BY version').all()).toEqual(MIGRATIONS.map((m) => ({ version: m.version, name: m.name })));
    expect(store.db.pragma('journal_mode', { simple: true })).toBe('wal');
    expect(store.db.pragma('foreign_keys', { simple: true })).toBe(1);
  });

  it('reopening does not re-run migrations; a newer schema is refused', () => {
    const file = join(dir, 'other.sqlite');
    Store.open(file).close();
    const s = Store.open(file);
    expect(s.db.prepare('SELECT COUNT(*) AS n FROM schema_migrations').get()).toEqual({ n: MIGRATIONS.length });
    s.close();
    const raw = new Database(file);
    raw.pragma('user_version = 99');
    raw.close();
    expect(() => Store.open(file)).toThrow(new RegExp(`schema version 99 is newer than this Rakeline understands \\(${SCHEMA_VERSION}\\)`));
  });

  it('a version-1 file (samples as doubles) migrates and its samples read back unchanged', () => {
    const file = join(dir, 'v1.sqlite');
    const raw = new Database(file);
    raw.pragma('journal_mode = WAL');
    raw.exec(MIGRATIONS[0].sql);
    raw.exec("CREATE TABLE schema_migrations (version INTEGER PRIMARY KEY, name TEXT NOT NULL, applied_at TEXT NOT NULL); INSERT INTO schema_migrations VALUES (1, 'initial schema', '2026-01-01')");
    raw.pragma('user_version = 1');
    raw.exec("INSERT INTO sessions (title, date, facility, model, folder, created_at, imported_at) VALUES ('old', '2026-01-01', 'f', 'm', NULL, 'x', 'x')");
    raw.exec("INSERT INTO runs VALUES (1, 1, 'zero', '2026-01-01T08:00:00Z', 0, 101325, 20, 50, NULL, NULL, 3, 0)");
    const values = Float64Array.from([1.5, -0.1 + 0.2, Math.PI]);
    raw.prepare("INSERT INTO samples (session_id, run, channel, dtype, n, data) VALUES (1, 1, 'P1', 'f64le', 3, ?)").run(Buffer.from(values.buffer));
    raw.close();
    const s = Store.open(file);
    expect(s.schemaVersion()).toBe(SCHEMA_VERSION);
    expect(s.getSamples(1, 1, 'P1')).toEqual(values);
    expect(s.db.pragma('integrity_check', { simple: true })).toBe('ok');
    s.close();
  });

  it('foreign keys hold: no samples for a run that does not exist', () => {
    expect(() =>
      store.db.prepare("INSERT INTO samples (session_id, run, channel, dtype, n, data) VALUES (1, 999, 'x', 'f64le', 0, x'')").run(),
    ).toThrow(/FOREIGN KEY constraint failed/);
  });
});

describe('append-only history', () => {
  it('the audit trail refuses UPDATE and DELETE', () => {
    expect(store.auditTrail(1).length).toBeGreaterThan(0);
    expect(() => store.db.prepare("UPDATE audit SET actor = 'someone else'").run()).toThrow(/audit is append-only: UPDATE refused/);
    expect(() => store.db.prepare('DELETE FROM audit').run()).toThrow(/audit is append-only: DELETE refused/);
  });

  it('reviews, overrides and setting changes refuse UPDATE and DELETE too', () => {
    store.setReview(1, 2, 'accepted', 'looks fine', 'T. Lindqvist');
    store.setTapBad(1, 'U02', true, 'T. Lindqvist', 'blocked');
    store.updateSettings(1, { liftTolAbs: 0.03 }, 'T. Lindqvist');
    for (const t of ['reviews', 'tap_overrides', 'settings_changes']) {
      expect(() => store.db.prepare(`DELETE FROM ${t}`).run()).toThrow(new RegExp(`${t} is append-only: DELETE refused`));
    }
    expect(() => store.db.prepare("UPDATE reviews SET verdict = 'rejected'").run()).toThrow(/append-only/);
  });
});

describe('settings, tap overrides, reviews', () => {
  it('tap overrides and setting changes apply in the order they were made, each audited', () => {
    const dir2 = tempDir();
    const s = Store.open(join(dir2, 'db.sqlite'));
    return importSessionFolder(s, miniFolder(join(dir2, 's')).dir).then(() => {
      const base = s.getSettings(1);
      expect(base).toEqual({ ...DEFAULT_SETTINGS, spikeK: 5 });
      expect(s.setTapBad(1, 'U01', true, 'M. Okonkwo', 'no reading').badTaps).toEqual(['U01']);
      expect(s.updateSettings(1, { badTaps: ['U03'], liftTolRel: 0.05 }, 'M. Okonkwo', 'new list').badTaps).toEqual(['U03']);
      expect(s.setTapBad(1, 'L02', true, 'T. Lindqvist').badTaps).toEqual(['U03', 'L02']);
      const now = s.setTapBad(1, 'U03', false, 'T. Lindqvist', 'cleared after purge');
      expect(now.badTaps).toEqual(['L02']);
      expect(now.liftTolRel).toBe(0.05);
      expect(s.getSettings(1)).toEqual(now);
      expect(s.auditTrail(1).map((a) => [a.action, a.actor])).toEqual([
        ['import', 'import'],
        ['tap.bad', 'M. Okonkwo'],
        ['settings.update', 'M. Okonkwo'],
        ['tap.bad', 'T. Lindqvist'],
        ['tap.good', 'T. Lindqvist'],
      ]);
      expect(s.auditTrail(1)[4].detail).toEqual({ tapId: 'U03', bad: false, comment: 'cleared after purge' });
      expect(() => s.setTapBad(1, 'ZZ9', true, 'x')).toThrow(NotFoundError);
      expect(() => s.updateSettings(1, { spikeK: -1 }, 'x')).toThrow(/invalid settings: spikeK/);
      expect(() => s.updateSettings(1, { badTaps: ['nope'] }, 'x')).toThrow(/tap "nope" is not in the setup/);
      expect(() => s.updateSettings(1, { bogus: 1 } as never, 'x')).toThrow(/invalid settings/);
      s.close();
    });
  });

  it('the latest review is the one shown; clearing it leaves the history', () => {
    store.setReview(1, 3, 'accepted', 'ok', 'M. Okonkwo');
    store.setReview(1, 3, 'rejected', 'wake off the rake', 'T. Lindqvist');
    expect(store.getRun(1, 3).review).toMatchObject({ verdict: 'rejected', comment: 'wake off the rake', actor: 'T. Lindqvist' });
    store.setReview(1, 3, null, 'reconsidering', 'T. Lindqvist');
    expect(store.getRun(1, 3).review).toBeNull();
    const actions = store.auditTrail(1).filter((a) => a.run === 3).map((a) => a.action);
    expect(actions).toEqual(['review.accepted', 'review.rejected', 'review.clear']);
    expect(store.db.prepare('SELECT COUNT(*) AS n FROM reviews WHERE run = 3').get()).toEqual({ n: 3 });
  });

  it('unknown sessions and runs throw NotFoundError', () => {
    expect(() => store.getSession(42)).toThrow(NotFoundError);
    expect(() => store.getSession(42)).toThrow('unknown session 42');
    expect(() => store.getRun(1, 999)).toThrow('unknown run 999 in session 1');
    expect(() => store.getSamples(1, 2, 'nope')).toThrow('no samples of channel "nope" in run 2 of session 1');
    expect(() => store.setReview(1, 999, 'accepted', '', 'x')).toThrow(NotFoundError);
    expect(() => store.listRuns(7)).toThrow(NotFoundError);
  });
});
