// Result exports: a flat CSV (one row per run, units in the column names) and a complete JSON
// document (session, setup, settings, every run with its latest full result, review, summary and
// the audit trail).
import type { RunRow, Store } from './store';
import { sessionSummary } from './reduceService';
import type { RunResult, Setup } from '../app/types';
import { CORE_VERSION } from '../app/types';
import { flagLine } from '../app/flags';
import { staleLine } from '../app/stale';
import { listRunsMarked } from './stale';

/** Columns of the results CSV, in order (units after the last underscore group: _deg, _Pa, _m_s, _m2_s). */
export const RESULT_CSV_COLUMNS = [
  'run', 'kind', 'time_iso', 'alpha_geom_deg', 'alpha_corr_deg', 'q_Pa', 'V_m_s', 'Re',
  'cl_pressure', 'cl_momentum', 'cl_wall', 'cd_wake', 'cd_pressure', 'cm_c4',
  'gamma_pressure_m2_s', 'gamma_momentum_m2_s', 'gamma_wall_m2_s',
  'cl_pressure_lo95', 'cl_pressure_hi95', 'cd_wake_lo95', 'cd_wake_hi95',
  'correction_method', 'eps', 'eps_classical', 'eps_wall_signature', 'eps_maskell', 'wall_fit_residual_cp',
  'baro_Pa', 'temperature_C', 'humidity_pct', 'flag_codes', 'flags', 'review', 'stale', 'source_file',
] as const;

/** A number with 8 significant digits; empty for missing/NaN (a CSV reader then sees no value). */
function num(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '';
  return String(Number(v.toPrecision(8)));
}

/** RFC 4180 quoting; text cells that a spreadsheet would run as a formula get a leading apostrophe. */
export function csvText(s: string): string {
  let t = s;
  if (/^[=+\-@\t\r]/.test(t)) t = `'${t}`;
  return /[",\r\n]/.test(t) ? `"${t.replace(/"/g, '""')}"` : t;
}

/** ε of one wall-correction method of a result (undefined when not applied or not stored). */
function epsOf(f: RunResult | undefined, method: string): number | undefined {
  const m = f?.corrections?.methods.find((x) => x.method === method);
  return m?.available ? m.eps : undefined;
}

/** One row per run (zero runs included, their coefficient cells empty). `results` (optional, the
 *  latest full results) supplies Γ from the wall integral and the 95 % intervals. */
export function exportResultsCsv(runs: RunRow[], setup: Setup, results?: RunResult[]): string {
  void setup; // the columns are the same for every setup; kept for the agreed signature
  const full = new Map((results ?? []).map((r) => [r.run, r]));
  const lines: string[] = [RESULT_CSV_COLUMNS.join(',')];
  for (const row of runs) {
    const r = row.result;
    const f = full.get(row.run);
    const gammaWall = (r as { gammaWall?: number } | null)?.gammaWall ?? (f?.circulationCorrected ?? f?.circulation)?.wall;
    const flags = r?.flags ?? [];
    const review = row.review
      ? `${row.review.verdict} by ${row.review.actor} at ${row.review.at}${row.review.comment ? `: ${row.review.comment}` : ''}`
      : '';
    const cells: string[] = [
      String(row.run), row.kind, csvText(row.time), num(row.alphaDeg), num(r?.alphaCorrDeg), num(r?.q), num(r?.V), num(r?.Re),
      num(r?.cl), num(r?.clMom), num(r?.clWall), num(r?.cd), num(r?.cdp), num(r?.cmc4),
      num(r?.gammaPressure), num(r?.gammaMomentum), num(gammaWall),
      num(f?.uncertainty.cl?.lo), num(f?.uncertainty.cl?.hi), num(f?.uncertainty.cd?.lo), num(f?.uncertainty.cd?.hi),
      // Wall corrections (docs/WALL-CORRECTIONS.md): the method applied, its ε, and each method's ε
      // (empty where a method could not be applied or the result predates the comparison).
      csvText(f ? f.corrections?.applied ?? f.correction.method : ''), num(f?.correction.eps),
      num(epsOf(f, 'barlow-rae-pope')), num(epsOf(f, 'wall-signature')), num(epsOf(f, 'maskell')),
      num(f?.corrections?.signature?.residualCp),
      num(row.baro), num(row.temperatureC), num(row.humidity),
      csvText(flags.map((x) => x.code).join(';')),
      csvText(flags.map((x) => flagLine(x, 'reason')).join(' | ')),
      csvText(review), csvText(staleLine(row.stale)), csvText(row.file ?? ''),
    ];
    lines.push(cells.join(','));
  }
  return lines.join('\r\n') + '\r\n';
}

/** The whole session as one JSON document (NaN becomes null). */
export function exportResultsJson(store: Store, sessionId: number): string {
  const session = store.getSession(sessionId);
  const runs = listRunsMarked(store, sessionId).map((row) => ({
    run: row.run,
    kind: row.kind,
    time: row.time,
    alphaDeg: row.alphaDeg,
    baro: row.baro,
    temperatureC: row.temperatureC,
    humidity: row.humidity,
    file: row.file,
    review: row.review,
    stale: row.stale ?? null,
    latest: row.result ? { resultId: row.result.resultId, reducedAt: row.result.reducedAt } : null,
    result: row.kind === 'data' ? store.latestResult(sessionId, row.run) : null,
  }));
  const doc = {
    format: 'rakeline-results',
    formatVersion: 1,
    exportedAt: new Date().toISOString(),
    coreVersion: CORE_VERSION,
    session,
    setup: store.getSetup(sessionId),
    settings: store.getSettings(sessionId),
    summary: sessionSummary(store, sessionId),
    runs,
    audit: store.auditTrail(sessionId),
  };
  return JSON.stringify(doc, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v), 2) + '\n';
}
