// Reducing what the store holds with the pure core (app/reduce.ts) and storing the results as a
// new reduction (history kept). The session summary comes from the latest stored digests.
import { availableParallelism } from 'node:os';
import type { RunResult, SessionSummary, Settings, Setup, ZeroedRun } from '../app/types';
import { averageRuns, prepareRuns, reduceRun, summariseSession } from '../app/reduce';
import { zeroRunsFor } from '../app/samples';
import { isDiskFull, StoreFullError, type ImportProgress, type Store } from './store';
import { ImportPool } from './importPool';

type ReduceOpts = { runs?: number[]; settings?: Partial<Settings>; actor?: string; onProgress?: (p: ImportProgress) => void };

/** What a reduction needs from the store: the setup, the settings and the runs with zeros applied
 *  (also used by main/verify.ts to re-run a reduction the page sends). */
export function reductionInputs(store: Store, sessionId: number, opts: ReduceOpts): { setup: Setup; settings: Settings; zeroed: ZeroedRun[] } {
  const setup = store.getSetup(sessionId);
  const stored = store.getSettings(sessionId);
  const settings: Settings = { ...stored, ...(opts.settings ?? {}) };
  const index = store.getIndex(sessionId);
  const wanted = opts.runs ? new Set(opts.runs) : null;
  if (wanted) {
    const known = new Map(index.map((i) => [i.run, i.kind]));
    for (const r of wanted) {
      if (!known.has(r)) throw new Error(`unknown run ${r} in session ${sessionId}`);
    }
  }
  // Only the runs reduced and the wind-off zeros around them are read (zeroRunsFor).
  const needed = wanted ? zeroRunsFor(index, wanted) : null;
  // Averages at the session's spike threshold come from the store; another threshold for this
  // reduction only is applied to the stored samples.
  const averaged = settings.spikeK === stored.spikeK
    ? store.getAveraged(sessionId, needed ?? undefined)
    : averageRuns(index.filter((i) => !needed || needed.has(i.run)).map((i) => store.getRawRun(sessionId, i.run)), settings);
  const zeroed = prepareRuns(setup, averaged).filter((z) => !wanted || wanted.has(z.info.run));
  return { setup, settings, zeroed };
}

function storeResults(store: Store, sessionId: number, results: RunResult[], opts: ReduceOpts): { results: RunResult[]; summary: SessionSummary } {
  if (results.length) {
    try {
      store.saveResults(sessionId, results, opts.actor ?? 'reduce');
    } catch (e) {
      // Nothing of the reduction was stored; the next ingest (or start of the app) redoes it.
      if (isDiskFull(e, store.file)) throw new StoreFullError(store.file, e instanceof Error ? e.message : String(e), 'saving the results');
      throw e;
    }
  }
  return { results, summary: sessionSummary(store, sessionId) };
}

/** Reduce (all data runs, or opts.runs) on this thread and store the results as a new reduction. */
export function reduceStoredSession(
  store: Store,
  sessionId: number,
  opts: ReduceOpts = {},
): { results: RunResult[]; summary: SessionSummary } {
  const { setup, settings, zeroed } = reductionInputs(store, sessionId, opts);
  return storeResults(store, sessionId, reduceHere(setup, zeroed, settings, progressOf(opts, zeroed.length)), opts);
}

/** Progress of a reduction of `total` runs, `done` of them reduced. */
function progressOf(opts: ReduceOpts, total: number): (done: number) => void {
  return (done) => opts.onProgress?.({ phase: 'reduce', bytesDone: 0, bytesTotal: 0, runsDone: done, runsTotal: total });
}

/** The runs reduced one after the other on this thread. */
function reduceHere(setup: Setup, zeroed: ZeroedRun[], settings: Settings, tell: (done: number) => void): RunResult[] {
  return zeroed.map((z, k) => {
    const r = reduceRun(setup, z, settings);
    tell(k + 1);
    return r;
  });
}

