// Stale results (common practice, no source): a stored result is stale when what it was computed
// from is no longer what the session holds now — its settings differ from the session's settings
// in force (a setting saved since, a tap marked bad or good since, or a one-off `--set` on the
// command line), or a wind-off zero that now brackets the run was stored after the result was
// reduced (live mode: the next zero arrives after the run was reduced against one zero only).
// A stale result is still shown, marked, with its reasons in words; "re-reduce stale runs"
// computes it again with the session's current settings and zeros.
import type { Settings } from './types';

export interface StaleMark {
  /** Reasons in words, one a line, e.g. "liftTolAbs was 0.03, now 0.02". */
  reasons: string[];
  /** Settings keys (other than badTaps) whose values differ. */
  settings: string[];
  /** Taps bad now but not when reduced, and bad then but not now. */
  taps: { nowBad: string[]; nowGood: string[] };
  /** Taps kept in this run against the automatic test since, and no longer kept (Settings.keptTaps;
   *  only the run's own keep decisions count). Absent when none. */
  kept?: { nowKept: string[]; noLongerKept: string[] };
  /** Wind-off zero runs stored after the result was reduced. */
  zeros: number[];
}

/** A value in a reason: numbers as given, arrays comma-joined, strings quoted. */
function show(v: unknown): string {
  if (v === undefined) return '(not set)';
  if (Array.isArray(v)) return v.length ? v.join(', ') : '(none)';
  if (typeof v === 'string') return v;
  return JSON.stringify(v);
}

function same(a: unknown, b: unknown): boolean {
  if (Array.isArray(a) && Array.isArray(b)) return a.length === b.length && a.every((x, i) => same(x, b[i]));
  if (a && b && typeof a === 'object' && typeof b === 'object') {
    const ka = Object.keys(a as object);
    const kb = Object.keys(b as object);
    return ka.length === kb.length && ka.every((k) => same((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k]));
  }
  return Object.is(a, b);
}

export interface StaleInputs {
  /** The settings the result was computed with (RunResult.settings). */
  used: Partial<Settings>;
  /** The session's settings in force now. */
  current: Settings;
  /** When the result was reduced (ISO time). */
  reducedAt: string;
  /** The wind-off zeros that bracket the run now, with when each was stored (ISO time). */
  zeros: { run: number; storedAt: string | null }[];
  /** The run: keep decisions (Settings.keptTaps) of other runs do not make it stale. Without it
   *  every keep decision counts. */
  run?: number;
}

/** The keep decisions (Settings.keptTaps) that concern one run, tap ids sorted. */
function keptOf(list: readonly string[] | undefined, run: number | undefined): string[] {
  const out: string[] = [];
  for (const e of list ?? []) {
    const at = e.lastIndexOf('@');
    if (at <= 0) continue;
    if (run === undefined || Number(e.slice(at + 1)) === run) out.push(run === undefined ? e : e.slice(0, at));
  }
  return [...new Set(out)].sort();
}

/** Why a result is stale, or null when it is current. */
export function staleMark({ used, current, reducedAt, zeros, run }: StaleInputs): StaleMark | null {
  const reasons: string[] = [];
  const settings: string[] = [];
  for (const key of Object.keys(current) as (keyof Settings)[]) {
    if (key === 'badTaps' || key === 'keptTaps') continue;
    if (!same(used[key], current[key])) {
      settings.push(key);
      reasons.push(`${key} was ${show(used[key])}, now ${show(current[key])}`);
    }
  }
  const then = new Set(used.badTaps ?? []);
  const now = new Set(current.badTaps);
  const nowBad = [...now].filter((t) => !then.has(t)).sort();
  const nowGood = [...then].filter((t) => !now.has(t)).sort();
  if (nowBad.length) reasons.push(`tap${nowBad.length > 1 ? 's' : ''} ${nowBad.join(', ')} marked bad since`);
  if (nowGood.length) reasons.push(`tap${nowGood.length > 1 ? 's' : ''} ${nowGood.join(', ')} no longer marked bad`);
  const keptThen = new Set(keptOf(used.keptTaps, run));
  const keptNow = new Set(keptOf(current.keptTaps, run));
  const nowKept = [...keptNow].filter((t) => !keptThen.has(t));
  const noLongerKept = [...keptThen].filter((t) => !keptNow.has(t));
  const where = run === undefined ? '' : ' in this run';
  if (nowKept.length) reasons.push(`tap${nowKept.length > 1 ? 's' : ''} ${nowKept.join(', ')} kept${where} against the automatic test since`);
  if (noLongerKept.length) reasons.push(`tap${noLongerKept.length > 1 ? 's' : ''} ${noLongerKept.join(', ')} no longer kept${where}`);
  const t = Date.parse(reducedAt);
  const late = zeros.filter((z) => z.storedAt !== null && Date.parse(z.storedAt) > t).map((z) => z.run).sort((a, b) => a - b);
  if (late.length) reasons.push(`wind-off zero run${late.length > 1 ? 's' : ''} ${late.join(', ')} stored after this reduction`);
  if (!reasons.length) return null;
  return { reasons, settings, taps: { nowBad, nowGood }, ...(nowKept.length || noLongerKept.length ? { kept: { nowKept, noLongerKept } } : {}), zeros: late };
}

/** One line for a stale result: "stale: liftTolAbs was 0.03, now 0.02; tap U07 marked bad since". */
export function staleLine(mark: StaleMark | null | undefined): string {
  return mark ? `stale: ${mark.reasons.join('; ')}` : '';
}

/** The stale runs grouped by their reasons, for a note under a table: [{ runs, reasons }]. */
export function staleGroups(rows: readonly { run: number; stale?: StaleMark | null }[]): { runs: number[]; reasons: string[] }[] {
  const groups = new Map<string, { runs: number[]; reasons: string[] }>();
  for (const r of rows) {
    if (!r.stale) continue;
    const key = r.stale.reasons.join('\u0000');
    const g = groups.get(key) ?? { runs: [], reasons: r.stale.reasons };
    g.runs.push(r.run);
    groups.set(key, g);
  }
  return [...groups.values()].map((g) => ({ ...g, runs: g.runs.sort((a, b) => a - b) }));
}

/** Run numbers of the stale rows, ascending. */
export function staleRunNumbers(rows: readonly { run: number; stale?: StaleMark | null }[]): number[] {
  return rows.filter((r) => r.stale).map((r) => r.run).sort((a, b) => a - b);
}
