// Messages between the UI thread and renderer/worker.ts.
import type { Settings, Setup, ZeroedRun } from '../app/types';
import type { PlainError, UploadFile } from './workerTasks';

export type WorkerTask =
  | { task: 'check'; files: UploadFile[] }
  | { task: 'reduce'; setup: Setup; zeroed: ZeroedRun; settings: Settings };

export type WorkerRequest = WorkerTask & { id: number };

export type WorkerResponse =
  | { id: number; type: 'progress'; done: number; total: number; label: string }
  | { id: number; type: 'done'; value: unknown }
  | { id: number; type: 'error'; error: PlainError };