/** Threads for reducing `runs` runs of `draws` Monte Carlo draws each: none below about a second
 *  of work, nor with fewer than four cores; else one per core, up to four. Measured here (2
 *  cores): new threads start in ~0.2 s bundled (~0.5 s from the sources) and must compile the core
 *  afresh (~0.9 s), so a day of 250 runs took 3.8 s on two threads against 3.0 s on the calling
 *  thread; the threads only pay off with more cores. */
export function reduceWorkersFor(runs: number, draws: number): number {
  if (runs < 8 || runs * Math.max(draws, 25) < 40000) return 0;
  const cores = availableParallelism();
  return cores < 4 ? 0 : Math.min(4, cores);
}

/**
 * As reduceStoredSession, but a large reduction runs on worker threads (main/importWorker.ts, the
 * same pure core, so the very same results) and the calling thread stays free meanwhile; only
 * reading the store and saving the results happen here. `workers`: a number (0 = this thread) or
 * 'auto' (default, reduceWorkersFor). Falls back to this thread if the threads cannot start.
 */
export async function reduceStoredSessionAsync(
  store: Store,
  sessionId: number,
  opts: ReduceOpts & { workers?: number | 'auto' } = {},
): Promise<{ results: RunResult[]; summary: SessionSummary }> {
  const { setup, settings, zeroed } = reductionInputs(store, sessionId, opts);
  const total = zeroed.length;
  const tell = progressOf(opts, total);
  const workers = opts.workers === undefined || opts.workers === 'auto' ? reduceWorkersFor(total, settings.mcDraws) : opts.workers;
  const results = (workers > 0 && total > 1 ? await reduceOnThreads(setup, zeroed, settings, workers, tell) : null)
    ?? reduceHere(setup, zeroed, settings, tell);
  return storeResults(store, sessionId, results, opts);
}

/** The runs reduced on worker threads, in chunks, results in run order; null if the threads did
 *  not run (the caller then reduces on its own thread). */
async function reduceOnThreads(
  setup: Setup, zeroed: ZeroedRun[], settings: Settings, workers: number, tell: (done: number) => void,
): Promise<RunResult[] | null> {
  const total = zeroed.length;
  let pool: ImportPool | null = null;
  try {
    pool = new ImportPool(Math.min(workers, total));
    // Chunks of a few runs: enough to keep every thread busy to the end, few enough messages.
    const size = Math.max(1, Math.min(16, Math.ceil(total / (4 * workers))));
    let done = 0;
    const chunks: Promise<RunResult[]>[] = [];
    for (let k = 0; k < total; k += size) {
      chunks.push(pool.reduce(setup, zeroed.slice(k, k + size), settings).then((r) => {
        done += r.length;
        tell(done);
        return r;
      }));
    }
    for (const c of chunks) c.catch(() => undefined); // awaited in order below
    const results: RunResult[] = [];
    for (const c of chunks) results.push(...(await c));
    return results;
  } catch (e) {
    // A run the core refused is the reduction's answer; threads that did not run are not.
    if (pool && !pool.broken) throw e;
    process.emitWarning(`rakeline: reduction threads unavailable (${e instanceof Error ? e.message : String(e)}); reducing on the main thread`);
    return null;
  } finally {
    if (pool) await pool.close();
  }
}

/** Session summary from the latest stored result of every data run. Runs a reviewer rejected are
 *  left out unless includeRejected. */
export function sessionSummary(store: Store, sessionId: number, opts: { includeRejected?: boolean } = {}): SessionSummary {
  const setup = store.getSetup(sessionId);
  const rejected = opts.includeRejected ? new Set<number>() : store.rejectedRuns(sessionId);
  const results = store.latestDigests(sessionId).filter((r) => opts.includeRejected || !rejected.has(r.run));
  return summariseSession(setup, results, store.getIndex(sessionId));
}
