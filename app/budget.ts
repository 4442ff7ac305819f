// The uncertainty budget of one run in the GUM style (JCGM 100:2008 §8; §5.1.3 eq. (10) for
// uncorrelated inputs): for each source, its standard uncertainty u(x_i), its sensitivity
// c_i = ∂y/∂x_i and its contribution |c_i|·u(x_i) to every output (corrected cl, cd, cd_p, cm_c/4,
// corrected momentum cl, corrected Γ by the three methods). The sensitivities are found by
// evaluating the run's own Monte Carlo model (app/reduce.ts McModel — the same reduction) with one
// input moved by its standard uncertainty, c_i·u_i = y(x + u_i e_i) − y(x) (a finite-difference
// form of JCGM 100 §5.1.3 note 2, which allows sensitivities found numerically). Sources that are
// many independent inputs of one kind (every tap channel, every tap position) are one line, their
// contributions combined in root-sum-square; correlated inputs (one transducer group's gain or
// zero) are one input, moved together, so the correlation is in the line. The combined standard
// uncertainty is the root-sum-square of the lines, and the analytic 95 % interval y ± k·u_c with
// k = 1.96 (normal distribution, JCGM 100 §G.2), beside the Monte Carlo interval (JCGM 101). Both
// are placed with the estimated integration error (app/reductionErrors.ts integrationError: the
// reduced value is known to be low or high by about that much, and it is not applied to the values,
// JCGM 100 §F.2.4.5 in spirit): y + shift ± k·u_c, where shift is that error carried to each output,
// stretched where needed to hold y itself.
// Pure module.

import type { McModel } from './reduce';
import { ADJ, ADJ_LENGTH } from './reductionErrors';
import { STAGE_ALL, STAGE_CONTOUR } from './mcPlan';
import type { BudgetLine, Setup, UncertaintyBudget, UncertaintyKey } from './types';

const KEYS: UncertaintyKey[] = ['cl', 'cd', 'cdp', 'cmc4', 'clMom', 'gammaPressure', 'gammaMomentum', 'gammaWall'];
/** Coverage factor of the analytic interval (normal, p = 95 %). */
export const K95 = 1.959964;

/** What a channel measures, for grouping the budget lines. */
function channelClass(setup: Setup): Map<string, string> {
  const probes = new Map(setup.rake.probes.map((p) => [p.id, p.kind]));
  const out = new Map<string, string>();
  for (const c of setup.channels) {
    const t = c.target;
    out.set(c.name,
      t.kind === 'reference'
        ? t.ref === 'dpRef' ? 'reference Δp_ref (q)' : t.ref === 'pStatic' ? 'reference p∞' : 'reference H∞'
        : t.kind === 'tap' ? 'surface taps'
          : t.kind === 'rake' ? `rake ${probes.get(t.id) ?? 'total'} probes`
            : t.kind === 'floor' ? 'floor taps' : 'ceiling taps');
  }
  return out;
}

function fmtU(v: number, unit: string): string {
  return `${Number(v.toPrecision(2))} ${unit}`.trim();
}

function rangeText(values: number[], unit: string): string {
  const f = values.filter((v) => v > 0);
  if (!f.length) return '0';
  const lo = Math.min(...f);
  const hi = Math.max(...f);
  return lo === hi || hi / lo < 1.05 ? fmtU(hi, unit) : `${fmtU(lo, unit)} – ${fmtU(hi, unit)}`;
}

/** The budget of one run (see the module comment). `nominal`: the outputs at the nominal inputs.
 *  `staged` (default): each moved input re-runs only the stages of the model it reaches
 *  (McModel.evaluateStages: a tap channel the contour, a rake channel the wake, a wall channel the
 *  walls, an adjustment none but the corrections) and reuses the base point's others — the same
 *  arithmetic on the same numbers, so the same deltas as evaluating in full (staged: false). */
