// "Save as SVG / PNG" for every plot on screen. A chart.js configuration (renderer/charts.ts)
// is turned into the plot description of main/svgplot.ts (a pure module: the same drawing the day
// sheet prints), written as a standalone SVG document; the PNG is that SVG drawn on a canvas at
// twice its size, so both files show the same plot. The desktop app saves through a real save
// dialog (contract channel 'file.save'); browser mode downloads the file.
import type { PointStyle } from 'chart.js';
import type { RakelineApi } from '../main/contract';
import { svgPlot, type MarkerShape, type PlotSeries, type PlotSpec } from '../main/svgplot';
import type { PlotConfig, XY } from './charts';
import { download } from './screens/DayLog';

const MARKERS: Partial<Record<string, MarkerShape>> = {
  circle: 'circle', triangle: 'triangle', rect: 'square', rectRounded: 'square', rectRot: 'diamond',
  crossRot: 'cross', cross: 'cross', star: 'cross', line: 'none', dash: 'none',
};

type Dataset = PlotConfig['data']['datasets'][number] & Record<string, unknown>;

function str(v: unknown, fallback: string): string {
  return typeof v === 'string' ? v : fallback;
}

/** The plot description of a chart.js configuration (title and axis titles included). */
export function specFromConfig(config: PlotConfig, title: string): PlotSpec {
  const scales = (config.options.scales ?? {}) as Record<string, { title?: { text?: unknown }; min?: unknown; max?: unknown; reverse?: unknown } | undefined>;
  const axis = (k: string) => scales[k] ?? {};
  const range = (k: string): [number, number] | undefined => {
    const a = axis(k);
    return typeof a.min === 'number' && typeof a.max === 'number' ? [a.min, a.max] : undefined;
  };
  const series: PlotSeries[] = (config.data.datasets as Dataset[])
    .filter((d) => !d.hidden)
    .map((d) => {
      const colour = str(d.borderColor, '#000000');
      const radius = typeof d.pointRadius === 'number' ? d.pointRadius : 3;
      const style = str(d.pointStyle as PointStyle | undefined, 'circle');
      const marker: MarkerShape = radius <= 0 ? 'none' : MARKERS[style] ?? 'circle';
      const dash = Array.isArray(d.borderDash) && d.borderDash.length ? (Number(d.borderDash[0]) <= 2 ? 'dotted' : 'dashed') : 'solid';
      const open = typeof d.pointBackgroundColor === 'string' && /^#?f{3,6}$/i.test(d.pointBackgroundColor.replace('#', '')) ;
      return {
        name: str(d.label, ''),
        colour,
        marker,
        filled: !open,
        line: d.showLine ? dash : 'none',
        size: Math.max(1.8, Math.min(4, radius * 0.75)),
        points: (d.data as XY[]).map((p) => ({ x: p.x, y: p.y })),
      } satisfies PlotSeries;
    });
  return {
    title,
    xLabel: str(axis('x').title?.text, 'x'),
    yLabel: str(axis('y').title?.text, 'y'),
    series,
    yReverse: axis('y').reverse === true,
    ...(range('x') ? { xRange: range('x') } : {}),
    ...(range('y') ? { yRange: range('y') } : {}),
  };
}

export const EXPORT_SIZE = { width: 640, height: 520 };

/** A standalone SVG document of a plot description. */
export function svgDocument(spec: PlotSpec): string {
  return `<?xml version="1.0" encoding="UTF-8"?>\n${svgPlot({ ...EXPORT_SIZE, ...spec, standalone: true, unit: 'px', font: { title: 13, tick: 11, axis: 12, legend: 11 } })}\n`;
}

/** A file name from a plot title: lower case, dashes. */
export function exportName(title: string, ext: 'svg' | 'png'): string {
  const base = title.toLowerCase().normalize('NFKD').replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '') || 'plot';
  return `${base.slice(0, 80)}.${ext}`;
}

/** The SVG drawn on a canvas at `scale` times its size, as PNG bytes (browser only). */
export async function pngFromSvg(svg: string, scale = 2): Promise<Blob> {
  const url = URL.createObjectURL(new Blob([svg], { type: 'image/svg+xml' }));
  try {
    const img = new Image();
    await new Promise<void>((resolve, reject) => {
      img.onload = () => resolve();
      img.onerror = () => reject(new Error('The plot could not be drawn as an image.'));
      img.src = url;
    });
    const canvas = document.createElement('canvas');
    canvas.width = Math.round(EXPORT_SIZE.width * scale);
    canvas.height = Math.round(EXPORT_SIZE.height * scale);
    const g = canvas.getContext('2d');
    if (!g) throw new Error('No 2-D canvas to draw the PNG on.');
    g.fillStyle = '#ffffff';
    g.fillRect(0, 0, canvas.width, canvas.height);
    g.drawImage(img, 0, 0, canvas.width, canvas.height);
    return await new Promise<Blob>((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('The PNG could not be made.'))), 'image/png'));
  } finally {
    URL.revokeObjectURL(url);
  }
}

async function base64(blob: Blob): Promise<string> {
  const bytes = new Uint8Array(await blob.arrayBuffer());
  let s = '';
  for (let i = 0; i < bytes.length; i += 0x8000) s += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(s);
}

/** Save a plot as SVG or PNG: the desktop app's save dialog, else a download. Returns the path
 *  saved to (desktop), the file name downloaded (browser), or null when the dialog was cancelled. */
export async function exportPlot(api: RakelineApi, spec: PlotSpec, kind: 'svg' | 'png'): Promise<string | null> {
  const svg = svgDocument(spec);
  const name = exportName(spec.title, kind);
  const blob = kind === 'svg' ? new Blob([svg], { type: 'image/svg+xml' }) : await pngFromSvg(svg);
  const r = await api.call('file.save', { suggestedName: name, kind, base64: await base64(blob) });
  if (r.supported) return r.path;
  download(blob, name, blob.type);
  return name;
}
