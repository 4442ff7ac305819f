// chart.js configurations of every plot, as pure functions of the results (tested without a
// canvas). Conventions: Cp axes are inverted (negative up), as aerodynamicists plot them;
// animation is off; every series differs by marker shape or line style as well as colour.
import type { ChartData, ChartOptions, ChartEvent, ActiveElement, Chart, PointStyle } from 'chart.js';
import type { PolarPoint, RunResult, SessionStats, TapCp } from '../app/types';
import { OKABE_ITO, SERIES } from './palette';
import { fix } from './format';

export interface XY { x: number; y: number; id?: string; run?: number }
/** Points of a series; a point with NaN coordinates is a gap in the line. */
export type Pts = XY[];
const GAP: XY = { x: NaN, y: NaN };
export interface PlotConfig { data: ChartData<'scatter', Pts>; options: ChartOptions<'scatter'> }

const FONT = { family: 'system-ui, "Segoe UI", Roboto, sans-serif', size: 12 };

export function base(xTitle: string, yTitle: string, opts: { reverseY?: boolean; xMin?: number; xMax?: number } = {}): ChartOptions<'scatter'> {
  return {
    animation: false,
    responsive: true,
    maintainAspectRatio: false,
    interaction: { mode: 'nearest', intersect: true },
    scales: {
      x: {
        type: 'linear',
        min: opts.xMin,
        max: opts.xMax,
        title: { display: true, text: xTitle, font: FONT },
        grid: { color: '#e3e6ea' },
        ticks: { font: FONT },
      },
      y: {
        type: 'linear',
        reverse: opts.reverseY ?? false,
        title: { display: true, text: yTitle, font: FONT },
        grid: { color: '#e3e6ea' },
        ticks: { font: FONT, includeBounds: false },
      },
    },
    plugins: {
      legend: { position: 'bottom', labels: { usePointStyle: true, boxWidth: 8, boxHeight: 7, padding: 10, font: FONT } },
      tooltip: { enabled: true },
    },
  };
}

export function points(
  label: string, data: Pts, color: string, style: PointStyle, extra: Record<string, unknown> = {},
): ChartData<'scatter', Pts>['datasets'][number] {
  return {
    label,
    data,
    borderColor: color,
    backgroundColor: color,
    pointStyle: style,
    pointRadius: 4,
    pointHoverRadius: 6,
    showLine: false,
    ...extra,
  } as ChartData<'scatter', Pts>['datasets'][number];
}

function line(label: string, data: Pts, color: string, dash: number[] = [], extra: Record<string, unknown> = {}): ChartData<'scatter', Pts>['datasets'][number] {
  return {
    label,
    data,
    borderColor: color,
    backgroundColor: color,
    showLine: true,
    pointRadius: 0,
    pointHitRadius: 0,
    pointStyle: 'line',
    borderWidth: 1.5,
    borderDash: dash,
    spanGaps: false,
    ...extra,
  } as ChartData<'scatter', Pts>['datasets'][number];
}

// ---------------------------------------------------------------------------------------------
// Run inspector

/** Taps counted as bad on the chart: flagged by the core, or bridged in the row integration. */
export function badTapIds(result: RunResult): Set<string> {
  const s = new Set<string>(result.surface.bridged);
  for (const r of result.rows) for (const id of r.bridged) s.add(id);
  for (const t of result.taps) if (t.bad) s.add(t.id);
  return s;
}

export function rowsOf(result: RunResult): string[] {
  const order = result.rows.map((r) => r.row);
  for (const t of result.taps) if (!order.includes(t.row)) order.push(t.row);
  return order;
}

/**
 * Cp axis limits: all measured taps, plus the inviscid curve as far as 60 % beyond the measured
 * suction range (a stalled run's inviscid suction peak would flatten the data otherwise; the
 * curve is clipped at the plot edge). Rounded out to 0.25.
 */
export function cpAxisRange(measured: number[], inviscid: number[]): { min: number; max: number } {
  const m = measured.filter(Number.isFinite);
  const inv = inviscid.filter(Number.isFinite);
  if (m.length === 0) return { min: -2, max: 1.25 };
  const lo = Math.min(...m);
  const hi = Math.max(...m, 1);
  const span = Math.max(1, hi - lo);
  const invLo = inv.length ? Math.min(...inv) : lo;
  const invHi = inv.length ? Math.max(...inv) : hi;
  const min = Math.min(lo, Math.max(invLo, lo - 0.6 * span)) - 0.05 * span;
  const max = Math.max(hi, Math.min(invHi, hi + 0.2)) + 0.05 * span;
  return { min: Math.floor(min * 4) / 4, max: Math.ceil(max * 4) / 4 };
}