export function runBudget(
  setup: Setup, m: McModel, alphaDeg: number, nominal: Record<UncertaintyKey, number>, opts: { staged?: boolean } = {},
): UncertaintyBudget {
  const staged = opts.staged !== false;
  const vals = Float64Array.from(m.mean);
  const tapDx = new Float64Array(m.tapCount);
  const adj = new Float64Array(ADJ_LENGTH);
  const base = staged ? m.evaluateBase(vals, tapDx, alphaDeg, m.kq, adj) : m.evaluate(vals, tapDx, alphaDeg, m.kq, adj);
  const at = (stages: number, a: number, kq: number) =>
    staged ? m.evaluateStages(stages, vals, tapDx, a, kq, adj) : m.evaluate(vals, tapDx, a, kq, adj);
  const lines: BudgetLine[] = [];
  /** The outputs' changes from the base with the inputs as they are now; `stages`: what the
   *  moved input reaches (app/mcPlan.ts STAGE_*). */
  const delta = (stages: number): Record<UncertaintyKey, number> => {
    const y = at(stages, alphaDeg, m.kq);
    const d = {} as Record<UncertaintyKey, number>;
    for (const k of KEYS) d[k] = y[k] - base[k];
    return d;
  };
  /** One line from the deltas of its inputs (rss), with the sensitivity when it is one input. */
  const line = (
    source: string, kind: BudgetLine['kind'], u: string, basis: string, deltas: Record<UncertaintyKey, number>[], uOne?: number,
  ) => {
    if (!deltas.length) return;
    const contribution: BudgetLine['contribution'] = {};
    for (const k of KEYS) {
      if (!Number.isFinite(nominal[k])) continue;
      let s = 0;
      for (const d of deltas) s += Number.isFinite(d[k]) ? d[k] * d[k] : 0;
      contribution[k] = Math.sqrt(s);
    }
    const out: BudgetLine = { source, kind, u, basis, inputs: deltas.length, contribution };
    if (deltas.length === 1 && uOne !== undefined && uOne > 0) {
      const sensitivity: BudgetLine['sensitivity'] = {};
      for (const k of KEYS) if (Number.isFinite(nominal[k]) && Number.isFinite(deltas[0][k])) sensitivity[k] = deltas[0][k] / uOne;
      out.sensitivity = sensitivity;
    }
    lines.push(out);
  };

  // Channels: independent parts, by what they measure.
  const cls = channelClass(setup);
  const byClass = new Map<string, number[]>();
  m.names.forEach((n, k) => {
    if (!(m.sd[k] > 0)) return;
    const c = cls.get(n) ?? 'other channels';
    byClass.set(c, [...(byClass.get(c) ?? []), k]);
  });
  const grouped = m.instruments.group;
  for (const [c, ks] of byClass) {
    const deltas = ks.map((k) => {
      vals[k] = m.mean[k] + m.sd[k];
      const d = delta(m.stages.channel[k]);
      vals[k] = m.mean[k];
      return d;
    });
    const unit = c === 'rake angle probes' ? '°' : 'Pa';
    const anyGrouped = ks.some((k) => grouped[k] >= 0);
    const basis = anyGrouped
      ? 'independent per channel: own instrument error (ungrouped) or linearity (grouped), standard error of the mean, zero drift between the bracketing zeros (grouped)'
      : "independent per channel: the channel's %FS and offset, and the standard error of the mean";
    line(`${c}: independent errors`, c.startsWith('reference') ? 'reference' : 'instrument',
      `${rangeText(ks.map((k) => m.sd[k]), unit)} each`, basis, deltas, ks.length === 1 ? m.sd[ks[0]] : undefined);
  }

  // Transducer groups: gain and zero, each one input common to the group's channels.
  const reach = (ks: number[]) => ks.reduce((s, k) => s | m.stages.channel[k], 0);
  m.instruments.groups.forEach((g, gi) => {
    const members = m.names.map((_, k) => k).filter((k) => grouped[k] === gi);
    if (!members.length) return;
    if (g.gain > 0) {
      for (const k of members) vals[k] = m.mean[k] * (1 + g.gain);
      const d = delta(reach(members));
      for (const k of members) vals[k] = m.mean[k];
      line(`group ${g.id}: gain`, 'instrument', `${Number((g.gain * 100).toPrecision(2))} % of reading`,
        `common to its ${members.length} channels (correlated)`, [d], g.gain * 100);
    }
    const counted = members.filter((k) => m.instruments.zeroCounts[k]);
    if (g.zeroPa > 0 && counted.length) {
      for (const k of counted) vals[k] = m.mean[k] + g.zeroPa;
      const d = delta(reach(counted));
      for (const k of counted) vals[k] = m.mean[k];
      line(`group ${g.id}: zero`, 'instrument', fmtU(g.zeroPa, 'Pa'),
        'common to the group; not removed (no wind-off zero on both sides of the run)', [d], g.zeroPa);
    }
  });

  // Geometry, α, k_q.
  if (m.tapSd > 0) {
    const deltas: Record<UncertaintyKey, number>[] = [];
    for (let i = 0; i < m.tapCount; i++) {
      tapDx[i] = m.tapSd;
      deltas.push(delta(m.stages.tap[i]));
      tapDx[i] = 0;
    }
    line('tap positions x/c', 'geometry', `${m.tapSd} x/c each`, 'independent per tap (setup)', deltas);
  }
  if (m.alphaSd > 0) {
    const y = at(STAGE_CONTOUR, alphaDeg + m.alphaSd, m.kq);
    const d = {} as Record<UncertaintyKey, number>;
    for (const k of KEYS) d[k] = y[k] - base[k];
    line('angle of attack α', 'geometry', `${m.alphaSd}°`, 'setup', [d], m.alphaSd);
  }
  if (m.kqSd > 0) {
    const y = at(STAGE_ALL, alphaDeg, m.kq + m.kqSd);
    const d = {} as Record<UncertaintyKey, number>;
    for (const k of KEYS) d[k] = y[k] - base[k];
    line('tunnel calibration k_q', 'reference', `${m.kqSd}`, 'setup', [d], m.kqSd);
  }

  // The reduction's own errors and the correction model.
  const e = m.errors;
  const adjLine = (source: string, kind: BudgetLine['kind'], u: string, basis: string, parts: [number, number][]) => {
    const deltas = parts.filter(([, v]) => v > 0).map(([j, v]) => {
      adj[j] = v;
      const d = delta(0);
      adj[j] = 0;
      return d;
    });
    if (deltas.length) line(source, kind, u, basis, deltas);
  };
  const sig = (v: number) => Number(v.toPrecision(2));
  const sgn = (v: number) => `${v >= 0 ? '+' : '−'}${sig(Math.abs(v))}`;
  adjLine('integration (tap resolution)', 'reduction',
    `cl ${sig(e.integration.cl)}, cm ${sig(e.integration.cmc4)} about an estimated error of cl ${sgn(e.integrationShift.cl)}, cm ${sgn(e.integrationShift.cmc4)} (not applied to the values; the intervals are placed with it)`,
    'whole row against its interleaved halves (Richardson, order of the rule); u from the halves\' disagreement',
    [[ADJ.cl, e.integration.cl], [ADJ.cdp, e.integration.cdp], [ADJ.cmc4, e.integration.cmc4]]);
  adjLine('trailing-edge closure', 'reduction', `cl ${sig(e.trailingEdge.cl)}, cm ${sig(e.trailingEdge.cmc4)}`,
    'spread of three closures, rectangular (range/√12)',
    [[ADJ.cl, e.trailingEdge.cl], [ADJ.cdp, e.trailingEdge.cdp], [ADJ.cmc4, e.trailingEdge.cmc4]]);
  adjLine('rake probe spacing', 'reduction', `cd ${sig(e.rakeSpacing)}`, 'whole rake against its interleaved halves', [[ADJ.cd, e.rakeSpacing]]);
  adjLine('rake truncation', 'reduction', `cd ${sig(e.rakeTruncation)}`, 'deficit left at the rake edges (Gaussian tail), rectangular', [[ADJ.cd, e.rakeTruncation]]);
  adjLine('wall integrals: vortex-shape extrapolation (1 − F)', 'reduction', `${sig(e.wallShape * 100)} % of cl_mom, Γ_wall`,
    '20 % of the part supplied by the capture fraction F (common practice, no source)', [[ADJ.walls, e.wallShape]]);
  adjLine('wall integrals: signature fit residual', 'reduction', `${sig(e.wallFit * 100)} % of cl_mom, Γ_wall`,
    'residual of a least-squares vortex-signature fit to floor − ceiling', [[ADJ.walls, e.wallFit]]);
  adjLine('correction model: σ', 'correction', `${sig(e.sigma * 100)} % of σ`, 'common practice, no source', [[ADJ.sigma, e.sigma]]);
  adjLine('correction model: ε_sb', 'correction', `${sig(e.epsSb * 100)} % of ε_sb`, 'common practice, no source', [[ADJ.epsSb, e.epsSb]]);
  adjLine('correction model: ε_wb', 'correction', `${sig(e.epsWb * 100)} % of ε_wb`,
    'the two published wake-blockage forms (c/2h, c/4h)·cd_u as a rectangular range', [[ADJ.epsWb, e.epsWb]]);

  // The estimated integration error carried to every output (the model with the adjustments at
  // their means, app/reductionErrors.ts adjustmentMean): the analytic interval is placed with it,
  // as the Monte Carlo draws are.
  adj.set(m.adjMean);
  const moved = delta(0);
  adj.fill(0);
  const combined: UncertaintyBudget['combined'] = {};
  const analytic: UncertaintyBudget['analytic'] = {};
  const shift: NonNullable<UncertaintyBudget['shift']> = {};
  for (const k of KEYS) {
    if (!Number.isFinite(nominal[k])) continue;
    let s = 0;
    for (const l of lines) s += (l.contribution[k] ?? 0) ** 2;
    const uc = Math.sqrt(s);
    combined[k] = uc;
    const d = Number.isFinite(moved[k]) ? moved[k] : 0;
    shift[k] = d;
    // Stretched to hold the value itself, as the Monte Carlo interval is (app/reduce.ts holdingValue).
    analytic[k] = { lo: Math.min(nominal[k], nominal[k] + d - K95 * uc), hi: Math.max(nominal[k], nominal[k] + d + K95 * uc) };
  }
  return { lines, combined, analytic, shift, k: K95 };
}
