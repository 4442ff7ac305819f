// Small inline-SVG plotting for the printable day sheet (no library, no scripts, no remote content).
// Axis ticks use the usual 1-2-5 × 10ⁿ "nice number" steps (common practice, no source).
// Markers are told apart by SHAPE as well as colour (Okabe & Ito, "Color Universal Design", 2008,
// palette below), so a plot stays readable in grey print and for colour-blind readers.

/** Okabe–Ito colour-blind-safe palette. */
export const OKABE_ITO = {
  black: '#000000',
  orange: '#E69F00',
  skyBlue: '#56B4E9',
  green: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  purple: '#CC79A7',
} as const;

export type MarkerShape = 'circle' | 'square' | 'triangle' | 'diamond';

export interface PlotPoint {
  x: number;
  y: number;
  /** Flagged points get an extra mark (shape, not colour alone): 'reject' a × and the point's
   *  label, 'check' a ring. */
  flag?: 'reject' | 'check';
  label?: string;
}

export interface PlotSeries {
  name: string;
  colour: string;
  marker: MarkerShape;
  /** Filled (true) or open (false) marker. */
  filled: boolean;
  /** Connect the points without a 'reject' flag in the given order; 'none' draws markers only. */
  line: 'solid' | 'dashed' | 'none';
  points: PlotPoint[];
}

export interface PlotSpec {
  title: string;
  xLabel: string;
  yLabel: string;
  series: PlotSeries[];
  width?: number;
  height?: number;
  /** Legend texts of the flag marks (an entry appears only when some point has that flag). */
  flagLabels?: { reject?: string; check?: string };
}

