// Reducing what the store holds with the pure core (app/reduce.ts) and storing the results as a
// new reduction (history kept). The session summary comes from the latest stored digests.
import type { RunResult, SessionSummary, Settings } from '../app/types';
import { averageRuns, prepareRuns, reduceRun, summariseSession } from '../app/reduce';
import { zeroRunsFor } from '../app/samples';
import type { ImportProgress, Store } from './store';

export function reduceStoredSession(
  store: Store,
  sessionId: number,
  opts: { runs?: number[]; settings?: Partial<Settings>; actor?: string; onProgress?: (p: ImportProgress) => void } = {},
): { results: RunResult[]; summary: SessionSummary } {
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
  const rejected = opts.includeRejected ? new Set<number>() : store.rejectedRuns(sessionId);
  const results = store.latestDigests(sessionId).filter((r) => opts.includeRejected || !rejected.has(r.run));
  return summariseSession(setup, results, store.getIndex(sessionId));
}
