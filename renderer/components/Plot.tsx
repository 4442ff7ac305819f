// One chart.js plot (canvas 2D, no GPU). Registration of the chart.js parts we use happens here
// once. A text summary below each plot carries what the plot shows for readers without it.
import {
  Chart as ChartJS, LinearScale, PointElement, LineElement, ScatterController, LineController, Tooltip, Legend, Title,
} from 'chart.js';
import { Scatter } from 'react-chartjs-2';
import type { ReactNode } from 'react';
import type { PlotConfig } from '../charts';

ChartJS.register(LinearScale, PointElement, LineElement, ScatterController, LineController, Tooltip, Legend, Title);
ChartJS.defaults.animation = false;

export function Plot({ config, label, height = 320, children }: { config: PlotConfig; label: string; height?: number; children?: ReactNode }) {
  return (
    <figure className="plot">
      <div className="plot-canvas" style={{ height }}>
        <Scatter data={config.data} options={config.options} aria-label={label} role="img" />
      </div>
      {children ? <figcaption>{children}</figcaption> : null}
    </figure>
  );
}
