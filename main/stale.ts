// Which stored results are stale (the rule: app/stale.ts), for the views that list runs: the day
// log, the inspector and polars (through runs.list / runs.get), the command line (`runs`, with a
// `stale` field in `--format json`), the exports and the day sheet. One place computes it, so
// every view marks the same runs for the same reasons.
import type { RunInfo } from '../app/types';
import { zeroRunsFor } from '../app/samples';
import { staleMark, type StaleMark } from '../app/stale';
import type { RunRow, Store } from './store';

/** Run number → why its latest result is stale (only the stale runs are in the map). */
export function staleMarks(store: Store, sessionId: number, index: RunInfo[] = store.getIndex(sessionId)): Map<number, StaleMark> {
  const current = store.getSettings(sessionId);
  const { results, storedAt } = store.reductionBasis(sessionId);
  const zeroRuns = new Set(index.filter((i) => i.kind === 'zero').map((i) => i.run));
  const out = new Map<number, StaleMark>();
  for (const info of index) {
    const r = results.get(info.run);
    if (info.kind !== 'data' || !r) continue;
    const zeros = [...zeroRunsFor(index, new Set([info.run]))]
      .filter((z) => zeroRuns.has(z))
      .map((z) => ({ run: z, storedAt: storedAt.get(z) ?? null }));
    const mark = staleMark({ used: r.settings, current, reducedAt: r.reducedAt, zeros, run: info.run });
    if (mark) out.set(info.run, mark);
  }
  return out;
}

/** The rows with their `stale` field set (null when current or not reduced). */
export function withStale<T extends { run: number }>(rows: T[], marks: Map<number, StaleMark>): (T & { stale: StaleMark | null })[] {
  return rows.map((r) => ({ ...r, stale: marks.get(r.run) ?? null }));
}

/** store.listRuns with each row's `stale` field: what every view lists. */
export function listRunsMarked(store: Store, sessionId: number): RunRow[] {
  return withStale(store.listRuns(sessionId), staleMarks(store, sessionId));
}

/** The stale data runs of a session, ascending (what "re-reduce stale runs" reduces). */
export function staleRuns(store: Store, sessionId: number): number[] {
  return [...staleMarks(store, sessionId).keys()].sort((a, b) => a - b);
}
