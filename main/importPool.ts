// Worker threads that read, parse, average and pack run logs for an import (main/importWorker.ts),
// so that a large session uses every core while the calling thread stores what they hand back.
// Results are taken in the order the files were asked for; at most 2·workers + 2 files are in
// flight, which bounds the memory to a few run logs whatever the session's size.
import { availableParallelism } from 'node:os';
import path from 'node:path';
import { Worker } from 'node:worker_threads';
import { LogError, type LogErrorDetail } from '../app/log/errors';
import type { PreparedFile } from './runFile';
import type { CheckpointJob, CheckpointReport, ReduceJob, WorkerJob, WorkerReply } from './importWorker';
import type { RunResult, Settings, Setup, ZeroedRun } from '../app/types';

let workerScript: string | URL | null = null;

/** Where the worker's entry is: set by the packaged app (dist/main/importWorker.cjs); from the
 *  TypeScript sources it is main/importWorker.boot.mjs next to this file (also after null); in the
 *  compiled command line and server (dist/node, scripts/compiled.mjs) dist/node/importWorker.mjs. */
export function setImportWorkerScript(script: string | URL | null): void {
  workerScript = script;
}

function defaultScript(): string | URL {
  if (workerScript) return workerScript;
  const here = typeof import.meta === 'object' && import.meta && typeof import.meta.url === 'string' ? import.meta.url : '';
  if (here) return new URL(/\.[cm]?ts$/.test(here) ? './importWorker.boot.mjs' : './importWorker.mjs', here);
  // A CommonJS bundle (the desktop app) without an explicit script: next to the bundle.
  return path.join(typeof __dirname === 'string' ? __dirname : process.cwd(), 'importWorker.cjs');
}

/** Threads for an import of `bytes` bytes: none below 64 MB (starting threads costs more than it
 *  saves), else one per core. */
export function workersFor(bytes: number): number {
  if (bytes < 64 * 1024 * 1024) return 0;
  return Math.max(1, Math.min(4, availableParallelism()));
}

/** The young generation of each thread's heap, MB. What a thread allocates per run log is short-
 *  lived; V8's default lets each thread's nursery grow to 3 × 16 MB before it collects. Measured
 *  here (2 cores, 30-run session of the bench, 2 threads): peak RSS of the import 212 → 191 MiB,
 *  time unchanged within the noise. */
const WORKER_YOUNG_MB = 8;

function newThread(script: string | URL): Worker {
  return new Worker(script, { resourceLimits: { maxYoungGenerationSizeMb: WORKER_YOUNG_MB } });
}

type Pending = {
  job: Omit<WorkerJob, 'id'> | Omit<ReduceJob, 'id'>;
  onBytes: (n: number) => void;
  resolve: (r: PreparedFile | RunResult[]) => void;
  reject: (e: Error) => void;
};

/** The error a thread reported, rebuilt whole: a LogError with every field (its reason too) and
 *  the very message it had there; any other error with its name, message and code. */
export function errorOf(e: { name: string; message: string; code?: string; detail?: Record<string, unknown> }): Error {
  if (e.name === 'LogError' && e.detail && typeof e.detail.file === 'string') {
    const le = new LogError(e.detail as unknown as LogErrorDetail);
    if (e.message && le.message !== e.message) Object.defineProperty(le, 'message', { value: e.message, enumerable: false, writable: true, configurable: true });
    return le;
  }
  const err = new Error(e.message);
  err.name = e.name;
  if (e.code !== undefined) (err as { code?: string }).code = e.code;
  return err;
}

export class ImportPool {
  private readonly workers: Worker[] = [];
  private readonly idle: Worker[] = [];
  private readonly queue: { id: number; p: Pending }[] = [];
  private readonly running = new Map<number, Pending>();
  private nextId = 1;
  private failed: Error | null = null;
  private closed = false;

  constructor(size: number, private readonly script: string | URL = defaultScript()) {
    for (let i = 0; i < size; i++) {
      const w = newThread(script);
      w.on('message', (m: WorkerReply) => this.onMessage(w, m));
      w.on('error', (e) => this.fail(e instanceof Error ? e : new Error(String(e))));
      w.on('exit', (code) => {
        if (!this.closed && code !== 0) this.fail(new Error(`an import worker stopped (exit code ${code})`));
      });
      this.workers.push(w);
      this.idle.push(w);
    }
  }

  /** True once a thread failed to start or stopped (as opposed to a job that threw). */
  get broken(): boolean {
    return this.failed !== null;
  }

