// A reduction shared between the calling thread and one worker thread (main/reduceService.ts
// reduceBeside, `workers: 1`): the same pure core on both, so every stored number must be the one
// the calling thread alone gives (Object.is on every number of every result; common practice, no
// source), in run order; a thread that cannot start leaves the whole reduction to this thread.
// The mini session is invented data.
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { Store } from '../main/store';
import { importSessionFolder } from '../main/import';
import { besideShare, reduceStoredSessionAsync, threadStarts } from '../main/reduceService';
import { setImportWorkerScript } from '../main/importPool';
import { cleanupTempDirs, miniFolder, tempDir } from './helpers/store-fixtures';
import type { RunResult } from '../app/types';

afterAll(() => cleanupTempDirs());

/** Paths where a and b differ (numbers by Object.is). */
function differences(a: unknown, b: unknown, path = ''): string[] {
  if (typeof a === 'number' || typeof b === 'number') return Object.is(a, b) ? [] : [`${path}: ${String(a)} vs ${String(b)}`];
  if (a === null || b === null || typeof a !== 'object' || typeof b !== 'object') return a === b ? [] : [`${path}: ${String(a)} vs ${String(b)}`];
  const ka = Object.keys(a);
  if (ka.join('|') !== Object.keys(b).join('|')) return [`${path}: keys differ`];
  return ka.flatMap((k) => differences((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], `${path}.${k}`));
}

describe('reduction shared with one worker thread', () => {
  it('gives the results of the calling thread alone, in run order, bit for bit', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { setup: { taps: 10, rakeProbes: 7, wallTaps: 4 }, runs: { dataRuns: 14, samples: 40, seed: 3 } });
    const store = Store.open(join(dir, 'db.sqlite'));
    await importSessionFolder(store, f.dir, { actor: 'x', workers: 0 });
    const settings = { mcDraws: 60 };
    const alone = await reduceStoredSessionAsync(store, 1, { settings, workers: 0 });
    const beside = await reduceStoredSessionAsync(store, 1, { settings, workers: 1 });
    expect(alone.results.length).toBe(14);
    expect(beside.results.map((r) => r.run)).toEqual(alone.results.map((r) => r.run));
    expect(differences(beside.results, alone.results)).toEqual([]);
    // Both threads reduced some of the runs (the thread gets two chunks of 4 at once).
    expect(besideShare.thread).toBeGreaterThanOrEqual(8);
    expect(besideShare.here).toBeGreaterThan(0);
    expect(Object.keys(beside.results[13].uncertainty).length).toBeGreaterThan(3);
    store.close();
  }, 60_000);

  it('saved in batches, starts its threads once for all of them and stores the same numbers', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { setup: { taps: 10, rakeProbes: 7, wallTaps: 4 }, runs: { dataRuns: 13, samples: 30, seed: 5 } });
    const store = Store.open(join(dir, 'db.sqlite'));
    await importSessionFolder(store, f.dir, { actor: 'x', workers: 0 });
    const settings = { mcDraws: 40 };
    const alone = await reduceStoredSessionAsync(store, 1, { settings, workers: 0 });
    for (const workers of [1, 2]) {
      const before = threadStarts.pools;
      const saved: RunResult[] = [];
      const r = await reduceStoredSessionAsync(store, 1, { settings, workers, batches: { size: 4, onSaved: (rs) => saved.push(...rs) } });
      expect(r.reduced).toBe(13);
      // Four batches (4 + 4 + 4 + 1 runs), one pool.
      expect(threadStarts.pools - before).toBe(1);
      expect(saved.map((x) => x.run)).toEqual(alone.results.map((x) => x.run));
      expect(differences(saved, alone.results)).toEqual([]);
    }
    store.close();
  }, 60_000);

  it('reduces everything on this thread when the worker cannot start', async () => {
    const dir = tempDir();
    const f = miniFolder(join(dir, 's'), { runs: { dataRuns: 10, samples: 20, seed: 4 } });
    const store = Store.open(join(dir, 'db.sqlite'));
    await importSessionFolder(store, f.dir, { actor: 'x', workers: 0 });
    const settings = { mcDraws: 30 };
    const alone = await reduceStoredSessionAsync(store, 1, { settings, workers: 0 });
    setImportWorkerScript(join(dir, 'no-such-worker.mjs'));
    try {
      const beside = await reduceStoredSessionAsync(store, 1, { settings, workers: 1 });
      expect(differences(beside.results, alone.results)).toEqual([]);
      expect(besideShare).toEqual({ thread: 0, here: 10 });
    } finally {
      setImportWorkerScript(null);
      store.close();
    }
  }, 60_000);
});
