// Reducing stored sessions (main/reduceService.ts) and keeping the history of reductions.
// Data: the tiny invented Harrowgate demo day (resources/demo), written through the log writer.
import { join } from 'node:path';
import { availableParallelism } from 'node:os';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Store } from '../main/store';
import { importSessionFolder, readSessionFolder } from '../main/import';
import { reduceStoredSession, reduceStoredSessionAsync, reduceWorkersFor, sessionSummary } from '../main/reduceService';
import { repairUnreduced, runsNeedingReduction } from '../main/repair';
import { setImportWorkerScript } from '../main/importPool';
import { averageRun, zeroRunsFor } from '../app/samples';
import { writeSessionFolder } from '../main/logwriter';
import { reduceRawSession } from '../app/reduce';
import type { ParsedSession } from '../main/store';
import { demoSession } from '../resources/demo/scenario';
import { cleanupTempDirs, tempDir } from './helpers/store-fixtures';

let dir: string;
let store: Store;
let parsed: ParsedSession;
let dataRuns: number[];

beforeAll(async () => {
  dir = tempDir();
  const demo = demoSession({ runs: 8, taps: 16, rakeProbes: 8, wallTaps: 6, samples: 40, seed: 7 });
  writeSessionFolder(join(dir, 'day'), demo.setup, demo.index, demo.runs());
  parsed = await readSessionFolder(join(dir, 'day'));
  store = Store.open(join(dir, 'rakeline.sqlite'));
  await importSessionFolder(store, join(dir, 'day'), { actor: 'M. Okonkwo' });
  dataRuns = parsed.index.filter((i) => i.kind === 'data').map((i) => i.run);
});
afterAll(() => {
  store.close();
  cleanupTempDirs();
});

