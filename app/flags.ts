// The one flag vocabulary of Rakeline: every flag code with its words, its severity and the
// template of its reason. The screens (badges, lists, polars), the command line, the day sheet, the
// exports and the live log all take their words from here, so a flag reads the same everywhere.
//
// Adding a flag code is ONE entry in FLAGS below: label, short label, severity and a reason
// template (a function of the numbers the check found). Its code then exists as a FlagCode, the
// result checks of main/handlers.ts accept it, and every view shows it with the words given here
// (test/flags.test.ts checks that each entry carries all of them).
//
// Words are our own. Severity words, glyphs and colours are per severity (SEVERITY): a run with a
// 'reject' flag is on hold — not to be used without review; a 'warn' flag asks for a check.
// Colours from the Okabe–Ito colour-blind-safe set (M. Okabe & K. Ito, "Color Universal Design",
// 2002/2008); the glyph and the word always say what the colour says.
import type { Flag } from './types';

export type Severity = Flag['severity'];

export interface SeverityWords {
  /** The one severity word, the same on screen, on the command line, on the sheet and in exports. */
  word: string;
  /** Glyph printed before the word (shape, not colour alone). */
  glyph: string;
  /** Strong colour (text, bars, markers). */
  colour: string;
  /** Pale tint for row backgrounds. */
  tint: string;
  /** What the severity asks of the engineer, in a sentence. */
  meaning: string;
  /** Sort rank: higher is worse. */
  rank: number;
}

export const SEVERITY: Record<Severity, SeverityWords> = {
  reject: { word: 'hold', glyph: '✖', colour: '#D55E00', tint: '#fbe7db', meaning: 'Do not use without review', rank: 2 },
  warn: { word: 'check', glyph: '▲', colour: '#E69F00', tint: '#fdf3dc', meaning: 'Look at it before use', rank: 1 },
};

/** One entry of the vocabulary. P: the numbers the reason template needs. */
export interface FlagEntry<P> {
  /** Full words: flag lists, the sheet's findings, the live log, exports. */
  label: string;
  /** Short words: badges and table cells. */
  short: string;
  /** Severity a flag of this code is raised with. */
  severity: Severity;
  /** The reason sentence, with the numbers that raised the flag. */
  reason: (p: P) => string;
  /** Typical numbers for the template (invented; used by the tests and the docs' flag list). */
  example: P;
}

const entry = <P>(e: FlagEntry<P>): FlagEntry<P> => e;
const f = (x: number, d: number): string => (Number.isFinite(x) ? x.toFixed(d) : '—');
const plural = (n: number, one: string, many = `${one}s`) => (n === 1 ? one : many);

/** Words for why a tap was dropped (the reason codes of app/surface.ts detectBadTaps). */
export const BAD_TAP_WORDS: Record<string, string> = {
  marked: 'marked bad by the user',
  stagnation: 'Cp above stagnation (core < 0.3.0)',
  outlier: 'outlier against its neighbours',
  leak: 'leak at wind-off',
};
export const badTapWords = (reason: string): string => BAD_TAP_WORDS[reason] ?? reason;

