// The printable test-day summary sheet: one self-contained HTML document (inline CSS and inline
// SVG plots; no scripts, no remote content, a Content-Security-Policy that forbids both) with
// print CSS for A4 or US Letter. A running header on every page (test, model, date, page n of m)
// comes from CSS page-margin boxes (CSS Paged Media Level 3, supported by Chromium, which prints
// it in the desktop app and in browser mode). Every piece of text from a log, a setup or a user
// is escaped. Flags are always spelled out in words; colour (Okabe–Ito palette) only repeats them.
// Times are printed in the local time of the machine that makes the sheet (zone named), to the
// second; no local file paths are printed.
import type { SessionRow, RunRow } from './store';
import type { Flag, Interval, PolarPoint, RunResult, SessionSummary, Settings, Setup } from '../app/types';
import { CORE_VERSION, DEFAULT_SETTINGS } from '../app/types';
import { badTapWords, flagLabel, flagShort, severityWord, SEVERITY } from '../app/flags';
import { notesByRun, splitFlags } from '../app/sessionFaults';
import { sweepDirections } from '../app/sweeps';
import { CONTOUR_RULE_TEXT } from '../app/surface';
import type { StaleMark } from '../app/stale';
import { escapeHtml, OKABE_ITO, offScalePoints, svgPlot, type PlotPoint, type PlotSeries, type PlotSpec } from './svgplot';

/** A finding about the whole session rather than one run (a tap faulty all day, say). The
 *  session-level fault finder (issue 9) fills these in; the sheet prints them in their own section. */
export interface SessionFinding {
  severity: Flag['severity'];
  /** Short title in words. */
  title: string;
  /** The finding with its numbers. */
  detail: string;
  runs?: number[];
}

/** A tap marked bad or good again by an engineer, with the reason given (from the audit trail). */
export interface TapNote {
  tapId: string;
  bad: boolean;
  comment: string;
  actor: string;
  at: string;
  /** An automatic drop the engineer settled (docs/TAP-JUDGEMENT.md §5): 'confirm' (then `bad`),
   *  'keep' or 'release' in `run`, with the drop's reason as the reduction gave it. */
  settled?: { decision: 'confirm' | 'keep' | 'release'; run: number; reason: string | null; residual: number | null; u: number | null };
}

export interface DaySheetArgs {
  session: SessionRow;
  setup: Setup;
  runs: RunRow[];
  summary: SessionSummary;
  paper: 'A4' | 'Letter';
  /** ISO time the sheet was made (printed on it, in local time). */
  generatedAt: string;
  /** Optional: full latest results, for intervals, uncertainty bars, Cp plots and bad taps. */
  results?: RunResult[];
  /** Optional: the session's reduction settings (store.getSettings); default: the setup's
   *  session defaults over DEFAULT_SETTINGS (what the sheet prints about tolerances). */
  settings?: Settings;
  /** Optional: program version printed in the footer. */
  appVersion?: string;
  /** IANA time zone for the printed times (default: this machine's). */
  timeZone?: string;
  /** Runs whose Cp plot the engineer asked for, besides the flagged runs. */
  cpRuns?: number[];
  /** Tap overrides with their reasons, oldest first. */
  tapNotes?: TapNote[];
  /** Session-level findings (issue 9); none yet = the section says so. */
  findings?: SessionFinding[];
}

const MINUS = '\u2212';
/** Fixed decimals, typographic minus, an en dash for a missing value. */
export function fmt(v: number | null | undefined, decimals: number): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '–';
  const s = (Math.abs(v) < 0.5 * Math.pow(10, -decimals) ? 0 : v).toFixed(decimals);
  return s.replace('-', MINUS);
}
function range(lo: number, hi: number, decimals: number, unit: string): string {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return '–';
  const u = unit ? `\u2009${unit}` : '';
  if (fmt(lo, decimals) === fmt(hi, decimals)) return `${fmt(lo, decimals)}${u}`;
  return `${fmt(lo, decimals)} to ${fmt(hi, decimals)}${u}`;
}
const CORRECTION_WORDS: Record<string, string> = {
  auto: 'chosen per run (wall signature where the walls can say, Maskell past stall, classical otherwise; see the method in the status column)',
  'wall-signature': 'wall-pressure signature: vortex, source and doublet between the walls fitted to the floor and ceiling Cp',
  maskell: 'Maskell separated-flow blockage (ARC R&M 3400) with classical solid blockage and curvature',
  'barlow-rae-pope': 'closed-section 2-D corrections, Barlow, Rae & Pope (1999) ch. 9',
  'allen-vincenti': 'closed-section 2-D corrections, Allen & Vincenti, NACA Rep. 782 (1944)',
  none: 'none (uncorrected)',
};

function geometryWords(setup: Setup): string {
  const g = setup.model.geometry;
  return g.kind === 'naca4' ? `NACA ${g.code}` : `coordinates (${g.x.length} points)`;
}


// ---------------------------------------------------------------------------------------------
// Times, names, run lists

/** The offset of a zone at an instant, as "UTC+01:00". */
function zoneOffset(when: Date, timeZone: string): string {
  const d = Number.isFinite(when.getTime()) ? when : new Date();
  const part = new Intl.DateTimeFormat('en-GB', { timeZone, timeZoneName: 'longOffset' })
    .formatToParts(d).find((p) => p.type === 'timeZoneName')?.value ?? 'GMT';
  const off = part.replace(/^GMT/, '');
  return `UTC${off || '+00:00'}`;
}

/** Local date and time of an ISO instant to the second ("2026-11-18 10:07:03"); `clockOnly`
 *  leaves out the date. Text that is not a time is returned as it is. */
export function localTime(iso: string, timeZone: string, clockOnly = false): string {
  const d = new Date(iso);
  if (!Number.isFinite(d.getTime())) return iso;
  const parts = new Intl.DateTimeFormat('en-GB', {
    timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', second: '2-digit', hourCycle: 'h23',
  }).formatToParts(d);
  const get = (t: string) => parts.find((p) => p.type === t)?.value ?? '';
  const clock = `${get('hour')}:${get('minute')}:${get('second')}`;
  return clockOnly ? clock : `${get('year')}-${get('month')}-${get('day')} ${clock}`;
}

/** A person's name from an audit actor: "cli:jsmith" → "jsmith"; the anonymous browser-mode
 *  actor and the program itself are said in words. */
export function personName(actor: string): string {
  if (actor === 'browser') return 'an unnamed browser-mode user';
  if (actor === 'rakeline') return 'Rakeline (automatic)';
  return actor.replace(/^cli:/, '');
}

/** "run 11" or "runs 2–4, 7". */
export function runsWord(runs: number[]): string {
  const n = new Set(runs).size;
  return `${n === 1 ? 'run' : 'runs'} ${runRanges(runs)}`;
}

// ---------------------------------------------------------------------------------------------
// Settings: what is in force, and which stored results were reduced with other settings

