// Import worker thread: reads run logs from disk, hashing and parsing them as they stream in, and
// hands back their runs packed and averaged (main/runFile.ts) so that the calling thread only has
// to store them. Started by main/importPool.ts; one file at a time per worker.
import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import { parentPort } from 'node:worker_threads';
import type { RunInfo, Setup } from '../app/types';
import type { RunFilePlan } from '../app/log/session';
import { RunFileReader } from './runFile';

export interface WorkerJob {
  id: number;
  path: string;
  plan: RunFilePlan;
  infos: RunInfo[];
  setup: Setup;
  spikeK: number;
  chunkSize: number;
}

export type WorkerReply =
  | { id: number; kind: 'progress'; bytes: number }
  | { id: number; kind: 'done'; file: import('./runFile').PreparedFile }
  | { id: number; kind: 'error'; error: { name: string; message: string; detail?: Record<string, unknown> } };

/** Progress is reported every this many bytes. */
const PROGRESS_STEP = 4 << 20;

function run(job: WorkerJob): void {
  const port = parentPort!;
  const fd = openSync(job.path, 'r');
  let reader: RunFileReader;
  let sinceReport = 0;
  try {
    reader = new RunFileReader(job.plan, job.setup, new Map(job.infos.map((i) => [i.run, i])), job.spikeK, fstatSync(fd).size);
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

parentPort?.on('message', (job: WorkerJob) => {
  try {
    run(job);
  } catch (e) {
    const err = e instanceof Error ? e : new Error(String(e));
    const detail = typeof (err as { toJSON?: () => unknown }).toJSON === 'function'
      ? ((err as unknown as { toJSON: () => Record<string, unknown> }).toJSON())
      : undefined;
    parentPort!.postMessage({ id: job.id, kind: 'error', error: { name: err.name, message: err.message, detail } } satisfies WorkerReply);
  }
});
