// "Day log": the session overview — who, where, what model, the day's conditions, and the run
// table with flags and reviews. The side panel shows the selected run's flags and the review.
import { useMemo, useState } from 'react';
import type { SessionData } from '../session';
import { RunTable, runFlags, type NotedFlags } from '../components/RunTable';
import { FlagReasons, StaleReasons } from '../components/FlagBadge';
import { staleRunNumbers } from '../../app/stale';
import { notesByRun } from '../../app/sessionFaults';
import { ReviewPanel } from '../components/ReviewPanel';
import { useApi, useStatus, quiet } from '../context';
import { fix, range, reMillions, when } from '../format';
import { newTaskId, useTaskProgress } from '../hooks';
import { ProgressBar } from '../components/ProgressBar';

export interface DayLogProps {
  data: SessionData;
  selected: number | null;
  onSelect(run: number): void;
  onOpen(run: number): void;
  reload(): Promise<void>;
  live: { watching: boolean; folder: string | null; lastRun: number | null; sessionId?: number | null };
}

export function download(text: string | Blob, name: string, mime: string): void {
  const url = URL.createObjectURL(new Blob([text], { type: mime }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

export function DayLog({ data, selected, onSelect, onOpen, reload, live }: DayLogProps) {
  const api = useApi();
  const { track, notify } = useStatus();
  const { session, setup, summary } = data;
  const [showZeros, setShowZeros] = useState(true);
  const [flaggedOnly, setFlaggedOnly] = useState(false);
  const [task, setTask] = useState<string | null>(null);
  const progress = useTaskProgress(task, false);

  // The flags session findings explain are notes, not decisions: they neither count a run as
  // flagged nor pass the "flagged only" filter.
  const noted: NotedFlags = useMemo(() => notesByRun(summary), [summary]);
  const flaggedRun = (r: (typeof data.runs)[number]) => runFlags(r, noted).decision.length > 0;
  const runs = useMemo(() => data.runs.filter((r) => (showZeros || r.kind === 'data') && (!flaggedOnly || runFlags(r, noted).decision.length > 0)), [data.runs, showZeros, flaggedOnly, noted]);
  const row = data.runs.find((r) => r.run === selected) ?? null;
  const rowFlags = row ? runFlags(row, noted) : null;
  const c = summary?.conditions ?? null;
  const flaggedCount = data.runs.filter(flaggedRun).length;
  const notesOnly = data.runs.filter((r) => !flaggedRun(r) && runFlags(r, noted).notes.length > 0).length;
  const reviewed = data.runs.filter((r) => r.review).length;
  const stale = staleRunNumbers(data.runs);
  // The live banner belongs to the session being watched only.
  const liveHere = live.watching && (live.sessionId != null ? live.sessionId === session.id : live.folder !== null && live.folder === session.folder);

  const exportAs = (format: 'csv' | 'json') =>
    quiet(track(`Exporting ${format.toUpperCase()}`, async () => {
      const r = await api.call('export.results', { sessionId: session.id, format });
      download(r.text, r.suggestedName, r.mime);
      notify('info', `Exported ${r.suggestedName}`);
    }));

  const reduce = (which: 'all' | 'stale') => {
    const taskId = newTaskId('reduce');
    setTask(taskId);
    quiet(track(which === 'stale' ? 'Re-reducing the stale runs' : 'Re-reducing every run', async () => {
      try {
        const r = await api.call('runs.reduce', which === 'stale' ? { sessionId: session.id, stale: true, taskId } : { sessionId: session.id, taskId });
        notify('info', `Re-reduced ${r.reduced} run${r.reduced === 1 ? '' : 's'} with the session's current settings and zeros.`);
        await reload();
      } finally {
        setTask(null);
      }
    }));
  };

  return (
    <div className="daylog">
      <header className="session-head">
        <div className="session-title">
          <h2>{session.title}</h2>
          <p className="session-sub">
            <span><b>Facility</b> {setup.facility.name} ({fix(setup.facility.sectionHeight, 2)} m × {fix(setup.facility.sectionWidth, 2)} m)</span>
            <span><b>Model</b> {setup.model.name}, c = {fix(setup.model.chord, 3)} m, b = {fix(setup.model.span, 2)} m</span>
            <span><b>Date</b> {session.date}</span>
            <span><b>Operators</b> {setup.session.operators.join(', ') || '–'}</span>
          </p>
        </div>
        <dl className="conditions">
          <div><dt>q</dt><dd>{range(c?.qMin, c?.qMax, 0, 'Pa')}</dd></div>
          <div><dt>Re</dt><dd>{c ? `${reMillions(c.ReMin)} … ${reMillions(c.ReMax)} ×10⁶` : '–'}</dd></div>
          <div><dt>α</dt><dd>{range(c?.alphaMin, c?.alphaMax, 1, '°')}</dd></div>
          <div><dt>T</dt><dd>{range(c?.tempMin, c?.tempMax, 1, '°C')}</dd></div>
          <div><dt>p<sub>baro</sub></dt><dd>{c ? range(c.baroMin / 100, c.baroMax / 100, 1, 'hPa') : '–'}</dd></div>
          <div><dt>Runs</dt><dd>{session.runCount} ({session.dataRunCount} data)</dd></div>
          <div title="Data runs with a flag of their own, one that no session finding explains: the runs needing a decision"><dt>Need a decision</dt><dd className={flaggedCount ? 'warn-text' : undefined} data-testid="flagged-count">{flaggedCount}</dd></div>
          {notesOnly ? <div title="Data runs whose only flags are explained by the session findings (a note on each run, not a decision)"><dt>Notes only</dt><dd data-testid="notes-only-count">{notesOnly}</dd></div> : null}
          <div><dt>Reviewed</dt><dd>{reviewed}</dd></div>
          <div><dt>Stale</dt><dd className={stale.length ? 'warn-text' : undefined} data-testid="stale-count">{stale.length}</dd></div>
        </dl>
      </header>
      {summary?.findings?.length ? (
        <div className="notice session-findings" role="status">
          <b>Session findings</b> (reported once; on each run they are a note, ℹ, not a decision, and do not count the run as flagged):
          <ul>{summary.findings.map((f) => <li key={`${f.code}:${f.tap}`}>{f.text}</li>)}</ul>
        </div>
      ) : null}

      <div className="toolbar" role="toolbar" aria-label="Run table tools">
        <label><input type="checkbox" checked={showZeros} onChange={(e) => setShowZeros(e.target.checked)} /> wind-off zeros</label>
        <label title="Runs with a flag of their own (the notes of the session findings left out)"><input type="checkbox" checked={flaggedOnly} onChange={(e) => setFlaggedOnly(e.target.checked)} /> flagged only</label>
        <span className="toolbar-gap" />
        {liveHere ? <span className="live-chip" title={live.folder ?? undefined}><span aria-hidden="true">●</span> Live: watching {live.folder}{live.lastRun !== null ? `, last run ${live.lastRun}` : ''}</span> : null}
        <span className="hint">α<sub>c</sub>, q, Re, c<sub>l</sub>, c<sub>d</sub>, c<sub>m</sub> and Γ wall-corrected · ↑/↓ select · Enter opens · click a header to sort</span>
        <button type="button" onClick={() => reduce('stale')} disabled={!stale.length || task !== null} title={stale.length ? `Runs ${stale.join(', ')}: reduced with other settings, bad taps or zeros than the session's now` : 'Every result is up to date'}>
          Re-reduce stale runs ({stale.length})
        </button>
        <button type="button" onClick={() => reduce('all')} disabled={task !== null}>Re-reduce all</button>
        <button type="button" onClick={() => exportAs('csv')}>Export CSV</button>
        <button type="button" onClick={() => exportAs('json')}>Export JSON</button>
      </div>
      {task ? <ProgressBar fraction={progress?.fraction ?? null} label={progress?.label ?? 'Starting…'} name="Reduction progress" /> : null}

      <div className="daylog-body">
        <RunTable runs={runs} selected={selected} onSelect={onSelect} onOpen={onOpen} caption={`Runs of ${session.title}`} noted={noted} />
        <aside className="side-panel" aria-label="Selected run">
          {row ? (
            <>
              <h3>Run {row.run} <span className="muted">{row.kind === 'data' ? `α ${fix(row.alphaDeg, 2)}°` : 'wind-off zero'}</span></h3>
              <p className="muted small">{when(row.time)} · {fix(row.temperatureC, 1)} °C · {fix(row.baro / 100, 1)} hPa · RH {fix(row.humidity, 0)} %</p>
              {row.kind === 'data' ? (
                <>
                  {row.result ? <FlagReasons flags={rowFlags!.decision} notes={rowFlags!.notes} /> : <p>Not reduced yet.</p>}
                  <StaleReasons mark={row.stale} />
                  <button type="button" className="btn-primary" onClick={() => onOpen(row.run)}>Open in Run inspector ↵</button>
                  <ReviewPanel row={row} onSaved={() => void reload()} />
                </>
              ) : <p>Wind-off zeros are subtracted from the data runs around them.</p>}
            </>
          ) : <p className="muted">Select a run (click or ↑/↓) to see its flags and review it.</p>}
        </aside>
      </div>
    </div>
  );
}