/** The vocabulary. Keep the entries in the order a reviewer reads them (worst first). */
export const FLAGS = {
  'lift-mismatch': entry<{
    clPressure: number; clMomentum: number; tol: number; clWall?: number;
    /** The same two on the corrected basis of the coefficient table (quoted beside them). */
    corrected?: { clPressure: number; clMomentum: number };
  }>({
    label: 'lift methods disagree',
    short: 'lift mismatch',
    severity: 'reject',
    reason: (p) =>
      `Lift methods disagree: surface pressures give cl = ${f(p.clPressure, 4)}, wall momentum gives ${f(p.clMomentum, 4)}, uncorrected as the cross-check compares them ` +
      `(difference ${f(Math.abs(p.clMomentum - p.clPressure), 4)}, tolerance ${f(p.tol, 4)})` +
      `${p.clWall !== undefined && Number.isFinite(p.clWall) ? `; the wall circulation integral gives ${f(p.clWall, 4)}` : ''}` +
      `${p.corrected ? `; corrected: ${f(p.corrected.clPressure, 4)} and ${f(p.corrected.clMomentum, 4)}` : ''}.`,
    example: { clPressure: 1.162, clMomentum: 0.981, tol: 0.055, corrected: { clPressure: 1.1161, clMomentum: 0.9423 } },
  }),
  'wake-not-captured': entry<{ edgeLo: number; edgeHi: number; tol: number; peakMm: number; cd: number }>({
    label: 'wake not captured by the rake',
    short: 'wake not captured',
    severity: 'reject',
    reason: (p) =>
      `Wake not captured by the rake: edge total pressure (H − p∞)/q∞ = ${f(p.edgeLo, 4)} (lower) and ${f(p.edgeHi, 4)} (upper), ` +
      `which should be within ${p.tol} of 1 with the largest deficit inside the rake; the deficit peaks at y = ${f(p.peakMm, 0)} mm. ` +
      `The wake drag (cd = ${f(p.cd, 4)}) is not reliable.`,
    example: { edgeLo: 0.962, edgeHi: 0.991, tol: 0.02, peakMm: -118, cd: 0.0412 },
  }),
  unsteady: entry<{ fraction: number; limit: number }>({
    label: 'unsteady dynamic pressure',
    short: 'unsteady q',
    severity: 'warn',
    reason: (p) =>
      `Unsteady run: the reference pressure fluctuates by ${f(p.fraction * 100, 1)} % (std/mean), above the ${f(p.limit * 100, 1)} % limit.`,
    example: { fraction: 0.031, limit: 0.02 },
  }),
  'leaking-tap': entry<{ taps: string[]; leakPa: number }>({
    label: 'leaking tap',
    short: 'leaking tap',
    severity: 'warn',
    reason: (p) =>
      `Leaking ${plural(p.taps.length, 'tap')} ${p.taps.join(', ')}: the wind-off zero sits more than ${p.leakPa} Pa from the other taps' zeros; dropped and bridged.`,
    example: { taps: ['U07'], leakPa: 3 },
  }),
  'bad-tap': entry<{ taps: { id: string; reason: string; predicted?: number; residual?: number; u?: number; score?: number }[] }>({
    label: 'bad tap dropped and bridged',
    short: 'bad tap',
    severity: 'warn',
    reason: (p) =>
      `Bad ${plural(p.taps.length, 'tap')} dropped and bridged (a suggestion to confirm or keep): ${p.taps.map((t) => `${t.id} (${
        t.reason === 'outlier' && t.predicted !== undefined && t.residual !== undefined && t.u !== undefined && t.score !== undefined
          ? `Cp ${f(t.predicted + t.residual, 3)} against ${f(t.predicted, 3)} predicted from its neighbours: off by ${f(t.residual, 3)}, ${f(t.score, 1)} × the combined uncertainty ${f(t.u, 3)}`
          : badTapWords(t.reason)
      })`).join(', ')}.`,
    example: { taps: [{ id: 'L12', reason: 'outlier', predicted: -0.412, residual: 0.187, u: 0.011, score: 17 }] },
  }),
  reference: entry<{ found: { row: string; id: string; cp: number; cpStag: number; M: number; u: number }[]; qLowPct: number; staticLowPa: number }>({
    label: 'highest Cp above stagnation: q or static reference suspect',
    short: 'q/p∞ suspect',
    severity: 'warn',
    reason: (p) =>
      `${p.found.map((x) => `Cp ${f(x.cp, 3)} at ${x.id} (row ${x.row}) is above the stagnation value ${f(x.cpStag, 4)} at M ${f(x.M, 3)} ` +
        `by ${f(x.cp - x.cpStag, 3)}, ${f((x.cp - x.cpStag) / x.u, 1)}× its uncertainty ${f(x.u, 3)}`).join('; ')}: ` +
      `q about ${f(p.qLowPct, 1)} % low, or the static reference about ${f(p.staticLowPa, 0)} Pa low. ` +
      `No tap can read above stagnation, so this points at the references, not the ${plural(p.found.length, 'tap')}; kept.`,
    example: { found: [{ row: 'C', id: 'U01', cp: 1.05, cpStag: 1.0025, M: 0.1, u: 0.008 }], qLowPct: 4.5, staticLowPa: 57 },
  }),
  'no-zero': entry<Record<string, never>>({
    label: 'no wind-off zero',
    short: 'no zero',
    severity: 'warn',
    reason: () => 'No wind-off zero was found for this run; channels are not zero-corrected.',
    example: {},
  }),
  'zero-drift': entry<{ channels: number; fraction: number; zeroRuns: number[]; worstChannel: string; worstPa: number }>({
    label: 'wind-off zero drifted',
    short: 'zero drift',
    severity: 'warn',
    reason: (p) =>
      `Zero drift: ${p.channels} ${plural(p.channels, 'channel')} changed by more than ${f(p.fraction * 100, 1)} % of q between the wind-off zeros ` +
      `(runs ${p.zeroRuns.join(' and ')}); largest ${p.worstChannel} ${f(p.worstPa, 1)} Pa.`,
    example: { channels: 2, fraction: 0.005, zeroRuns: [14, 21], worstChannel: 'U03', worstPa: 4.1 },
  }),
  compressible: entry<{ M: number; limit: number }>({
    label: 'Mach number above the incompressible limit',
    short: 'Mach limit',
    severity: 'warn',
    reason: (p) => `Mach ${f(p.M, 3)} exceeds ${p.limit}: the incompressible reduction is no longer adequate.`,
    example: { M: 0.312, limit: 0.3 },
  }),
  'span-spread': entry<{ spread: number; rows: number; lo: { row: string; z: number; cl: number }; hi: { row: string; z: number; cl: number }; tol: number }>({
    label: 'spanwise rows disagree',
    short: 'span spread',
    severity: 'warn',
    reason: (p) =>
      `Section cl varies by ${f(p.spread, 3)} across ${p.rows} spanwise rows ` +
      `(row ${p.lo.row} at z = ${f(p.lo.z, 3)} m: ${f(p.lo.cl, 3)}; row ${p.hi.row} at z = ${f(p.hi.z, 3)} m: ${f(p.hi.cl, 3)}), ` +
      `more than the tolerance ${f(p.tol, 3)}: the flow may not be two-dimensional.`,
    example: { spread: 0.061, rows: 3, lo: { row: 'B', z: -0.15, cl: 0.812 }, hi: { row: 'C', z: 0, cl: 0.873 }, tol: 0.04 },
  }),
  'correction-disagree': entry<{
    applied: string; epsApplied: number; dAlphaApplied: number; clApplied: number;
    reference: string; epsReference: number; dAlphaReference: number; clReference: number;
    tolEps: number; tolAlphaDeg: number;
  }>({
    label: 'wall corrections disagree',
    short: 'corrections differ',
    severity: 'warn',
    reason: (p) =>
      `Wall corrections disagree: ${p.applied} (applied) ε = ${f(p.epsApplied, 4)}, Δα = ${f(p.dAlphaApplied, 2)}° against ` +
      `${p.reference} ε = ${f(p.epsReference, 4)}, Δα = ${f(p.dAlphaReference, 2)}° (limits ${f(p.tolEps, 4)} in ε, ` +
      `${f(p.tolAlphaDeg, 2)}° in Δα); corrected cl ${f(p.clApplied, 4)} against ${f(p.clReference, 4)}. ` +
      'A sign of stall, wall boundary-layer growth or wall-tap trouble.',
    example: {
      applied: 'wall signature', epsApplied: 0.0171, dAlphaApplied: 0.16, clApplied: 1.081,
      reference: 'classical (Barlow, Rae & Pope)', epsReference: 0.0113, dAlphaReference: 0.11, clReference: 1.073,
      tolEps: 0.005, tolAlphaDeg: 0.25,
    },
  }),
} as const;

