// "Side by side": runs from any sessions of the database on one Cp, wake and wall plot (up to
// six: the same α on two days, say, or tripped against free transition), and the polars of several
// sessions on one plot with a table of differences against a reference session (Δcl at matched
// α, Δcd at matched cl; app/compare.ts). Runs are picked from a list filtered by flag and α range.
// Everything comes through the typed contract: sessions.list, runs.list, runs.get, session.summary.
import { useEffect, useMemo, useState } from 'react';
import type { RunRowLike, SessionRowLike } from '../../main/contract';
import type { Flag, PolarPoint, RunResult, SessionSummary } from '../../app/types';
import { FLAG_CODES, flagLabel, flagShort, SEVERITY } from '../../app/flags';
import { notesByRun, splitFlags } from '../../app/sessionFaults';
import { polarDifferences } from '../../app/compare';
import { useApi, useStatus, quiet } from '../context';
import { Plot } from '../components/Plot';
import { fix } from '../format';
import {
  MAX_OVERLAY, OVERLAY_STYLE, cpOverlayConfig, polarOverlayConfig, wakeOverlayConfig, wallOverlayConfig, type OverlayRun,
} from '../compareCharts';

interface Pick { sessionId: number; run: number }
const same = (a: Pick, b: Pick) => a.sessionId === b.sessionId && a.run === b.run;

/** Runs of a session that pass the filters: a flag code ('any', 'none' or a code) and an α range
 *  on the corrected α (geometric where a run is not reduced). 'none': no flag of its own (the notes
 *  of the session findings, `noted`, do not count). */
export function filterRuns(rows: readonly RunRowLike[], flag: string, aMin: number | null, aMax: number | null, noted?: ReadonlyMap<number, ReadonlySet<string>>): RunRowLike[] {
  return rows.filter((r) => {
    if (r.kind !== 'data' || !r.result) return false;
    const a = r.result.alphaCorrDeg ?? r.alphaDeg;
    if (aMin !== null && a < aMin) return false;
    if (aMax !== null && a > aMax) return false;
    if (flag === 'none') return splitFlags(r.result.flags, noted?.get(r.run)).decision.length === 0;
    if (flag === 'hold') return r.result.flags.some((f) => f.severity === 'reject');
    if (flag !== 'any') return r.result.flags.some((f) => f.code === flag);
    return true;
  });
}

function numberOrNull(s: string): number | null {
  const t = s.trim().replace('−', '-');
  if (!t) return null;
  const v = Number(t);
  return Number.isFinite(v) ? v : null;
}

