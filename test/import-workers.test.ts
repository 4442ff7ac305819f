// Large imports read, parse, average and pack run logs on worker threads (main/importPool.ts);
// small ones do the same on the calling thread. Both must store exactly the same database
// contents, and a bad file read on a worker must fail the import with the same message (file,
// line, channel) and leave the database as it was.
import { statSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { Store } from '../main/store';
import { importSessionFolder, readSessionFolder } from '../main/import';
import { ImportPool, setImportWorkerScript } from '../main/importPool';
import { cleanupTempDirs, comparableContents, dbSnapshot, editFile, miniFolder, tempDir } from './helpers/store-fixtures';

afterAll(() => cleanupTempDirs());

/** Everything stored, minus the times and folder (which differ between two imports). */
const stored = comparableContents;

describe('import on worker threads', () => {
  it('stores the same samples, statistics and runs as an import on the calling thread', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { runs: { dataRuns: 12, samples: 300 }, write: { digits: 6 } });
    const here = Store.open(join(dir, 'here.sqlite'));
    const there = Store.open(join(dir, 'there.sqlite'));
    const a = await importSessionFolder(here, f.dir, { actor: 'x', workers: 0 });
    const b = await importSessionFolder(there, f.dir, { actor: 'x', workers: 2 });
    expect(b).toEqual(a);
    expect(stored(there)).toEqual(stored(here));
    // The 6-digit log packs as decimal mantissas.
    const kinds = there.db.prepare('SELECT dtype, COUNT(*) AS n FROM samples GROUP BY dtype').all() as { dtype: string; n: number }[];
    expect(kinds.find((k) => k.dtype === 'dec')?.n).toBeGreaterThan(0);
    // And both are the parser's own doubles (readSessionFolder packs nothing): the buffers a run is
    // packed in go back to the threads once stored and are packed into again, never too early.
    const parsed = await readSessionFolder(f.dir);
    for (const raw of parsed.runs) {
      for (const c of f.setup.channels) {
        expect(there.getSamples(1, raw.info.run, c.name)).toEqual(raw.channels[c.name]);
        expect(here.getSamples(1, raw.info.run, c.name)).toEqual(raw.channels[c.name]);
      }
    }
    here.close();
    there.close();
  });

  it('the WAL is copied into the database file: by the import itself on the calling thread, after it by a worker thread', async () => {
    // Common practice, no source: SQLite's WAL keeps committed pages until a checkpoint copies them
    // into the database file (sqlite.org/wal.html); the import connection's automatic checkpoint
    // is off, so the file only grows if the import's own checkpoint ran.
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { runs: { dataRuns: 6, samples: 400 } });
    for (const workers of [0, 2]) {
      const file = join(dir, `db${workers}.sqlite`);
      const store = Store.open(file);
      const before = statSync(file).size;
      await importSessionFolder(store, f.dir, { workers });
      await store.settled();
      const blobs = (store.db.prepare('SELECT SUM(length(data)) AS b FROM samples').get() as { b: number }).b;
      expect(blobs).toBeGreaterThan(100_000);
      expect(statSync(file).size - before).toBeGreaterThanOrEqual(blobs);
      store.close();
    }
  });

  it('a checkpoint that cannot run is reported, not thrown (SQLite then checkpoints at a later write)', async () => {
    const dir = tempDir();
    const pool = new ImportPool(2);
    const r = await pool.checkpointAndClose(join(dir, 'no-such.sqlite'));
    expect(r.ok).toBe(false);
    expect(r.error).toMatch(/no-such\.sqlite|unable to open|does not exist/i);
  });

  it('a bad cell found on a worker fails the import with file, line and channel; nothing is stored', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { runs: { dataRuns: 5, samples: 50 } });
    const bad = f.index[4].file!;
    editFile(join(f.dir, bad), (t) => {
      const lines = t.split('\n');
      const head = lines[0].split(',');
      const col = head.indexOf('W_F01');
      const cells = lines[7].split(',');
      cells[col] = '12..5';
      lines[7] = cells.join(',');
      return lines.join('\n');
    });
    const store = Store.open(join(dir, 'db.sqlite'));
    const before = dbSnapshot(store);
    await expect(importSessionFolder(store, f.dir, { workers: 2 })).rejects.toThrow(`${bad} line 8, channel W_F01: expected a number, found "12..5"`);
    expect(dbSnapshot(store)).toBe(before);
    // And the store is free again for the next import.
    expect(store.importInProgress).toBe(false);
    store.close();
  });

  it('worker threads that cannot start: the import reads on the calling thread instead, same result', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { runs: { dataRuns: 3, samples: 60 }, write: { digits: 6 } });
    const here = Store.open(join(dir, 'here.sqlite'));
    const there = Store.open(join(dir, 'there.sqlite'));
    await importSessionFolder(here, f.dir, { actor: 'x', workers: 0 });
    setImportWorkerScript(join(dir, 'no-such-worker.mjs'));
    try {
      const rep = await importSessionFolder(there, f.dir, { actor: 'x', workers: 2 });
      expect(rep.importedRuns).toEqual(f.index.map((i) => i.run));
    } finally {
      setImportWorkerScript(null);
    }
    expect(stored(there)).toEqual(stored(here));
    here.close();
    there.close();
  });

  it('while an import is in progress, writes through the store are refused at once, reads see the committed state', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { runs: { dataRuns: 3, samples: 40 } });
    const g = miniFolder(join(dir, 't'), { runs: { dataRuns: 3, samples: 40, seed: 4 } });
    const store = Store.open(join(dir, 'db.sqlite'));
    await importSessionFolder(store, f.dir);
    let checked = false;
    await importSessionFolder(store, g.dir, {
      workers: 0,
      onProgress: (p) => {
        if (checked || p.phase !== 'store' || p.runsDone !== 1) return;
        checked = true;
        expect(store.importInProgress).toBe(true);
        expect(store.listSessions().map((s) => s.id)).toEqual([1]); // the new session is not committed yet
        expect(() => store.setTapBad(1, f.setup.taps[0].id, true, 'x')).toThrow(/an import into this database is in progress/);
      },
    });
    expect(checked).toBe(true);
    expect(store.listSessions().map((s) => s.id)).toEqual([1, 2]);
    store.setTapBad(1, f.setup.taps[0].id, true, 'x'); // free again
    store.close();
  });
});
