// Loading one session's data (header, setup, settings, runs, summary) through the contract.
import { useCallback, useEffect, useRef, useState } from 'react';
import type { RakelineApi, RunRowLike, SessionRowLike } from '../main/contract';
import type { SessionSummary, Settings, Setup } from '../app/types';

export interface SessionData {
  session: SessionRowLike;
  setup: Setup;
  settings: Settings;
  runs: RunRowLike[];
  summary: SessionSummary | null;
}

export async function loadSession(api: RakelineApi, sessionId: number): Promise<SessionData> {
  const [got, runs, summary] = await Promise.all([
    api.call('sessions.get', { sessionId }),
    api.call('runs.list', { sessionId }),
    api.call('session.summary', { sessionId }).catch(() => null),
  ]);
  return { session: got.session, setup: got.setup, settings: got.settings, runs, summary };
}

/** The current session's data; reload() refetches (after imports, reductions, overrides). */
export function useSessionData(api: RakelineApi, sessionId: number | null, onError: (e: unknown) => void) {
  const [data, setData] = useState<SessionData | null>(null);
  const [loading, setLoading] = useState(false);
  const seq = useRef(0);
  const reload = useCallback(async () => {
    if (sessionId === null) {
      setData(null);
      return;
    }
    const mine = ++seq.current;
    setLoading(true);
    try {
      const d = await loadSession(api, sessionId);
      if (mine === seq.current) setData(d);
    } catch (e) {
      if (mine === seq.current) onError(e);
    } finally {
      if (mine === seq.current) setLoading(false);
    }
  }, [api, sessionId, onError]);
  useEffect(() => {
    setData((d) => (d && d.session.id === sessionId ? d : null));
    void reload();
  }, [reload, sessionId]);
  return { data, loading, reload };
}