describe('reduceStoredSession', () => {
  it('reduces every data run exactly as the core does on the parsed files, and stores it', () => {
    const phases: number[] = [];
    const { results, summary } = reduceStoredSession(store, 1, { actor: 'M. Okonkwo', onProgress: (p) => phases.push(p.runsDone) });
    expect(results.map((r) => r.run)).toEqual(dataRuns);
    expect(phases).toEqual(dataRuns.map((_, k) => k + 1));
    // Same numbers as the core straight on the parsed raws: the store is lossless.
    const direct = reduceRawSession(parsed.setup, parsed.runs);
    expect(results).toEqual(direct.results);
    expect(summary).toEqual(direct.summary);
    for (const r of results) {
      expect(store.latestResult(1, r.run)).toEqual(r); // NaN (e.g. no wake) survives the JSON
      const row = store.getRun(1, r.run).result!;
      expect(row.cl).toBe(r.corrected.cl);
      expect(row.cd).toEqual(r.corrected.cd);
      expect(row.q).toBe(r.corrected.q);
      expect(row.alphaCorrDeg).toBe(r.corrected.alphaDeg);
      expect(row.gammaPressure).toBe(r.circulationCorrected!.pressure); // the corrected Γ (the day log sits it beside corrected cl)
      expect(row.flags).toEqual(r.flags);
    }
    expect(store.listRuns(1).filter((r) => r.kind === 'zero').every((r) => r.result === null)).toBe(true);
    expect(store.getSession(1).flaggedCount).toBe(results.filter((r) => r.flags.length > 0).length);
  });

  it('re-reducing keeps the history; the latest result is the one shown', () => {
    const first = store.resultHistory(1, dataRuns[0]);
    expect(first).toHaveLength(1);
    const { results } = reduceStoredSession(store, 1, { runs: [dataRuns[0]], settings: { liftTolAbs: 0.5 }, actor: 'T. Lindqvist' });
    expect(results.map((r) => r.run)).toEqual([dataRuns[0]]);
    expect(results[0].settings.liftTolAbs).toBe(0.5);
    const hist = store.resultHistory(1, dataRuns[0]);
    expect(hist).toHaveLength(2);
    expect(hist[0].resultId).toBe(first[0].resultId);
    expect(hist[1].resultId).toBeGreaterThan(hist[0].resultId);
    expect(store.getRun(1, dataRuns[0]).result!.resultId).toBe(hist[1].resultId);
    expect(store.latestResult(1, dataRuns[0])!.settings.liftTolAbs).toBe(0.5);
    // Other runs untouched.
    expect(store.resultHistory(1, dataRuns[1])).toHaveLength(1);
    const audit = store.auditTrail(1).filter((a) => a.action === 'reduce');
    expect(audit.map((a) => [a.actor, (a.detail as { runs: number[] }).runs])).toEqual([
      ['M. Okonkwo', dataRuns],
      ['T. Lindqvist', [dataRuns[0]]],
    ]);
    expect(() => store.db.prepare('UPDATE reductions SET cl = 0').run()).toThrow(/reductions is append-only/);
    expect(() => store.db.prepare('DELETE FROM flags').run()).toThrow(/flags is append-only/);
  });

  it('a spike-threshold change re-averages the stored samples', () => {
    store.updateSettings(1, { spikeK: 2 }, 'T. Lindqvist', 'aggressive spike rejection');
    const avg = store.getAveraged(1);
    for (const raw of parsed.runs) expect(avg.find((a) => a.info.run === raw.info.run)).toEqual(averageRun(raw, 2));
    expect(store.db.prepare('SELECT DISTINCT spike_k FROM channel_stats').all()).toEqual([{ spike_k: 2 }]);
    const { results } = reduceStoredSession(store, 1, { runs: [dataRuns[1]] });
    expect(results[0].settings.spikeK).toBe(2);
    expect(results).toEqual(reduceRawSession(parsed.setup, parsed.runs, { spikeK: 2 }).results.filter((r) => r.run === dataRuns[1]));
    store.updateSettings(1, { spikeK: 5 }, 'T. Lindqvist');
  });

  it('a bad tap marked by the user reaches the reduction', () => {
    const tap = parsed.setup.taps[3].id;
    store.setTapBad(1, tap, true, 'M. Okonkwo', 'tube pinched');
    const { results } = reduceStoredSession(store, 1, { runs: [dataRuns[2]] });
    expect(results[0].settings.badTaps).toContain(tap);
    expect(results[0].taps.find((t) => t.id === tap)!.bad).toBe(true);
    store.setTapBad(1, tap, false, 'M. Okonkwo');
  });

  it('sessionSummary: from the latest stored results, reviewer-rejected runs left out', () => {
    const all = sessionSummary(store, 1);
    expect(all.polar.map((p) => p.run).sort()).toEqual([...dataRuns].sort());
    store.setReview(1, dataRuns[3], 'rejected', 'stall hysteresis loop, repeat', 'T. Lindqvist');
    expect(sessionSummary(store, 1).polar.map((p) => p.run)).not.toContain(dataRuns[3]);
    expect(sessionSummary(store, 1, { includeRejected: true }).polar.map((p) => p.run)).toContain(dataRuns[3]);
    store.setReview(1, dataRuns[3], null, '', 'T. Lindqvist');
  });

  it('unknown runs and zero runs are refused', () => {
    expect(() => reduceStoredSession(store, 1, { runs: [999] })).toThrow('unknown run 999 in session 1');
    const zero = parsed.index.find((i) => i.kind === 'zero')!.run;
    const r = store.latestResult(1, dataRuns[0])!;
    expect(() => store.saveResults(1, [{ ...r, run: zero }], 'x')).toThrow(/is a wind-off zero/);
    expect(() => store.saveResults(1, [{ ...r, run: 999 }], 'x')).toThrow(/unknown run 999/);
  });
});

describe('reducing on worker threads', () => {
  // Common practice, no source: the threads run the same pure core on the same inputs, so the
  // results must be the very same numbers (Monte Carlo included: each run's stream is seeded
  // from the run, not from the thread), in run order, with progress counted to the end.
  it('gives the same results as this thread, stored the same way', async () => {
    const serial = reduceStoredSession(store, 1, { actor: 'x' }).results;
    const seen: number[] = [];
    const { results, summary } = await reduceStoredSessionAsync(store, 1, { actor: 'x', workers: 2, onProgress: (p) => seen.push(p.runsDone) });
    expect(results.map((r) => r.run)).toEqual(dataRuns);
    expect(results).toEqual(serial);
    expect(summary).toEqual(sessionSummary(store, 1));
    expect(seen.at(-1)).toBe(dataRuns.length);
    for (const r of results) expect(store.latestResult(1, r.run)).toEqual(r);
  });

  it('threads that cannot start: the reduction runs on this thread, same results', async () => {
    const serial = reduceStoredSession(store, 1, { actor: 'x' }).results;
    setImportWorkerScript(join(dir, 'no-such-worker.mjs'));
    try {
      const { results } = await reduceStoredSessionAsync(store, 1, { actor: 'x', workers: 2 });
      expect(results).toEqual(serial);
    } finally {
      setImportWorkerScript(null);
    }
  });

  it('small reductions stay on this thread', () => {
    expect(reduceWorkersFor(1, 400)).toBe(0);
    expect(reduceWorkersFor(6, 4000)).toBe(0);
    expect(reduceWorkersFor(42, 400)).toBe(0); // a demo day
    const cores = availableParallelism();
    expect(reduceWorkersFor(249, 400)).toBe(cores < 4 ? 0 : Math.min(4, cores)); // the bench's day
    expect(reduceWorkersFor(10, 0)).toBe(0);
  });
});

