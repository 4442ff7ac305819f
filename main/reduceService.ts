// Reducing what the store holds with the pure core (app/reduce.ts) and storing the results as a
// new reduction (history kept). The session summary comes from the latest stored results.
import type { RunResult, SessionSummary, Settings } from '../app/types';
import { averageRuns, prepareRuns, reduceRun, summariseSession } from '../app/reduce';
import type { ImportProgress, Store } from './store';

export function reduceStoredSession(
  store: Store,
  sessionId: number,
  opts: { runs?: number[]; settings?: Partial<Settings>; actor?: string; onProgress?: (p: ImportProgress) => void } = {},
): { results: RunResult[]; summary: SessionSummary } {
  const setup = store.getSetup(sessionId);
  const stored = store.getSettings(sessionId);
  const settings: Settings = { ...stored, ...(opts.settings ?? {}) };
  // Averages at the session's spike threshold come from the store; another threshold for this
  // reduction only is applied to the stored samples.
  const averaged = settings.spikeK === stored.spikeK
    ? store.getAveraged(sessionId)
    : averageRuns(store.getIndex(sessionId).map((i) => store.getRawRun(sessionId, i.run)), settings);
  const wanted = opts.runs ? new Set(opts.runs) : null;
  if (wanted) {
    const known = new Map(averaged.map((a) => [a.info.run, a.info.kind]));
    for (const r of wanted) {
      if (!known.has(r)) throw new Error(`unknown run ${r} in session ${sessionId}`);
    }
  }
  const zeroed = prepareRuns(setup, averaged).filter((z) => !wanted || wanted.has(z.info.run));
  const results: RunResult[] = [];
  const total = zeroed.length;
  zeroed.forEach((z, k) => {
    results.push(reduceRun(setup, z, settings));
    opts.onProgress?.({ phase: 'reduce', bytesDone: 0, bytesTotal: 0, runsDone: k + 1, runsTotal: total });
  });
  if (results.length) store.saveResults(sessionId, results, opts.actor ?? 'reduce');
  return { results, summary: sessionSummary(store, sessionId) };
}

/** Session summary from the latest stored result of every data run. Runs a reviewer rejected are
 *  left out unless includeRejected. */
export function sessionSummary(store: Store, sessionId: number, opts: { includeRejected?: boolean } = {}): SessionSummary {
  const setup = store.getSetup(sessionId);
  const rows = store.listRuns(sessionId);
  const rejected = new Set(rows.filter((r) => r.review?.verdict === 'rejected').map((r) => r.run));
  const results = store.latestResults(sessionId).filter((r) => opts.includeRejected || !rejected.has(r.run));
  return summariseSession(setup, results, store.getIndex(sessionId));
}
