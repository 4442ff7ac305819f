// Results the page asks main to store (channel runs.saveResults) are never taken on trust: a faulty
// or hostile page could otherwise store numbers the reduction never produced under the audit
// trail's name. verifyResults re-runs the reduction here, from the stored samples and the settings
// the result states (checked against the settings schema first, so a stated setting cannot make main
// do unbounded work), with the same core (app/reduce.ts) and the same seeded Monte Carlo stream, and
// compares every number, string and flag of the page's result with its own. Any difference refuses
// the whole request (a validation error naming the run and the first field that differs) and
// nothing is stored; when all agree, main's own results are what the store keeps.
import { settingsSchema } from '../app/log/schema';
import { reduceRun } from '../app/reduce';
import type { RunResult, Settings } from '../app/types';
import { ContractFailure } from './contract';
import { reductionInputs } from './reduceService';
import type { Store } from './store';

/** Relative tolerance of a number (the page reduces with the same core; only a different build of
 *  the JavaScript engine's Math functions could move the last bits). Common practice, no source. */
export const VERIFY_REL_TOL = 1e-9;
/** Absolute floor of the tolerance, for figures near zero. */
export const VERIFY_ABS_TOL = 1e-12;

/** The first path at which two result trees differ, or null when they agree. */
export function firstDifference(page: unknown, main: unknown, at = ''): string | null {
  // Structured clone (Electron IPC) keeps typed arrays; compare them as the plain arrays they stand for.
  if (ArrayBuffer.isView(page) && !(page instanceof DataView)) page = Array.from(page as unknown as ArrayLike<number>);
  if (ArrayBuffer.isView(main) && !(main instanceof DataView)) main = Array.from(main as unknown as ArrayLike<number>);
  if (typeof main === 'number' || typeof page === 'number') {
    if (typeof main !== 'number' || typeof page !== 'number') return `${at || '(result)'}: ${show(page)} where the reduction gives ${show(main)}`;
    if (Number.isNaN(main) || Number.isNaN(page)) return Number.isNaN(main) && Number.isNaN(page) ? null : `${at}: ${show(page)} where the reduction gives ${show(main)}`;
    if (main === page) return null;
    if (!Number.isFinite(main) || !Number.isFinite(page)) return `${at}: ${show(page)} where the reduction gives ${show(main)}`;
    return Math.abs(main - page) <= VERIFY_ABS_TOL + VERIFY_REL_TOL * Math.abs(main) ? null : `${at}: ${show(page)} where the reduction gives ${show(main)}`;
  }
  if (main === null || page === null || typeof main !== 'object' || typeof page !== 'object') {
    return main === page ? null : `${at || '(result)'}: ${show(page)} where the reduction gives ${show(main)}`;
  }
  if (Array.isArray(main) !== Array.isArray(page)) return `${at}: ${show(page)} where the reduction gives ${show(main)}`;
  if (Array.isArray(main)) {
    const p = page as unknown[];
    if (p.length !== main.length) return `${at}: ${p.length} entries where the reduction gives ${main.length}`;
    for (let i = 0; i < main.length; i++) {
      const d = firstDifference(p[i], main[i], `${at}[${i}]`);
      if (d) return d;
    }
    return null;
  }
  const m = main as Record<string, unknown>;
  const p = page as Record<string, unknown>;
  const keys = new Set([...Object.keys(m), ...Object.keys(p)].filter((k) => m[k] !== undefined || p[k] !== undefined));
  for (const k of [...keys].sort()) {
    const d = firstDifference(p[k], m[k], at ? `${at}.${k}` : k);
    if (d) return d;
  }
  return null;
}

function show(v: unknown): string {
  if (typeof v === 'number') return String(v);
  if (v === undefined) return 'nothing';
  const s = JSON.stringify(v);
  return s.length > 60 ? `${s.slice(0, 57)}…` : s;
}

function refuse(message: string): never {
  throw new ContractFailure({ kind: 'validation', message: `Invalid payload for "runs.saveResults": ${message}; nothing was stored` });
}

/**
 * Re-run the reduction of every result from the stored data and the result's own settings and
 * return main's results (the ones to store). Throws a validation ContractFailure naming the run and
 * the first field that differs when any page result is not what the reduction gives.
 * Results must already have the shape of a RunResult for a data run of the session (checkResults).
 */
export function verifyResults(store: Store, sessionId: number, results: RunResult[]): RunResult[] {
  // One reduction input per distinct stated settings (usually one for the whole request).
  const groups = new Map<string, { settings: Settings; runs: number[] }>();
  for (const r of results) {
    const parsed = settingsSchema.safeParse(r.settings);
    if (!parsed.success) {
      const issue = parsed.error.issues[0];
      refuse(`run ${r.run}: settings.${issue.path.join('.')}: ${issue.message}`);
    }
    const key = JSON.stringify(parsed.data, Object.keys(parsed.data).sort());
    const g = groups.get(key) ?? { settings: parsed.data as Settings, runs: [] };
    g.runs.push(r.run);
    groups.set(key, g);
  }
  const ours = new Map<number, RunResult>();
  for (const g of groups.values()) {
    const { setup, settings, zeroed } = reductionInputs(store, sessionId, { runs: g.runs, settings: g.settings });
    for (const z of zeroed) ours.set(z.info.run, reduceRun(setup, z, settings));
  }
  return results.map((page) => {
    const main = ours.get(page.run);
    if (!main) refuse(`run ${page.run}: no stored data to reduce`);
    // Through the bridge the page's result is plain data; compare main's the same way.
    const d = firstDifference(page, JSON.parse(JSON.stringify(main, nanKeeper), nanReviver));
    if (d) refuse(`run ${page.run}: ${d} (the result is not what the reduction of the stored data with its stated settings gives)`);
    return main;
  });
}

// JSON.stringify drops undefined and turns NaN into null; keep NaN as NaN for the comparison.
const NAN = '\u0000NaN';
function nanKeeper(_k: string, v: unknown): unknown {
  if (typeof v === 'number' && !Number.isFinite(v)) return Number.isNaN(v) ? NAN : v > 0 ? `${NAN}+` : `${NAN}-`;
  if (ArrayBuffer.isView(v) && !(v instanceof DataView)) return Array.from(v as unknown as ArrayLike<number>);
  return v;
}
function nanReviver(_k: string, v: unknown): unknown {
  if (v === NAN) return NaN;
  if (v === `${NAN}+`) return Infinity;
  if (v === `${NAN}-`) return -Infinity;
  return v;
}
