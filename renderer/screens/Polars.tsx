// "Polars": cl(α) with both lift methods, drag polar cl(cd), cm(α), and span loading where the
// model has several tap rows. Up- and down-sweeps differ by line style and marker (legend), the
// session statistics are written out beside the plots.
import { useMemo, useState } from 'react';
import type { SessionData } from '../session';
import { clAlphaConfig, cmAlphaConfig, dragPolarConfig, spanConfig, sweepDirections } from '../charts';
import { Plot } from '../components/Plot';
import { fix } from '../format';
import { SEVERITY } from '../../app/flags';
import { StaleBadge } from '../components/FlagBadge';

export function Polars({ data, onOpen }: { data: SessionData; onOpen(run: number): void }) {
  const summary = data.summary;
  const pts = summary?.polar ?? [];
  const stats = summary?.stats ?? null;
  const held = useMemo(() => new Set(data.runs.filter((r) => r.result?.flags.some((f) => f.severity === 'reject')).map((r) => r.run)), [data.runs]);
  const flagsOf = useMemo(() => new Map(data.runs.map((r) => [r.run, r.result?.flags ?? []])), [data.runs]);
  const cla = useMemo(() => clAlphaConfig(pts, stats, held), [pts, stats, held]);
  const drag = useMemo(() => dragPolarConfig(pts, held), [pts, held]);
  const cm = useMemo(() => cmAlphaConfig(pts, held), [pts, held]);
  const span = summary?.span ?? [];
  const [spanRuns, setSpanRuns] = useState<number[] | null>(null);
  const chosen = useMemo(
    () => spanRuns ?? span.filter((_, i) => i % Math.max(1, Math.ceil(span.length / 5)) === 0).map((s) => s.run),
    [spanRuns, span],
  );
  const spanCfg = useMemo(() => spanConfig(span.filter((s) => chosen.includes(s.run))), [span, chosen]);
  const dirs = sweepDirections(pts);
  const ups = dirs.filter((d) => d === 'up').length;
  const staleOf = new Map(data.runs.filter((r) => r.stale).map((r) => [r.run, r.stale!]));

  if (pts.length === 0) return <p className="empty">No reduced data runs yet: import a session or re-reduce it.</p>;
  const perRad = stats ? stats.liftSlopePerDeg * (180 / Math.PI) : NaN;

  return (
    <div className="polars">
      <section className="stats-box" aria-label="Session statistics">
        <h2>Polars — {data.session.title}</h2>
        {stats ? (
          <dl className="stats">
            <div><dt>lift-curve slope</dt><dd>{fix(stats.liftSlopePerDeg, 4)} /° ({fix(perRad, 3)} /rad), fit over α {fix(stats.linearRange[0], 1)}…{fix(stats.linearRange[1], 1)}°</dd></div>
            <div><dt>α<sub>L0</sub> (zero lift)</dt><dd>{fix(stats.alphaL0Deg, 2)}°</dd></div>
            <div><dt>c<sub>l,max</sub></dt><dd>{fix(stats.clMax, 4)} at α {fix(stats.alphaClMaxDeg, 2)}°</dd></div>
            <div><dt>c<sub>d,min</sub></dt><dd>{fix(stats.cdMin, 5)} at c<sub>l</sub> {fix(stats.clAtCdMin, 3)}</dd></div>
            <div><dt>(L/D)<sub>max</sub></dt><dd>{fix(stats.ldMax, 1)} at α {fix(stats.alphaLdMaxDeg, 2)}°</dd></div>
            <div><dt>hysteresis</dt><dd>{stats.hysteresis ? <>largest |Δc<sub>l</sub>| {fix(stats.hysteresis.maxDeltaCl, 4)} at α {fix(stats.hysteresis.alphaDeg, 1)}° (down − up)</> : 'no matching up/down points'}</dd></div>
            <div><dt>repeat spread</dt><dd>{stats.repeatSpread === null ? 'no repeats' : `${fix(stats.repeatSpread, 4)} in cl`}</dd></div>
            <div><dt>points</dt><dd>{pts.length} runs: {ups} on the up-sweep, {pts.length - ups} on the down-sweep; {pts.filter((p) => p.flagged).length} flagged (needing a decision; the notes of the session findings not counted), {held.size} on hold ✕{staleOf.size ? <>; <b className="warn-text" data-testid="polars-stale">{staleOf.size} stale</b> (reduced with other settings, bad taps or zeros; re-reduce them in the Day log)</> : null}</dd></div>
          </dl>
        ) : <p>Too few runs for session statistics.</p>}
        <p className="small muted">Legend: blue = c<sub>l</sub> from surface pressures, orange = c<sub>l</sub> from wall momentum; solid line + filled marker = up-sweep (α rising), dashed line + open marker = down-sweep (α falling); ✕ = run on hold (a reject flag; see the Day log). Corrected values.</p>
      </section>

      <div className="polar-grid">
        <section className="panel" aria-label="Lift curve">
          <h3>c<sub>l</sub>(α) — both lift methods</h3>
          <Plot config={cla} label="Lift coefficient against corrected angle of attack, pressure and momentum methods" height={380} />
        </section>
        <section className="panel" aria-label="Drag polar">
          <h3>Drag polar c<sub>l</sub>(c<sub>d</sub>)</h3>
          <Plot config={drag} label="Lift coefficient against drag coefficient" height={380} />
        </section>
        <section className="panel" aria-label="Moment curve">
          <h3>c<sub>m c/4</sub>(α)</h3>
          <Plot config={cm} label="Quarter-chord pitching moment against corrected angle of attack" height={300} />
        </section>
        {span.length ? (
          <section className="panel" aria-label="Span loading">
            <h3>Span loading (section c<sub>l</sub> of each tap row, uncorrected)</h3>
            <Plot config={spanCfg} label="Section lift coefficient (uncorrected) against spanwise station" height={300} />
            <p className="small muted">Measured c<sub>l</sub> of each row (not wall-corrected); the spanwise mean of rows is the span integral of the row c<sub>l</sub> over the model span, ends held to the walls.</p>
            <fieldset className="span-pick">
              <legend>Runs shown</legend>
              {span.map((s) => (
                <label key={s.run} className="chip">
                  <input
                    type="checkbox"
                    checked={chosen.includes(s.run)}
                    onChange={(e) => setSpanRuns(e.target.checked ? [...chosen, s.run] : chosen.filter((r) => r !== s.run))}
                  />{' '}
                  {s.run} (α {fix(s.alphaDeg, 1)}° corr.; cl, spanwise mean of rows, uncorrected: {fix(s.CL, 3)})
                </label>
              ))}
            </fieldset>
          </section>
        ) : <section className="panel"><h3>Span loading</h3><p>One tap row only: no span loading.</p></section>}
      </div>

      <section className="panel" aria-label="Polar points">
        <h3>Points</h3>
        <div className="table-scroll short">
          <table className="runs compact">
            <thead><tr><th scope="col">run</th><th scope="col">sweep</th><th scope="col" className="flags-col">flags and reasons</th><th scope="col" className="num">α<sub>c</sub> [°]</th><th scope="col" className="num">c<sub>l</sub> p</th><th scope="col" className="num">c<sub>l</sub> mom</th><th scope="col" className="num">c<sub>d</sub> wake</th><th scope="col" className="num">c<sub>d</sub> p</th><th scope="col" className="num">c<sub>m c/4</sub></th></tr></thead>
            <tbody>
              {pts.map((p, i) => (
                <tr key={p.run} className={held.has(p.run) ? 'row-reject' : p.flagged ? 'row-warn' : undefined}>
                  <td><button type="button" className="link" onClick={() => onOpen(p.run)}>{p.run}</button></td>
                  <td>{dirs[i] === 'up' ? '↗ up' : '↘ down'}</td>
                  <td className="flag-reasons flags-col">{(flagsOf.get(p.run) ?? []).map((f, k) => (
                    <div key={k}><b>{SEVERITY[f.severity].glyph} {SEVERITY[f.severity].word}:</b> {f.reason}</div>
                  ))}{staleOf.has(p.run) ? <StaleBadge mark={staleOf.get(p.run)!} /> : null}</td>
                  <td className="num">{fix(p.alphaDeg, 2)}</td><td className="num">{fix(p.cl, 4)}</td><td className="num">{fix(p.clMom, 4)}</td>
                  <td className="num">{fix(p.cd, 5)}</td><td className="num">{fix(p.cdp, 5)}</td><td className="num">{fix(p.cmc4, 4)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>
    </div>
  );
}
