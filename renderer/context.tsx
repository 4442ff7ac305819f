// Shared renderer state: the API handle, the busy indicator and the message line.
import { createContext, useCallback, useContext, useMemo, useRef, useState, type ReactNode } from 'react';
import type { RakelineApi } from '../main/contract';
import { errorText } from './format';

export const ApiContext = createContext<RakelineApi | null>(null);

export function useApi(): RakelineApi {
  const api = useContext(ApiContext);
  if (!api) throw new Error('useApi outside <ApiContext.Provider>');
  return api;
}

export interface Notice { id: number; kind: 'info' | 'error'; text: string; fading?: boolean }

interface Status {
  /** Labels of the tasks running now (the busy indicator shows the latest). */
  busy: string[];
  /** Run a task with the busy indicator on; errors go to the message line and are rethrown. */
  track<T>(label: string, task: () => Promise<T>): Promise<T>;
  notices: Notice[];
  notify(kind: Notice['kind'], text: string): void;
  dismiss(id: number): void;
}

const StatusContext = createContext<Status | null>(null);

export function useStatus(): Status {
  const s = useContext(StatusContext);
  if (!s) throw new Error('useStatus outside <StatusProvider>');
  return s;
}

export function StatusProvider({ children }: { children: ReactNode }) {
  const [busy, setBusy] = useState<string[]>([]);
  const [notices, setNotices] = useState<Notice[]>([]);
  const nextId = useRef(1);

  const notify = useCallback((kind: Notice['kind'], text: string) => {
    const id = nextId.current++;
    setNotices((n) => [...n.slice(-4), { id, kind, text }]);
    // Information fades on its own (a second's fade, then gone); errors stay until dismissed.
    if (kind === 'info') {
      setTimeout(() => setNotices((n) => n.map((x) => (x.id === id ? { ...x, fading: true } : x))), 7000);
      setTimeout(() => setNotices((n) => n.filter((x) => x.id !== id)), 8000);
    }
  }, []);
  const dismiss = useCallback((id: number) => setNotices((n) => n.filter((x) => x.id !== id)), []);

  const track = useCallback(async <T,>(label: string, task: () => Promise<T>): Promise<T> => {
    setBusy((b) => [...b, label]);
    try {
      return await task();
    } catch (e) {
      notify('error', `${label}: ${errorText(e)}`);
      throw e;
    } finally {
      setBusy((b) => {
        const i = b.lastIndexOf(label);
        return i < 0 ? b : [...b.slice(0, i), ...b.slice(i + 1)];
      });
    }
  }, [notify]);

  const value = useMemo(() => ({ busy, track, notices, notify, dismiss }), [busy, track, notices, notify, dismiss]);
  return <StatusContext.Provider value={value}>{children}</StatusContext.Provider>;
}

/** Swallow a rejection already reported on the message line. */
export function quiet(p: Promise<unknown>): void {
  p.catch(() => undefined);
}