/** Cp(x/c) of one spanwise row: upper ●, lower ▲, bad ✕, inviscid panel solution as lines. */
export function cpChartConfig(result: RunResult, opts: { row?: string; onTap?: (tapId: string) => void } = {}): PlotConfig {
  const row = opts.row ?? rowsOf(result)[0];
  const bad = badTapIds(result);
  const taps = result.taps.filter((t) => t.row === row).sort((a, b) => a.x - b.x);
  const pt = (t: TapCp): XY => ({ x: t.x, y: t.cp, id: t.id });
  const good = (s: 'upper' | 'lower') => taps.filter((t) => t.surface === s && !bad.has(t.id) && Number.isFinite(t.cp)).map(pt);
  const badPts = taps.filter((t) => bad.has(t.id) && Number.isFinite(t.cp)).map(pt);
  const inv = (s: 'upper' | 'lower') => result.inviscid.filter((p) => p.surface === s).sort((a, b) => a.x - b.x).map((p) => ({ x: p.x, y: p.cp }));

  const options = base('x/c', 'Cp (negative up)', { reverseY: true, xMin: 0, xMax: 1 });
  const range = cpAxisRange(taps.map((t) => t.cp), result.inviscid.map((p) => p.cp));
  options.scales!.y!.min = range.min;
  options.scales!.y!.max = range.max;
  options.plugins!.tooltip = {
    callbacks: {
      label: (ctx) => {
        const p = ctx.raw as XY;
        return p.id ? `${p.id}: x/c ${fix(p.x, 3)}, Cp ${fix(p.y, 3)}${bad.has(p.id) ? ' (bad)' : ''}` : `panel: x/c ${fix(p.x, 3)}, Cp ${fix(p.y, 3)}`;
      },
    },
  };
  if (opts.onTap) {
    const onTap = opts.onTap;
    options.onClick = (_e: ChartEvent, els: ActiveElement[], chart: Chart) => {
      const hit = els.find((el) => el.datasetIndex <= 2);
      if (!hit) return;
      const p = chart.data.datasets[hit.datasetIndex].data[hit.index] as XY | undefined;
      if (p?.id) onTap(p.id);
    };
    options.onHover = (e: ChartEvent, els: ActiveElement[]) => {
      const t = e.native?.target as HTMLElement | undefined;
      if (t) t.style.cursor = els.some((el) => el.datasetIndex <= 2) ? 'pointer' : 'default';
    };
  }
  return {
    data: {
      datasets: [
        points(SERIES.upper.label, good('upper'), SERIES.upper.color, SERIES.upper.marker),
        points(SERIES.lower.label, good('lower'), SERIES.lower.color, SERIES.lower.marker, { pointRadius: 5 }),
        points(SERIES.bad.label, badPts, SERIES.bad.color, SERIES.bad.marker, { pointRadius: 7, borderWidth: 2 }),
        line(`${SERIES.inviscid.label}, upper`, inv('upper'), SERIES.inviscid.color),
        line(`${SERIES.inviscid.label}, lower (dashed)`, inv('lower'), SERIES.inviscid.color, [6, 4]),
        ...cpBand(result, taps.filter((t) => !bad.has(t.id))),
      ],
    },
    options,
  };
}

/** Cp ± 1.96·u(Cp) of the good taps (result.cpU), one dotted line above and one below each
 *  surface, when the band is wide enough to be seen (more than 0.002 in Cp somewhere). */
function cpBand(result: RunResult, taps: readonly TapCp[]) {
  const u = result.cpU;
  if (!u || !taps.some((t) => (u[t.id] ?? 0) * 1.96 > 0.002)) return [];
  const edge = (s: 'upper' | 'lower', sign: 1 | -1): Pts =>
    taps.filter((t) => t.surface === s && Number.isFinite(u[t.id])).map((t) => ({ x: t.x, y: t.cp + sign * 1.96 * u[t.id] }));
  const out = [];
  for (const s of ['upper', 'lower'] as const) {
    const color = s === 'upper' ? SERIES.upper.color : SERIES.lower.color;
    out.push(line(`Cp ${s} surface ± 95 % (band edges, dotted)`, edge(s, 1), color, [1, 3], { borderWidth: 1 }));
    out.push(line(`Cp ${s} surface − 95 %`, edge(s, -1), color, [1, 3], { borderWidth: 1 }));
  }
  return out;
}