const SETTING_WORDS: { key: keyof Settings; words: string; show: (s: Settings) => string }[] = [
  { key: 'correction', words: 'Wall correction', show: (s) => CORRECTION_WORDS[s.correction] ?? s.correction },
  { key: 'liftTolAbs', words: 'Lift cross-check, absolute', show: (s) => `${s.liftTolAbs} in cl` },
  { key: 'liftTolRel', words: 'Lift cross-check, relative', show: (s) => `${fmt(s.liftTolRel * 100, 1)} % of |cl pressure|` },
  { key: 'spikeK', words: 'Spike rejection', show: (s) => `beyond median ± ${s.spikeK} scaled MAD` },
  { key: 'unsteadyThreshold', words: 'Unsteady q above', show: (s) => `std(q)/q = ${s.unsteadyThreshold}` },
  { key: 'wakeEdgeTol', words: 'Wake captured when rake edges within', show: (s) => `${s.wakeEdgeTol} of Cpt = 1` },
  { key: 'tapCheckK', words: 'Tap outlier beyond', show: (s) => `${s.tapCheckK} × combined σ (tap σ ≥ ${s.tapCheckMinU} Cp)` },
  { key: 'stagnationK', words: 'References flagged when the top Cp exceeds Cp_stag by', show: (s) => `${s.stagnationK} σ` },
  { key: 'contourRule', words: 'Contour rule', show: (s) => `${s.contourRule}: ${CONTOUR_RULE_TEXT[s.contourRule]}${s.contourRule === 'shape' ? '; rows it cannot stand on by the linear rule' : ''}` },
  { key: 'leakPa', words: 'Leak at wind-off above', show: (s) => `${s.leakPa} Pa` },
  { key: 'zeroDriftFraction', words: 'Zero drift above', show: (s) => `${fmt(s.zeroDriftFraction * 100, 1)} % of q` },
  { key: 'machLimit', words: 'Mach limit', show: (s) => `M > ${s.machLimit}` },
  { key: 'spanSpreadTol', words: 'Spanwise spread above', show: (s) => `${s.spanSpreadTol} in section cl` },
  { key: 'mcDraws', words: 'Uncertainty', show: (s) => (s.mcDraws ? `Monte Carlo, ${s.mcDraws} draws, seed ${s.mcSeed}` : 'not computed') },
  { key: 'mcSeed', words: 'Monte Carlo seed', show: (s) => String(s.mcSeed) },
  { key: 'badTaps', words: 'Taps marked bad', show: (s) => (s.badTaps.length ? [...s.badTaps].sort().join(', ') : 'none') },
  { key: 'keptTaps', words: 'Taps kept against the automatic test (tap@run)', show: (s) => ((s.keptTaps ?? []).length ? [...s.keptTaps].sort().join(', ') : 'none') },
  { key: 'maskellTheta', words: 'Maskell blockage factor θ', show: (s) => String(s.maskellTheta) },
  { key: 'wallFitResidualCp', words: 'Wall-signature fit used up to', show: (s) => `rms residual ${s.wallFitResidualCp} in Cp` },
  { key: 'stallTeCp', words: 'Past stall (automatic choice) when', show: (s) => `rearmost upper tap Cp ≤ ${s.stallTeCp}` },
  { key: 'correctionTolEps', words: 'Correction methods disagree above', show: (s) => `Δε = ${s.correctionTolEps}` },
  { key: 'correctionTolAlphaDeg', words: 'Correction methods disagree above', show: (s) => `Δα = ${s.correctionTolAlphaDeg}°` },
];

/** The settings in which a stored result's reduction differs from the current ones, by key, in
 *  words ("Lift cross-check, absolute: 0.03 in cl (now 0.02 in cl)"). `run`: keep decisions
 *  (keptTaps, tap@run) of other runs do not count. */
function settingsDiffs(used: Partial<Settings> | undefined, current: Settings, run?: number): { key: keyof Settings; text: string }[] {
  const u = { ...DEFAULT_SETTINGS, ...(used ?? {}) } as Settings;
  // Keep decisions (tap@run) of other runs do not concern this run's result.
  const kept = (list: readonly string[] | undefined) => [...(list ?? [])]
    .filter((e) => run === undefined || e.endsWith(`@${run}`)).sort().join();
  const same = (k: keyof Settings) => (k === 'badTaps'
    ? [...u.badTaps].sort().join() === [...current.badTaps].sort().join()
    : k === 'keptTaps' ? kept(u.keptTaps) === kept(current.keptTaps)
      : JSON.stringify(u[k]) === JSON.stringify(current[k]));
  return settingWords(current)
    .filter((w) => !(w.key === 'mcSeed' && u.mcDraws === 0 && current.mcDraws === 0))
    .filter((w) => !same(w.key))
    .map((w) => ({ key: w.key, text: `${w.words}: ${w.show(u)} (now ${w.show(current)})` }));
}

/**
 * The settings in which a stored result's reduction differs from the session's current ones, in
 * words ("Lift cross-check, absolute: 0.03 in cl (now 0.02 in cl)"). Empty: reduced with the
 * current settings.
 */
export function settingsDifferences(used: Partial<Settings> | undefined, current: Settings, run?: number): string[] {
  return settingsDiffs(used, current, run).map((d) => d.text);
}

/** Why one stored result is stale, by cause (app/stale.ts's mark where the row carries one, and
 *  the settings printed on this sheet): `short` for the run table's status cell, `long` in words
 *  for the settings section. Both empty when the result is current. */
export function staleCauses(mark: StaleMark | null | undefined, used: Partial<Settings> | undefined, current: Settings, run?: number):
{ short: string[]; long: string[] } {
  const diffs = used ? settingsDiffs(used, current, run) : [];
  const tapKey = (k: keyof Settings) => k === 'badTaps' || k === 'keptTaps';
  const settingDiffs = diffs.filter((d) => !tapKey(d.key)).map((d) => d.text);
  // The mark's own words for settings this sheet did not compare (no full result at hand).
  const markSettings = (mark?.settings ?? []).filter((k) => !diffs.some((d) => d.key === k));
  const settingsLong = [...settingDiffs, ...(mark?.reasons ?? []).filter((r) => markSettings.some((k) => r.startsWith(`${k} was `)))];
  const tapLong = mark
    ? mark.reasons.filter((r) => /^taps? .* (marked bad since|no longer marked bad|kept in this run against the automatic test since|no longer kept in this run)$/.test(r))
    : diffs.filter((d) => tapKey(d.key)).map((d) => d.text);
  const zeroLong = mark?.zeros.length ? mark.reasons.filter((r) => /^wind-off zero runs? /.test(r)) : [];
  const short: string[] = [];
  if (settingsLong.length) short.push('other settings');
  if (tapLong.length) short.push('bad taps changed since');
  if (zeroLong.length) short.push(`wind-off zero${mark!.zeros.length > 1 ? 's' : ''} ${runRanges(mark!.zeros)} stored since`);
  return { short, long: [...settingsLong, ...tapLong, ...zeroLong] };
}

/** The words of every setting: those above, then any other key of the settings by its name (a
 *  setting added later is still printed and compared). */
function settingWords(current: Settings): typeof SETTING_WORDS {
  const known = new Set<string>(SETTING_WORDS.map((w) => w.key));
  const more = (Object.keys(current) as (keyof Settings)[]).filter((k) => !known.has(k))
    .map((key) => ({ key, words: String(key), show: (s: Settings) => JSON.stringify(s[key]) ?? '–' }));
  return [...SETTING_WORDS, ...more];
}

/** Run → why its result is stale (only the stale runs), in run order: the rows' marks
 *  (app/stale.ts: settings, bad taps, zeros) and the settings printed on this sheet. */
function staleByRun(args: DaySheetArgs, settings: Settings): Map<number, { short: string[]; long: string[] }> {
  const used = new Map((args.results ?? []).map((r) => [r.run, r.settings]));
  const out = new Map<number, { short: string[]; long: string[] }>();
  for (const row of args.runs) {
    if (row.kind !== 'data' || !row.result) continue;
    const c = staleCauses(row.stale, used.get(row.run), settings, row.run);
    if (c.short.length) out.set(row.run, c);
  }
  return out;
}

