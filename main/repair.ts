// Repair of sessions left without current results: an import commits before its reduction is
// saved (one transaction each), so a process killed in between, or a disk that fills while the
// results are written, leaves data runs stored but unreduced. `ingest`, the desktop app and
// browser mode on start run this, so the same command run again finishes the job.
//
// A data run needs reducing when it has no stored reduction, or when its latest reduction is older
// than the storing of its own samples or of the wind-off zeros that bracket it (zeroRunsFor: the
// zeros are interpolated in time, app/samples.ts) — a zero that landed later changes its result.
import { zeroRunsFor } from '../app/samples';
import type { RunResult } from '../app/types';
import type { ImportProgress, Store } from './store';
import { reduceStoredSessionAsync } from './reduceService';

/** Data runs of a session whose latest result is missing or older than their inputs (index order). */
export function runsNeedingReduction(store: Store, sessionId: number): number[] {
  const rows = store.db.prepare(`SELECT r.run, r.kind, sf.imported_at AS stored_at,
      (SELECT MAX(x.reduced_at) FROM reductions x WHERE x.session_id = r.session_id AND x.run = r.run) AS reduced_at
    FROM runs r LEFT JOIN source_files sf ON sf.id = r.source_id
    WHERE r.session_id = ? ORDER BY r.index_pos`).all(sessionId) as { run: number; kind: string; stored_at: string | null; reduced_at: string | null }[];
  if (!rows.some((r) => r.kind === 'data')) return [];
  const storedAt = new Map(rows.map((r) => [r.run, r.stored_at ?? '']));
  const index = store.getIndex(sessionId);
  const out: number[] = [];
  for (const r of rows) {
    if (r.kind !== 'data') continue;
    if (r.reduced_at === null) {
      out.push(r.run);
      continue;
    }
    const inputs = zeroRunsFor(index, new Set([r.run]));
    const newest = [...inputs].reduce((t, run) => {
      const s = storedAt.get(run) ?? '';
      return s > t ? s : t;
    }, '');
    if (newest > r.reduced_at) out.push(r.run);
  }
  return out;
}

export interface RepairReport { sessionId: number; runs: number[]; results: RunResult[] }

/**
 * Reduce, in every session (or the ones given), the data runs runsNeedingReduction() finds.
 * Resolves to what was reduced; sessions with nothing to do are left out.
 */
export async function repairUnreduced(
  store: Store,
  opts: { sessions?: number[]; actor?: string; onProgress?: (p: ImportProgress) => void } = {},
): Promise<RepairReport[]> {
  const ids = opts.sessions ?? store.listSessions().map((s) => s.id);
  const out: RepairReport[] = [];
  for (const sessionId of ids) {
    const runs = runsNeedingReduction(store, sessionId);
    if (!runs.length) continue;
    const { results } = await reduceStoredSessionAsync(store, sessionId, { runs, actor: opts.actor ?? 'repair', onProgress: opts.onProgress });
    out.push({ sessionId, runs, results });
  }
  return out;
}

/** On start (desktop app, browser mode): repair every session; a failure is reported, never
 *  fatal (the app still opens and shows what is stored). Nothing is written to a read-only store. */
export async function repairOnStart(store: Store, actor: string): Promise<RepairReport[]> {
  if (store.readOnly) return [];
  try {
    const done = await repairUnreduced(store, { actor });
    for (const d of done) console.error(`rakeline: session ${d.sessionId}: reduced ${d.runs.length} data run(s) left without a current result (${d.runs.join(', ')})`);
    return done;
  } catch (e) {
    console.error(`rakeline: could not reduce the runs left without a current result: ${e instanceof Error ? e.message : String(e)}`);
    return [];
  }
}
