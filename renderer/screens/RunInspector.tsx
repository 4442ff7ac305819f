// "Run inspector": one data run in full. Cp(x/c) with the inviscid panel overlay, wake profile,
// floor/ceiling signatures, coefficients (uncorrected | corrected | 95 % interval), circulation by
// each method, flags in words, and tap overrides: click a tap on the chart or use the tap list to
// mark it bad or restore it — the run is re-reduced at once in the worker, the change is shown,
// then the override and the new result are stored through the contract, and every other data run
// of the session (a bad tap is bad for the whole session) is re-reduced in main, with progress.
// Taps the reduction dropped automatically are suggestions: the "Dropped taps" list beside the
// manual ones confirms one (a session bad tap) or keeps it in this run (docs/TAP-JUDGEMENT.md §5),
// through "taps.settle", then re-reduces the runs that became stale, with progress.
// ←/→ and Page Up/Page Down step to the previous/next data run.
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import type { RunRowLike, Results } from '../../main/contract';
import type { Flag, Interval, RunResult, TapCp } from '../../app/types';
import { correctedMomentumCl } from '../../app/reduce';
import { liftTolerance } from '../../app/crosscheck';
import { badTapWords, flagLine } from '../../app/flags';
import { notesByRun, splitFlags } from '../../app/sessionFaults';
import type { SessionData } from '../session';
import { useApi, useStatus, quiet } from '../context';
import { reduceInWorker } from '../workerClient';
import { badTapIds, cpChartConfig, rowsOf, wakeChartConfig, wallChartConfig } from '../charts';
import { Plot } from '../components/Plot';
import { FlagReasons, StaleReasons } from '../components/FlagBadge';
import { ProgressBar } from '../components/ProgressBar';
import { newTaskId, useTaskProgress } from '../hooks';
import { ReviewPanel } from '../components/ReviewPanel';
import { BudgetTable } from '../components/BudgetTable';
import { CorrectionCompare } from '../components/CorrectionCompare';
import { fix, isNum, reMillions, sig, when } from '../format';

export interface TapChange {
  tapId: string;
  bad: boolean;
  /** Set for a settled automatic drop: what the engineer decided. */
  decision?: 'confirm' | 'keep' | 'release';
  before: { cl: number; cd: number; cmc4: number; clMom: number };
  after: { cl: number; cd: number; cmc4: number; clMom: number };
  stored: boolean;
  /** Other data runs re-reduced for the change: null while that runs. */
  others: number | null;
}

const pick = (r: RunResult) => ({ cl: r.corrected.cl, cd: r.corrected.cd, cmc4: r.corrected.cmc4, clMom: r.clMomentum });

/** What a change did, in words: "marked bad", "restored", "confirmed bad", "kept in this run"… */
export function changeVerb(c: Pick<TapChange, 'bad' | 'decision'>): string {
  if (c.decision === 'confirm') return 'confirmed bad (the automatic drop, now for the whole session)';
  if (c.decision === 'keep') return 'kept in this run against the automatic test';
  if (c.decision === 'release') return 'no longer kept: the automatic test judges it again';
  return c.bad ? 'marked bad' : 'restored';
}

/** "cl 0.812 → 0.806, cd 0.01234 → 0.01240, cm −0.0901 → −0.0898" */
export function changeText(c: Pick<TapChange, 'before' | 'after'>): string {
  return [
    `cl ${fix(c.before.cl, 4)} → ${fix(c.after.cl, 4)}`,
    `cd ${fix(c.before.cd, 5)} → ${fix(c.after.cd, 5)}`,
    `cm ${fix(c.before.cmc4, 4)} → ${fix(c.after.cmc4, 4)}`,
  ].join(', ');
}

function iv(i: Interval | undefined, d: number): string {
  return i && isNum(i.lo) && isNum(i.hi) ? `${fix(i.lo, d)} … ${fix(i.hi, d)}` : '–';
}