  /** Read one run log on a worker. */
  run(job: Omit<WorkerJob, 'id'>, onBytes: (n: number) => void): Promise<PreparedFile> {
    return this.enqueue(job, onBytes) as Promise<PreparedFile>;
  }

  /** Reduce some runs on a worker (app/reduce.ts reduceRun; results in the order of `runs`). */
  reduce(setup: Setup, runs: ZeroedRun[], settings: Settings): Promise<RunResult[]> {
    return this.enqueue({ kind: 'reduce', setup, runs, settings }, () => undefined) as Promise<RunResult[]>;
  }

  private enqueue(job: Pending['job'], onBytes: (n: number) => void): Promise<PreparedFile | RunResult[]> {
    return new Promise((resolve, reject) => {
      if (this.failed) return reject(this.failed);
      this.queue.push({ id: this.nextId++, p: { job, onBytes, resolve, reject } });
      this.pump();
    });
  }

  private readonly spare: ArrayBuffer[] = [];

  /** Buffers of stored runs, to go back to the threads with their next files (moved, not copied:
   *  the caller must not touch them again). */
  recycle(buffers: ArrayBuffer[]): void {
    for (const b of buffers) if (this.spare.length < 4 * this.workers.length && b.byteLength > 0) this.spare.push(b);
  }

  private pump(): void {
    while (this.idle.length && this.queue.length) {
      const w = this.idle.pop()!;
      const { id, p } = this.queue.shift()!;
      this.running.set(id, p);
      if ('kind' in p.job) {
        w.postMessage({ ...p.job, id } satisfies ReduceJob);
        continue;
      }
      const spare = this.spare.splice(0, Math.max(1, p.job.plan.runs.length));
      w.postMessage({ ...p.job, id, spare } satisfies WorkerJob, spare);
    }
  }

  /**
   * Copy the WAL of database `file` into the file on a fresh thread, closing the import threads at
   * once and that one when it is done. Never rejects: a checkpoint that cannot run is reported
   * (SQLite then checkpoints at a later commit, as it always does).
   */
  checkpointAndClose(file: string): Promise<CheckpointReport> {
    const failed = this.failed;
    this.closed = true;
    // The import threads go, with the buffers and garbage of a whole import (~60 MiB each here);
    // a fresh thread, which allocates almost nothing, copies the WAL while the caller goes on
    // (measured here, 300-run ingest: peak RSS 278 MiB with an import thread kept for it).
    void Promise.all(this.workers.map((x) => x.terminate()));
    if (failed) return Promise.resolve({ ok: false, ms: 0, walFrames: -1, copied: -1, error: 'no import thread left to run it' });
    let w: Worker;
    try {
      w = newThread(this.script);
    } catch (e) {
      return Promise.resolve({ ok: false, ms: 0, walFrames: -1, copied: -1, error: `no thread for it (${e instanceof Error ? e.message : String(e)})` });
    }
    w.on('error', () => undefined); // reported through 'exit'
    const id = this.nextId++;
    return new Promise<CheckpointReport>((resolve) => {
      const done = (r: CheckpointReport) => {
        w.off('message', onMessage);
        w.off('exit', onExit);
        void w.terminate();
        resolve(r);
      };
      const onMessage = (m: WorkerReply) => {
        if (m.id === id && m.kind === 'checkpointed') done(m.report);
      };
      const onExit = (code: number) => done({ ok: false, ms: 0, walFrames: -1, copied: -1, error: `the thread stopped (exit code ${code})` });
      w.on('message', onMessage);
      w.on('exit', onExit);
      w.postMessage({ id, kind: 'checkpoint', file } satisfies CheckpointJob);
    });
  }

  private onMessage(w: Worker, m: WorkerReply): void {
    if (m.kind === 'checkpointed') return;
    const p = this.running.get(m.id);
    if (!p) return;
    if (m.kind === 'progress') {
      p.onBytes(m.bytes);
      return;
    }
    this.running.delete(m.id);
    this.idle.push(w);
    if (m.kind === 'done') p.resolve(m.file);
    else if (m.kind === 'reduced') p.resolve(m.results);
    else p.reject(errorOf(m.error));
    this.pump();
  }

  private fail(e: Error): void {
    if (this.failed) return;
    this.failed = e;
    for (const p of this.running.values()) p.reject(e);
    for (const q of this.queue) q.p.reject(e);
    this.running.clear();
    this.queue.length = 0;
  }

  async close(): Promise<void> {
    this.closed = true;
    await Promise.all(this.workers.map((w) => w.terminate()));
  }
}
