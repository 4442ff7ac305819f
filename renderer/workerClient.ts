// Promise front of renderer/worker.ts. One worker for the renderer's life; if a Worker cannot be
// made or fails to load (file:// restrictions, say) the same functions run on the UI thread
// instead, after yielding once so the busy indicator gets painted.
import type { RunResult, Settings, Setup, ZeroedRun } from '../app/types';
import type { WorkerRequest, WorkerResponse, WorkerTask } from './workerProtocol';
import type { CheckReport, PlainError, Progress, UploadFile } from './workerTasks';

type Pending = { task: WorkerTask; resolve: (v: unknown) => void; reject: (e: Error) => void; progress?: Progress };

export class WorkerTaskError extends Error {
  readonly file?: string;
  readonly line?: number;
  readonly column?: string;
  constructor(e: PlainError) {
    super(e.message);
    this.name = 'WorkerTaskError';
    this.file = e.file;
    this.line = e.line;
    this.column = e.column;
  }
}

let worker: Worker | null | undefined;
let nextId = 1;
const pending = new Map<number, Pending>();

function getWorker(): Worker | null {
  if (worker !== undefined) return worker;
  try {
    const w = new Worker(new URL('./worker.ts', import.meta.url), { type: 'module' });
    w.onmessage = (ev: MessageEvent<WorkerResponse>) => {
      const m = ev.data;
      const p = pending.get(m.id);
      if (!p) return;
      if (m.type === 'progress') p.progress?.(m.done, m.total, m.label);
      else {
        pending.delete(m.id);
        if (m.type === 'done') p.resolve(m.value);
        else p.reject(new WorkerTaskError(m.error));
      }
    };
    w.onerror = (ev) => {
      // The worker did not load: run whatever was waiting on the UI thread.
      ev.preventDefault();
      w.terminate();
      worker = null;
      const waiting = [...pending.values()];
      pending.clear();
      for (const p of waiting) runInline(p.task, p.progress).then(p.resolve, p.reject);
    };
    worker = w;
  } catch {
    worker = null;
  }
  return worker;
}

async function runInline(task: WorkerTask, progress?: Progress): Promise<unknown> {
  await new Promise((r) => setTimeout(r, 0));
  const t = await import('./workerTasks');
  try {
    return task.task === 'check' ? t.checkFiles(task.files, progress) : t.reduceOne(task.setup, task.zeroed, task.settings);
  } catch (e) {
    throw new WorkerTaskError(t.plainError(e));
  }
}

function send(task: WorkerTask, progress?: Progress): Promise<unknown> {
  const w = getWorker();
  if (!w) return runInline(task, progress);
  const id = nextId++;
  return new Promise((resolve, reject) => {
    pending.set(id, { task, resolve, reject, progress });
    w.postMessage({ ...task, id } satisfies WorkerRequest);
  });
}

/** Check chosen files in the worker with the app/log parser. */
export function checkInWorker(files: UploadFile[], progress?: Progress): Promise<CheckReport> {
  return send({ task: 'check', files }, progress) as Promise<CheckReport>;
}

/** Reduce one run in the worker with app/reduce.ts reduceRun. */
export function reduceInWorker(setup: Setup, zeroed: ZeroedRun, settings: Settings): Promise<RunResult> {
  return send({ task: 'reduce', setup, zeroed, settings }) as Promise<RunResult>;
}