/** Wake profile: Cpt = (H_w − p∞)/q∞ against rake height y (mm). */
export function wakeChartConfig(result: RunResult): PlotConfig | null {
  const w = result.wake;
  if (!w) return null;
  const pts = [...w.profile].sort((a, b) => a.y - b.y).map((p) => ({ x: p.cpt, y: p.y * 1000 }));
  const ys = pts.map((p) => p.y);
  const lo = Math.min(...ys);
  const hi = Math.max(...ys);
  const options = base('Cpt = (H_w − p∞)/q∞', 'rake height y [mm]');
  return {
    data: {
      datasets: [
        points(SERIES.wake.label, pts, SERIES.wake.color, 'circle', { showLine: true, borderWidth: 1.5, pointRadius: 3 }),
        line('free stream Cpt = 1', [{ x: 1, y: lo }, { x: 1, y: hi }], OKABE_ITO.black, [4, 4]),
        line('wake centre', [{ x: Math.min(...pts.map((p) => p.x)), y: w.centre * 1000 }, { x: 1, y: w.centre * 1000 }], OKABE_ITO.orange, [2, 3]),
      ],
    },
    options,
  };
}

/** Floor and ceiling Cp signatures against x (m from the quarter chord). */
function signatureFit(result: RunResult): ChartData<'scatter', Pts>['datasets'] {
  const f = result.corrections?.signature?.fitted;
  if (!f) return [];
  const line = { showLine: true, borderWidth: 1.5, pointRadius: 0, pointHoverRadius: 0, borderDash: [2, 2] };
  const xy = (a: { x: number; cp: number }[]) => a.map((p) => ({ x: p.x, y: p.cp }));
  return [
    points('wall-signature fit, floor', xy(f.floor), SERIES.floor.color, SERIES.floor.marker, line),
    points('wall-signature fit, ceiling', xy(f.ceiling), SERIES.ceiling.color, SERIES.ceiling.marker, line),
  ];
}

export function wallChartConfig(result: RunResult): PlotConfig | null {
  const w = result.walls;
  if (!w) return null;
  const options = base('x from model c/4 [m] (downstream +)', 'Cp (negative up)', { reverseY: true });
  const pts = (a: { x: number; cp: number }[]) => [...a].sort((p, q) => p.x - q.x).map((p) => ({ x: p.x, y: p.cp }));
  return {
    data: {
      datasets: [
        points(SERIES.floor.label, pts(w.floor), SERIES.floor.color, SERIES.floor.marker, { showLine: true, borderWidth: 1 }),
        points(SERIES.ceiling.label, pts(w.ceiling), SERIES.ceiling.color, SERIES.ceiling.marker, { showLine: true, borderWidth: 1, borderDash: [5, 3] }),
        // The wall-signature fit (vortex, source, doublet between the walls; docs/WALL-CORRECTIONS.md)
        // as thin lines without markers, so the residual is seen against the taps.
        ...signatureFit(result),
      ],
    },
    options,
  };
}

// ---------------------------------------------------------------------------------------------
// Polars

export { sweepDirections, type Sweep } from '../app/sweeps';
import { sweepDirections, type Sweep } from '../app/sweeps';

/** 95 % error bars as one line dataset: a segment per point, gaps between them. `seg` gives the two
 *  ends of a point's bar, or null for none. */
export function errorBars(label: string, pts: readonly PolarPoint[], color: string, seg: (p: PolarPoint) => [XY, XY] | null) {
  const data: Pts = [];
  for (const p of pts) {
    const s = seg(p);
    if (!s || ![s[0].x, s[0].y, s[1].x, s[1].y].every(Number.isFinite)) continue;
    data.push(s[0], s[1], GAP);
  }
  return line(label, data, color, [], { borderWidth: 1, order: 10 });
}

const BARS = '95 % interval (error bars, corrected)';

/** Series of one sweep direction in time order, broken (a NaN gap) where the other sweep runs.
 *  A run on hold keeps its marker but is never joined into the line (gaps on both sides). */
