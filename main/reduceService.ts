// Reducing what the store holds with the pure core (app/reduce.ts) and storing the results as a
// new reduction (history kept). The session summary comes from the latest stored digests.
import { availableParallelism } from 'node:os';
import type { ResultDigest, RunResult, SessionSummary, Settings, Setup, ZeroedRun } from '../app/types';
import { averageRuns, prepareRuns, reduceRun, summariseSession } from '../app/reduce';
import { zeroRunsFor } from '../app/samples';
import { isDiskFull, StoreFullError, type ImportProgress, type SessionRow, type Store } from './store';
import { ImportPool } from './importPool';

type Averaged = ReturnType<Store['getAveraged']>[number];

type ReduceOpts = { runs?: number[]; settings?: Partial<Settings>; actor?: string; onProgress?: (p: ImportProgress) => void };

/** Saving a large reduction in bounded batches (issue 14, bounded memory): `size` runs are reduced,
 *  stored (one transaction and one audit entry a batch) and handed to `onSaved`, then let go, so
 *  memory holds one batch of results, not the whole session's. A crash between batches leaves the
 *  later runs without a current result; the next ingest or start of the app reduces them
 *  (main/repair.ts), as after a crash before the save. */
export type SaveInBatches = { size: number; onSaved?: (results: RunResult[]) => void };
/** Runs a batch when a caller asks for batches without saying how many (about 25–50 MB of results
 *  at 96 taps and 64 rake probes; measured with the bench, no source). */
export const SAVE_BATCH = 32;

/** What a reduction needs from the store: the setup, the settings and the runs with zeros applied
 *  (also used by main/verify.ts to re-run a reduction the page sends). */
export function reductionInputs(store: Store, sessionId: number, opts: ReduceOpts): { setup: Setup; settings: Settings; zeroed: ZeroedRun[]; all?: Averaged[] } {
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
  // Every run's stored averages, when that is what was read: the session summary needs the same
  // (its channel findings), and reading them twice cost ~85 ms of a 100-run reduction.
  const all = !needed && settings.spikeK === stored.spikeK ? averaged : undefined;
  return { setup, settings, zeroed, all };
}

/** Store results as a new reduction; a full disk is said as such. */
function saveReduced(store: Store, sessionId: number, results: RunResult[], opts: ReduceOpts): void {
  if (!results.length) return;
  try {
    store.saveResults(sessionId, results, opts.actor ?? 'reduce');
  } catch (e) {
    // Nothing of this save was stored; the next ingest (or start of the app) redoes it.
    if (isDiskFull(e, store.file)) throw new StoreFullError(store.file, e instanceof Error ? e.message : String(e), 'saving the results');
    throw e;
  }
}

