// Rakeline's window: session list on the left, the screens of the chosen session as tabs, the
// busy indicator and messages, and the caution line in the footer. Everything goes through the
// typed contract (renderer/bridge.ts getApi()).
import { useCallback, useEffect, useRef, useState } from 'react';
import type { RakelineApi, Results, SessionRowLike } from '../main/contract';
import { ApiContext, StatusProvider, useApi, useStatus, quiet } from './context';
import { useSessionData } from './session';
import { errorText } from './format';
import { LIVE_IDLE, addLiveEvent, type LiveState } from './live';
import { DayLog, download } from './screens/DayLog';
import { RunInspector } from './screens/RunInspector';
import { Polars } from './screens/Polars';
import { Intake } from './screens/Intake';
import { SessionSettings } from './screens/SessionSettings';
import { DaySheet } from './screens/DaySheet';
import { SideBySide } from './screens/SideBySide';
import { ReviewerPrompt } from './components/ReviewerPrompt';
import { ErrorBoundary } from './components/ErrorBoundary';

export type Screen = 'daylog' | 'inspector' | 'polars' | 'compare' | 'settings' | 'sheet' | 'intake';

export const SCREENS: { id: Screen; title: string; needsSession: boolean }[] = [
  { id: 'daylog', title: 'Day log', needsSession: true },
  { id: 'inspector', title: 'Run inspector', needsSession: true },
  { id: 'polars', title: 'Polars', needsSession: true },
  { id: 'settings', title: 'Session settings', needsSession: true },
  { id: 'sheet', title: 'Day sheet', needsSession: true },
  { id: 'compare', title: 'Side by side', needsSession: false },
  { id: 'intake', title: 'Intake', needsSession: false },
];

export const CAUTION = 'Reduced data are for review by a qualified engineer; facility safety rules and local practice come first.';

export function App({ api }: { api: RakelineApi }) {
  return (
    <ApiContext.Provider value={api}>
      <StatusProvider>
        <Shell />
      </StatusProvider>
    </ApiContext.Provider>
  );
}