function sweepSeries(pts: readonly PolarPoint[], dirs: Sweep[], want: Sweep, xy: (p: PolarPoint) => XY | null, held: HeldRuns = new Set()): Pts {
  const out: Pts = [];
  const gap = () => { if (out.length && Number.isFinite(out[out.length - 1].x)) out.push(GAP); };
  pts.forEach((p, i) => {
    if (dirs[i] !== want) return gap();
    const v = xy(p);
    if (!v || !Number.isFinite(v.x) || !Number.isFinite(v.y)) return;
    if (held.has(p.run)) {
      gap();
      out.push(v, GAP);
    } else out.push(v);
  });
  while (out.length && !Number.isFinite(out[out.length - 1].x)) out.pop();
  return out;
}

const UP = { dash: [] as number[], marker: 'circle' as PointStyle, word: 'up-sweep (α rising) — solid' };
const DOWN = { dash: [6, 4], marker: 'triangle' as PointStyle, word: 'down-sweep (α falling) — dashed' };

function sweepPair(
  name: string, pts: readonly PolarPoint[], dirs: Sweep[], color: string, xy: (p: PolarPoint) => XY | null,
  markers: [PointStyle, PointStyle] = [UP.marker, DOWN.marker],
  radius = 4,
  held: HeldRuns = new Set(),
) {
  return [
    points(`${name}, ${UP.word}`, sweepSeries(pts, dirs, 'up', xy, held), color, markers[0], { showLine: true, borderWidth: 1.5, borderDash: UP.dash, spanGaps: false, pointRadius: radius }),
    points(`${name}, ${DOWN.word}`, sweepSeries(pts, dirs, 'down', xy, held), color, markers[1], { showLine: true, borderWidth: 1.5, borderDash: DOWN.dash, spanGaps: false, pointRadius: radius, pointBackgroundColor: '#ffffff' }),
  ];
}

/** Runs drawn with the ✕ overlay: those with a 'reject' (hold) flag. Warn-only flags (a leaking
 *  tap reported on every run, say) would mark every point and hide the ones that matter. */
export type HeldRuns = ReadonlySet<number>;

function flaggedSeries(pts: readonly PolarPoint[], held: HeldRuns, xy: (p: PolarPoint) => XY | null) {
  const data = pts.filter((p) => held.has(p.run)).map(xy).filter((v): v is XY => !!v && Number.isFinite(v.x) && Number.isFinite(v.y));
  return points('run on hold (reject flag)', data, OKABE_ITO.black, 'crossRot', { pointRadius: 8, borderWidth: 1.5 });
}

function polarTooltip(options: ChartOptions<'scatter'>, xName: string, yName: string, xd: number, yd: number): void {
  options.plugins!.tooltip = {
    callbacks: {
      label: (ctx) => {
        const p = ctx.raw as XY;
        return `${p.run !== undefined ? `run ${p.run}: ` : ''}${xName} ${fix(p.x, xd)}, ${yName} ${fix(p.y, yd)}`;
      },
    },
  };
}

/** cl(α): both lift methods on the same axes, sweeps by line style, lift-curve fit dotted dark grey. */
export function clAlphaConfig(pts: readonly PolarPoint[], stats: SessionStats | null, held: HeldRuns = new Set()): PlotConfig {
  const dirs = sweepDirections(pts);
  const options = base('α corrected [°]', 'cl');
  polarTooltip(options, 'α', 'cl', 2, 4);
  const datasets = [
    ...sweepPair(`${SERIES.pressure.label}`, pts, dirs, SERIES.pressure.color, (p) => ({ x: p.alphaDeg, y: p.cl, run: p.run }), undefined, undefined, held),
    // Momentum squares are drawn larger than the pressure circles so both stay visible where the
    // two methods agree (they usually do to three decimals).
    ...sweepPair(`${SERIES.momentum.label}`, pts, dirs, SERIES.momentum.color, (p) => ({ x: p.alphaDeg, y: p.clMom, run: p.run }), ['rect', 'rectRot'], 6, held),
    flaggedSeries(pts, held, (p) => ({ x: p.alphaDeg, y: p.cl, run: p.run })),
    errorBars(`${SERIES.pressure.label}: ${BARS}`, pts, SERIES.pressure.color, (p) => (p.intervals?.cl ? [{ x: p.alphaDeg, y: p.intervals.cl[0] }, { x: p.alphaDeg, y: p.intervals.cl[1] }] : null)),
  ];
  if (stats && Number.isFinite(stats.liftSlopePerDeg)) {
    const [a0, a1] = stats.linearRange;
    const f = (a: number) => stats.liftSlopePerDeg * (a - stats.alphaL0Deg);
    datasets.push(line(`lift-curve fit ${fix(a0, 1)}…${fix(a1, 1)}° (dotted)`, [{ x: stats.alphaL0Deg, y: 0 }, { x: a1, y: f(a1) }], '#222222', [2, 3], { borderWidth: 2.5 }));
  }
  return { data: { datasets }, options };
}

