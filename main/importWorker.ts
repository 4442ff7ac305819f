// Import worker thread: reads run logs from disk, hashing and parsing them as they stream in, and
// hands back their runs packed and averaged (main/runFile.ts) so that the calling thread only has
// to store them. Started by main/importPool.ts; one file at a time per worker. After a large
// import one of these threads also copies the committed WAL into the database file (a checkpoint),
// so the calling thread does not wait for it. A large reduction sends them runs to reduce
// (app/reduce.ts reduceRun, the same pure core; main/reduceService.ts).
import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import { parentPort } from 'node:worker_threads';
import type { RunInfo, RunResult, Settings, Setup, ZeroedRun } from '../app/types';
import { reduceRun } from '../app/reduce';
import type { RunFilePlan } from '../app/log/session';
import { RunFileReader } from './runFile';
import { BufferPool } from '../app/bufferPool';

export interface WorkerJob {
  id: number;
  path: string;
  plan: RunFilePlan;
  infos: RunInfo[];
  setup: Setup;
  spikeK: number;
  chunkSize: number;
  /** Buffers of runs already stored, handed back to pack the next runs into. */
  spare?: ArrayBuffer[];
}

/** Copy the WAL of a database into its file (PRAGMA wal_checkpoint(PASSIVE)). */
export interface CheckpointJob {
  id: number;
  kind: 'checkpoint';
  file: string;
}

/** Reduce some runs (their zeros applied) with the pure core. */
export interface ReduceJob {
  id: number;
  kind: 'reduce';
  setup: Setup;
  runs: ZeroedRun[];
  settings: Settings;
}

/** What a checkpoint did: WAL frames in all and copied (-1 each if it could not run: busy). */
export interface CheckpointReport {
  ok: boolean;
  ms: number;
  walFrames: number;
  copied: number;
  error?: string;
}

export type WorkerReply =
  | { id: number; kind: 'reduced'; results: RunResult[] }
  | { id: number; kind: 'checkpointed'; report: CheckpointReport }
  | { id: number; kind: 'progress'; bytes: number }
  | { id: number; kind: 'done'; file: import('./runFile').PreparedFile }
  | { id: number; kind: 'error'; error: { name: string; message: string; code?: string; detail?: Record<string, unknown> } };

/** Sample buffers reused from one run log to the next, and buffers to pack runs into. */
const arena = new BufferPool();
const spares = new BufferPool(16);

/** Progress is reported every this many bytes. */
const PROGRESS_STEP = 4 << 20;

function run(job: WorkerJob): void {
  const port = parentPort!;
  for (const b of job.spare ?? []) spares.give(b);
  const fd = openSync(job.path, 'r');
  let reader: RunFileReader;
  let sinceReport = 0;
  try {
    reader = new RunFileReader(job.plan, job.setup, new Map(job.infos.map((i) => [i.run, i])), job.spikeK, { expectedBytes: fstatSync(fd).size, arena, spares });
    const buf = new Uint8Array(job.chunkSize);
    for (;;) {
      const n = readSync(fd, buf, 0, buf.length, null);
      if (n === 0) break;
      reader.push(buf.subarray(0, n));
      sinceReport += n;
      if (sinceReport >= PROGRESS_STEP) {
        port.postMessage({ id: job.id, kind: 'progress', bytes: sinceReport } satisfies WorkerReply);
        sinceReport = 0;
      }
    }
  } finally {
    closeSync(fd);
  }
  if (sinceReport) port.postMessage({ id: job.id, kind: 'progress', bytes: sinceReport } satisfies WorkerReply);
  const file = reader.end();
  const transfer = [...new Set(file.runs.map((r) => r.bytes.buffer as ArrayBuffer))];
  port.postMessage({ id: job.id, kind: 'done', file } satisfies WorkerReply, transfer);
}

/** PASSIVE: copies every frame no reader still needs and never waits for, nor blocks, a writer. */
async function checkpoint(job: CheckpointJob): Promise<void> {
  const t0 = performance.now();
  let report: CheckpointReport;
  try {
    const { default: Database } = await import('better-sqlite3');
    const db = new Database(job.file, { fileMustExist: true });
    try {
      const r = (db.pragma('wal_checkpoint(PASSIVE)') as { busy: number; log: number; checkpointed: number }[])[0];
      report = { ok: r.busy === 0, ms: performance.now() - t0, walFrames: r.log, copied: r.checkpointed };
    } finally {
      db.close();
    }
  } catch (e) {
    report = { ok: false, ms: performance.now() - t0, walFrames: -1, copied: -1, error: e instanceof Error ? e.message : String(e) };
  }
  parentPort!.postMessage({ id: job.id, kind: 'checkpointed', report } satisfies WorkerReply);
}

parentPort?.on('message', (job: WorkerJob | CheckpointJob | ReduceJob) => {
  if ('kind' in job && job.kind === 'checkpoint') {
    void checkpoint(job);
    return;
  }
  try {
    if ('kind' in job) {
      const results = job.runs.map((z) => reduceRun(job.setup, z, job.settings));
      parentPort!.postMessage({ id: job.id, kind: 'reduced', results } satisfies WorkerReply);
    } else run(job);
  } catch (e) {
    const err = e instanceof Error ? e : new Error(String(e));
    const detail = typeof (err as { toJSON?: () => unknown }).toJSON === 'function'
      ? ((err as unknown as { toJSON: () => Record<string, unknown> }).toJSON())
      : undefined;
    const code = typeof (err as { code?: unknown }).code === 'string' ? (err as unknown as { code: string }).code : undefined;
    parentPort!.postMessage({ id: job.id, kind: 'error', error: { name: err.name, message: err.message, code, detail } } satisfies WorkerReply);
  }
});