export type FlagCode = keyof typeof FLAGS;
export type FlagParams<C extends FlagCode> = Parameters<(typeof FLAGS)[C]['reason']>[0];

/** Every flag code, in the table's order. */
export const FLAG_CODES = Object.keys(FLAGS) as [FlagCode, ...FlagCode[]];

/** A flag of the given code: severity from the table, reason from its template. */
export function makeFlag<C extends FlagCode>(code: C, params: FlagParams<C>): Flag {
  const e = FLAGS[code] as FlagEntry<FlagParams<C>>;
  return { code, severity: e.severity, reason: e.reason(params) };
}

/** Everything a view needs to show a flag code, resolved (unknown codes, e.g. from a newer core,
 *  show their code as words with the stored severity). */
export interface FlagWords {
  code: string;
  label: string;
  short: string;
  severity: Severity;
  word: string;
  glyph: string;
  colour: string;
  tint: string;
}

export function flagWords(code: string, severity?: Severity): FlagWords {
  const e = (FLAGS as Record<string, Pick<FlagEntry<unknown>, 'label' | 'short' | 'severity'> | undefined>)[code];
  const sev = severity ?? e?.severity ?? 'warn';
  const s = SEVERITY[sev];
  return { code, label: e?.label ?? code, short: e?.short ?? code, severity: sev, word: s.word, glyph: s.glyph, colour: s.colour, tint: s.tint };
}

/** Full words of a flag code. */
export const flagLabel = (code: string): string => flagWords(code).label;
/** Short words of a flag code. */
export const flagShort = (code: string): string => flagWords(code).short;
/** The severity word ('hold' or 'check'). */
export const severityWord = (s: Severity): string => SEVERITY[s].word;

/** One flag in a line of plain text: "hold: lift methods disagree" (long adds ": reason"). */
export function flagLine(flag: Flag, form: 'short' | 'label' | 'reason' = 'label'): string {
  const w = flagWords(flag.code, flag.severity);
  if (form === 'short') return `${w.word}: ${w.short}`;
  if (form === 'label') return `${w.word}: ${w.label}`;
  // The reason usually starts with the label's meaning already; say the label only when it does not.
  return flag.reason.toLowerCase().startsWith(w.label.toLowerCase())
    ? `${w.word}: ${flag.reason}`
    : `${w.word}: ${w.label} — ${flag.reason}`;
}

/** Several flags in one line (";"-separated), "ok" when there are none. */
export function flagsLine(flags: readonly Flag[], form: 'short' | 'label' | 'reason' = 'short'): string {
  return flags.length ? flags.map((x) => flagLine(x, form)).join('; ') : 'ok';
}

/** The worst severity among flags, null when there are none. */
export function worstSeverity(flags: readonly Flag[] | null | undefined): Severity | null {
  if (!flags || flags.length === 0) return null;
  return flags.some((x) => x.severity === 'reject') ? 'reject' : 'warn';
}

/** The explanation of the two severities in one sentence, for legends and sheet notes. */
export function severityLegend(): string {
  return `${SEVERITY.reject.glyph} ${SEVERITY.reject.word}: ${SEVERITY.reject.meaning.toLowerCase()}; ` +
    `${SEVERITY.warn.glyph} ${SEVERITY.warn.word}: ${SEVERITY.warn.meaning.toLowerCase()}.`;
}