/** Drag polar: cl against cd (wake), sweeps distinguished; pressure drag in light squares. */
export function dragPolarConfig(pts: readonly PolarPoint[], held: HeldRuns = new Set()): PlotConfig {
  const dirs = sweepDirections(pts);
  const options = base('cd', 'cl');
  polarTooltip(options, 'cd', 'cl', 5, 4);
  return {
    data: {
      datasets: [
        ...sweepPair('cd from the wake rake', pts, dirs, OKABE_ITO.blue, (p) => ({ x: p.cd, y: p.cl, run: p.run }), undefined, undefined, held),
        points('cd from surface pressures', pts.map((p) => ({ x: p.cdp, y: p.cl, run: p.run })).filter((p) => Number.isFinite(p.x) && Number.isFinite(p.y)), OKABE_ITO.skyBlue, 'rect', { pointRadius: 3 }),
        flaggedSeries(pts, held, (p) => ({ x: p.cd, y: p.cl, run: p.run })),
        errorBars(`cd from the wake rake: ${BARS}`, pts, OKABE_ITO.blue, (p) => (p.intervals?.cd ? [{ x: p.intervals.cd[0], y: p.cl }, { x: p.intervals.cd[1], y: p.cl }] : null)),
      ],
    },
    options,
  };
}

/** cm c/4 (α). */
export function cmAlphaConfig(pts: readonly PolarPoint[], held: HeldRuns = new Set()): PlotConfig {
  const dirs = sweepDirections(pts);
  const options = base('α corrected [°]', 'cm c/4');
  polarTooltip(options, 'α', 'cm', 2, 4);
  return {
    data: {
      datasets: [
        ...sweepPair('cm about c/4', pts, dirs, OKABE_ITO.bluishGreen, (p) => ({ x: p.alphaDeg, y: p.cmc4, run: p.run }), undefined, undefined, held),
        flaggedSeries(pts, held, (p) => ({ x: p.alphaDeg, y: p.cmc4, run: p.run })),
        errorBars(`cm about c/4: ${BARS}`, pts, OKABE_ITO.bluishGreen, (p) => (p.intervals?.cmc4 ? [{ x: p.alphaDeg, y: p.intervals.cmc4[0] }, { x: p.alphaDeg, y: p.intervals.cmc4[1] }] : null)),
      ],
    },
    options,
  };
}

const SPAN_COLORS = [OKABE_ITO.blue, OKABE_ITO.vermillion, OKABE_ITO.bluishGreen, OKABE_ITO.reddishPurple, OKABE_ITO.orange, OKABE_ITO.skyBlue, OKABE_ITO.black];
const SPAN_MARKERS: PointStyle[] = ['circle', 'triangle', 'rect', 'rectRot', 'star', 'crossRot', 'cross'];

/** Span loading: section cl of each row against its spanwise station. */
export function spanConfig(span: { run: number; alphaDeg: number; z: number[]; cl: number[] }[]): PlotConfig {
  const options = base('spanwise station z [m] (from centreline)', 'section cl, uncorrected');
  polarTooltip(options, 'z', 'cl', 3, 4);
  return {
    data: {
      datasets: span.map((s, i) => points(
        `run ${s.run}, α ${fix(s.alphaDeg, 1)}°`,
        s.z.map((z, k) => ({ x: z, y: s.cl[k], run: s.run })).sort((a, b) => a.x - b.x),
        SPAN_COLORS[i % SPAN_COLORS.length], SPAN_MARKERS[i % SPAN_MARKERS.length],
        { showLine: true, borderWidth: 1.5 },
      )),
    },
    options,
  };
}
