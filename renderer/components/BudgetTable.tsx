// The uncertainty budget of one run (app/budget.ts, JCGM 100 §8 style): each source with its
// standard uncertainty and what it contributes to the corrected outputs, the combined standard
// uncertainty, and the analytic 95 % interval beside the Monte Carlo one (JCGM 101).
import type { RunResult, UncertaintyKey } from '../../app/types';
import { fix, isNum, sig } from '../format';

const COLUMNS: { key: UncertaintyKey; head: string; d: number }[] = [
  { key: 'cl', head: 'cl', d: 4 },
  { key: 'cd', head: 'cd wake', d: 5 },
  { key: 'cmc4', head: 'cm c/4', d: 4 },
  { key: 'clMom', head: 'cl mom', d: 4 },
  { key: 'gammaPressure', head: 'Γ pressure', d: 4 },
];

const KIND_WORDS: Record<string, string> = {
  instrument: 'instrument',
  reference: 'reference',
  geometry: 'geometry',
  reduction: 'reduction',
  correction: 'correction model',
};

export function BudgetTable({ result }: { result: RunResult }) {
  const b = result.budget;
  if (!b) return <p className="small muted">No uncertainty budget: Monte Carlo is off for this reduction (mcDraws = 0).</p>;
  const cols = COLUMNS.filter((c) => isNum(b.combined[c.key]));
  const u = result.uncertainty;
  return (
    <>
      <div className="tap-list-scroll">
        <table className="coef budget">
          <caption className="small muted">
            Contribution |c<sub>i</sub>|·u(x<sub>i</sub>) of each source to the corrected outputs (JCGM 100 §8); sources of many
            independent inputs are combined root-sum-square.
          </caption>
          <thead>
            <tr>
              <th scope="col">source</th><th scope="col">kind</th><th scope="col">u(x<sub>i</sub>)</th>
              {cols.map((c) => <th key={c.key} scope="col" className="num">{c.head}</th>)}
            </tr>
          </thead>
          <tbody>
            {b.lines.map((l) => (
              <tr key={l.source} title={l.basis}>
                <th scope="row">{l.source}</th>
                <td>{KIND_WORDS[l.kind] ?? l.kind}</td>
                <td>{l.u}</td>
                {cols.map((c) => <td key={c.key} className="num">{isNum(l.contribution[c.key]) ? sig(l.contribution[c.key]!, 2) : '–'}</td>)}
              </tr>
            ))}
            <tr className="budget-total">
              <th scope="row">combined u<sub>c</sub> (GUM)</th><td></td><td></td>
              {cols.map((c) => <td key={c.key} className="num">{sig(b.combined[c.key]!, 2)}</td>)}
            </tr>
            <tr>
              <th scope="row">Monte Carlo u</th><td></td><td></td>
              {cols.map((c) => <td key={c.key} className="num">{isNum(u[c.key]?.u) ? sig(u[c.key]!.u, 2) : '–'}</td>)}
            </tr>
            <tr>
              <th scope="row">95 % interval, GUM (±{fix(b.k, 2)} u<sub>c</sub>)</th><td></td><td></td>
              {cols.map((c) => <td key={c.key} className="num">{fix(b.analytic[c.key]!.lo, c.d)} … {fix(b.analytic[c.key]!.hi, c.d)}</td>)}
            </tr>
            <tr>
              <th scope="row">95 % interval, Monte Carlo</th><td></td><td></td>
              {cols.map((c) => <td key={c.key} className="num">{u[c.key] ? `${fix(u[c.key]!.lo, c.d)} … ${fix(u[c.key]!.hi, c.d)}` : '–'}</td>)}
            </tr>
          </tbody>
        </table>
      </div>
      <p className="small muted">
        All on the corrected basis, centred on the corrected values of the coefficient table. Hover a source for how its
        figure was found. The reduction's own errors (integration, trailing-edge closure, rake, wall integrals) and the
        correction model are estimates (app/reductionErrors.ts). Reduced data are for review by a qualified engineer;
        facility safety rules and local practice come first.
      </p>
    </>
  );
}