describe('re-reducing part of a session', () => {
  it('one run re-reduced alone reads only it and its wind-off zeros, and gives the whole-session answer', async () => {
    const own = Store.open(join(dir, 'partial.sqlite'));
    await importSessionFolder(own, join(dir, 'day'), { actor: 'test' });
    const index = own.getIndex(1);
    const whole = reduceStoredSession(own, 1, { actor: 'test' }).results;
    for (const run of dataRuns) {
      const needed = zeroRunsFor(index, new Set([run]));
      // The run itself and at most the zero before and the zero after it.
      expect(needed.has(run)).toBe(true);
      const zeros = [...needed].filter((r) => r !== run);
      expect(zeros.length).toBeLessThanOrEqual(2);
      expect(zeros.every((z) => index.find((i) => i.run === z)!.kind === 'zero')).toBe(true);
      const alone = reduceStoredSession(own, 1, { runs: [run], actor: 'test' });
      expect(alone.results).toEqual([whole.find((r) => r.run === run)]);
    }
    // The summary from the stored digests equals the one from the full results.
    expect(sessionSummary(own, 1)).toEqual(reduceRawSession(parsed.setup, parsed.runs).summary);
    own.close();
  });

});

describe('saving in bounded batches (issue 14, bounded memory)', () => {
  it('stores exactly what one save stores, a batch at a time in run order, and keeps no results', async () => {
    const one = Store.open(join(dir, 'batch-one.sqlite'));
    const many = Store.open(join(dir, 'batch-many.sqlite'));
    for (const s of [one, many]) await importSessionFolder(s, join(dir, 'day'), { actor: 'test' });
    const whole = reduceStoredSession(one, 1, { actor: 'test' });
    const seen: number[][] = [];
    const progress: number[] = [];
    const batched = await reduceStoredSessionAsync(many, 1, {
      actor: 'test', workers: 0, onProgress: (p) => progress.push(p.runsDone), batches: { size: 2, onSaved: (rs) => seen.push(rs.map((r) => r.run)) },
    });
    expect(batched.results).toEqual([]);
    expect(batched.reduced).toBe(dataRuns.length);
    expect(seen.flat()).toEqual(dataRuns);
    expect(seen.every((b) => b.length <= 2)).toBe(true);
    expect(progress.at(-1)).toBe(dataRuns.length);
    for (const run of dataRuns) expect(many.latestResult(1, run)).toEqual(one.latestResult(1, run));
    expect(batched.summary).toEqual(whole.summary);
    one.close();
    many.close();
  });

  it('a failure after the first batch leaves the later runs unreduced, and the repair gives the same results', async () => {
    const ref = Store.open(join(dir, 'batch-ref.sqlite'));
    const cut = Store.open(join(dir, 'batch-cut.sqlite'));
    for (const s of [ref, cut]) await importSessionFolder(s, join(dir, 'day'), { actor: 'test' });
    reduceStoredSession(ref, 1, { actor: 'test' });
    let batches = 0;
    await expect(reduceStoredSessionAsync(cut, 1, {
      actor: 'test', workers: 0, batches: { size: 2, onSaved: () => { if (++batches === 1) throw new Error('killed here'); } },
    })).rejects.toThrow('killed here');
    // The first batch is stored whole; nothing of the rest.
    expect(runsNeedingReduction(cut, 1)).toEqual(dataRuns.slice(2));
    for (const run of dataRuns.slice(0, 2)) expect(cut.latestResult(1, run)).toEqual(ref.latestResult(1, run));
    await repairUnreduced(cut, { actor: 'test' });
    expect(runsNeedingReduction(cut, 1)).toEqual([]);
    for (const run of dataRuns) expect(cut.latestResult(1, run)).toEqual(ref.latestResult(1, run));
    ref.close();
    cut.close();
  });
});
