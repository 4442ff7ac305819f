// The renderer's Web Worker: file checks and run reductions off the UI thread.
// Messages: { id, task: 'check', files } | { id, task: 'reduce', setup, zeroed, settings };
// answers { id, type: 'progress' | 'done' | 'error', ... } (see workerClient.ts).
/// <reference lib="webworker" />
import { checkFiles, plainError, reduceOne } from './workerTasks';
import type { WorkerRequest, WorkerResponse } from './workerProtocol';

const scope = self as unknown as DedicatedWorkerGlobalScope;

function post(msg: WorkerResponse): void {
  scope.postMessage(msg);
}

scope.onmessage = (ev: MessageEvent<WorkerRequest>) => {
  const req = ev.data;
  try {
    if (req.task === 'check') {
      let last = 0;
      const value = checkFiles(req.files, (done, total, label) => {
        const now = Date.now();
        if (now - last < 50 && done < total) return;
        last = now;
        post({ id: req.id, type: 'progress', done, total, label });
      });
      post({ id: req.id, type: 'done', value });
    } else if (req.task === 'reduce') {
      post({ id: req.id, type: 'done', value: reduceOne(req.setup, req.zeroed, req.settings) });
    } else {
      post({ id: (req as { id: number }).id, type: 'error', error: { message: 'unknown worker task' } });
    }
  } catch (e) {
    post({ id: req.id, type: 'error', error: plainError(e) });
  }
};
