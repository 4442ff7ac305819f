// Every wall-correction method of a run side by side (issue 11): ε, Δα and the corrected cl, cd
// and cm of each, the one applied and why in words, and the wall-signature fit's residual.
import type { AppliedMethod, RunResult } from '../../app/types';
import { METHOD_WORDS } from '../../app/correctionChoice';
import { fix, sig } from '../format';

export function CorrectionCompare({ result }: { result: RunResult }) {
  const set = result.corrections;
  if (!set) {
    return (
      <p className="small muted">
        Wall correction: {result.correction.method}; σ = {sig(result.correction.sigma, 3)}, ε<sub>sb</sub> = {sig(result.correction.epsSb, 3)}, ε<sub>wb</sub> = {sig(result.correction.epsWb, 3)}
        {' '}(stored before core 0.3.0: re-reduce to compare the methods).
      </p>
    );
  }
  const s = set.signature;
  const label = (m: AppliedMethod) => METHOD_WORDS[m];
  const line = set.methods
    .filter((m) => m.available)
    .map((m) => `ε ${label(m.method)} ${fix(m.eps, 4)}`)
    .join(' · ');
  return (
    <div className="correction-compare" aria-label="Wall corrections side by side">
      <h3>Wall corrections</h3>
      <p className="small"><b>Applied: {label(set.applied)}.</b> {set.reason}</p>
      {line ? <p className="small">{line}</p> : null}
      <table className="coef">
        <thead>
          <tr>
            <th scope="col">method</th><th scope="col" className="num">ε</th><th scope="col" className="num">ε<sub>sb</sub></th>
            <th scope="col" className="num">ε<sub>wb</sub></th><th scope="col" className="num">Δα [°]</th>
            <th scope="col" className="num">c<sub>l</sub> corr.</th><th scope="col" className="num">c<sub>d</sub> corr.</th><th scope="col" className="num">c<sub>m c/4</sub> corr.</th>
          </tr>
        </thead>
        <tbody>
          {set.methods.map((m) => (
            <tr key={m.method} className={m.method === set.applied ? 'applied' : undefined}>
              <th scope="row">{label(m.method)}{m.method === set.applied ? ' (applied)' : ''}</th>
              {m.available && m.corrected
                ? <>
                    <td className="num">{fix(m.eps, 4)}</td><td className="num">{fix(m.epsSb, 4)}</td><td className="num">{fix(m.epsWb, 4)}</td>
                    <td className="num">{fix(m.dAlphaDeg, 3)}</td><td className="num">{fix(m.corrected.cl, 4)}</td>
                    <td className="num">{fix(Number.isFinite(m.corrected.cd) ? m.corrected.cd : m.corrected.cdp, 5)}</td><td className="num">{fix(m.corrected.cmc4, 4)}</td>
                  </>
                : <td colSpan={7} className="small muted">not applicable: {m.why}</td>}
            </tr>
          ))}
        </tbody>
      </table>
      <p className="small muted">
        {s
          ? <>Wall signature: {s.taps} taps, rms fit residual {fix(s.residualCp, 4)} in Cp (largest {fix(s.worstCp, 4)} on the {s.worstAt.wall} at x = {fix(s.worstAt.x, 2)} m), u(ε) = {fix(s.uEps, 4)} from the wall channels; Γ = {sig(s.gamma, 4)} m²/s, wake source Q = {sig(s.Q, 3)} m²/s, doublet μ = {sig(s.mu, 3)} m³/s. </>
          : null}
        Maskell used c<sub>d</sub> = {fix(set.maskellDrag.cd, 4)} ({set.maskellDrag.source === 'wake' ? 'wake rake' : 'surface pressures'}), θ = {result.settings.maskellTheta}. Upper-surface trailing-edge Cp {fix(set.teCp, 2)}.
        {' '}c<sub>d</sub> column: wake drag where measured, else pressure drag. Corrected values are for review by a qualified engineer before any design use.
      </p>
    </div>
  );
}