function settingsSection(args: DaySheetArgs, settings: Settings): string {
  const rows = settingWords(settings).filter((w) => w.key !== 'mcSeed')
    .map((w) => `<tr><th scope="row">${escapeHtml(w.words)}</th><td>${escapeHtml(w.show(settings))}</td></tr>`).join('');
  const groups = new Map<string, number[]>();
  for (const [run, c] of staleByRun(args, settings)) {
    const k = c.long.join('; ');
    groups.set(k, [...(groups.get(k) ?? []), run]);
  }
  const other = groups.size
    ? `<p class="stale"><b>Stale results</b>, reduced with other settings, bad taps or wind-off zeros than the session holds now (their numbers on this sheet are as stored; re-reduce the stale runs to bring them in line):</p><ul class="stale">${[...groups]
      .map(([d, runs]) => `<li><b>${escapeHtml(runsWord(runs))}:</b> ${escapeHtml(d)}</li>`).join('')}</ul>`
    : '<p class="sub">Every stored result was reduced with the settings, bad taps and wind-off zeros in force.</p>';
  return `<table class="settings"><tbody>${rows}</tbody></table>${other}`;
}

// ---------------------------------------------------------------------------------------------
// CSS

/** A CSS string literal (for the page-margin boxes). */
function cssString(s: string): string {
  const esc = s.replace(/[\r\n\f]+/g, ' ').replace(/[\\"<>&']/g, (c) => `\\${c.charCodeAt(0).toString(16)} `);
  return `"${esc}"`;
}

function css(args: DaySheetArgs, runningHead: string, footLine: string): string {
  const paper = args.paper;
  const size = paper === 'A4' ? 'A4 portrait' : 'letter portrait';
  const sheetWidth = paper === 'A4' ? '186mm' : '191.9mm';
  return `
@page { size: ${size}; margin: 15mm 12mm 13mm 12mm;
  @top-left { content: ${cssString(runningHead)}; font: 8pt "DejaVu Sans", "Liberation Sans", Arial, sans-serif; vertical-align: bottom; padding-bottom: 2mm; }
  @top-right { content: "page " counter(page) " of " counter(pages); font: 8pt "DejaVu Sans", "Liberation Sans", Arial, sans-serif; vertical-align: bottom; padding-bottom: 2mm; white-space: nowrap; }
  @bottom-left { content: ${cssString(footLine)}; font: 7pt "DejaVu Sans", "Liberation Sans", Arial, sans-serif; color: #333; }
}
* { box-sizing: border-box; }
html { font: 8.5pt/1.3 "DejaVu Sans", "Liberation Sans", Arial, sans-serif; color: #000; background: #fff; }
body { margin: 0 auto; max-width: ${sheetWidth}; padding: 0; }
@media screen { body { padding: 8mm 0; } .runhead { display: block; } }
@media print { .runhead { display: none; } a { color: #000; text-decoration: none; } }
.runhead { font-size: 8pt; border-bottom: 0.4pt solid #000; margin-bottom: 2mm; display: none; }
h1 { font-size: 14pt; margin: 0 0 1mm; }
h2 { font-size: 10.5pt; margin: 4mm 0 1.5mm; border-bottom: 0.4pt solid #000; padding-bottom: 0.5mm; break-after: avoid; page-break-after: avoid; }
h3 { font-size: 9pt; margin: 2mm 0 1mm; break-after: avoid; }
.sub { font-size: 8pt; margin: 0.5mm 0 2mm; }
.facts { display: grid; grid-template-columns: 1fr 1fr; gap: 0 6mm; margin: 0; }
.facts div { display: grid; grid-template-columns: 30mm 1fr; border-bottom: 0.3pt dotted #777; padding: 0.4mm 0; }
.facts dt { font-weight: bold; } .facts dd { margin: 0; }
.caution { border: 1.2pt solid #000; border-left-width: 4pt; padding: 1.5mm 2.5mm; margin: 3mm 0; break-inside: avoid; page-break-inside: avoid; }
.caution p { margin: 0; }
.caution strong { text-transform: uppercase; letter-spacing: 0.03em; }
.plots { display: flex; flex-wrap: wrap; justify-content: space-between; row-gap: 2mm; }
.plots figure { margin: 0; break-inside: avoid; page-break-inside: avoid; }
.plot-row { break-inside: avoid; page-break-inside: avoid; margin-bottom: 2mm; }
tbody.tail { break-inside: avoid; page-break-inside: avoid; }
table.runs tr.note td { padding: 0; border: none; background: #fff; }
.plots figcaption { font-size: 8pt; max-width: 91mm; }
table { border-collapse: collapse; width: 100%; }
thead { display: table-header-group; } tfoot { display: table-footer-group; }
tr, li, .signoff div { break-inside: avoid; page-break-inside: avoid; }
th, td { border: 0.3pt solid #888; padding: 0.5mm 0.8mm; vertical-align: top; }
th { background: #eee; font-weight: bold; text-align: center; font-size: 7pt; }
table.runs { font-size: 7pt; table-layout: fixed; }
table.runs th, table.runs td { padding: 0.4mm 0.4mm; }
table.runs th { font-size: 6.6pt; line-height: 1.15; overflow-wrap: normal; }
table.runs td.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
table.runs span.u { display: block; font-size: 6pt; color: #333; }
table.runs tr.zero td { color: #444; font-style: italic; }
table.runs tr.sev-reject td:first-child { border-left: 3pt solid ${SEVERITY.reject.colour}; }
table.runs tr.sev-warn td:first-child { border-left: 3pt dashed ${SEVERITY.warn.colour}; }
table.runs tr.sev-reject { background: ${SEVERITY.reject.tint}; } table.runs tr.sev-warn { background: ${SEVERITY.warn.tint}; }
.status { font-size: 6.6pt; }
table.stats, table.settings { width: auto; min-width: 60%; }
table.stats th, table.settings th { text-align: left; background: none; font-size: 8pt; }
table.stats td, table.settings td { font-variant-numeric: tabular-nums; }
table.settings { font-size: 8pt; }
ol.flagged, ul.common, ul.stale, ul.taps, ul.findings { margin: 0; padding-left: 5mm; }
ol.flagged li, ul.common li, ul.stale li, ul.taps li, ul.findings li { margin-bottom: 1mm; }
.sevtag { font-weight: bold; border: 0.6pt solid #000; padding: 0 0.8mm; font-size: 7pt; }
.signoff { display: grid; grid-template-columns: 1fr; gap: 5mm; margin-top: 4mm; break-inside: avoid; page-break-inside: avoid; }
.signoff div { display: grid; grid-template-columns: 30mm 1fr 1fr 30mm; gap: 3mm; align-items: end; }
.signoff span.line { border-bottom: 0.6pt solid #000; min-height: 8mm; display: block; font-size: 7pt; color: #333; padding-top: 7mm; }
.keep { break-inside: avoid; page-break-inside: avoid; }
.keep-next { break-after: avoid; page-break-after: avoid; }
footer { margin-top: 4mm; font-size: 7pt; color: #333; }
`;
}

// ---------------------------------------------------------------------------------------------
// Run table

/** Short words for the wall-correction method a run was corrected with (the run table). */
const METHOD_SHORT: Record<string, string> = {
  'wall-signature': 'wall signature', maskell: 'Maskell', 'barlow-rae-pope': 'classical (BRP)',
  'allen-vincenti': 'classical (A&V)', none: 'uncorrected',
};
/** "; corrected: …" for a run whose full result is at hand (issue 11: the method per run). */
function methodNote(full: RunResult | undefined): string {
  if (!full) return '';
  const m = full.corrections?.applied ?? full.correction.method;
  return `; corrected: ${escapeHtml(METHOD_SHORT[m] ?? m)}`;
}

function rowSeverity(row: RunRow): 'reject' | 'warn' | null {
  const fl = row.result?.flags ?? [];
  if (fl.some((f) => f.severity === 'reject')) return 'reject';
  return fl.length ? 'warn' : null;
}

/** Words of one run's status cell: flags (severity and words), the reviewer's verdict beside
 *  them, and a note when the run was reduced with other settings. */
function statusCell(row: RunRow, stale: string[] | undefined): string {
  const parts: string[] = [];
  if (row.kind === 'zero') parts.push('wind-off zero');
  else if (!row.result) parts.push('not reduced');
  else if (!row.result.flags.length) parts.push('no flags');
  for (const f of row.result?.flags ?? []) parts.push(`<b>${severityWord(f.severity)}:</b> ${escapeHtml(flagShort(f.code))}`);
  if (row.review) parts.push(`<b>${escapeHtml(row.review.verdict)}</b> by ${escapeHtml(personName(row.review.actor))}`);
  if (stale?.length) parts.push(`<b>stale:</b> ${escapeHtml(stale.join(', '))}`);
  return parts.join('; ');
}

/** How far a 95 % interval reaches from the printed value: "±0.0123" when both sides print the
 *  same, else "+0.0031" over "−0.0102" (the tap-resolution error is estimated with its sign and
 *  not applied to the value, so an interval may reach further on one side; docs/UNCERTAINTY.md). */
export function intervalReach(iv: Interval | undefined, value: number, d: number): string {
  if (!iv || !Number.isFinite(iv.lo) || !Number.isFinite(iv.hi) || !Number.isFinite(value)) return '';
  const up = fmt(Math.max(0, iv.hi - value), d);
  const down = fmt(Math.max(0, value - iv.lo), d);
  return up === down ? `<span class="u">±${up}</span>` : `<span class="u">+${up}</span><span class="u">−${down}</span>`;
}

/** Height of a page's body (paper less the @page margins, 15 mm + 13 mm), pt. */
export const PAGE_BODY_PT: Record<DaySheetArgs['paper'], number> = { A4: (297 - 28) / 25.4 * 72, Letter: (279.4 - 28) / 25.4 * 72 };
/** The least share of a page the last page of the sheet holds (the run table's kept tail). */
export const TAIL_FRACTION = 0.4;
/** Characters of the run table's 8 pt note a printed line holds (about 180 mm of text; common
 *  practice, no source). */
const NOTE_CHARS_PER_LINE = 150;

/** Estimated printed height of one run-table row, pt (common practice, no source: 7 pt values
 *  at line height 1.3, one or two more 6 pt lines for the interval's reach; the status column is
 *  19.1 % of the table, about 27 characters of 6.6 pt text a line; 0.8 mm of padding). */
export function rowHeightPt(statusHtml: string, intervalLines: number | boolean): number {
  const text = statusHtml.replace(/<[^>]*>/g, '').replace(/&[a-z#0-9]+;/g, 'x');
  const statusLines = Math.max(1, Math.ceil(text.length / 27));
  const values = 7 * 1.3 + Number(intervalLines) * 6 * 1.3;
  return Math.max(values, statusLines * 6.6 * 1.3) + 0.8 / 25.4 * 72 + 0.6;
}

/** How many rows from the end make up at least `minPt` (all of them when the table is shorter). */
export function tailRows(heights: readonly number[], minPt: number): number {
  let sum = 0;
  for (let k = heights.length - 1; k >= 0; k--) {
    sum += heights[k];
    if (sum >= minPt) return heights.length - k;
  }
  return heights.length;
}

function runTable(args: DaySheetArgs, settings: Settings, tz: string, stale: Map<number, { short: string[] }>): string {
  const byRun = new Map((args.results ?? []).map((r) => [r.run, r]));
  const widths = [4.6, 6.6, 4.6, 4.6, 4.8, 4.4, 4.4, 6.8, 6.8, 7.4, 6.8, 6.6, 5.8, 5.8, 19.1];
  const cols = `<colgroup>${widths.map((w) => `<col style="width:${w}%">`).join('')}</colgroup>`;
  const head = `${cols}<thead><tr>
<th>Run</th><th>Time</th><th>α geom °</th><th>α corr °</th><th>q Pa</th><th>V m/s</th><th>Re ×10⁶</th>
<th>cl pres&shy;sure</th><th>cl mo&shy;men&shy;tum</th><th>cd wake</th><th>cd pres&shy;sure</th><th>cm c/4</th>
<th>Γ pres&shy;sure m²/s</th><th>Γ mo&shy;men&shy;tum m²/s</th><th>Status, flags and verdict</th></tr></thead>`;
  const heights: number[] = [];
  const body = args.runs.map((row) => {
    const r = row.result;
    const sev = rowSeverity(row);
    const cls = [row.kind === 'zero' ? 'zero' : '', sev ? `sev-${sev}` : ''].filter(Boolean).join(' ');
    const u = byRun.get(row.run)?.uncertainty;
    const mark = sev ? `${SEVERITY[sev].glyph} ` : '';
    const cells = r
      ? [
          fmt(row.alphaDeg, 2), fmt(r.alphaCorrDeg, 2), fmt(r.q, 1), fmt(r.V, 2), fmt(r.Re / 1e6, 3),
          fmt(r.cl, 4) + intervalReach(u?.cl, r.cl, 4), fmt(r.clMom, 4) + intervalReach(u?.clMom, r.clMom, 4),
          fmt(r.cd, 5) + intervalReach(u?.cd, r.cd, 5), fmt(r.cdp, 5) + intervalReach(u?.cdp, r.cdp, 5), fmt(r.cmc4, 4) + intervalReach(u?.cmc4, r.cmc4, 4),
          fmt(r.gammaPressure, 3) + intervalReach(u?.gammaPressure, r.gammaPressure, 3), fmt(r.gammaMomentum, 3) + intervalReach(u?.gammaMomentum, r.gammaMomentum, 3),
        ]
      : [fmt(row.alphaDeg, 2), '–', '–', '–', '–', '–', '–', '–', '–', '–', '–', '–'];
    const status = `${statusCell(row, stale.get(row.run)?.short)}${methodNote(byRun.get(row.run))}`;
    heights.push(rowHeightPt(status, Math.max(0, ...cells.map((c) => c.split('class="u"').length - 1))));
    return `<tr${cls ? ` class="${cls}"` : ''} data-run="${row.run}"><td class="n">${mark}${row.run}</td><td class="n">${escapeHtml(localTime(row.time, tz, true))}</td>${cells
      .map((c) => `<td class="n">${c}</td>`)
      .join('')}<td class="status">${status}</td></tr>`;
  });
  const note = `<p class="sub">${SEVERITY.reject.glyph} and a solid left bar: at least one ${SEVERITY.reject.word} flag (${SEVERITY.reject.meaning.toLowerCase()}); ${SEVERITY.warn.glyph} and a dashed bar: ${SEVERITY.warn.word} flags only (${SEVERITY.warn.meaning.toLowerCase()}). Times are local (${escapeHtml(zoneOffset(new Date(args.generatedAt), tz))}).
α corr, q, V, Re, cl, cd and cm are wall-corrected (${escapeHtml(CORRECTION_WORDS[settings.correction] ?? settings.correction)}); the status column names each run's method.
cl momentum is on the same corrected basis. Γ by Kutta–Joukowski, Γ = ½·V·c·cl with V and cl corrected.${args.results?.length ? ' Small figures under a value: how far its 95 % Monte Carlo coverage interval (JCGM 101:2008) reaches above (+) and below (−) it, ± when both are the same; same basis as the value.' : ''}</p>`;
  // Balanced pagination: the table ends the sheet, so its last rows are kept together in a
  // tbody that does not break (Chromium honours break-inside on table sections): the last page
  // then holds at least TAIL_FRACTION of a page of rows instead of a line or two. The table's
  // note is the tail's last row, so it never runs on alone to a page of its own.
  const noteText = note.replace(/<[^>]*>/g, '');
  heights.push(Math.ceil(noteText.length / NOTE_CHARS_PER_LINE) * 8 * 1.3 + 2 / 25.4 * 72);
  const n = tailRows(heights, PAGE_BODY_PT[args.paper] * TAIL_FRACTION) - 1;
  const noteRow = `<tr class="note"><td colspan="${widths.length}">${note}</td></tr>`;
  const tbody = n < body.length
    ? `<tbody>${body.slice(0, body.length - n).join('\n')}</tbody><tbody class="tail">${body.slice(body.length - n).join('\n')}\n${noteRow}</tbody>`
    : `<tbody class="tail">${body.join('\n')}\n${noteRow}</tbody>`;
  return `<table class="runs">${head}${tbody}</table>`;
}


// ---------------------------------------------------------------------------------------------
// Plots

/** Plot sizes in points (1 user unit = 1 pt on paper): two plots side by side across the page. */
const PLOT_W = 258; // 91 mm
const PLOT_H = 232; // 82 mm
const CP_H = 206; // 73 mm: three rows of Cp plots fit a page

const flagOf = (sev: 'reject' | 'warn' | null | undefined): PlotPoint['flag'] => (sev === 'reject' ? 'reject' : sev === 'warn' ? 'check' : undefined);

/** Both sweeps of one quantity as two series: up-sweep filled markers and a solid line, down-sweep
 *  open markers and a dashed line. */
function sweepSeries(
  name: string, colour: string, marker: PlotSeries['marker'], pts: readonly PolarPoint[],
  xy: (p: PolarPoint) => PlotPoint, extra: Partial<PlotSeries> = {},
): PlotSeries[] {
  const dirs = sweepDirections(pts);
  const pick = (want: 'up' | 'down') => pts.map((p, i) => (dirs[i] === want ? xy(p) : { x: NaN, y: NaN }));
  const hasDown = dirs.includes('down');
  const up: PlotSeries = { name: hasDown ? `${name}, up-sweep` : name, colour, marker, filled: true, line: 'solid', points: pick('up'), ...extra };
  if (!hasDown) return [up];
  return [up, { name: `${name}, down-sweep`, colour, marker, filled: false, line: 'dashed', points: pick('down'), ...extra }];
}

/** The drag axis: from zero (or the least cd) to a little above the largest wake cd of the runs
 *  inside the linear lift range (±2°) and 60 % more, so the drag bucket fills most of the plot
 *  and the rise towards maximum lift shows; stalled runs beyond
 *  it are drawn as off-scale marks and named in the caption. */
export function dragAxis(pts: readonly PolarPoint[], linear: [number, number] | null, held: Set<number>): [number, number] | undefined {
  const usable = pts.filter((p) => !held.has(p.run) && Number.isFinite(p.cd));
  const inRange = linear ? usable.filter((p) => p.alphaDeg >= linear[0] - 2 && p.alphaDeg <= linear[1] + 2) : usable;
  const basis = inRange.length >= 3 ? inRange : usable;
  if (basis.length < 2) return undefined;
  const cds = basis.map((p) => p.cd);
  const lo = Math.min(0, ...cds);
  const hi = Math.max(...cds);
  return [lo, hi + 0.6 * (hi - lo)];
}

function polars(args: DaySheetArgs): string {
  const p = args.summary.polar;
  // A ring marks runs with check flags of their own; a flag raised alike on many runs (one leaking
  // tap all day) would ring every point and hide the ones that matter.
  const common = new Set(commonFlags(args.runs).map((g) => flagKey(g.flag)));
  const sevOf = new Map(args.runs.map((r) => [r.run, rowSeverity(r) === 'reject' ? 'reject' as const
    : r.result?.flags.some((f) => !common.has(flagKey(f))) ? 'warn' as const : null]));
  const held = new Set(p.filter((q) => sevOf.get(q.run) === 'reject').map((q) => q.run));
  const full = new Map((args.results ?? []).map((r) => [r.run, r]));
  const iv = (run: number, k: keyof RunResult['uncertainty']): [number, number] | undefined => {
    const u = full.get(run)?.uncertainty[k];
    return u && Number.isFinite(u.lo) && Number.isFinite(u.hi) ? [u.lo, u.hi] : undefined;
  };
  const pt = (q: PolarPoint, x: number, y: number, more: Partial<PlotPoint> = {}): PlotPoint =>
    ({ x, y, flag: flagOf(sevOf.get(q.run)), label: `r${q.run}`, ...more });
  const flagLabels = { reject: `${severityWord('reject')} flag (×, labelled r + run number)`, check: `${severityWord('warn')} flag of its own (ring)` };
  const base = { width: PLOT_W, height: PLOT_H, unit: 'pt' as const, flagLabels };
  // Momentum first (larger squares), pressure circles on top: both stay visible where they agree.
  const lift: PlotSpec = {
    ...base, title: 'Lift curve cl(α)', xLabel: 'α corrected, °', yLabel: 'cl',
    series: [
      ...sweepSeries('cl from wall momentum', OKABE_ITO.vermillion, 'square', p, (q) => pt(q, q.alphaDeg, q.clMom, { yErr: iv(q.run, 'clMom') }), { size: 3.6 }),
      ...sweepSeries('cl from surface pressures', OKABE_ITO.blue, 'circle', p, (q) => pt(q, q.alphaDeg, q.cl, { yErr: iv(q.run, 'cl') }), { size: 2.3 }),
    ],
  };
  const stats = args.summary.stats;
  const xr = dragAxis(p, stats ? stats.linearRange : null, held);
  const drag: PlotSpec = {
    ...base, title: 'Drag polar cd(cl)', xLabel: 'cd', yLabel: 'cl', ...(xr ? { xRange: xr } : {}),
    series: [
      ...sweepSeries('cd from the wake rake (Jones)', OKABE_ITO.green, 'diamond', p, (q) => pt(q, q.cd, q.cl, { xErr: iv(q.run, 'cd') })),
      { name: 'cd from surface pressures', colour: OKABE_ITO.purple, marker: 'triangle', filled: false, line: 'none', fit: false,
        points: p.map((q) => pt(q, q.cdp, q.cl)) },
    ],
  };
  const cm: PlotSpec = {
    ...base, title: 'Pitching moment cm(α)', xLabel: 'α corrected, °', yLabel: 'cm c/4',
    series: sweepSeries('cm about c/4, surface pressures', OKABE_ITO.blue, 'circle', p, (q) => pt(q, q.alphaDeg, q.cmc4, { yErr: iv(q.run, 'cmc4') })),
  };
  const cdA: PlotSpec = {
    ...base, title: 'Wake drag cd(α)', xLabel: 'α corrected, °', yLabel: 'cd', ...(xr ? { yRange: xr } : {}),
    series: sweepSeries('cd from the wake rake (Jones)', OKABE_ITO.green, 'diamond', p, (q) => pt(q, q.alphaDeg, q.cd, { yErr: iv(q.run, 'cd') })),
  };
  const span = (v: number[], d: number) => range(Math.min(...v), Math.max(...v), d, '');
  const offNote = (spec: PlotSpec, what: (pp: PlotPoint[]) => string) => {
    const off = offScalePoints(spec);
    if (!off.length) return '';
    const pts = [...new Map(off.map((o) => [o.point.label, o.point])).values()];
    const runs = pts.map((q) => Number((q.label ?? '').slice(1))).filter(Number.isFinite);
    return `Off scale (arrowheads on the frame): ${escapeHtml(runsWord(runs))} (${what(pts)}).`;
  };
  const fig = (spec: PlotSpec, caption = '') => `<figure>${svgPlot(spec)}${caption ? `<figcaption>${caption}</figcaption>` : ''}</figure>`;
  const plotted = new Set(p.map((q) => q.run));
  const notPlotted = args.runs.filter((r) => r.review?.verdict === 'rejected' && !plotted.has(r.run)).map((r) => r.run);
  const legend = `<p class="sub">Corrected values. Filled markers and solid lines: up-sweep (α rising); open markers and dashed lines: down-sweep (α falling).
Bars: 95 % coverage intervals. Lines join the runs of each sweep in time order and break at runs with a ${severityWord('reject')} flag.${notPlotted.length ? ` Not plotted (rejected by the reviewer): ${runsWord(notPlotted)}.` : ''}</p>`;
  // The heading stays with the first row of plots, the legend with the last (no heading or
  // legend alone at a page's foot or head).
  return `<div class="keep"><h2>Polars</h2>
<div class="plots plot-row">${fig(lift)}
${fig(drag, offNote(drag, (q) => `cd ${span(q.map((o) => o.x), 4)}`))}</div></div>
<div class="keep"><div class="plots plot-row">${fig(cm)}
${fig(cdA, offNote(cdA, (q) => `cd ${span(q.map((o) => o.y), 4)}`))}</div>
${legend}</div>`;
}

/** Cp(x/c) of one run's main tap row, for the Cp pages. */
export function cpPlotSpec(r: RunResult, title: string, opts: Partial<PlotSpec> = {}): PlotSpec {
  const row = r.rows[0]?.row ?? r.taps[0]?.row;
  const taps = r.taps.filter((t) => t.row === row && Number.isFinite(t.cp)).sort((a, b) => a.x - b.x);
  const bridged = new Set([...(r.surface.bridged ?? []), ...r.taps.filter((t) => t.bad).map((t) => t.id)]);
  const of = (s: 'upper' | 'lower') => taps.filter((t) => t.surface === s && !bridged.has(t.id)).map((t) => ({ x: t.x, y: t.cp }));
  const inv = (s: 'upper' | 'lower') => r.inviscid.filter((q) => q.surface === s).sort((a, b) => a.x - b.x).map((q) => ({ x: q.x, y: q.cp }));
  const measured = taps.map((t) => t.cp);
  const lo = Math.min(...measured, 1), hi = Math.max(...measured, 1);
  return {
    title, xLabel: 'x/c', yLabel: 'Cp (negative up)', yReverse: true, xRange: [0, 1],
    yRange: [Math.min(lo, -0.5) - 0.05 * (hi - lo), Math.max(hi, 1) + 0.05 * (hi - lo)],
    series: [
      { name: 'inviscid, upper', colour: OKABE_ITO.green, marker: 'none', filled: false, line: 'solid', fit: false, points: inv('upper') },
      { name: 'inviscid, lower', colour: OKABE_ITO.green, marker: 'none', filled: false, line: 'dashed', fit: false, points: inv('lower') },
      { name: 'upper surface', colour: OKABE_ITO.blue, marker: 'circle', filled: true, line: 'none', points: of('upper') },
      { name: 'lower surface', colour: OKABE_ITO.vermillion, marker: 'triangle', filled: false, line: 'none', points: of('lower') },
      { name: 'bad or bridged tap', colour: OKABE_ITO.black, marker: 'cross', filled: false, line: 'none', size: 3, points: taps.filter((t) => bridged.has(t.id)).map((t) => ({ x: t.x, y: t.cp })) },
    ],
    ...opts,
  };
}

/** Runs that get a Cp plot: every run with a hold flag, a flag of its own (not one raised
 *  identically on several runs) or a reviewer's rejection, and the runs the engineer picked. */
export function cpPlotRuns(args: DaySheetArgs, common: Set<string>): { runs: number[]; left: number[]; missing: number[] } {
  const picked = new Set(args.cpRuns ?? []);
  const want = args.runs.filter((row) => row.kind === 'data' && row.result && (
    picked.has(row.run)
    || row.review?.verdict === 'rejected'
    || row.result.flags.some((f) => f.severity === 'reject' || !common.has(flagKey(f)))
  )).map((r) => r.run);
  const have = new Set((args.results ?? []).filter((r) => Array.isArray(r.taps) && r.taps.length).map((r) => r.run));
  const runs = want.filter((r) => have.has(r));
  const MAX = 24;
  // Runs picked that get no plot: not in the session, a wind-off zero, or not reduced.
  const plottable = new Set(args.runs.filter((row) => row.kind === 'data' && row.result).map((r) => r.run));
  const missing = [...picked].filter((r) => !plottable.has(r) || !have.has(r)).sort((a, b) => a - b);
  return { runs: runs.slice(0, MAX), left: runs.slice(MAX), missing };
}

function cpPages(args: DaySheetArgs, common: Set<string>): string {
  const { runs, left, missing } = cpPlotRuns(args, common);
  const notPlotted = missing.length ? ` Picked but not plotted (no such data run, or not reduced): ${escapeHtml(runsWord(missing))}.` : '';
  if (!runs.length) return `<h2>Cp distributions</h2>\n<p>No flagged run and no run picked: no Cp plots.${notPlotted}</p>`;
  const byRun = new Map((args.results ?? []).map((r) => [r.run, r]));
  const rows = new Map(args.runs.map((r) => [r.run, r]));
  const figs = runs.map((run) => {
    const r = byRun.get(run)!;
    const row = rows.get(run)!;
    const words = [...(row.result?.flags ?? []).map((f) => `${severityWord(f.severity)}: ${flagShort(f.code)}`),
      ...(row.review ? [`${row.review.verdict} by the reviewer`] : [])];
    const title = `Run ${run}: α ${fmt(r.corrected.alphaDeg, 2)}° corr., cl ${fmt(r.corrected.cl, 3)}`;
    const spec = cpPlotSpec(r, title, { width: PLOT_W, height: CP_H, unit: 'pt' });
    return `<figure>${svgPlot(spec)}<figcaption>${escapeHtml(words.length ? words.join('; ') : 'picked by the engineer, no flags')}</figcaption></figure>`;
  });
  const intro = `<p class="sub">Main tap row, measured Cp (not wall-corrected) against the inviscid panel solution at the corrected α. Runs: the flagged and rejected runs${args.cpRuns?.length ? ' and those picked by the engineer' : ''}.${left.length ? ` Left out for room: ${escapeHtml(runsWord(left))}.` : ''}${notPlotted}</p>`;
  const plotRows: string[] = [];
  for (let k = 0; k < figs.length; k += 2) plotRows.push(`<div class="plots plot-row">${figs.slice(k, k + 2).join('\n')}</div>`);
  // The heading and its note stay with the first row of plots.
  return `<div class="keep"><h2>Cp distributions</h2>\n${intro}\n${plotRows[0]}</div>\n${plotRows.slice(1).join('\n')}`;
}

// ---------------------------------------------------------------------------------------------
// Statistics, findings, flags, taps

function statistics(args: DaySheetArgs): string {
  const s = args.summary.stats;
  if (!s) return `<p>Too few usable runs (fewer than three without a ${severityWord('reject')} flag) for session statistics.</p>`;
  const rows: [string, string][] = [
    ['Lift-curve slope dcl/dα', `${fmt(s.liftSlopePerDeg, 4)} per degree (${fmt(s.liftSlopePerDeg * 180 / Math.PI, 3)} per radian), fitted over α ${range(s.linearRange[0], s.linearRange[1], 2, '°')}`],
    ['Zero-lift angle α_L0', `${fmt(s.alphaL0Deg, 2)}°`],
    ['Maximum lift cl_max', `${fmt(s.clMax, 4)} at α ${fmt(s.alphaClMaxDeg, 2)}°`],
    ['Minimum drag cd_min', `${fmt(s.cdMin, 5)} at cl ${fmt(s.clAtCdMin, 3)}`],
    ['Best lift-to-drag (l/d)_max', `${fmt(s.ldMax, 1)} at α ${fmt(s.alphaLdMaxDeg, 2)}°`],
    ['Hysteresis (down vs up sweep)', s.hysteresis ? `largest |Δcl| ${fmt(s.hysteresis.maxDeltaCl, 4)} at α ${fmt(s.hysteresis.alphaDeg, 2)}°` : 'no down sweep in this session'],
    ['Repeat-run spread', s.repeatSpread !== null ? `largest cl range at a repeated α: ${fmt(s.repeatSpread, 4)}` : 'no repeated runs'],
  ];
  return `<table class="stats"><tbody>${rows.map(([k, v]) => `<tr><th scope="row">${escapeHtml(k)}</th><td>${escapeHtml(v)}</td></tr>`).join('')}</tbody></table>
<p class="sub">Statistics use the corrected pressure-integration cl and the wake cd (pressure cd where there is no wake) of runs without a ${severityWord('reject')} flag and not rejected by the reviewer.</p>`;
}

function findingsSection(args: DaySheetArgs): string {
  const f = args.findings ?? [];
  if (!f.length) return '<p>None reported for this session.</p>';
  return `<ul class="findings">${f.map((x) => `<li><span class="sevtag">${severityWord(x.severity)}</span> <b>${escapeHtml(x.title)}:</b> ${escapeHtml(x.detail)}${x.runs?.length ? ` (${escapeHtml(runsWord(x.runs))})` : ''}</li>`).join('')}</ul>`;
}

/** "words: reason", without repeating the words when the reason already starts with them. */
function reasonWords(f: Flag): string {
  const words = flagLabel(f.code);
  return f.reason.toLowerCase().startsWith(words.toLowerCase())
    ? escapeHtml(f.reason)
    : `${escapeHtml(words)}: ${escapeHtml(f.reason)}`;
}

const flagKey = (f: Flag) => `${f.severity}\u0000${f.code}\u0000${f.reason}`;

/** Flags raised identically (same code, severity and reason) on several runs. */
function commonFlags(runs: RunRow[]): { flag: Flag; runs: number[] }[] {
  const groups = new Map<string, { flag: Flag; runs: number[] }>();
  for (const row of runs) {
    for (const f of row.result?.flags ?? []) {
      const g = groups.get(flagKey(f)) ?? { flag: f, runs: [] };
      g.runs.push(row.run);
      groups.set(flagKey(f), g);
    }
  }
  return [...groups.values()].filter((g) => g.runs.length > 1);
}

/** "2–6, 8, 10–12" from run numbers. */
export function runRanges(runs: number[]): string {
  const r = [...new Set(runs)].sort((a, b) => a - b);
  const parts: string[] = [];
  for (let i = 0; i < r.length; ) {
    let j = i;
    while (j + 1 < r.length && r[j + 1] === r[j] + 1) j++;
    parts.push(j > i + 1 ? `${r[i]}–${r[j]}` : j === i + 1 ? `${r[i]}, ${r[j]}` : `${r[i]}`);
    i = j + 1;
  }
  return parts.join(', ');
}

/** Every flagged or reviewed run with its flags in words and the reviewer's verdict beside them.
 *  Flags come from the runs' own results, so a run the reviewer rejected keeps its flags. */
function flaggedList(args: DaySheetArgs, tz: string): string {
  const flagged = args.runs.filter((r) => r.result?.flags.length);
  const reviewedOnly = args.runs.filter((r) => r.review && !r.result?.flags.length);
  if (!flagged.length && !reviewedOnly.length) return '<p>No run was flagged.</p>';
  const common = commonFlags(args.runs);
  const isCommon = new Set(common.map((g) => flagKey(g.flag)));
  const reviewText = (row: RunRow) =>
    row.review ? `Reviewer ${escapeHtml(personName(row.review.actor))} <b>${escapeHtml(row.review.verdict)}</b> this run${row.review.comment ? `: ${escapeHtml(row.review.comment)}` : ''} (${escapeHtml(localTime(row.review.at, tz))})` : '';
  const parts: string[] = [];
  // A common flag that a session finding explains on every run carrying it is a note there, not
  // a decision (app/sessionFaults.ts): listed apart, tagged "note".
  const noted = notesByRun(args.summary);
  const isNote = (g: { flag: Flag; runs: number[] }) => g.runs.every((run) => splitFlags([g.flag], noted.get(run)).notes.length === 1);
  const notes = common.filter(isNote);
  const decisions = common.filter((g) => !isNote(g));
  const groupItem = (tag: string) => (g: { flag: Flag; runs: number[] }) =>
    `<li><span class="sevtag">${tag}</span> ${reasonWords(g.flag)} <b>${escapeHtml(runsWord(g.runs).replace(/^r/, 'R'))}.</b></li>`;
  if (decisions.length) {
    parts.push(`<p>Flags raised identically on several runs:</p><ul class="common">${decisions.map((g) => groupItem(severityWord(g.flag.severity))(g)).join('\n')}</ul>`);
  }
  if (notes.length) {
    parts.push(`<p>Notes of the session findings, raised identically on several runs (on each run a note, not a decision; see the session-level findings):</p><ul class="common">${notes.map(groupItem('note')).join('\n')}</ul>`);
  }
  const items: string[] = [];
  for (const row of flagged) {
    const flags = row.result!.flags;
    const own = flags.filter((f) => !isCommon.has(flagKey(f)));
    if (!own.length && !row.review) continue;
    const where = ` (α ${fmt(row.alphaDeg, 2)}°, ${escapeHtml(localTime(row.time, tz, true))})`;
    const reasons = own.map((f) => `<li><span class="sevtag">${severityWord(f.severity)}</span> ${reasonWords(f)}</li>`).join('');
    const review = row.review ? `<li>${reviewText(row)}</li>` : '';
    const more = own.length < flags.length ? `${own.length ? ', also' : ':'} the common flags above` : '';
    items.push(`<li><b>Run ${row.run}</b>${where}${more}<ul>${reasons}${review}</ul></li>`);
  }
  for (const row of reviewedOnly) items.push(`<li><b>Run ${row.run}</b> (${row.result ? 'no flags' : 'not reduced'}): ${reviewText(row)}</li>`);
  if (items.length) parts.push(`${common.length ? '<p>Run by run:</p>' : ''}<ol class="flagged">${items.join('\n')}</ol>`);
  return parts.join('\n');
}

/** An automatic drop in words: "outlier: residual +0.210, k·u 0.048" or "leak at wind-off". */
function droppedWords(s: NonNullable<TapNote['settled']>): string {
  const what = s.reason ? badTapWords(s.reason) : 'dropped';
  return s.residual !== null && s.u !== null && Number.isFinite(s.residual) && Number.isFinite(s.u)
    ? `${what}: residual ${s.residual >= 0 ? '+' : '−'}${Math.abs(s.residual).toFixed(3)} Cp, u ${s.u.toFixed(3)} Cp`
    : what;
}

/** Every bad tap: those the engineer marked (with the reason given and who gave it), and those
 *  the reduction dropped by itself (with its reason and the runs). */
function badTaps(args: DaySheetArgs, settings: Settings, tz: string): string {
  const latest = new Map<string, TapNote>();
  // Keep decisions (tap@run) are per run; the latest of each tap and run counts.
  const keeps = new Map<string, TapNote>();
  for (const n of args.tapNotes ?? []) {
    if (n.settled && n.settled.decision !== 'confirm') keeps.set(`${n.tapId}@${n.settled.run}`, n);
    else latest.set(n.tapId, n);
  }
  const marked = [...settings.badTaps].sort();
  const items = marked.map((id) => {
    const n = latest.get(id);
    const why = n?.bad ? (n.comment ? escapeHtml(n.comment) : 'no reason given') : 'in the session settings (no note)';
    const who = n?.bad ? ` — ${escapeHtml(personName(n.actor))}, ${escapeHtml(localTime(n.at, tz))}` : '';
    const s = n?.bad ? n.settled : undefined;
    const confirmed = s ? `, confirming the reduction's automatic drop in run ${s.run} (${escapeHtml(droppedWords(s))})` : '';
    return `<li><b>${escapeHtml(id)}</b>, marked bad by the engineer${confirmed}: ${why}${who}</li>`;
  });
  const restored = [...latest.values()].filter((n) => !n.bad && !settings.badTaps.includes(n.tapId));
  for (const n of restored) {
    items.push(`<li><b>${escapeHtml(n.tapId)}</b>, restored to good: ${n.comment ? escapeHtml(n.comment) : 'no reason given'} — ${escapeHtml(personName(n.actor))}, ${escapeHtml(localTime(n.at, tz))}</li>`);
  }
  const keptNow = new Set(settings.keptTaps ?? []);
  for (const [key, n] of [...keeps].sort((a, b) => a[0].localeCompare(b[0]))) {
    if (!keptNow.has(key) || !n.settled) continue;
    items.push(`<li><b>${escapeHtml(n.tapId)}</b>, kept in run ${n.settled.run} by the engineer against the reduction's automatic drop (${escapeHtml(droppedWords(n.settled))}): ${n.comment ? escapeHtml(n.comment) : 'no reason given'} — ${escapeHtml(personName(n.actor))}, ${escapeHtml(localTime(n.at, tz))}</li>`);
  }
  const auto = new Map<string, { reason: string; runs: number[] }>();
  for (const r of args.results ?? []) {
    for (const t of r.taps ?? []) {
      if (!t.bad || !t.badReason || t.badReason === 'marked') continue;
      const k = `${t.id}\u0000${t.badReason}`;
      const g = auto.get(k) ?? { reason: t.badReason, runs: [] };
      g.runs.push(r.run);
      auto.set(k, g);
    }
  }
  for (const [k, g] of [...auto].sort((a, b) => a[0].localeCompare(b[0]))) {
    items.push(`<li><b>${escapeHtml(k.split('\u0000')[0])}</b>, dropped by the reduction: ${escapeHtml(badTapWords(g.reason))} (${escapeHtml(runsWord(g.runs))})</li>`);
  }
  if (!items.length) return '<p>No tap was marked or found bad.</p>';
  return `<ul class="taps">${items.join('\n')}</ul><p class="sub">Bad taps are bridged in the surface integration (left out and the contour joined across them).</p>`;
}

// ---------------------------------------------------------------------------------------------

/** The whole sheet as one HTML document. */
export function daySheetHtml(args: DaySheetArgs): string {
  const { session, setup, summary } = args;
  const tz = args.timeZone ?? Intl.DateTimeFormat().resolvedOptions().timeZone ?? 'UTC';
  const c = summary.conditions;
  const dataRuns = args.runs.filter((r) => r.kind === 'data');
  const zeroRuns = args.runs.length - dataRuns.length;
  const settings: Settings = args.settings ?? { ...DEFAULT_SETTINGS, ...setup.settings };
  // A flag a session finding explains is a note on its run, not a decision (app/sessionFaults.ts).
  const noted = notesByRun(summary);
  const ownFlags = (r: RunRow) => splitFlags(r.result?.flags ?? [], noted.get(r.run));
  const flaggedCount = dataRuns.filter((r) => ownFlags(r).decision.length).length;
  const notesOnly = dataRuns.filter((r) => !ownFlags(r).decision.length && ownFlags(r).notes.length).length;
  const rejectedCount = dataRuns.filter((r) => r.review?.verdict === 'rejected').length;
  const stale = staleByRun(args, settings);
  const common = new Set(commonFlags(args.runs).map((g) => flagKey(g.flag)));
  const fact = (k: string, v: string) => `<div><dt>${escapeHtml(k)}</dt><dd>${escapeHtml(v)}</dd></div>`;
  const facts = [
    fact('Facility', `${setup.facility.name}; closed section ${fmt(setup.facility.sectionHeight, 3)} m high × ${fmt(setup.facility.sectionWidth, 3)} m wide`),
    fact('Model', `${setup.model.name} (${geometryWords(setup)})`),
    fact('Chord / span', `${fmt(setup.model.chord, 3)} m / ${fmt(setup.model.span, 3)} m`),
    fact('Test date', setup.session.date),
    fact('Operators', setup.session.operators.join(', ') || '–'),
    fact('Runs', `${dataRuns.length} data, ${zeroRuns} wind-off zero, ${flaggedCount} flagged (needing a decision)${notesOnly ? `, ${notesOnly} with only notes of the session findings` : ''}${rejectedCount ? `, ${rejectedCount} rejected by the reviewer` : ''}`),
    fact('Dynamic pressure q', c ? range(c.qMin, c.qMax, 1, 'Pa') : '–'),
    fact('Reynolds number', c ? range(c.ReMin / 1e6, c.ReMax / 1e6, 3, '× 10⁶') : '–'),
    fact('α (corrected)', c ? range(c.alphaMin, c.alphaMax, 2, '°') : '–'),
    fact('Air temperature', c ? range(c.tempMin, c.tempMax, 1, '°C') : '–'),
    fact('Barometer', c ? range(c.baroMin / 100, c.baroMax / 100, 1, 'hPa') : '–'),
    fact('Wall correction', CORRECTION_WORDS[settings.correction] ?? settings.correction),
  ].join('\n');
  const notes = setup.session.notes ? `<p><b>Session notes:</b> ${escapeHtml(setup.session.notes)}</p>` : '';
  const made = `${localTime(args.generatedAt, tz)} (${zoneOffset(new Date(args.generatedAt), tz)})`;
  const runningHead = `Test-day summary · ${session.title} · model ${setup.model.name} · ${setup.session.date}`;
  const footLine = `Rakeline${args.appVersion ? ` ${args.appVersion}` : ''}, core ${CORE_VERSION} · sheet made ${made} · reduced data: for review by a qualified engineer`;

  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'; img-src data:">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(`Test-day summary – ${session.title} – ${setup.session.date}`)}</title>
<style>${css(args, runningHead, footLine)}</style>
</head>
<body>
<div class="runhead" aria-hidden="true">${escapeHtml(runningHead)}</div>
<header>
<h1>Test-day summary: ${escapeHtml(session.title)}</h1>
<p class="sub">Session ${session.id}, imported ${escapeHtml(localTime(session.importedAt, tz))}. Sheet made ${escapeHtml(made)} for ${args.paper} paper. Times on this sheet are local (${escapeHtml(zoneOffset(new Date(args.generatedAt), tz))}).</p>
<dl class="facts">
${facts}
</dl>
${notes}
</header>
<section class="caution" aria-label="caution">
<p><strong>Caution.</strong> Everything on this sheet is reduced data produced by a program. A qualified
engineer has to review it before it is used for any design work or decision. The facility's safety rules
and the local test practice take precedence over anything printed here.</p>
</section>
<section>
${polars(args)}
</section>
<section class="keep"><h2>Session statistics</h2>
${statistics(args)}
</section>
<section class="keep"><h2>Review and sign-off</h2>
<p>By signing, the reviewer confirms that the runs on this sheet, their flags and the reviewer decisions were checked.</p>
<div class="signoff">
${['Test engineer', 'Reviewer'].map((role) => `<div><b>${role}</b><span class="line">Name</span><span class="line">Signature</span><span class="line">Date</span></div>`).join('\n')}
</div>
</section>
<section><h2>Session-level findings</h2>
${findingsSection(args)}
</section>
<section><h2>Flagged runs and their reasons</h2>
${flaggedList(args, tz)}
</section>
<section><h2>Bad taps</h2>
${badTaps(args, settings, tz)}
</section>
<section><h2>Settings in force</h2>
${settingsSection(args, settings)}
</section>
<section>
${cpPages(args, common)}
</section>
<section><h2>Runs</h2>
${runTable(args, settings, tz, stale)}
</section>
<footer>Rakeline${args.appVersion ? ` ${escapeHtml(args.appVersion)}` : ''}, reduction core ${escapeHtml(CORE_VERSION)}. ${escapeHtml(setup.facility.name)} · ${escapeHtml(setup.model.name)} · ${escapeHtml(setup.session.date)}</footer>
</body>
</html>
`;
}
