// @vitest-environment happy-dom
// Words on screen for numbers whose name alone is ambiguous: the spanwise mean of the rows' cl
// (spanwise.CL in the code, uncorrected) is written in words with its basis wherever it is shown
// (Polars run picker and span plot, Run inspector), never as a bare capital "CL". Our own rule,
// no source. Data: the reduced mini session of the renderer fixtures (invented values).
import { readdirSync, readFileSync } from 'node:fs';
import { afterEach, describe, expect, it, vi } from 'vitest';
import type { ChartOptions } from 'chart.js';
import { Polars } from '../renderer/screens/Polars';
import { mount, reducedMini, SESSION } from './renderer-fixtures';

const charts: { options: ChartOptions<'scatter'> }[] = [];
vi.mock('react-chartjs-2', () => ({
  Scatter: (props: { options: ChartOptions<'scatter'> }) => {
    charts.push(props);
    return null;
  },
}));

let cleanup: (() => Promise<void>) | null = null;
afterEach(async () => {
  await cleanup?.();
  cleanup = null;
});

describe('the spanwise mean of the rows, in words', () => {
  it('Polars: the run picker names it and its basis; the span plot axis says uncorrected; no bare CL', async () => {
    const mini = reducedMini();
    const summary = mini.summary!;
    const data = summary.polar.slice(0, 2);
    // two tap rows on two runs (as a model with spanwise rows gives them)
    const span = data.map((p, i) => ({ run: p.run, alphaDeg: p.alphaDeg, z: [-0.1, 0, 0.1], cl: [0.41 + i, 0.43 + i, 0.42 + i], CL: 0.4213 + i }));
    const ui = await mount(<Polars data={{ session: SESSION, setup: mini.setup, settings: mini.settings, runs: mini.rows, summary: { ...summary, span } }} onOpen={() => undefined} />);
    cleanup = ui.unmount;
    const picker = ui.container.querySelector('fieldset.span-pick')!.textContent!;
    expect(picker).toContain('cl, spanwise mean of rows, uncorrected: 0.421');
    expect(ui.container.textContent).not.toMatch(/\bCL\b/);
    const spanAxis = charts.map((c) => (c.options.scales?.y as { title?: { text?: string } } | undefined)?.title?.text).find((t) => t?.startsWith('section cl'));
    expect(spanAxis).toBe('section cl, uncorrected');
    expect(ui.container.querySelector('[aria-label="Span loading"] h3')!.textContent).toContain('uncorrected');
  });

  it('every screen that shows spanwise.CL names it in words on the same line (source check of renderer/screens and components)', () => {
    const dirs = ['../renderer/screens/', '../renderer/components/'];
    let shown = 0;
    for (const d of dirs) {
      const url = new URL(d, import.meta.url);
      for (const f of readdirSync(url).filter((n) => n.endsWith('.tsx'))) {
        readFileSync(new URL(f, url), 'utf8').split('\n').forEach((line, i) => {
          if (!/\.CL\b/.test(line)) return;
          shown++;
          expect(line, `${d}${f}:${i + 1}`).toContain('spanwise mean of rows');
          expect(line, `${d}${f}:${i + 1}`).toContain('uncorrected');
        });
      }
    }
    expect(shown).toBeGreaterThanOrEqual(2); // the Polars picker and the inspector
  });
});
