// Crash safety: a child process importing a large session is killed with SIGKILL in the middle of
// the import transaction. The database must then open cleanly (integrity_check = ok) and hold
// either none or all of that import — here none, since the kill lands mid-transaction — while the
// session committed before is intact.
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, expect, it } from 'vitest';
import { Store } from '../main/store';
import { cleanupTempDirs, tempDir } from './helpers/store-fixtures';
import { parsedMini } from './fixtures/crash-import';
import { killAtMarker } from './helpers/robust';

afterAll(() => cleanupTempDirs());

const REPO = fileURLToPath(new URL('..', import.meta.url));
const FIXTURE = fileURLToPath(new URL('./fixtures/crash-import.ts', import.meta.url));

it('SIGKILL mid-import leaves a consistent database with none of that import', async () => {
  const db = join(tempDir(), 'crash.sqlite');
  const { out, signal } = await killAtMarker(FIXTURE, [db], 'B-started', REPO);
  expect(signal).toBe('SIGKILL');
  expect(out).toContain('A-committed');
  expect(out).not.toContain('B-committed');
  const [, runsTotal, bytesTotal] = /B-started (\d+) (\d+)/.exec(out)!.map(Number);
  expect(bytesTotal).toBeGreaterThan(100e6); // a transaction big enough to be killed inside

  const store = Store.open(db);
  expect(store.db.pragma('integrity_check', { simple: true })).toBe('ok');
  expect(store.db.pragma('foreign_key_check')).toEqual([]);
  const sessions = store.listSessions();
  expect(sessions.map((s) => s.title)).toEqual(['A']);
  // Session A intact: every run and every channel's samples.
  const a = parsedMini('A', 3, 50, 4);
  expect(store.listRuns(sessions[0].id).map((r) => r.run)).toEqual(a.index.map((i) => i.run));
  for (const raw of a.runs) for (const c of a.setup.channels) expect(store.getSamples(sessions[0].id, raw.info.run, c.name)).toEqual(raw.channels[c.name]);
  // Nothing of B: no session, no runs, no samples, no sources, no audit row.
  const counts = store.db.prepare(`SELECT (SELECT COUNT(*) FROM runs) AS runs, (SELECT COUNT(*) FROM samples) AS samples,
    (SELECT COUNT(*) FROM source_files) AS sources, (SELECT COUNT(*) FROM audit) AS audit`).get();
  expect(counts).toEqual({ runs: a.index.length, samples: a.index.length * a.setup.channels.length, sources: 2 + a.index.length, audit: 1 });
  expect(runsTotal).toBeGreaterThan(1);
  // The database is usable: a smaller B imports now.
  const rep = store.importParsed(parsedMini('B', 2, 100, 20), 'after-crash');
  expect(rep.created).toBe(true);
  store.close();
}, 90_000);
