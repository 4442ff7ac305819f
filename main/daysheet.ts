// The printable test-day summary sheet: one self-contained HTML document (inline CSS and inline
// SVG polars; no scripts, no remote content, a Content-Security-Policy that forbids both) with
// print CSS for A4 or US Letter. Every piece of text that comes from a log, a setup or a user is
// escaped. Flags are always spelled out in words; colour (Okabe–Ito palette) only repeats them.
import type { SessionRow, RunRow } from './store';
import type { Flag, PolarPoint, RunResult, SessionSummary, Settings, Setup } from '../app/types';
import { CORE_VERSION, DEFAULT_SETTINGS } from '../app/types';
import { flagLabel, flagShort, severityWord, SEVERITY } from '../app/flags';
import { escapeHtml, OKABE_ITO, svgPlot, type PlotPoint, type PlotSeries } from './svgplot';

export interface DaySheetArgs {
  session: SessionRow;
  setup: Setup;
  runs: RunRow[];
  summary: SessionSummary;
  paper: 'A4' | 'Letter';
  /** ISO time the sheet was made (printed on it). */
  generatedAt: string;
  /** Optional: full latest results, to print the 95 % intervals of cl and cd beside the values. */
  results?: RunResult[];
  /** Optional: the session's reduction settings (store.getSettings); default: the setup's
   *  session defaults over DEFAULT_SETTINGS (what the sheet prints about tolerances). */
  settings?: Settings;
  /** Optional: program version printed in the footer. */
  appVersion?: string;
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
function clock(iso: string): string {
  const m = /T(\d{2}:\d{2}(:\d{2})?)/.exec(iso);
  return m ? m[1] : iso;
}

const CORRECTION_WORDS: Record<string, string> = {
  'barlow-rae-pope': 'closed-section 2-D corrections, Barlow, Rae & Pope (1999) ch. 9',
  'allen-vincenti': 'closed-section 2-D corrections, Allen & Vincenti, NACA Rep. 782 (1944)',
  none: 'none (uncorrected)',
};

function geometryWords(setup: Setup): string {
  const g = setup.model.geometry;
  return g.kind === 'naca4' ? `NACA ${g.code}` : `coordinates (${g.x.length} points)`;
}

function css(paper: 'A4' | 'Letter'): string {
  const size = paper === 'A4' ? 'A4 portrait' : 'letter portrait';
  const sheetWidth = paper === 'A4' ? '186mm' : '191.9mm';
  return `
@page { size: ${size}; margin: 12mm 12mm 14mm 12mm;
  @bottom-right { content: "page " counter(page) " of " counter(pages); font: 7pt sans-serif; } }
* { box-sizing: border-box; }
html { font: 8.5pt/1.3 "DejaVu Sans", "Liberation Sans", Arial, sans-serif; color: #000; background: #fff; }
body { margin: 0 auto; max-width: ${sheetWidth}; padding: 0; }
@media screen { body { padding: 8mm 0; } }
h1 { font-size: 14pt; margin: 0 0 1mm; }
h2 { font-size: 10pt; margin: 4mm 0 1.5mm; border-bottom: 0.4pt solid #000; padding-bottom: 0.5mm; break-after: avoid; page-break-after: avoid; }
.sub { font-size: 7.5pt; margin: 0 0 2mm; }
.facts { display: grid; grid-template-columns: 1fr 1fr; gap: 0 6mm; margin: 0; }
.facts div { display: grid; grid-template-columns: 28mm 1fr; border-bottom: 0.3pt dotted #777; padding: 0.4mm 0; }
.facts dt { font-weight: bold; } .facts dd { margin: 0; }
.caution { border: 1.2pt solid #000; border-left-width: 4pt; padding: 1.5mm 2.5mm; margin: 3mm 0; break-inside: avoid; page-break-inside: avoid; }
.caution strong { text-transform: uppercase; letter-spacing: 0.03em; }
.plots { display: grid; grid-template-columns: 1fr 1fr; gap: 2mm; break-inside: avoid; page-break-inside: avoid; }
.plots svg { width: 100%; height: auto; }
svg .pt { font-size: 9px; font-weight: bold; } svg .tk { font-size: 7px; } svg .al { font-size: 8px; }
svg .lg { font-size: 7.5px; } svg .fl { font-size: 6.5px; }
svg .grid { stroke: #ccc; stroke-width: 0.4; } svg .zero { stroke: #666; stroke-width: 0.6; }
svg .frame { fill: none; stroke: #000; stroke-width: 0.6; }
table { border-collapse: collapse; width: 100%; }
thead { display: table-header-group; } tfoot { display: table-footer-group; }
tr, li, .signoff div { break-inside: avoid; page-break-inside: avoid; }
th, td { border: 0.3pt solid #888; padding: 0.5mm 0.8mm; vertical-align: top; }
th { background: #eee; font-weight: bold; text-align: center; font-size: 7pt; }
table.runs { font-size: 6.8pt; table-layout: fixed; }
table.runs th, table.runs td { padding: 0.4mm 0.5mm; }
table.runs td { overflow-wrap: anywhere; } table.runs th { font-size: 6pt; hyphens: manual; }
table.runs td.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
table.runs span.u { display: block; font-size: 5.5pt; color: #333; white-space: normal; }
table.runs tr.zero td { color: #444; font-style: italic; }
table.runs tr.sev-reject td:first-child { border-left: 3pt solid ${SEVERITY.reject.colour}; }
table.runs tr.sev-warn td:first-child { border-left: 3pt dashed ${SEVERITY.warn.colour}; }
table.runs tr.sev-reject { background: ${SEVERITY.reject.tint}; } table.runs tr.sev-warn { background: ${SEVERITY.warn.tint}; }
.status { font-size: 6.3pt; }
table.stats { width: auto; min-width: 60%; } table.stats th { text-align: left; background: none; font-size: 8pt; }
table.stats td { font-variant-numeric: tabular-nums; }
ol.flagged, ul.common { margin: 0; padding-left: 5mm; } ol.flagged li, ul.common li { margin-bottom: 1mm; }
.sevtag { font-weight: bold; border: 0.6pt solid #000; padding: 0 0.8mm; font-size: 7pt; }
.signoff { display: grid; grid-template-columns: 1fr; gap: 5mm; margin-top: 4mm; break-inside: avoid; page-break-inside: avoid; }
.signoff div { display: grid; grid-template-columns: 30mm 1fr 1fr 30mm; gap: 3mm; align-items: end; }
.signoff span.line { border-bottom: 0.6pt solid #000; min-height: 8mm; display: block; font-size: 6.5pt; color: #333; padding-top: 7mm; }
footer { margin-top: 4mm; font-size: 6.5pt; color: #333; }
@media print { a { color: #000; text-decoration: none; } }
`;
}

/** Words of one run's status cell: flags (severity and words) and the reviewer's verdict. */
function statusCell(row: RunRow): string {
  const parts: string[] = [];
  if (row.kind === 'zero') parts.push('wind-off zero');
  else if (!row.result) parts.push('not reduced');
  else if (!row.result.flags.length) parts.push('no flags');
  for (const f of row.result?.flags ?? []) parts.push(`<b>${severityWord(f.severity)}:</b> ${escapeHtml(flagShort(f.code))}`);
  if (row.review) {
    parts.push(`reviewer ${escapeHtml(row.review.verdict)} (${escapeHtml(row.review.actor)})`);
  }
  return parts.join('; ');
}

function rowSeverity(row: RunRow): 'reject' | 'warn' | null {
  const fl = row.result?.flags ?? [];
  if (fl.some((f) => f.severity === 'reject')) return 'reject';
  return fl.length ? 'warn' : null;
}

function runTable(args: DaySheetArgs, settings: Settings): string {
  const byRun = new Map((args.results ?? []).map((r) => [r.run, r]));
  const uText = (iv: { lo: number; hi: number } | undefined, d: number) =>
    iv && Number.isFinite(iv.lo) && Number.isFinite(iv.hi) ? `<span class="u">[${fmt(iv.lo, d)}, ${fmt(iv.hi, d)}]</span>` : '';
  const widths = [5, 6.5, 5, 4.5, 5, 4.5, 4.5, 8, 6.5, 8.5, 6, 6, 6.5, 6.5, 17];
  const cols = `<colgroup>${widths.map((w) => `<col style="width:${w}%">`).join('')}</colgroup>`;
  const head = `${cols}<thead><tr>
<th>Run</th><th>Time</th><th>α geom<br>°</th><th>α corr<br>°</th><th>q<br>Pa</th><th>V<br>m/s</th><th>Re<br>×10⁶</th>
<th>cl<br>pressure</th><th>cl<br>momentum</th><th>cd<br>wake</th><th>cd<br>pressure</th><th>cm<br>c/4</th>
<th>Γ<br>pressure<br>m²/s</th><th>Γ<br>momentum<br>m²/s</th><th>Status and flags</th></tr></thead>`;
  const body = args.runs.map((row) => {
    const r = row.result;
    const sev = rowSeverity(row);
    const cls = [row.kind === 'zero' ? 'zero' : '', sev ? `sev-${sev}` : ''].filter(Boolean).join(' ');
    const full = byRun.get(row.run);
    const mark = sev ? `${SEVERITY[sev].glyph} ` : '';
    const cells = r
      ? [
          fmt(row.alphaDeg, 2), fmt(r.alphaCorrDeg, 2), fmt(r.q, 1), fmt(r.V, 2), fmt(r.Re / 1e6, 3),
          fmt(r.cl, 4) + uText(full?.uncertainty.cl, 4), fmt(r.clMom, 4), fmt(r.cd, 5) + uText(full?.uncertainty.cd, 5),
          fmt(r.cdp, 5), fmt(r.cmc4, 4), fmt(r.gammaPressure, 3), fmt(r.gammaMomentum, 3),
        ]
      : [fmt(row.alphaDeg, 2), '–', '–', '–', '–', '–', '–', '–', '–', '–', '–', '–'];
    return `<tr${cls ? ` class="${cls}"` : ''}><td class="n">${mark}${row.run}</td><td class="n">${escapeHtml(clock(row.time))}</td>${cells
      .map((c) => `<td class="n">${c}</td>`)
      .join('')}<td class="status">${statusCell(row)}</td></tr>`;
  });
  return `<table class="runs">${head}<tbody>${body.join('\n')}</tbody></table>
<p class="sub">${SEVERITY.reject.glyph} and a solid left bar: at least one ${SEVERITY.reject.word} flag (${SEVERITY.reject.meaning.toLowerCase()}); ${SEVERITY.warn.glyph} and a dashed bar: ${SEVERITY.warn.word} flags only (${SEVERITY.warn.meaning.toLowerCase()}).
α corr, q, V, Re, cl, cd and cm are wall-corrected (${escapeHtml(CORRECTION_WORDS[settings.correction] ?? settings.correction)});
cl momentum is on the same corrected basis. Γ by Kutta–Joukowski, Γ = ½·V·c·cl with V and cl corrected.${args.results?.length ? ' Brackets: 95 % Monte Carlo coverage interval (JCGM 101:2008).' : ''}</p>`;
}

function polars(args: DaySheetArgs): string {
  const p = args.summary.polar;
  const sevOf = new Map(args.runs.map((r) => [r.run, rowSeverity(r)]));
  const flag = (q: PolarPoint): PlotPoint['flag'] => {
    const s = sevOf.get(q.run);
    return s === 'reject' ? 'reject' : s === 'warn' || (s === undefined && q.flagged) ? 'check' : undefined;
  };
  const plotted = new Set(p.map((q) => q.run));
  const notPlotted = args.runs.filter((r) => r.review?.verdict === 'rejected' && !plotted.has(r.run)).map((r) => r.run);
  const pt = (q: PolarPoint, x: number, y: number): PlotPoint => ({ x, y, flag: flag(q), label: `r${q.run}` });
  const clAlpha: PlotSeries[] = [
    { name: 'cl from surface pressures', colour: OKABE_ITO.blue, marker: 'circle', filled: true, line: 'solid',
      points: p.map((q) => pt(q, q.alphaDeg, q.cl)) },
    { name: 'cl from wall momentum', colour: OKABE_ITO.vermillion, marker: 'square', filled: false, line: 'dashed',
      points: p.map((q) => pt(q, q.alphaDeg, q.clMom)) },
  ];
  const cdCl: PlotSeries[] = [
    { name: 'cd from the wake rake (Jones)', colour: OKABE_ITO.green, marker: 'diamond', filled: true, line: 'none',
      points: p.map((q) => pt(q, q.cd, q.cl)) },
    { name: 'cd from surface pressures', colour: OKABE_ITO.purple, marker: 'triangle', filled: false, line: 'none',
      points: p.map((q) => pt(q, q.cdp, q.cl)) },
  ];
  const cmAlpha: PlotSeries[] = [
    { name: 'cm about c/4, surface pressures', colour: OKABE_ITO.blue, marker: 'circle', filled: true, line: 'solid',
      points: p.map((q) => pt(q, q.alphaDeg, q.cmc4)) },
  ];
  const flagLabels = { reject: `${severityWord('reject')} flag (×, labelled r + run number)`, check: `${severityWord('warn')} flags only (ring)` };
  return `<div class="plots">
${svgPlot({ title: 'Lift curve cl(α)', xLabel: 'α corrected, °', yLabel: 'cl', series: clAlpha, flagLabels })}
${svgPlot({ title: 'Drag polar cd(cl)', xLabel: 'cd', yLabel: 'cl', series: cdCl, flagLabels })}
${svgPlot({ title: 'Pitching moment cm(α)', xLabel: 'α corrected, °', yLabel: 'cm c/4', series: cmAlpha, flagLabels })}
</div>
<p class="sub">Lines join the runs in time order, leaving out runs with a ${severityWord('reject')} flag.${notPlotted.length ? ` Not plotted (rejected by the reviewer): runs ${runRanges(notPlotted)}.` : ''}</p>`;
}

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
<p class="sub">Statistics use the corrected pressure-integration cl and the wake cd (pressure cd where there is no wake) of runs without a ${severityWord('reject')} flag.</p>`;
}

/** "words: reason", without repeating the words when the reason already starts with them. */
function reasonWords(f: Flag): string {
  const words = flagLabel(f.code);
  return f.reason.toLowerCase().startsWith(words.toLowerCase())
    ? escapeHtml(f.reason)
    : `${escapeHtml(words)}: ${escapeHtml(f.reason)}`;
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

function flaggedList(args: DaySheetArgs): string {
  const byRun = new Map(args.runs.map((r) => [r.run, r]));
  const flaggedRuns = new Set(args.summary.flagged.map((f) => f.run));
  const reviewedOnly = args.runs.filter((r) => r.review && !flaggedRuns.has(r.run));
  if (!args.summary.flagged.length && !reviewedOnly.length) return '<p>No run was flagged.</p>';
  // The same flag with the same reason on several runs (a session-wide fault such as one leaking
  // tap) is listed once, with its runs.
  const key = (f: Flag) => `${f.severity}\u0000${f.code}\u0000${f.reason}`;
  const groups = new Map<string, { flag: Flag; runs: number[] }>();
  for (const { run, flags } of args.summary.flagged) {
    for (const f of flags) {
      const g = groups.get(key(f)) ?? { flag: f, runs: [] };
      g.runs.push(run);
      groups.set(key(f), g);
    }
  }
  const common = [...groups.values()].filter((g) => g.runs.length > 1);
  const isCommon = new Set(common.map((g) => key(g.flag)));
  const reviewText = (row: RunRow) =>
    row.review ? `Reviewer ${escapeHtml(row.review.actor)} ${escapeHtml(row.review.verdict)} this run${row.review.comment ? `: ${escapeHtml(row.review.comment)}` : ''} (${escapeHtml(row.review.at)})` : '';
  const parts: string[] = [];
  if (common.length) {
    parts.push(`<p>Flags raised identically on several runs:</p><ul class="common">${common
      .map((g) => `<li><span class="sevtag">${severityWord(g.flag.severity)}</span> ${reasonWords(g.flag)} <b>Runs ${runRanges(g.runs)}.</b></li>`)
      .join('\n')}</ul>`);
  }
  const items: string[] = [];
  for (const { run, flags } of args.summary.flagged) {
    const row = byRun.get(run);
    const own = flags.filter((f) => !isCommon.has(key(f)));
    if (!own.length && !row?.review) continue;
    const where = row ? ` (α ${fmt(row.alphaDeg, 2)}°, ${escapeHtml(clock(row.time))})` : '';
    const reasons = own.map((f) => `<li><span class="sevtag">${severityWord(f.severity)}</span> ${reasonWords(f)}</li>`).join('');
    const review = row?.review ? `<li>${reviewText(row)}</li>` : '';
    const more = own.length < flags.length ? ', also the common flags above' : '';
    items.push(`<li><b>Run ${run}</b>${where}${more}<ul>${reasons}${review}</ul></li>`);
  }
  for (const row of reviewedOnly) items.push(`<li><b>Run ${row.run}</b> (no flags): ${reviewText(row)}</li>`);
  if (items.length) parts.push(`${common.length ? '<p>Run by run:</p>' : ''}<ol class="flagged">${items.join('\n')}</ol>`);
  return parts.join('\n');
}

/** The whole sheet as one HTML document. */
export function daySheetHtml(args: DaySheetArgs): string {
  const { session, setup, summary } = args;
  const c = summary.conditions;
  const dataRuns = args.runs.filter((r) => r.kind === 'data');
  const zeroRuns = args.runs.length - dataRuns.length;
  const settings: Settings = args.settings ?? { ...DEFAULT_SETTINGS, ...setup.settings };
  const tol = `|cl momentum − cl pressure| ≤ ${settings.liftTolAbs} + ${fmt(settings.liftTolRel * 100, 1)} % of |cl pressure|`;
  const fact = (k: string, v: string) => `<div><dt>${escapeHtml(k)}</dt><dd>${escapeHtml(v)}</dd></div>`;
  const facts = [
    fact('Facility', `${setup.facility.name}; closed section ${fmt(setup.facility.sectionHeight, 3)} m high × ${fmt(setup.facility.sectionWidth, 3)} m wide`),
    fact('Model', `${setup.model.name} (${geometryWords(setup)})`),
    fact('Chord / span', `${fmt(setup.model.chord, 3)} m / ${fmt(setup.model.span, 3)} m`),
    fact('Test date', setup.session.date),
    fact('Operators', setup.session.operators.join(', ') || '–'),
    fact('Runs', `${dataRuns.length} data, ${zeroRuns} wind-off zero, ${summary.flagged.length} flagged`),
    fact('Dynamic pressure q', c ? range(c.qMin, c.qMax, 1, 'Pa') : '–'),
    fact('Reynolds number', c ? range(c.ReMin / 1e6, c.ReMax / 1e6, 3, '× 10⁶') : '–'),
    fact('α (corrected)', c ? range(c.alphaMin, c.alphaMax, 2, '°') : '–'),
    fact('Air temperature', c ? range(c.tempMin, c.tempMax, 1, '°C') : '–'),
    fact('Barometer', c ? range(c.baroMin / 100, c.baroMax / 100, 1, 'hPa') : '–'),
    fact('Wall correction', CORRECTION_WORDS[settings.correction] ?? settings.correction),
    fact('Taps marked bad', settings.badTaps.length ? settings.badTaps.join(', ') : 'none'),
    fact('Lift cross-check', tol),
    fact('Uncertainty', settings.mcDraws ? `Monte Carlo, ${settings.mcDraws} draws` : 'not computed'),
  ].join('\n');
  const notes = setup.session.notes ? `<p><b>Session notes:</b> ${escapeHtml(setup.session.notes)}</p>` : '';

  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'; img-src data:">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(`Test-day summary – ${session.title} – ${setup.session.date}`)}</title>
<style>${css(args.paper)}</style>
</head>
<body>
<header>
<h1>Test-day summary: ${escapeHtml(session.title)}</h1>
<p class="sub">Session ${session.id}, imported ${escapeHtml(session.importedAt)}${session.folder ? ` from ${escapeHtml(session.folder)}` : ''}. Sheet made ${escapeHtml(args.generatedAt)} for ${args.paper} paper.</p>
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
<section><h2>Polars</h2>
${polars(args)}
</section>
<section><h2>Session statistics</h2>
${statistics(args)}
</section>
<section><h2>Flagged runs and their reasons</h2>
${flaggedList(args)}
</section>
<section><h2>Runs</h2>
${runTable(args, settings)}
</section>
<section><h2>Review and sign-off</h2>
<p>By signing, the reviewer confirms that the runs above, their flags and the reviewer decisions were checked.</p>
<div class="signoff">
${['Test engineer', 'Reviewer'].map((role) => `<div><b>${role}</b><span class="line">Name</span><span class="line">Signature</span><span class="line">Date</span></div>`).join('\n')}
</div>
</section>
<footer>Rakeline${args.appVersion ? ` ${escapeHtml(args.appVersion)}` : ''}, reduction core ${escapeHtml(CORE_VERSION)}. ${escapeHtml(setup.facility.name)} · ${escapeHtml(setup.model.name)} · ${escapeHtml(setup.session.date)}</footer>
</body>
</html>
`;
}