export function SideBySide({ sessions, currentSessionId }: { sessions: SessionRowLike[]; currentSessionId: number | null }) {
  const api = useApi();
  const { track } = useStatus();
  const [browse, setBrowse] = useState<number | null>(currentSessionId ?? sessions[0]?.id ?? null);
  const [rows, setRows] = useState<RunRowLike[]>([]);
  // The browsed session's notes (flags its session findings explain: a note, not a decision).
  const [noted, setNoted] = useState<Map<number, Set<string>>>(new Map());
  const [flag, setFlag] = useState('any');
  const [aMin, setAMin] = useState('');
  const [aMax, setAMax] = useState('');
  const [picks, setPicks] = useState<Pick[]>([]);
  const [results, setResults] = useState<Map<string, RunResult>>(new Map());
  const [polarSessions, setPolarSessions] = useState<number[]>(currentSessionId !== null ? [currentSessionId] : []);
  const [summaries, setSummaries] = useState<Map<number, SessionSummary>>(new Map());
  const byId = useMemo(() => new Map(sessions.map((s) => [s.id, s])), [sessions]);
  const key = (p: Pick) => `${p.sessionId}:${p.run}`;

  useEffect(() => {
    if (browse === null) return;
    let live = true;
    quiet(track('Loading runs', async () => {
      const [r, summary] = await Promise.all([
        api.call('runs.list', { sessionId: browse }),
        api.call('session.summary', { sessionId: browse }).catch(() => null),
      ]);
      if (live) {
        setRows(r);
        setNoted(notesByRun(summary));
      }
    }));
    return () => { live = false; };
  }, [api, browse, track]);

  useEffect(() => {
    const missing = picks.filter((p) => !results.has(key(p)));
    if (!missing.length) return;
    quiet(track('Loading runs to compare', async () => {
      const got = await Promise.all(missing.map((p) => api.call('runs.get', p)));
      setResults((m) => {
        const n = new Map(m);
        got.forEach((g, i) => { if (g.result) n.set(key(missing[i]), g.result); });
        return n;
      });
    }));
  }, [api, picks, results, track]);

  useEffect(() => {
    const missing = polarSessions.filter((id) => !summaries.has(id));
    if (!missing.length) return;
    quiet(track('Loading session polars', async () => {
      const got = await Promise.all(missing.map((sessionId) => api.call('session.summary', { sessionId })));
      setSummaries((m) => {
        const n = new Map(m);
        got.forEach((g, i) => n.set(missing[i], g));
        return n;
      });
    }));
  }, [api, polarSessions, summaries, track]);

  const shown = useMemo(() => filterRuns(rows, flag, numberOrNull(aMin), numberOrNull(aMax), noted), [rows, flag, aMin, aMax, noted]);
  const sessionWords = (id: number) => {
    const s = byId.get(id);
    return s ? `${s.date} ${s.model}` : `session ${id}`;
  };
  const overlay: OverlayRun[] = picks.flatMap((p) => {
    const r = results.get(key(p));
    return r ? [{ label: `${sessionWords(p.sessionId)} run ${p.run} (α ${fix(r.corrected.alphaDeg, 2)}°)`, result: r }] : [];
  });
  const cp = useMemo(() => cpOverlayConfig(overlay), [overlay.map((o) => o.label).join('|')]); // eslint-disable-line react-hooks/exhaustive-deps
  const wake = useMemo(() => wakeOverlayConfig(overlay), [overlay.map((o) => o.label).join('|')]); // eslint-disable-line react-hooks/exhaustive-deps
  const walls = useMemo(() => wallOverlayConfig(overlay), [overlay.map((o) => o.label).join('|')]); // eslint-disable-line react-hooks/exhaustive-deps

  // Session polars: runs on hold (a reject flag) are left out, as are runs the reviewer rejected
  // (the session summary leaves those out already).
  const usable = (s: SessionSummary): PolarPoint[] => {
    const held = new Set(s.flagged.filter((f) => f.flags.some((x) => x.severity === 'reject')).map((f) => f.run));
    return s.polar.filter((p) => !held.has(p.run));
  };
  const polarList = polarSessions.filter((id) => summaries.has(id)).map((id) => ({ id, label: `${sessionWords(id)}: ${byId.get(id)?.title ?? ''}`, polar: usable(summaries.get(id)!) }));
  const liftCfg = useMemo(() => polarOverlayConfig(polarList, 'lift'), [polarList.map((s) => s.id).join(',')]); // eslint-disable-line react-hooks/exhaustive-deps
  const dragCfg = useMemo(() => polarOverlayConfig(polarList, 'drag'), [polarList.map((s) => s.id).join(',')]); // eslint-disable-line react-hooks/exhaustive-deps
  const ref = polarList[0];

  const add = (run: number) => {
    if (browse === null) return;
    const p = { sessionId: browse, run };
    setPicks((l) => (l.some((x) => same(x, p)) || l.length >= MAX_OVERLAY ? l : [...l, p]));
  };
  const toggleSession = (id: number, on: boolean) =>
    setPolarSessions((l) => (on ? (l.includes(id) || l.length >= MAX_OVERLAY ? l : [...l, id]) : l.filter((x) => x !== id)));

  if (!sessions.length) return <p className="empty">No sessions yet: import one on the Intake screen.</p>;

  return (
    <div className="side">
      <section className="panel" aria-label="Runs to overlay">
        <h2>Side by side — runs</h2>
        <p className="small muted">Up to {MAX_OVERLAY} runs from any sessions on one Cp, wake and wall plot. Values as stored: Cp measured (not wall-corrected), α corrected.</p>
        <div className="filters">
          <label>Session
            <select value={browse ?? ''} onChange={(e) => setBrowse(Number(e.target.value))} aria-label="Session to pick runs from">
              {sessions.map((s) => <option key={s.id} value={s.id}>{s.date} · {s.title}</option>)}
            </select>
          </label>
          <label>Flag
            <select value={flag} onChange={(e) => setFlag(e.target.value)} aria-label="Filter by flag">
              <option value="any">any run</option>
              <option value="none">no flags</option>
              <option value="hold">{SEVERITY.reject.glyph} any {SEVERITY.reject.word} flag</option>
              {FLAG_CODES.map((c) => <option key={c} value={c}>{flagLabel(c)}</option>)}
            </select>
          </label>
          <label>α from [°]<input inputMode="decimal" value={aMin} onChange={(e) => setAMin(e.target.value)} aria-label="Lowest corrected α" /></label>
          <label>α to [°]<input inputMode="decimal" value={aMax} onChange={(e) => setAMax(e.target.value)} aria-label="Highest corrected α" /></label>
        </div>
        <div className="table-scroll short">
          <table className="runs compact" aria-label="Runs matching the filters">
            <thead><tr><th scope="col">run</th><th scope="col" className="num">α<sub>c</sub> [°]</th><th scope="col" className="num">c<sub>l</sub></th><th scope="col" className="num">c<sub>d</sub> wake</th><th scope="col">flags</th><th scope="col"><span className="sr-only">add</span></th></tr></thead>
            <tbody>
              {shown.map((r) => {
                const picked = browse !== null && picks.some((p) => same(p, { sessionId: browse, run: r.run }));
                return (
                  <tr key={r.run} data-run={r.run}>
                    <td>{r.run}</td>
                    <td className="num">{fix(r.result!.alphaCorrDeg, 2)}</td>
                    <td className="num">{fix(r.result!.cl, 4)}</td>
                    <td className="num">{fix(r.result!.cd, 5)}</td>
                    <td>{flagsWords(r.result!.flags, noted.get(r.run))}</td>
                    <td><button type="button" className="btn-small" disabled={picked || picks.length >= MAX_OVERLAY} onClick={() => add(r.run)} aria-label={`Add run ${r.run} of ${sessionWords(browse!)}`}>{picked ? 'added' : 'add'}</button></td>
                  </tr>
                );
              })}
            </tbody>
          </table>
          {!shown.length ? <p className="small muted">No reduced run matches the filters.</p> : null}
        </div>
        <ul className="pick-list" aria-label="Runs on the plots">
          {picks.map((p, i) => (
            <li key={key(p)}>
              <span className="swatch" style={{ background: OVERLAY_STYLE[i].colour }} aria-hidden="true" />
              <span>{sessionWords(p.sessionId)} run {p.run} ({OVERLAY_STYLE[i].word})</span>
              <button type="button" className="btn-small" onClick={() => setPicks((l) => l.filter((x) => !same(x, p)))} aria-label={`Remove run ${p.run} of ${sessionWords(p.sessionId)}`}>×</button>
            </li>
          ))}
        </ul>
        {overlay.length ? (
          <div className="plot-row">
            <Plot config={cp} label="Pressure coefficient against x/c of the runs side by side; Cp axis inverted" title="Cp side by side" height={340} />
            {wake ? <Plot config={wake} label="Wake total-pressure profiles of the runs side by side" title="Wake profiles side by side" height={300} /> : <p>No wake rake in these runs.</p>}
            {walls ? <Plot config={walls} label="Floor and ceiling pressure coefficients of the runs side by side" title="Wall signatures side by side" height={300} /> : <p>No wall taps in these runs.</p>}
          </div>
        ) : <p className="small muted">Add runs from the list to see them on one plot.</p>}
      </section>

      <section className="panel" aria-label="Session polars">
        <h2>Side by side — session polars</h2>
        <p className="small muted">Corrected cl from surface pressures and cd from the wake rake; runs on hold ({SEVERITY.reject.glyph} {SEVERITY.reject.word}) and runs rejected by a reviewer are left out. The first session ticked is the reference of the differences.</p>
        <fieldset className="span-pick">
          <legend>Sessions</legend>
          {sessions.map((s) => (
            <label key={s.id} className="chip">
              <input type="checkbox" checked={polarSessions.includes(s.id)} onChange={(e) => toggleSession(s.id, e.target.checked)} aria-label={`Polars of ${s.date} ${s.title}`} /> {s.date} · {s.title}
            </label>
          ))}
        </fieldset>
        {polarList.length ? (
          <div className="plot-row">
            <Plot config={liftCfg} label="Lift coefficient against corrected α of the sessions side by side" title="Lift curves side by side" height={340} />
            <Plot config={dragCfg} label="Lift coefficient against wake drag coefficient of the sessions side by side" title="Drag polars side by side" height={340} />
          </div>
        ) : null}
        {ref && polarList.length > 1 ? polarList.slice(1).map((s) => {
          const d = polarDifferences(ref.polar, s.polar);
          return (
            <div key={s.id} className="table-scroll short">
              <table className="runs compact" aria-label={`Differences of ${s.label} against ${ref.label}`}>
                <caption>{s.label} minus {ref.label} (reference): Δcl at the same α, Δcd at the same cl (attached flow only; — outside the reference's range)</caption>
                <thead><tr><th scope="col">run</th><th scope="col" className="num">α<sub>c</sub> [°]</th><th scope="col" className="num">c<sub>l</sub></th><th scope="col" className="num">Δc<sub>l</sub></th><th scope="col" className="num">c<sub>d</sub></th><th scope="col" className="num">Δc<sub>d</sub></th></tr></thead>
                <tbody>
                  {d.map((x) => (
                    <tr key={x.run}>
                      <td>{x.run}</td><td className="num">{fix(x.alphaDeg, 2)}</td><td className="num">{fix(x.cl, 4)}</td>
                      <td className="num">{x.dCl === null ? '—' : fix(x.dCl, 4)}</td><td className="num">{fix(x.cd, 5)}</td>
                      <td className="num">{x.dCd === null ? '—' : fix(x.dCd, 5)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          );
        }) : <p className="small muted">Tick two sessions or more for the table of differences.</p>}
      </section>
    </div>
  );
}

/** A run's flags in the list: its own with their severity glyph, then its notes (flags a session
 *  finding explains), e.g. "✖ wake not captured; ℹ leaking tap (note)". */
function flagsWords(flags: readonly Flag[], noted: ReadonlySet<string> | undefined): string {
  const { decision, notes } = splitFlags(flags, noted);
  return [...decision.map((f) => `${SEVERITY[f.severity].glyph} ${flagShort(f.code)}`), ...notes.map((f) => `ℹ ${flagShort(f.code)} (note)`)].join('; ') || '—';
}