/** Reduce (all data runs, or opts.runs) on this thread and store the results as a new reduction. */
export function reduceStoredSession(
  store: Store,
  sessionId: number,
  opts: ReduceOpts = {},
): { results: RunResult[]; summary: SessionSummary } {
  const { setup, settings, zeroed, all } = reductionInputs(store, sessionId, opts);
  const results = reduceHere(setup, zeroed, settings, progressOf(opts, zeroed.length));
  saveReduced(store, sessionId, results, opts);
  return { results, summary: sessionSummary(store, sessionId, { averaged: all }) };
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

/** Threads for reducing `runs` runs of `draws` Monte Carlo draws each. With four cores or more and
 *  about a second of work: one per core, up to four (the calling thread only hands out and
 *  collects). With fewer cores none: measured here (2 cores, 82 data runs of the 100-run bench
 *  session, compiled build, other work on the machine, load 3.3–5.1), this thread alone 1.99 /
 *  3.46 / 3.96 s against 4.46 / 4.48 / 5.25 s with one thread beside it (reduceBeside, workers: 1),
 *  which spent ~1 s more CPU (its own compile of the core, a cold start). Before the columns
 *  Monte Carlo, two threads with the calling thread idle took 3.8 s for 250 runs against 3.0 s.
 *  Re-measured 2026-12-03 with the threads started once per reduction instead of once per saved
 *  batch (they were three cold threads for those 82 runs): 1.97–2.72 s alone against 2.72–3.01 s
 *  beside. On this machine two busy threads slow each other to ~1.7× their time alone, and two
 *  separate processes do the same (~1.5×), so a second thread buys little here whatever the
 *  code; hence none below four cores. */
export function reduceWorkersFor(runs: number, draws: number): number {
  // RAKELINE_REDUCE_THREADS=N sets the number (0: this thread only), for measuring.
  const forced = Number(process.env.RAKELINE_REDUCE_THREADS ?? '');
  if (process.env.RAKELINE_REDUCE_THREADS && Number.isInteger(forced) && forced >= 0) return Math.min(forced, 8);
  const work = runs * Math.max(draws, 25);
  const cores = availableParallelism();
  if (cores >= 4) return runs < 8 || work < 40000 ? 0 : Math.min(4, cores);
  void work;
  return 0;
}

/**
 * As reduceStoredSession, but a large reduction runs on worker threads (main/importWorker.ts, the
 * same pure core, so the very same results): with two threads or more the calling thread stays
 * free meanwhile (only reading the store and saving the results happen here); with one, the
 * calling thread reduces beside it (reduceBeside). `workers`: a number (0 = this thread) or
 * 'auto' (default, reduceWorkersFor). Falls back to this thread if the threads cannot start.
 */
export async function reduceStoredSessionAsync(
  store: Store,
  sessionId: number,
  opts: ReduceOpts & { workers?: number | 'auto'; batches?: SaveInBatches } = {},
): Promise<{ results: RunResult[]; summary: SessionSummary; reduced: number }> {
  const { setup, settings, zeroed, all } = reductionInputs(store, sessionId, opts);
  const total = zeroed.length;
  const tell = progressOf(opts, total);
  const workers = opts.workers === undefined || opts.workers === 'auto' ? reduceWorkersFor(total, settings.mcDraws) : opts.workers;
  // The threads start once for the whole reduction and serve every batch: a thread's first runs
  // cost it ~0.3–1 s of compiling and caching (measured, 2 cores), which a pool per batch paid
  // again at every batch (three cold threads for the 82 runs of the 100-run bench session).
  const pools = new Threads(workers > 1 ? Math.min(workers, total) : 1);
  const reduceSome = async (part: ZeroedRun[], tellPart: (done: number) => void): Promise<RunResult[]> =>
    (workers === 1 && part.length > 1
      ? await reduceBeside(pools, setup, part, settings, tellPart)
      : (workers > 1 && part.length > 1 ? await reduceOnThreads(pools, setup, part, settings, workers, tellPart) : null)
        ?? reduceHere(setup, part, settings, tellPart));
  try {
    const b = opts.batches;
    if (!b || total <= b.size) {
      const results = await reduceSome(zeroed, tell);
      saveReduced(store, sessionId, results, opts);
      b?.onSaved?.(results);
      return { results: b ? [] : results, summary: sessionSummary(store, sessionId, { averaged: all }), reduced: results.length };
    }
    const size = Math.max(1, b.size);
    let done = 0;
    for (let k = 0; k < total; k += size) {
      const part = zeroed.slice(k, k + size);
      const base = done;
      const results = await reduceSome(part, (n) => tell(base + n));
      saveReduced(store, sessionId, results, opts);
      done += results.length;
      b.onSaved?.(results);
      for (let i = k; i < k + part.length; i++) (zeroed as (ZeroedRun | undefined)[])[i] = undefined; // let the inputs go too
    }
    return { results: [], summary: sessionSummary(store, sessionId, { averaged: all }), reduced: done };
  } finally {
    await pools.close();
  }
}

/** How many thread pools reductions have started (for tests). */
export const threadStarts = { pools: 0 };

/** The worker threads of one reduction, started when first asked for and kept until close. A pool
 *  that failed to start is not tried again (null: reduce on the calling thread). */
class Threads {
  private pool: ImportPool | null = null;
  private tried = false;
  constructor(private readonly size: number) {}
  get(): ImportPool | null {
    if (this.pool?.broken) {
      void this.pool.close();
      this.pool = null;
    }
    if (!this.pool && !this.tried) {
      this.tried = true;
      try {
        this.pool = new ImportPool(this.size);
        threadStarts.pools++;
      } catch (e) {
        process.emitWarning(`rakeline: reduction threads unavailable (${e instanceof Error ? e.message : String(e)}); reducing on the main thread`);
      }
    }
    return this.pool;
  }
  async close(): Promise<void> {
    const p = this.pool;
    this.pool = null;
    if (p) await p.close();
  }
}

/** The runs reduced on worker threads, in chunks, results in run order; null if the threads did
 *  not run (the caller then reduces on its own thread). */
async function reduceOnThreads(
  threads: Threads, setup: Setup, zeroed: ZeroedRun[], settings: Settings, workers: number, tell: (done: number) => void,
): Promise<RunResult[] | null> {
  const total = zeroed.length;
  const pool = threads.get();
  if (!pool) return null;
  try {
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
  }
}

/** Runs per message to the thread of reduceBeside. */
const BESIDE_CHUNK = 4;
/** How the last reduceBeside shared its runs (for tests). */
export const besideShare = { thread: 0, here: 0 };

/**
 * The runs reduced by this thread and one worker thread together: this thread takes runs from the
 * front one at a time, the thread chunks of BESIDE_CHUNK from the back (two chunks in flight, so
 * it never waits for this thread), until they meet; results in run order. This thread yields
 * between its runs so the thread's replies are taken as they come. A chunk the thread did not
 * reduce (it failed to start or stopped, or the core refused a run there) is reduced here
 * afterwards, in run order, so a refused run gives the error it gives on this thread.
 */
async function reduceBeside(threads: Threads, setup: Setup, zeroed: ZeroedRun[], settings: Settings, tell: (done: number) => void): Promise<RunResult[]> {
  const total = zeroed.length;
  const out: RunResult[] = new Array(total);
  let front = 0;
  let back = total;
  let done = 0;
  const failed: [number, number][] = [];
  const inFlight = new Set<Promise<void>>();
  besideShare.thread = 0;
  besideShare.here = 0;
  const pool = threads.get();
  const give = (): void => {
    if (!pool || pool.broken || back - front <= BESIDE_CHUNK) return;
    const lo = back - BESIDE_CHUNK;
    const hi = back;
    back = lo;
    const p: Promise<void> = pool.reduce(setup, zeroed.slice(lo, hi), settings).then(
      (r) => {
        for (let i = 0; i < r.length; i++) out[lo + i] = r[i];
        done += r.length;
        besideShare.thread += r.length;
        tell(done);
      },
      () => { failed.push([lo, hi]); },
    ).finally(() => {
      inFlight.delete(p);
      give();
    });
    inFlight.add(p);
  };
  // The pool is the whole reduction's (Threads), closed when the reduction ends.
  give();
  give();
  while (front < back) {
    out[front] = reduceRun(setup, zeroed[front], settings);
    front++;
    tell(++done);
    if (inFlight.size) await new Promise<void>((r) => setImmediate(r));
  }
  while (inFlight.size) await Promise.all([...inFlight]);
  besideShare.here = total - besideShare.thread;
  failed.sort((a, b) => a[0] - b[0]);
  for (const [lo, hi] of failed) {
    for (let k = lo; k < hi; k++) {
      out[k] = reduceRun(setup, zeroed[k], settings);
      tell(++done);
    }
  }
  return out;
}

/** Session summary from the latest stored result of every data run. Runs a reviewer rejected are
 *  left out unless includeRejected. `averaged` and `digests`: every run's stored averages
 *  (store.getAveraged(sessionId)) and latest digests (store.latestDigests(sessionId)) when the
 *  caller has just read them, so they are not read again. `channels: false` leaves out the dead
 *  and saturated channels, which need every run's statistics read (~55 ms on the demo day, a
 *  quarter of `rakeline runs`); the runs needing a decision are the same either way. */
export function sessionSummary(
  store: Store, sessionId: number,
  opts: { includeRejected?: boolean; averaged?: Averaged[]; digests?: ResultDigest[]; channels?: boolean } = {},
): SessionSummary {
  const setup = store.getSetup(sessionId);
  const rejected = opts.includeRejected ? new Set<number>() : store.rejectedRuns(sessionId);
  const results = (opts.digests ?? store.latestDigests(sessionId)).filter((r) => opts.includeRejected || !rejected.has(r.run));
  const channelRuns = opts.channels === false ? undefined : opts.averaged ?? store.getAveraged(sessionId);
  return summariseSession(setup, results, store.getIndex(sessionId), channelRuns);
}

/** Every session with its data runs needing a decision (a flag no session finding explains), the
 *  count the Day log shows: from the stored digests without the channel statistics (2–10 ms a
 *  session on the bench sessions; a dead or saturated channel replaces its tap's own finding, so
 *  the count is the same unless a channel finding is on a tap with no finding of its own). */
export function sessionsWithDecisions(store: Store): (SessionRow & { decisionCount: number })[] {
  return store.listSessions().map((s) => ({
    ...s, decisionCount: s.dataRunCount ? (sessionSummary(store, s.id, { channels: false }).needsDecision ?? []).length : 0,
  }));
}
