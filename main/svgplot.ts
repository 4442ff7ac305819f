// Small SVG plotting (no library, no scripts, no remote content) for the printable day sheet and
// for the "export as SVG / PNG" of every plot on screen (the renderer imports this pure module;
// it uses nothing of Node or the DOM).
// Axis ticks use the usual 1-2-5 × 10ⁿ "nice number" steps (common practice, no source).
// Markers are told apart by SHAPE and fill as well as colour (Okabe & Ito, "Color Universal
// Design", 2008, palette below), so a plot stays readable in grey print and for colour-blind
// readers. Every text size is given in user units; with `unit: 'pt'` one user unit is one
// typographic point on paper, so a tick label of 8.5 prints at 8.5 pt whatever the layout.

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

export type MarkerShape = 'circle' | 'square' | 'triangle' | 'diamond' | 'cross' | 'none';

export interface PlotPoint {
  /** NaN in x or y: a gap (a line series breaks there). */
  x: number;
  y: number;
  /** Flagged points get an extra mark (shape, not colour alone): 'reject' a × and the point's
   *  label, 'check' a ring. */
  flag?: 'reject' | 'check';
  label?: string;
  /** Uncertainty bars: the interval's ends in data units. */
  xErr?: [number, number];
  yErr?: [number, number];
}

export interface PlotSeries {
  name: string;
  colour: string;
  marker: MarkerShape;
  /** Filled (true) or open (false) marker. */
  filled: boolean;
  /** Connect the points (without a 'reject' flag) in the given order; 'none' draws markers only. */
  line: 'solid' | 'dashed' | 'dotted' | 'none';
  points: PlotPoint[];
  /** Marker radius in user units (default 2.6). */
  size?: number;
  /** Whether the series' points set the axis ranges (default true); points of a series that does
   *  not, falling outside the ranges, are drawn as off-scale marks on the frame. */
  fit?: boolean;
  /** Leave the series out of the legend. */
  noLegend?: boolean;
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
  /** Fixed axis ranges (data units), instead of fitting the data. */
  xRange?: [number, number];
  yRange?: [number, number];
  /** Larger values downward (Cp plots). */
  yReverse?: boolean;
  /** 'pt': width and height attributes in points, so user units are points on paper. */
  unit?: 'pt' | 'px';
  /** A document of its own (an exported .svg file): xmlns, a white background, font family. */
  standalone?: boolean;
  /** Text sizes, user units (defaults: title 10, ticks 8.5, axis labels 9, legend 8.5). */
  font?: { title?: number; tick?: number; axis?: number; legend?: number };
}

const REJECT_WORDS = 'run with a hold flag (labelled with its run number)';
const CHECK_WORDS = 'run with check flags only';

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
const finite = (p: PlotPoint) => Number.isFinite(p.x) && Number.isFinite(p.y);

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
    case 'cross': {
      const h = r * 1.2;
      return `<path d="M${f1(x - h)},${f1(y - h)}L${f1(x + h)},${f1(y + h)}M${f1(x - h)},${f1(y + h)}L${f1(x + h)},${f1(y - h)}" stroke="${colour}" stroke-width="1.4" fill="none"/>`;
    }
    case 'none':
      return '';
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

function dashOf(line: PlotSeries['line']): string {
  return line === 'dashed' ? ' stroke-dasharray="4 2.5"' : line === 'dotted' ? ' stroke-dasharray="1.2 2"' : '';
}

/** The ranges a plot's axes span before rounding out to nice ticks: the fixed ranges, or the
 *  finite points (and their uncertainty bars) of the series that fit, padded by 4 %. */
export function plotRanges(spec: PlotSpec): { x: [number, number]; y: [number, number] } {
  const fitting = spec.series.filter((s) => s.fit !== false).flatMap((s) => s.points).filter(finite);
  const pool = fitting.length ? fitting : spec.series.flatMap((s) => s.points).filter(finite);
  const ends = (get: (p: PlotPoint) => number[]): [number, number] => {
    const v = pool.flatMap(get).filter(Number.isFinite);
    if (!v.length) return [0, 1];
    const lo = Math.min(...v), hi = Math.max(...v);
    const pad = (hi - lo) * 0.04;
    return [lo - pad, hi + pad];
  };
  return {
    x: spec.xRange ?? ends((p) => [p.x, ...(p.xErr ?? [])]),
    y: spec.yRange ?? ends((p) => [p.y, ...(p.yErr ?? [])]),
  };
}

