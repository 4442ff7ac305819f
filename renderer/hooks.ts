// Small hooks over the API: event subscriptions and task progress.
import { useEffect, useState } from 'react';
import type { EventName, Events } from '../main/contract';
import { useApi } from './context';

export function useEvent<E extends EventName>(event: E, listener: (data: Events[E]) => void): void {
  const api = useApi();
  useEffect(() => api.on(event, listener), [api, event, listener]);
}

export type TaskProgress = { fraction: number | null; label: string; phase: string };

const PHASE_WORD: Record<string, string> = { scan: 'Scanning', parse: 'Reading', store: 'Storing', reduce: 'Reducing', check: 'Checking', read: 'Reading files' };

/** Progress of the main-side task with this id (null until its first event). Phases are weighted
 *  so the bar moves forward through scan → parse → store → reduce. */
export function progressFraction(p: Events['progress']): number | null {
  if (!(p.total > 0)) return null;
  const f = Math.min(1, Math.max(0, p.done / p.total));
  const span: Record<string, [number, number]> = { scan: [0, 0.05], parse: [0.05, 0.55], store: [0.55, 0.7], reduce: [0.7, 1] };
  const [a, b] = span[p.phase] ?? [0, 1];
  return a + (b - a) * f;
}

export function useTaskProgress(taskId: string | null, weighted = true): TaskProgress | null {
  const api = useApi();
  const [p, setP] = useState<TaskProgress | null>(null);
  useEffect(() => {
    setP(null);
    if (!taskId) return undefined;
    return api.on('progress', (e) => {
      if (e.taskId !== taskId) return;
      const fraction = weighted ? progressFraction(e) : (e.total > 0 ? e.done / e.total : null);
      setP({ fraction, label: e.label || `${PHASE_WORD[e.phase] ?? e.phase} ${e.done} of ${e.total}`, phase: e.phase });
    });
  }, [api, taskId, weighted]);
  return p;
}

let taskSeq = 0;
/** A task id unique within this window. */
export function newTaskId(prefix: string): string {
  taskSeq += 1;
  return `${prefix}-${Date.now().toString(36)}-${taskSeq}`;
}
