// One chart.js plot (canvas 2D, no GPU). Registration of the chart.js parts we use happens here
// once. A text summary below each plot carries what the plot shows for readers without it. Every
// plot can be saved as SVG or PNG (renderer/plotExport.ts): the desktop app asks where with a save
// dialog, browser mode downloads the file.
import {
  Chart as ChartJS, LinearScale, PointElement, LineElement, ScatterController, LineController, Tooltip, Legend, Title,
} from 'chart.js';
import { Scatter } from 'react-chartjs-2';
import { useContext, useState, type ReactNode } from 'react';
import type { PlotConfig } from '../charts';
import { ApiContext } from '../context';
import { errorText } from '../format';
import { exportPlot, specFromConfig } from '../plotExport';

ChartJS.register(LinearScale, PointElement, LineElement, ScatterController, LineController, Tooltip, Legend, Title);
ChartJS.defaults.animation = false;

export function Plot({ config, label, title, height = 320, children }: {
  config: PlotConfig; label: string; height?: number; children?: ReactNode;
  /** Title of an exported file (default: the label). */
  title?: string;
}) {
  const api = useContext(ApiContext);
  const [saving, setSaving] = useState(false);
  const [said, setSaid] = useState<string | null>(null);
  const save = async (kind: 'svg' | 'png') => {
    if (!api) return;
    setSaving(true);
    setSaid(null);
    try {
      const where = await exportPlot(api, specFromConfig(config, title ?? label), kind);
      setSaid(where ? `Saved ${where}` : 'Not saved.');
    } catch (e) {
      setSaid(`Could not save the plot: ${errorText(e)}`);
    } finally {
      setSaving(false);
    }
  };
  const name = title ?? label;
  return (
    <figure className="plot">
      {api ? (
        <div className="plot-tools" role="group" aria-label={`Save ${name}`}>
          <button type="button" className="btn-small" disabled={saving} onClick={() => void save('svg')} aria-label={`Save ${name} as SVG`}>SVG</button>
          <button type="button" className="btn-small" disabled={saving} onClick={() => void save('png')} aria-label={`Save ${name} as PNG`}>PNG</button>
          <span className="small muted plot-said" role="status">{said ?? ''}</span>
        </div>
      ) : null}
      <div className="plot-canvas" style={{ height }}>
        <Scatter data={config.data} options={config.options} aria-label={label} role="img" />
      </div>
      {children ? <figcaption>{children}</figcaption> : null}
    </figure>
  );
}