/** Points of a plot that fall outside its axes (drawn as off-scale marks): series name and point. */
export function offScalePoints(spec: PlotSpec): { series: string; point: PlotPoint }[] {
  const r = plotRanges(spec);
  const xt = niceTicks(...r.x);
  const yt = niceTicks(...r.y);
  return spec.series.flatMap((s) => s.points.filter(finite)
    .filter((p) => p.x < xt.lo || p.x > xt.hi || p.y < yt.lo || p.y > yt.hi)
    .map((point) => ({ series: s.name, point })));
}

/** A complete <svg> element with axes, ticks, grid, series, uncertainty bars and legend. */
export function svgPlot(spec: PlotSpec): string {
  const W = spec.width ?? 340;
  const H = spec.height ?? 250;
  const fs = { title: 10, tick: 8.5, axis: 9, legend: 8.5, ...spec.font };
  const m = { l: 10 + fs.axis + fs.tick * 3.4, r: 10, t: fs.title + 10, b: fs.tick + fs.axis + 14 };
  const pts = spec.series.flatMap((s) => s.points).filter(finite);
  const marked = (f: 'reject' | 'check') => pts.filter((p) => p.flag === f);
  const rejected = marked('reject');
  const checked = marked('check');
  const legendTexts = [
    ...spec.series.filter((s) => !s.noLegend).map((s) => s.name),
    ...(rejected.length ? [spec.flagLabels?.reject ?? REJECT_WORDS] : []),
    ...(checked.length ? [spec.flagLabels?.check ?? CHECK_WORDS] : []),
  ];
  const entries = legendTexts.length;
  // two legend columns only where every entry fits its column (text width estimated at 0.56 em a character)
  const fitsTwo = legendTexts.every((t) => 22 + t.length * fs.legend * 0.56 <= (W - 16) / 2);
  const cols = entries > 3 && fitsTwo ? 2 : 1;
  const rowH = fs.legend + 4;
  const legendH = Math.ceil(entries / cols) * rowH + 10;
  const plotW = W - m.l - m.r;
  const plotH = H - m.t - m.b - legendH;
  const ranges = plotRanges(spec);
  const xt = niceTicks(...ranges.x);
  const yt = niceTicks(...ranges.y, Math.max(3, Math.min(8, Math.round(plotH / 28))));
  const sx = (x: number) => m.l + ((x - xt.lo) / (xt.hi - xt.lo)) * plotW;
  const syRaw = (y: number) => (spec.yReverse ? (y - yt.lo) / (yt.hi - yt.lo) : (yt.hi - y) / (yt.hi - yt.lo));
  const sy = (y: number) => m.t + syRaw(y) * plotH;
  const inside = (p: PlotPoint) => p.x >= xt.lo && p.x <= xt.hi && p.y >= yt.lo && p.y <= yt.hi;
  const clampX = (x: number) => Math.min(m.l + plotW, Math.max(m.l, x));
  const clampY = (y: number) => Math.min(m.t + plotH, Math.max(m.t, y));
  const unit = spec.unit === 'pt' ? 'pt' : '';
  const txt = (x: number, y: number, size: number, anchor: string, text: string, extra = '') =>
    `<text x="${f1(x)}" y="${f1(y)}" font-size="${size}" text-anchor="${anchor}"${extra}>${escapeHtml(text)}</text>`;

  const out: string[] = [];
  const ns = spec.standalone ? ' xmlns="http://www.w3.org/2000/svg"' : '';
  out.push(`<svg${ns} class="plot" viewBox="0 0 ${W} ${H}" width="${W}${unit}" height="${H}${unit}" role="img" aria-label="${escapeHtml(spec.title)}" font-family="DejaVu Sans, Liberation Sans, Arial, sans-serif">`);
  out.push(`<title>${escapeHtml(spec.title)}</title>`);
  if (spec.standalone) out.push(`<rect x="0" y="0" width="${W}" height="${H}" fill="white"/>`);
  out.push(txt(W / 2, fs.title + 2, fs.title, 'middle', spec.title, ' font-weight="bold" class="pt"'));
  for (const t of xt.ticks) {
    const x = sx(t);
    out.push(`<line x1="${f1(x)}" y1="${m.t}" x2="${f1(x)}" y2="${f1(m.t + plotH)}" stroke="#ccc" stroke-width="0.4" class="grid"/>`);
    out.push(txt(x, m.t + plotH + fs.tick + 2, fs.tick, 'middle', fmtTick(t, xt.step), ' class="tk"'));
  }
  for (const t of yt.ticks) {
    const y = sy(t);
    out.push(`<line x1="${m.l}" y1="${f1(y)}" x2="${f1(m.l + plotW)}" y2="${f1(y)}" stroke="#ccc" stroke-width="0.4" class="grid"/>`);
    out.push(txt(m.l - 3, y + fs.tick * 0.35, fs.tick, 'end', fmtTick(t, yt.step), ' class="tk"'));
  }
  if (xt.lo < 0 && xt.hi > 0) out.push(`<line x1="${f1(sx(0))}" y1="${m.t}" x2="${f1(sx(0))}" y2="${f1(m.t + plotH)}" stroke="#666" stroke-width="0.6" class="zero"/>`);
  if (yt.lo < 0 && yt.hi > 0) out.push(`<line x1="${m.l}" y1="${f1(sy(0))}" x2="${f1(m.l + plotW)}" y2="${f1(sy(0))}" stroke="#666" stroke-width="0.6" class="zero"/>`);
  out.push(`<rect x="${m.l}" y="${m.t}" width="${f1(plotW)}" height="${f1(plotH)}" fill="none" stroke="#000" stroke-width="0.6" class="frame"/>`);
  out.push(txt(m.l + plotW / 2, m.t + plotH + fs.tick + fs.axis + 6, fs.axis, 'middle', spec.xLabel, ' class="al"'));
  out.push(`<text transform="translate(${f1(fs.axis + 1)} ${f1(m.t + plotH / 2)}) rotate(-90)" font-size="${fs.axis}" text-anchor="middle" class="al">${escapeHtml(spec.yLabel)}</text>`);

  // series: uncertainty bars, lines (broken at gaps and at reject points), markers
  const off: PlotPoint[] = [];
  for (const s of spec.series) {
    const r = s.size ?? 2.6;
    const bars: string[] = [];
    for (const p of s.points.filter(finite)) {
      if (!inside(p)) continue;
      if (p.yErr && p.yErr.every(Number.isFinite)) {
        const [a, b] = p.yErr.map((v) => clampY(sy(v)));
        bars.push(`M${f1(sx(p.x))},${f1(a)}V${f1(b)}M${f1(sx(p.x) - r * 0.8)},${f1(a)}h${f1(r * 1.6)}M${f1(sx(p.x) - r * 0.8)},${f1(b)}h${f1(r * 1.6)}`);
      }
      if (p.xErr && p.xErr.every(Number.isFinite)) {
        const [a, b] = p.xErr.map((v) => clampX(sx(v)));
        bars.push(`M${f1(a)},${f1(sy(p.y))}H${f1(b)}M${f1(a)},${f1(sy(p.y) - r * 0.8)}v${f1(r * 1.6)}M${f1(b)},${f1(sy(p.y) - r * 0.8)}v${f1(r * 1.6)}`);
      }
    }
    if (bars.length) out.push(`<path class="ubar" d="${bars.join('')}" stroke="${s.colour}" stroke-width="0.6" fill="none"/>`);
    if (s.line !== 'none') {
      const segs: string[] = [];
      let pen = false;
      for (const p of s.points) {
        // gaps, runs with a REJECT flag and points off the axes break the line
        if (!finite(p) || p.flag === 'reject' || !inside(p)) { pen = false; continue; }
        segs.push(`${pen ? 'L' : 'M'}${f1(sx(p.x))},${f1(sy(p.y))}`);
        pen = true;
      }
      if (segs.some((d) => d.startsWith('L'))) {
        out.push(`<path d="${segs.join('')}" fill="none" stroke="${s.colour}" stroke-width="0.9"${dashOf(s.line)}/>`);
      }
    }
    out.push(`<g class="series-${escapeHtml(s.marker)}">`);
    for (const p of s.points.filter(finite)) {
      if (inside(p)) out.push(markerSvg(s.marker, sx(p.x), sy(p.y), r, s.colour, s.filled));
      else if (s.marker !== 'none') off.push(p);
    }
    out.push('</g>');
  }
  if (off.length) {
    // an open arrowhead on the frame, pointing the way the point lies
    out.push('<g class="offscale">');
    for (const p of off) {
      const x = clampX(sx(p.x)), y = clampY(sy(p.y));
      const dx = sx(p.x) < m.l ? -1 : sx(p.x) > m.l + plotW ? 1 : 0;
      const dy = sy(p.y) < m.t ? -1 : sy(p.y) > m.t + plotH ? 1 : 0;
      const n = Math.hypot(dx, dy) || 1;
      const ux = dx / n, uy = dy / n, k = 4;
      out.push(`<path d="M${f1(x - ux * k - uy * k * 0.6)},${f1(y - uy * k + ux * k * 0.6)}L${f1(x)},${f1(y)}L${f1(x - ux * k + uy * k * 0.6)},${f1(y - uy * k - ux * k * 0.6)}" stroke="#000" stroke-width="0.9" fill="none"/>`);
    }
    out.push('</g>');
  }
  if (checked.length) {
    out.push('<g class="flag-check">');
    for (const p of checked.filter(inside)) out.push(checkMark(sx(p.x), sy(p.y), 2.6));
    out.push('</g>');
  }
  if (rejected.length) {
    out.push('<g class="flag-reject">');
    const labelled = new Set<string>();
    for (const p of rejected.filter(inside)) {
      out.push(flagMark(sx(p.x), sy(p.y), 2.6));
      if (p.label && !labelled.has(p.label)) {
        labelled.add(p.label);
        out.push(txt(sx(p.x) + 5, sy(p.y) - 4, fs.legend, 'start', p.label, ' class="fl"'));
      }
    }
    out.push('</g>');
  }
  // legend, one or two columns under the plot
  const legendX = cols === 2 ? 8 : m.l;
  const colW = (W - legendX - 8) / cols;
  let k = 0;
  const place = () => {
    const col = k % cols, row = Math.floor(k / cols);
    k++;
    return { x: legendX + col * colW, y: H - legendH + 6 + row * rowH + rowH / 2 };
  };
  out.push('<g class="legend">');
  for (const s of spec.series.filter((x) => !x.noLegend)) {
    const { x, y } = place();
    if (s.line !== 'none') out.push(`<line x1="${f1(x)}" y1="${f1(y)}" x2="${f1(x + 18)}" y2="${f1(y)}" stroke="${s.colour}" stroke-width="0.9"${dashOf(s.line)}/>`);
    out.push(markerSvg(s.marker, x + 9, y, s.size ?? 2.6, s.colour, s.filled));
    out.push(txt(x + 22, y + fs.legend * 0.35, fs.legend, 'start', s.name, ' class="lg"'));
  }
  if (rejected.length) {
    const { x, y } = place();
    out.push(flagMark(x + 9, y, 2.6));
    out.push(txt(x + 22, y + fs.legend * 0.35, fs.legend, 'start', spec.flagLabels?.reject ?? REJECT_WORDS, ' class="lg"'));
  }
  if (checked.length) {
    const { x, y } = place();
    out.push(checkMark(x + 9, y, 2.6));
    out.push(txt(x + 22, y + fs.legend * 0.35, fs.legend, 'start', spec.flagLabels?.check ?? CHECK_WORDS, ' class="lg"'));
  }
  out.push('</g>');
  if (!pts.length) out.push(txt(m.l + plotW / 2, m.t + plotH / 2, fs.axis, 'middle', 'no reduced points', ' class="al"'));
  out.push('</svg>');
  return out.join('');
}

function hash(s: string): number {
  let h = 0;
  for (let i = 0; i < s.length; i++) h = (Math.imul(h, 31) + s.charCodeAt(i)) | 0;
  return h;
}