function Shell() {
  const api = useApi();
  const { busy, notices, notify, dismiss, track } = useStatus();
  const [info, setInfo] = useState<Results['app.info'] | null>(null);
  const [sessions, setSessions] = useState<SessionRowLike[]>([]);
  const [sessionId, setSessionId] = useState<number | null>(null);
  const [screen, setScreen] = useState<Screen>('daylog');
  const [run, setRun] = useState<number | null>(null);
  const [live, setLive] = useState<LiveState>(LIVE_IDLE);
  const onError = useCallback((e: unknown) => notify('error', errorText(e)), [notify]);
  const { data, reload } = useSessionData(api, sessionId, onError);

  const refreshSessions = useCallback(async () => {
    const list = await api.call('sessions.list', {});
    setSessions(list);
    return list;
  }, [api]);

  useEffect(() => {
    quiet(track('Connecting', async () => {
      const [i, list, w] = await Promise.all([api.call('app.info', {}), refreshSessions(), api.call('watch.status', {}).catch(() => null)]);
      setInfo(i);
      if (w) setLive((s) => ({ ...s, watching: w.watching, folder: w.folder }));
      const first = list.find((s) => s.id === i.demoSessionId) ?? list[0];
      if (first) setSessionId(first.id);
      else setScreen('intake');
    }));
  }, [api, refreshSessions, track]);

  // Live mode: runs arriving from the watched folder.
  useEffect(() => api.on('watch.run', (e) => {
    setLive((s) => addLiveEvent(s, e));
    if (!e.ok) return;
    quiet(refreshSessions());
    setSessionId((cur) => cur ?? e.sessionId);
    if (e.sessionId !== null && e.sessionId === sessionId) quiet(reload());
  }), [api, sessionId, reload, refreshSessions]);

  // Native menu commands (desktop app).
  useEffect(() => api.on('menu', (m) => {
    switch (m.command) {
      case 'open-folder':
      case 'import':
      case 'toggle-watch':
        setScreen('intake');
        break;
      case 'print-sheet':
        if (sessionId !== null) setScreen('sheet');
        break;
      case 'export-csv':
      case 'export-json':
        if (sessionId !== null) {
          const format = m.command === 'export-csv' ? 'csv' : 'json';
          quiet(track('Exporting', async () => {
            const r = await api.call('export.results', { sessionId, format });
            download(r.text, r.suggestedName, r.mime);
          }));
        }
        break;
      case 'open-recent':
        if (m.arg && /^\d+$/.test(m.arg)) setSessionId(Number(m.arg));
        break;
      default:
    }
  }), [api, sessionId, track]);

  const openSession = (id: number) => {
    setSessionId(id);
    setRun(null);
    setScreen('daylog');
  };
  const openRun = (r: number) => {
    setRun(r);
    setScreen('inspector');
  };
  const reloadAll = useCallback(async () => {
    await Promise.all([reload(), refreshSessions()]);
  }, [reload, refreshSessions]);

  // Each screen opens at its top.
  const mainRef = useRef<HTMLElement>(null);
  useEffect(() => {
    mainRef.current?.scrollTo?.({ top: 0 });
  }, [screen, sessionId]);

  const current = sessions.find((s) => s.id === sessionId) ?? null;
  const needData = SCREENS.find((s) => s.id === screen)?.needsSession ?? false;

  return (
    <div className="app">
      <header className="app-head">
        <div className="brand"><span className="brand-mark" aria-hidden="true">◢</span> Rakeline</div>
        <nav className="tabs" aria-label="Screens">
          {SCREENS.map((s) => (
            <button
              key={s.id}
              type="button"
              className="tab"
              aria-current={screen === s.id ? 'page' : undefined}
              disabled={s.needsSession && sessionId === null}
              onClick={() => setScreen(s.id)}
            >
              {s.title}
            </button>
          ))}
        </nav>
        <div className="busy" role="status" aria-live="polite">
          {busy.length ? <><span className="spinner" aria-hidden="true" /> <span className="busy-label">{busy[busy.length - 1]}…</span></> : <span className="idle">ready</span>}
        </div>
      </header>

      <div className="app-body">
        <aside className="sessions" aria-label="Sessions">
          <h2>Sessions</h2>
          {sessions.length === 0 ? <p className="small muted">None yet. Use Intake to import a session.</p> : null}
          <ul>
            {sessions.map((s) => (
              <li key={s.id}>
                <button type="button" className={`session-item${s.id === sessionId ? ' session-on' : ''}`} aria-current={s.id === sessionId ? 'true' : undefined} onClick={() => openSession(s.id)}>
                  <span className="session-name">{s.title}</span>
                  <span className="session-meta">{s.date} · {s.model}</span>
                  <span className="session-meta">{s.dataRunCount} data runs{sessionCount(s)}</span>
                </button>
              </li>
            ))}
          </ul>
          <button type="button" className="btn-wide" onClick={() => setScreen('intake')}>+ Import a session</button>
          {/* Messages stack in the sidebar's lower corner, in the page flow: they never cover a control. */}
          {notices.length ? (
            <div className="notices" aria-label="Messages">
              {notices.map((n) => (
                <div key={n.id} className={`notice notice-${n.kind}${n.fading ? ' notice-fading' : ''}`} role={n.kind === 'error' ? 'alert' : 'status'}>
                  <span>{n.kind === 'error' ? '✖ ' : 'ℹ '}{n.text}</span>
                  <button type="button" className="btn-small" onClick={() => dismiss(n.id)} aria-label="Dismiss message">×</button>
                </div>
              ))}
            </div>
          ) : null}
        </aside>

        <main ref={mainRef} className="screen" aria-label={SCREENS.find((s) => s.id === screen)?.title}>
          <ErrorBoundary resetKey={`${screen}:${sessionId}:${run}`}>
          {screen === 'compare' ? (
            <SideBySide sessions={sessions} currentSessionId={sessionId} />
          ) : screen === 'intake' ? (
            <Intake
              mode={info?.mode ?? 'browser'}
              live={live}
              setLive={setLive}
              onImported={(id) => { quiet(refreshSessions()); if (id === sessionId) quiet(reload()); else setSessionId(id); }}
              onOpenSession={openSession}
            />
          ) : needData && !data ? (
            <p className="muted">{current ? `Loading ${current.title}…` : 'Choose a session on the left, or import one.'}</p>
          ) : data ? (
            <>
              {screen === 'daylog' ? <DayLog data={data} selected={run} onSelect={setRun} onOpen={openRun} reload={reloadAll} live={live} /> : null}
              {screen === 'inspector' ? <RunInspector data={data} run={run} onRun={setRun} reload={reloadAll} /> : null}
              {screen === 'polars' ? <Polars data={data} onOpen={openRun} /> : null}
              {screen === 'settings' ? <SessionSettings data={data} reload={reloadAll} /> : null}
              {screen === 'sheet' ? <DaySheet data={data} mode={info?.mode ?? 'browser'} /> : null}
            </>
          ) : null}
          </ErrorBoundary>
        </main>
      </div>

      {info && info.mode === 'browser' && info.reviewer === null ? (
        <ReviewerPrompt onNamed={(reviewer) => setInfo((i) => (i ? { ...i, reviewer } : i))} />
      ) : null}
      <footer className="app-foot">
        <p className="caution"><span aria-hidden="true">⚠</span> {CAUTION}</p>
        <p className="foot-meta">{info ? `Rakeline ${info.version} · core ${info.coreVersion} · ${info.mode === 'electron' ? 'desktop' : 'browser mode'} · ${info.dbFile}` : 'connecting…'}</p>
      </footer>
    </div>
  );
}

/** The sidebar's count of a session: the runs needing a decision (the flags the session findings
 *  explain are notes, not decisions), or the flagged runs where the count was not given. */
function sessionCount(s: SessionRowLike) {
  const n = s.decisionCount ?? s.flaggedCount;
  if (!n) return s.decisionCount === 0 && s.flaggedCount ? <> · <span className="muted" title="Every flag of this session is explained by a session finding">none to decide</span></> : null;
  const words = s.decisionCount !== undefined ? `${n} need${n === 1 ? 's' : ''} a decision` : `${n} flagged`;
  return <> · <span className="warn-text">▲ {words}</span></>;
}