export interface RunInspectorProps {
  data: SessionData;
  run: number | null;
  onRun(run: number): void;
  reload(): Promise<void>;
}

export function RunInspector({ data, run, onRun, reload }: RunInspectorProps) {
  const api = useApi();
  const { track } = useStatus();
  const sessionId = data.session.id;
  const dataRuns = useMemo(() => data.runs.filter((r) => r.kind === 'data'), [data.runs]);
  // The flags session findings explain are notes on the run, not decisions (app/sessionFaults.ts).
  const noted = useMemo(() => notesByRun(data.summary), [data.summary]);
  const current = run !== null && dataRuns.some((r) => r.run === run) ? run : dataRuns[0]?.run ?? null;
  const [got, setGot] = useState<Results['runs.get'] | null>(null);
  const [shown, setShown] = useState<RunResult | null>(null);
  const [row, setRow] = useState<string | null>(null);
  const [changes, setChanges] = useState<TapChange[]>([]);
  const [comment, setComment] = useState('');
  const [working, setWorking] = useState<string | null>(null);
  const [task, setTask] = useState<string | null>(null);
  const progress = useTaskProgress(task, false);

  const load = useCallback(async () => {
    if (current === null) return;
    const r = await api.call('runs.get', { sessionId, run: current });
    setGot(r);
    setShown(r.result);
  }, [api, sessionId, current]);

  useEffect(() => {
    setGot(null);
    setShown(null);
    setChanges([]);
    if (current !== null && current !== run) onRun(current);
    quiet(track(`Loading run ${current}`, load));
  }, [current]); // eslint-disable-line react-hooks/exhaustive-deps

  const result = shown;
  const rows = result ? rowsOf(result) : [];
  const rowName = row && rows.includes(row) ? row : rows[0];
  const marked = new Set(data.settings.badTaps);

  const toggleTap = useCallback((tapId: string) => {
    if (!result || current === null || working) return;
    const runNo = current;
    setWorking(tapId);
    quiet(track(`Re-reducing run ${runNo}`, async () => {
      try {
        const input = await api.call('runs.reductionInput', { sessionId, run: runNo });
        const set = new Set(input.settings.badTaps);
        const bad = !set.has(tapId);
        if (bad) set.add(tapId);
        else set.delete(tapId);
        const next = await reduceInWorker(input.setup, input.zeroed, { ...input.settings, badTaps: [...set] });
        const change: TapChange = { tapId, bad, before: pick(result), after: pick(next), stored: false, others: null };
        setShown(next);
        setChanges((c) => [change, ...c]);
        await api.call('taps.setBad', { sessionId, tapId, bad, comment: comment.trim() || undefined });
        await api.call('runs.saveResults', { sessionId, results: [next as unknown as Record<string, unknown>] });
        setChanges((c) => c.map((x) => (x === change ? { ...x, stored: true } : x)));
        // The tap is bad (or good) for the whole session: the other data runs are now stale and
        // are re-reduced in main (off this thread), with a progress bar.
        const taskId = newTaskId('reduce');
        setTask(taskId);
        let others = 0;
        try {
          others = (await api.call('runs.reduce', { sessionId, stale: true, taskId })).reduced;
        } finally {
          setTask(null);
        }
        setChanges((c) => c.map((x) => (x.tapId === change.tapId && x.after === change.after ? { ...x, stored: true, others } : x)));
        await reload();
        const fresh = await api.call('runs.get', { sessionId, run: runNo });
        setGot(fresh);
        if (fresh.result) setShown(fresh.result);
      } finally {
        setWorking(null);
      }
    }));
  }, [api, sessionId, current, result, working, comment, reload, track]);

  // Settle an automatic drop (confirm / keep) or take a keep back: stored and audited in main,
  // then the runs it made stale (all of them for a confirm, this one for a keep) are re-reduced.
  const settle = useCallback((tapId: string, decision: 'confirm' | 'keep' | 'release') => {
    if (!result || current === null || working) return;
    const runNo = current;
    setWorking(tapId);
    quiet(track(`Settling tap ${tapId} of run ${runNo}`, async () => {
      try {
        await api.call('taps.settle', { sessionId, run: runNo, tapId, decision, comment: comment.trim() || undefined });
        const change: TapChange = { tapId, bad: decision === 'confirm', decision, before: pick(result), after: pick(result), stored: true, others: null };
        setChanges((c) => [change, ...c]);
        const taskId = newTaskId('reduce');
        setTask(taskId);
        let reduced = 0;
        try {
          reduced = (await api.call('runs.reduce', { sessionId, stale: true, taskId })).reduced;
        } finally {
          setTask(null);
        }
        await reload();
        const fresh = await api.call('runs.get', { sessionId, run: runNo });
        setGot(fresh);
        if (fresh.result) setShown(fresh.result);
        const after = fresh.result ? pick(fresh.result) : change.after;
        setChanges((c) => c.map((x) => (x === change ? { ...x, after, others: Math.max(0, reduced - 1) } : x)));
      } finally {
        setWorking(null);
      }
    }));
  }, [api, sessionId, current, result, working, comment, reload, track]);

  // ←/→ and Page Up/Page Down: previous/next data run, unless typing in a field or a list.
  const stepRef = useRef<(d: number) => void>(() => undefined);
  useEffect(() => {
    const onKey = (e: globalThis.KeyboardEvent) => {
      if (e.altKey || e.ctrlKey || e.metaKey || e.shiftKey || e.defaultPrevented) return;
      const t = e.target as HTMLElement | null;
      if (t && (t.isContentEditable || /^(INPUT|SELECT|TEXTAREA)$/.test(t.tagName))) return;
      const d = e.key === 'ArrowLeft' || e.key === 'PageUp' ? -1 : e.key === 'ArrowRight' || e.key === 'PageDown' ? 1 : 0;
      if (!d) return;
      e.preventDefault();
      stepRef.current(d);
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, []);

  const cp = useMemo(() => (result ? cpChartConfig(result, { row: rowName, onTap: toggleTap }) : null), [result, rowName, toggleTap]);
  const wake = useMemo(() => (result ? wakeChartConfig(result) : null), [result]);
  const walls = useMemo(() => (result ? wallChartConfig(result) : null), [result]);

  if (dataRuns.length === 0) return <p className="empty">This session has no data runs yet.</p>;
  const idx = dataRuns.findIndex((r) => r.run === current);
  stepRef.current = (d: number) => {
    const to = dataRuns[idx + d];
    if (idx >= 0 && to) onRun(to.run);
  };
  const rowInfo: RunRowLike | undefined = data.runs.find((r) => r.run === current);

  const nav = (
    <div className="run-nav">
      <button type="button" onClick={() => idx > 0 && onRun(dataRuns[idx - 1].run)} disabled={idx <= 0}>◀ Previous</button>
      <label>
        Run{' '}
        <select value={current ?? ''} onChange={(e) => onRun(Number(e.target.value))} aria-label="Run to inspect">
          {dataRuns.map((r) => (
            <option key={r.run} value={r.run}>
              {r.run} · α {fix(r.alphaDeg, 1)}°{runChoiceFlags(r.result?.flags ?? [], noted.get(r.run))}
            </option>
          ))}
        </select>
      </label>
      <button type="button" onClick={() => idx < dataRuns.length - 1 && onRun(dataRuns[idx + 1].run)} disabled={idx < 0 || idx >= dataRuns.length - 1}>Next ▶</button>
    </div>
  );
  if (!got || !result) {
    return (
      <div className="inspector">
        {nav}
        <p className="muted">{got && !got.result ? `Run ${current} is not reduced yet.` : `Loading run ${current}…`}</p>
      </div>
    );
  }

  const u = result.uncorrected;
  const k = result.corrected;
  const un = result.uncertainty;
  const bad = badTapIds(result);
  const rowTaps = result.taps.filter((t) => t.row === rowName).sort((a, b) => (a.surface === b.surface ? a.x - b.x : a.surface === 'upper' ? -1 : 1));
  const badList = result.taps.filter((t) => bad.has(t.id));
  const rowLoads = result.rows.find((r) => r.row === rowName);
  const tol = liftTolerance(u.cl, result.settings.liftTolAbs, result.settings.liftTolRel);
  const dCl = result.clMomentum - u.cl;
  const w = result.wake;
  const last = changes[0];
  const flagSplit = splitFlags(result.flags, noted.get(current));

  return (
    <div className="inspector">
      <div className="inspector-head">
        {nav}
        <h2>Run {current}</h2>
        <p className="run-facts">
          <span>α {fix(u.alphaDeg, 2)}° → α<sub>c</sub> {fix(k.alphaDeg, 2)}°</span>
          <span>q {fix(k.q, 1)} Pa</span>
          <span>V {fix(k.V, 2)} m/s</span>
          <span>Re {reMillions(k.Re)}×10⁶</span>
          <span>M {fix(result.M, 3)}</span>
          <span>ρ {fix(result.air.rho, 4)} kg/m³</span>
          <span>{when(rowInfo?.time)}</span>
          <span className="muted">core {result.coreVersion}</span>
        </p>
      </div>

      <section className="flags-box" aria-label="Flags">
        <h3>Flags</h3>
        <FlagReasons flags={flagSplit.decision} notes={flagSplit.notes} />
      </section>

      {/* One slot of fixed height for the override line, the progress of the other runs and the
          stale note, so nothing below it (the Cp chart) moves when one of them appears. */}
      <div className="inspector-slot" aria-live="polite">
        {last ? (
          <p className="change-line" role="status">
            Tap <b>{last.tapId}</b> {changeVerb(last)}: <span className="change-text">{changeText(last)}</span>
            {last.stored ? <span className="muted"> · stored (audit kept)</span> : <span className="muted"> · storing…</span>}
            <span className="muted">{last.others === null ? ' · re-reducing the other runs of the session…' : ` · ${last.others} other run${last.others === 1 ? '' : 's'} of the session re-reduced with it`}</span>
          </p>
        ) : (got.row.stale ?? rowInfo?.stale) ? <StaleReasons mark={got.row.stale ?? rowInfo?.stale} /> : (
          <p className="small muted">Click a tap on the chart or in the tap list to mark it bad or restore it; the whole session is re-reduced with it. ←/→ or Page Up/Down: previous/next run.</p>
        )}
        {task ? <ProgressBar fraction={progress?.fraction ?? null} label={progress?.label ?? 'Starting…'} name="Re-reduction of the other runs" /> : null}
      </div>

      <div className="inspector-grid">
        <section className="panel panel-cp" aria-label="Pressure distribution">
          <div className="panel-head">
            <h3>Cp along the chord — row {rowName}</h3>
            {rows.length > 1 ? (
              <label>Row{' '}
                <select value={rowName} onChange={(e) => setRow(e.target.value)}>
                  {rows.map((r) => <option key={r} value={r}>{r}</option>)}
                </select>
              </label>
            ) : null}
          </div>
          {cp ? (
            <Plot config={cp} label={`Pressure coefficient against x/c, run ${current}, row ${rowName}; Cp axis inverted`} height={360}>
              Cp axis inverted (suction up). Click a tap to mark it bad or restore it; the tap list below does the same.
              {result.inviscid.some((p) => p.cp < Number(cp.options.scales?.y?.min ?? -Infinity)) ? ' The inviscid suction peak runs off the top of the plot (clipped to keep the measured taps readable).' : ''}
              {' '}{working ? <b>Re-reducing with tap {working} changed…</b> : null}
            </Plot>
          ) : null}
        </section>

        <section className="panel panel-coef" aria-label="Coefficients">
          <h3>Coefficients</h3>
          <table className="coef">
            <thead>
              <tr><th scope="col"></th><th scope="col" className="num">uncorrected</th><th scope="col" className="num">corrected</th><th scope="col" className="num">95 % interval (corr.)</th></tr>
            </thead>
            <tbody>
              <tr><th scope="row">c<sub>l</sub> pressure</th><td className="num">{fix(u.cl, 4)}</td><td className="num">{fix(k.cl, 4)}</td><td className="num">{iv(un.cl, 4)}</td></tr>
              <tr><th scope="row">c<sub>l</sub> wall momentum</th><td className="num">{fix(result.clMomentum, 4)}</td><td className="num">{fix(correctedMomentumCl(result), 4)}</td><td className="num">{iv(un.clMom, 4)}</td></tr>
              <tr><th scope="row">c<sub>d</sub> wake</th><td className="num">{fix(u.cd, 5)}</td><td className="num">{fix(k.cd, 5)}</td><td className="num">{iv(un.cd, 5)}</td></tr>
              <tr><th scope="row">c<sub>d</sub> pressure</th><td className="num">{fix(u.cdp, 5)}</td><td className="num">{fix(k.cdp, 5)}</td><td className="num">{iv(un.cdp, 5)}</td></tr>
              <tr><th scope="row">c<sub>m c/4</sub></th><td className="num">{fix(u.cmc4, 4)}</td><td className="num">{fix(k.cmc4, 4)}</td><td className="num">{iv(un.cmc4, 4)}</td></tr>
              <tr><th scope="row">α [°]</th><td className="num">{fix(u.alphaDeg, 3)}</td><td className="num">{fix(k.alphaDeg, 3)}</td><td></td></tr>
              <tr><th scope="row">q [Pa]</th><td className="num">{fix(u.q, 2)}</td><td className="num">{fix(k.q, 2)}</td><td></td></tr>
              <tr><th scope="row">V [m/s]</th><td className="num">{fix(u.V, 3)}</td><td className="num">{fix(k.V, 3)}</td><td></td></tr>
              <tr><th scope="row">Re [×10⁶]</th><td className="num">{reMillions(u.Re)}</td><td className="num">{reMillions(k.Re)}</td><td></td></tr>
            </tbody>
          </table>
          <p className="small muted">Intervals: Monte Carlo, {result.settings.mcDraws} draws, on the corrected values; the budget below gives the analytic interval beside it. The tap-resolution error is estimated with its sign and not applied to the value, so an interval may reach further on one side of it (docs/UNCERTAINTY.md).</p>
          <CorrectionCompare result={result} />

          <h3>Circulation (Kutta–Joukowski)</h3>
          <table className="coef">
            <thead><tr><th scope="col">method</th><th scope="col" className="num">Γ uncorrected [m²/s]</th><th scope="col" className="num">Γ corrected [m²/s]</th><th scope="col" className="num">95 % interval (corr.)</th></tr></thead>
            <tbody>
              {([
                ['surface pressures', 'pressure', 'gammaPressure'],
                ['wall momentum', 'momentum', 'gammaMomentum'],
                ['wall line integral', 'wall', 'gammaWall'],
              ] as const).map(([label, key, ukey]) => (
                <tr key={key}>
                  <th scope="row">{label}</th>
                  <td className="num">{sig(result.circulation[key], 4)}</td>
                  <td className="num">{sig(result.circulationCorrected?.[key], 4)}</td>
                  <td className="num">{un[ukey] ? `${sig(un[ukey]!.lo, 4)} … ${sig(un[ukey]!.hi, 4)}` : '–'}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <p className="small muted">Uncorrected: ½·V<sub>u</sub>·c·c<sub>l,u</sub> (the wall line integral as measured). Corrected: ½·V·c·c<sub>l</sub> with V and c<sub>l</sub> wall-corrected.</p>
          <p className={`crosscheck ${Math.abs(dCl) > tol ? 'warn-text' : ''}`}>
            {isNum(dCl)
              ? <>Lift cross-check: c<sub>l</sub> mom − c<sub>l</sub> p = {fix(dCl, 4)}; allowed ±{fix(tol, 4)} → <b>{Math.abs(dCl) > tol ? '✖ the methods disagree' : '✔ the methods agree'}</b>.</>
              : 'Lift cross-check not possible (no wall taps).'}
          </p>
          {result.spanwise ? <p className="small">Spanwise (uncorrected): c<sub>l</sub> spanwise mean of rows = {fix(result.spanwise.CL, 4)}, spread of the rows' c<sub>l</sub> = {fix(result.spanwise.spread, 4)}.</p> : null}
        </section>

        <section className="panel" aria-label="Wake profile">
          <h3>Wake profile</h3>
          {wake ? <Plot config={wake} label={`Wake total-pressure profile, run ${current}`} height={260} /> : null}
          <p className={w && !w.captured ? 'warn-text' : undefined}>
            {w
              ? w.captured
                ? <>✔ Wake captured: Cpt at the rake edges is within ±{fix(result.settings.wakeEdgeTol, 3)} of 1 (lower edge {fix(w.edgeCpt[0], 4)}, upper edge {fix(w.edgeCpt[1], 4)}).</>
                : <>✖ Wake NOT captured: Cpt at the rake edges should be within ±{fix(result.settings.wakeEdgeTol, 3)} of 1 but is {fix(w.edgeCpt[0], 4)} (lower) and {fix(w.edgeCpt[1], 4)} (upper); the wake drag misses part of the deficit.</>
              : 'No wake rake in this setup.'}
          </p>
          {w ? (
            <p className="small muted">
              Centre {fix(w.centre * 1000, 1)} mm, width {fix(w.width * 1000, 1)} mm; {w.staticUsed ? 'rake static probes used for p_w' : 'far-wake assumption p_w = p∞'}
              {w.clampedRadicands ? `; ${w.clampedRadicands} negative radicands clamped to 0` : ''}.
            </p>
          ) : null}
        </section>

        <section className="panel" aria-label="Floor and ceiling pressures">
          <h3>Floor and ceiling signatures</h3>
          {walls ? <Plot config={walls} label={`Floor and ceiling pressure coefficients, run ${current}`} height={260} /> : <p>No wall taps in this setup.</p>}
          {result.walls ? (
            <p className="small muted">
              Capture fraction F = {fix(result.walls.F, 3)}; c<sub>l</sub> mom = {fix(result.walls.clMom, 4)}, c<sub>l</sub> wall = {fix(result.walls.clWall, 4)}
              {result.walls.angleFluxCl ? `, flow-angle flux ${fix(result.walls.angleFluxCl, 4)}` : ''}.
            </p>
          ) : null}
        </section>
      </div>

      <section className="panel" aria-label="Uncertainty budget">
        <h3>Uncertainty budget</h3>
        <BudgetTable result={result} />
      </section>

      <section className="panel" aria-label="Taps">
        <div className="panel-head">
          <h3>Taps of row {rowName} ({rowTaps.length})</h3>
          <label className="inline">Comment for overrides <input type="text" value={comment} onChange={(e) => setComment(e.target.value)} maxLength={4000} placeholder="optional, kept in the audit trail" /></label>
        </div>
        <p className="small">
          Bad or bridged taps ({badList.length}):{' '}
          {badList.length ? badList.map((t) => `${t.id} (${t.badReason ?? 'bridged'})`).join(', ') : 'none'}.
        </p>
        {rowLoads ? <p className="small" data-testid="contour-rule">Loads of row {rowName} integrated by {ruleWords(rowLoads)}.</p> : null}
        <DroppedTaps result={result} working={working} onSettle={settle} />
        <div className="tap-list-scroll">
          <table className="taps">
            <thead><tr><th scope="col">tap</th><th scope="col">surface</th><th scope="col" className="num">x/c</th><th scope="col" className="num">Cp</th><th scope="col">state</th><th scope="col">override</th></tr></thead>
            <tbody>
              {rowTaps.map((t: TapCp) => {
                const isBad = bad.has(t.id);
                const isMarked = marked.has(t.id) || t.badReason === 'marked';
                return (
                  <tr key={t.id} className={isBad ? 'tap-bad' : undefined}>
                    <td>{t.id}</td>
                    <td>{t.surface === 'upper' ? '● upper' : '▲ lower'}</td>
                    <td className="num">{fix(t.x, 4)}</td>
                    <td className="num">{fix(t.cp, 3)}</td>
                    <td>{isBad ? `✕ bad — ${t.badReason === 'marked' ? 'marked by reviewer' : t.badReason ?? 'bridged'}` : 'good'}</td>
                    <td>
                      <button type="button" className="btn-small" disabled={working !== null} onClick={() => toggleTap(t.id)} aria-label={`${isMarked ? 'Restore' : 'Mark bad'} tap ${t.id}`}>
                        {isMarked ? 'Restore' : 'Mark bad'}
                      </button>
                    </td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>
      </section>

      <div className="inspector-grid">
        {rowInfo ? <ReviewPanel row={rowInfo} onSaved={() => void reload()} /> : null}
        <section className="panel" aria-label="Reduction history">
          <h3>Reduction history</h3>
          <table className="history">
            <thead><tr><th scope="col">reduced</th><th scope="col">core</th><th scope="col" className="num">c<sub>l</sub> p, corr.</th><th scope="col" className="num">c<sub>d</sub> wake, corr.</th><th scope="col">flags</th></tr></thead>
            <tbody>
              {got.history.map((h) => (
                <tr key={h.resultId}><td>{when(h.reducedAt)}</td><td>{h.coreVersion}</td><td className="num">{fix(h.cl, 4)}</td><td className="num">{fix(h.cd, 5)}</td><td>{h.flags.map((f) => flagLine(f, 'short')).join('; ') || '–'}</td></tr>
              ))}
            </tbody>
          </table>
          {changes.length > 1 ? (
            <>
              <h4>Overrides this visit</h4>
              <ul className="small">{changes.map((c, i) => <li key={i}>{c.tapId} {changeVerb(c)}: {changeText(c)}</li>)}</ul>
            </>
          ) : null}
        </section>
      </div>
    </div>
  );
}

/** Residual and k·u of an automatic outlier drop: "+0.214 (k·u 0.041)". */
function residualText(residual: number | undefined, u: number | undefined, k: number): [string, string] {
  return [
    isNum(residual) ? `${residual >= 0 ? '+' : '−'}${fix(Math.abs(residual), 3)}` : '–',
    isNum(u) ? fix(k * u, 3) : '–',
  ];
}

/** The taps this result left out, automatic drops (to confirm or keep) beside the manual ones, and
 *  the taps kept in this run against the automatic test (to release). */
export function DroppedTaps({ result, working, onSettle }: {
  result: RunResult;
  working: string | null;
  onSettle(tapId: string, decision: 'confirm' | 'keep' | 'release'): void;
}) {
  const dropped = result.dropped ?? [];
  const kept = result.kept ?? [];
  const k = result.settings.tapCheckK;
  const auto = dropped.filter((d) => d.by === 'auto');
  const hand = dropped.filter((d) => d.by === 'hand');
  if (!dropped.length && !kept.length) return <p className="small muted">No tap dropped in this run, automatically or by hand.</p>;
  return (
    <div className="dropped-taps" aria-label="Dropped taps">
      <h4>Dropped taps of this run ({auto.length} automatic, {hand.length} by hand{kept.length ? `, ${kept.length} kept against the test` : ''})</h4>
      <table className="taps">
        <thead>
          <tr><th scope="col">tap</th><th scope="col">dropped</th><th scope="col">reason</th><th scope="col" className="num">residual [Cp]</th><th scope="col" className="num">k·u [Cp]</th><th scope="col">decision</th></tr>
        </thead>
        <tbody>
          {auto.map((d) => {
            const [res, ku] = residualText(d.residual, d.u, k);
            return (
              <tr key={d.id} data-tap={d.id}>
                <td>{d.id}</td>
                <td>automatically (a suggestion)</td>
                <td>{badTapWords(d.reason)}{isNum(d.predicted) ? `, predicted ${fix(d.predicted, 3)}` : ''}</td>
                <td className="num">{res}</td>
                <td className="num">{ku}</td>
                <td>
                  <button type="button" className="btn-small" disabled={working !== null} onClick={() => onSettle(d.id, 'confirm')} aria-label={`Confirm tap ${d.id} bad`}>Confirm bad</button>{' '}
                  <button type="button" className="btn-small" disabled={working !== null} onClick={() => onSettle(d.id, 'keep')} aria-label={`Keep tap ${d.id} in this run`}>Keep in this run</button>
                </td>
              </tr>
            );
          })}
          {hand.map((d) => (
            <tr key={d.id} data-tap={d.id}>
              <td>{d.id}</td>
              <td>by hand</td>
              <td>marked bad by a reviewer (whole session)</td>
              <td className="num">–</td>
              <td className="num">–</td>
              <td className="muted">restore it in the tap list</td>
            </tr>
          ))}
          {kept.map((id) => (
            <tr key={id} data-tap={id}>
              <td>{id}</td>
              <td>kept</td>
              <td>kept in this run by the engineer against the automatic test</td>
              <td className="num">–</td>
              <td className="num">–</td>
              <td>
                <button type="button" className="btn-small" disabled={working !== null} onClick={() => onSettle(id, 'release')} aria-label={`Let the test judge tap ${id} again`}>Let the test judge again</button>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      <p className="small muted">Confirm: the tap becomes a bad tap of the whole session and every run is re-reduced. Keep: the automatic test no longer drops it in this run only, which is re-reduced. Both are kept in the audit trail with the comment above.</p>
    </div>
  );
}

/** The contour rule a row's loads were integrated by, in words, with the shape rule's fit. */
function ruleWords(r: RunResult['rows'][number]): string {
  if (r.rule === 'shape' && r.shapeFit) {
    return `the shape rule: Cp linear between taps plus the fitted inviscid shape's own departure from linear (fit over the taps: α_eff ${fix(r.shapeFit.alphaEffDeg, 2)}°, b ${fix(r.shapeFit.b, 3)}, rms ${fix(r.shapeFit.rms, 3)} in Cp)`;
  }
  if (r.rule === 'spline') return 'the spline rule: cubic splines of the contour and the surface speed in the square-root plane of the nose';
  return 'the linear rule: Cp linear between taps on straight segments (the shape rule, the default, falls back to it where the row has too few taps or the taps are off the model\'s contour)';
}

/** The run picker's words for a run's flags: its own flags, then its notes (flags a session
 *  finding explains), e.g. " · 1 flag + 1 note". */
function runChoiceFlags(flags: readonly Flag[], noted: ReadonlySet<string> | undefined): string {
  const { decision, notes } = splitFlags(flags, noted);
  const parts = [
    decision.length ? `${decision.length} flag${decision.length > 1 ? 's' : ''}` : '',
    notes.length ? `${notes.length} note${notes.length > 1 ? 's' : ''}` : '',
  ].filter(Boolean);
  return parts.length ? ` · ${parts.join(' + ')}` : '';
}