/** Escape text for HTML/SVG element content and attribute values. */
export function escapeHtml(s: unknown): string {
  return String(s)
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/"/g, '&quot;')
    .replace(/'/g, '&#39;');
}

/** Round a step to 1, 2 or 5 × 10ⁿ, the smallest such value ≥ raw. */
export function niceStep(raw: number): number {
  if (!(raw > 0) || !Number.isFinite(raw)) return 1;
  const p = Math.pow(10, Math.floor(Math.log10(raw)));
  const m = raw / p;
  const nice = m <= 1 + 1e-9 ? 1 : m <= 2 + 1e-9 ? 2 : m <= 5 + 1e-9 ? 5 : 10;
  return nice * p;
}

/** Axis range widened to whole steps and the tick values inside it (about `target` ticks). */
export function niceTicks(min: number, max: number, target = 5): { lo: number; hi: number; step: number; ticks: number[] } {
  if (!Number.isFinite(min) || !Number.isFinite(max)) { min = 0; max = 1; }
  if (min > max) [min, max] = [max, min];
  if (max - min < 1e-12) {
    const pad = Math.abs(min) > 1e-12 ? Math.abs(min) * 0.1 : 0.5;
    min -= pad; max += pad;
  }
  const step = niceStep((max - min) / Math.max(1, target));
  const lo = Math.floor(min / step + 1e-9) * step;
  const hi = Math.ceil(max / step - 1e-9) * step;
  const ticks: number[] = [];
  const n = Math.round((hi - lo) / step);
  for (let i = 0; i <= n; i++) ticks.push(roundTo(lo + i * step, step));
  return { lo, hi, step, ticks };
}

function roundTo(v: number, step: number): number {
  const d = Math.max(0, -Math.floor(Math.log10(step)) + 1);
  const r = Number(v.toFixed(Math.min(12, d)));
  return r === 0 ? 0 : r; // no "-0"
}

function fmtTick(v: number, step: number): string {
  const d = Math.max(0, -Math.floor(Math.log10(step) + 1e-9));
  return v.toFixed(Math.min(8, d)).replace('-', '−');
}

const f1 = (v: number) => (Math.round(v * 10) / 10).toString();

/** SVG markup of one marker centred at (x, y). */
export function markerSvg(shape: MarkerShape, x: number, y: number, r: number, colour: string, filled: boolean): string {
  const fill = filled ? colour : 'white';
  const common = `fill="${fill}" stroke="${colour}" stroke-width="1.1"`;
  switch (shape) {
    case 'circle':
      return `<circle cx="${f1(x)}" cy="${f1(y)}" r="${f1(r)}" ${common}/>`;
    case 'square':
      return `<rect x="${f1(x - r * 0.9)}" y="${f1(y - r * 0.9)}" width="${f1(r * 1.8)}" height="${f1(r * 1.8)}" ${common}/>`;
    case 'triangle': {
      const h = r * 1.15;
      return `<polygon points="${f1(x)},${f1(y - h)} ${f1(x + h)},${f1(y + h * 0.8)} ${f1(x - h)},${f1(y + h * 0.8)}" ${common}/>`;
    }
    case 'diamond': {
      const h = r * 1.25;
      return `<polygon points="${f1(x)},${f1(y - h)} ${f1(x + h)},${f1(y)} ${f1(x)},${f1(y + h)} ${f1(x - h)},${f1(y)}" ${common}/>`;
    }
  }
}

/** The ring drawn around a point with 'check' flags only. */
function checkMark(x: number, y: number, r: number): string {
  return `<circle cx="${f1(x)}" cy="${f1(y)}" r="${f1(r * 2)}" fill="none" stroke="${OKABE_ITO.black}" stroke-width="0.6"/>`;
}

/** The × drawn over a point with a 'reject' flag. */
function flagMark(x: number, y: number, r: number): string {
  const h = r * 1.7;
  return `<path d="M${f1(x - h)},${f1(y - h)}L${f1(x + h)},${f1(y + h)}M${f1(x - h)},${f1(y + h)}L${f1(x + h)},${f1(y - h)}" stroke="${OKABE_ITO.black}" stroke-width="1.3" fill="none"/>`;
}

/** A complete <svg> element (no xmlns needed inline in HTML5) with axes, ticks, grid, series, legend. */
export function svgPlot(spec: PlotSpec): string {
  const W = spec.width ?? 340;
  const H = spec.height ?? 250;
  const m = { l: 48, r: 10, t: 20, b: 36 };
  const finite = (p: PlotPoint) => Number.isFinite(p.x) && Number.isFinite(p.y);
  const marked = (f: 'reject' | 'check') => spec.series.flatMap((s) => s.points).filter((p) => p.flag === f && finite(p));
  const rejected = marked('reject');
  const checked = marked('check');
  const legendRows = spec.series.length + (rejected.length ? 1 : 0) + (checked.length ? 1 : 0);
  const legendH = legendRows * 13 + 6;
  const plotW = W - m.l - m.r;
  const plotH = H - m.t - m.b - legendH;
  const all = spec.series.flatMap((s) => s.points).filter((p) => Number.isFinite(p.x) && Number.isFinite(p.y));
  const xs = all.map((p) => p.x);
  const ys = all.map((p) => p.y);
  // a little room so no marker sits on the frame
  const padded = (v: number[]): [number, number] => {
    if (!v.length) return [0, 1];
    const lo = Math.min(...v), hi = Math.max(...v);
    const pad = (hi - lo) * 0.04;
    return [lo - pad, hi + pad];
  };
  const xt = niceTicks(...padded(xs));
  const yt = niceTicks(...padded(ys));
  const sx = (x: number) => m.l + ((x - xt.lo) / (xt.hi - xt.lo)) * plotW;
  const sy = (y: number) => m.t + plotH - ((y - yt.lo) / (yt.hi - yt.lo)) * plotH;

  const out: string[] = [];
  out.push(`<svg class="plot" viewBox="0 0 ${W} ${H}" width="${W}" height="${H}" role="img" aria-label="${escapeHtml(spec.title)}">`);
  out.push(`<title>${escapeHtml(spec.title)}</title>`);
  out.push(`<text x="${W / 2}" y="13" text-anchor="middle" class="pt">${escapeHtml(spec.title)}</text>`);
  // grid and ticks
  for (const t of xt.ticks) {
    const x = sx(t);
    out.push(`<line x1="${f1(x)}" y1="${m.t}" x2="${f1(x)}" y2="${f1(m.t + plotH)}" class="grid"/>`);
    out.push(`<text x="${f1(x)}" y="${f1(m.t + plotH + 11)}" text-anchor="middle" class="tk">${fmtTick(t, xt.step)}</text>`);
  }
  for (const t of yt.ticks) {
    const y = sy(t);
    out.push(`<line x1="${m.l}" y1="${f1(y)}" x2="${f1(m.l + plotW)}" y2="${f1(y)}" class="grid"/>`);
    out.push(`<text x="${m.l - 4}" y="${f1(y + 3)}" text-anchor="end" class="tk">${fmtTick(t, yt.step)}</text>`);
  }
  // zero lines, when inside the range
  if (xt.lo < 0 && xt.hi > 0) out.push(`<line x1="${f1(sx(0))}" y1="${m.t}" x2="${f1(sx(0))}" y2="${f1(m.t + plotH)}" class="zero"/>`);
  if (yt.lo < 0 && yt.hi > 0) out.push(`<line x1="${m.l}" y1="${f1(sy(0))}" x2="${f1(m.l + plotW)}" y2="${f1(sy(0))}" class="zero"/>`);
  out.push(`<rect x="${m.l}" y="${m.t}" width="${f1(plotW)}" height="${f1(plotH)}" class="frame"/>`);
  out.push(`<text x="${f1(m.l + plotW / 2)}" y="${f1(m.t + plotH + 25)}" text-anchor="middle" class="al">${escapeHtml(spec.xLabel)}</text>`);
  out.push(`<text transform="translate(11 ${f1(m.t + plotH / 2)}) rotate(-90)" text-anchor="middle" class="al">${escapeHtml(spec.yLabel)}</text>`);

  // series
  const r = 2.6;
  for (const s of spec.series) {
    const pts = s.points.filter((p) => Number.isFinite(p.x) && Number.isFinite(p.y));
    if (s.line !== 'none') {
      const good = pts.filter((p) => p.flag !== 'reject');
      if (good.length > 1) {
        const d = good.map((p, i) => `${i ? 'L' : 'M'}${f1(sx(p.x))},${f1(sy(p.y))}`).join('');
        out.push(`<path d="${d}" fill="none" stroke="${s.colour}" stroke-width="0.8"${s.line === 'dashed' ? ' stroke-dasharray="3 2"' : ''}/>`);
      }
    }
    const cls = `series-${escapeHtml(s.marker)}`;
    out.push(`<g class="${cls}">`);
    for (const p of pts) out.push(markerSvg(s.marker, sx(p.x), sy(p.y), r, s.colour, s.filled));
    out.push('</g>');
  }
  // flag marks and labels over everything
  if (checked.length) {
    out.push('<g class="flag-check">');
    for (const p of checked) out.push(checkMark(sx(p.x), sy(p.y), r));
    out.push('</g>');
  }
  if (rejected.length) {
    out.push('<g class="flag-reject">');
    const labelled = new Set<string>();
    for (const p of rejected) {
      out.push(flagMark(sx(p.x), sy(p.y), r));
      if (p.label && !labelled.has(p.label)) {
        labelled.add(p.label);
        out.push(`<text x="${f1(sx(p.x) + 5)}" y="${f1(sy(p.y) - 4)}" class="fl">${escapeHtml(p.label)}</text>`);
      }
    }
    out.push('</g>');
  }
  // legend
  let ly = H - legendH + 8;
  out.push('<g class="legend">');
  for (const s of spec.series) {
    out.push(markerSvg(s.marker, m.l + 6, ly, r, s.colour, s.filled));
    if (s.line !== 'none') out.push(`<line x1="${m.l - 4}" y1="${ly}" x2="${m.l + 16}" y2="${ly}" stroke="${s.colour}" stroke-width="0.8"${s.line === 'dashed' ? ' stroke-dasharray="3 2"' : ''}/>`);
    out.push(`<text x="${m.l + 22}" y="${ly + 3}" class="lg">${escapeHtml(s.name)}</text>`);
    ly += 13;
  }
  if (rejected.length) {
    out.push(flagMark(m.l + 6, ly, r));
    out.push(`<text x="${m.l + 22}" y="${ly + 3}" class="lg">${escapeHtml(spec.flagLabels?.reject ?? 'run with a hold flag (labelled with its run number)')}</text>`);
    ly += 13;
  }
  if (checked.length) {
    out.push(checkMark(m.l + 6, ly, r));
    out.push(`<text x="${m.l + 22}" y="${ly + 3}" class="lg">${escapeHtml(spec.flagLabels?.check ?? 'run with check flags only')}</text>`);
  }
  out.push('</g>');
  if (!all.length) out.push(`<text x="${f1(m.l + plotW / 2)}" y="${f1(m.t + plotH / 2)}" text-anchor="middle" class="al">no reduced points</text>`);
  out.push('</svg>');
  return out.join('');
}
