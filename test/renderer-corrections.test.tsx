// @vitest-environment happy-dom
// The inspector's wall-correction comparison (renderer/components/CorrectionCompare.tsx): every
// method side by side with the numbers the result stores, the method applied and why, and the
// methods that could not be applied with their reason in words.
import { afterEach, describe, expect, it } from 'vitest';
import { CorrectionCompare } from '../renderer/components/CorrectionCompare';
import { wallChartConfig } from '../renderer/charts';
import { byText, mount, reducedMini } from './renderer-fixtures';

let cleanup: (() => Promise<void>) | null = null;
afterEach(async () => {
  await cleanup?.();
  cleanup = null;
});

describe('wall corrections side by side', () => {
  it('shows each method with the stored ε and corrected cl, and the reason the walls could not say', async () => {
    const { results } = reducedMini();
    const r = results[0];
    const set = r.corrections!;
    // The mini session has three taps per wall: the walls cannot say, auto falls back.
    expect(set.applied).not.toBe('wall-signature');
    const m = await mount(<CorrectionCompare result={r} />);
    cleanup = m.unmount;
    const text = m.container.textContent ?? '';
    expect(text).toContain(set.reason);
    expect(text).toMatch(/fewer than the 5 the fit needs/);
    for (const x of set.methods.filter((y) => y.available)) {
      const tr = byText(m.container, 'tbody tr', x.method === 'maskell' ? 'Maskell' : x.method === 'barlow-rae-pope' ? 'Barlow' : 'Allen')!;
      expect(tr.textContent).toContain(x.eps!.toFixed(4));
      expect(tr.textContent).toContain(x.corrected!.cl.toFixed(4));
    }
    expect(byText(m.container, 'tbody tr', 'wall signature')!.textContent).toMatch(/not applicable: The walls cannot say/);
    expect(byText(m.container, 'tbody tr', '(applied)')).not.toBeNull();
  });

  it('a result stored before the comparison existed says so instead', async () => {
    const { results } = reducedMini();
    const old = { ...results[0], corrections: undefined };
    const m = await mount(<CorrectionCompare result={old} />);
    cleanup = m.unmount;
    expect(m.container.textContent).toMatch(/stored before core 0\.3\.0: re-reduce to compare/);
  });
});

describe('wall chart with the wall-signature fit', () => {
  it('adds the fitted floor and ceiling Cp as two lines without markers when the result has a fit', () => {
    const { results } = reducedMini();
    const r = results[0];
    const plain = wallChartConfig({ ...r, corrections: undefined })!;
    const floor = [{ x: -1, cp: 0.01 }, { x: 1, cp: -0.02 }];
    const ceiling = [{ x: -1, cp: -0.01 }, { x: 1, cp: -0.05 }];
    const withFit = wallChartConfig({
      ...r,
      corrections: { ...r.corrections!, signature: { ...(r.corrections!.signature ?? {}), fitted: { floor, ceiling } } as never },
    })!;
    expect(withFit.data.datasets.length).toBe(plain.data.datasets.length + 2);
    const fitSets = withFit.data.datasets.slice(-2) as unknown as { label: string; data: { x: number; y: number }[]; pointRadius: number }[];
    expect(fitSets.map((d) => d.label)).toEqual(['wall-signature fit, floor', 'wall-signature fit, ceiling']);
    expect(fitSets[0].data).toEqual([{ x: -1, y: 0.01 }, { x: 1, y: -0.02 }]);
    expect(fitSets[1].pointRadius).toBe(0);
  });
});

describe('results CSV: the wall-correction columns', () => {
  it('carry the method applied, its ε and each method\'s ε, as stored', async () => {
    const { exportResultsCsv } = await import('../main/export');
    const { setup, rows, results } = reducedMini();
    const csv = exportResultsCsv(rows as never, setup, results).split('\r\n');
    const head = csv[0].split(',');
    const col = (name: string) => head.indexOf(name);
    const r = results[0];
    const line = csv.find((l) => l.startsWith(`${r.run},data,`))!.split(',');
    expect(line[col('correction_method')]).toBe(r.corrections!.applied);
    expect(Number(line[col('eps')])).toBeCloseTo(r.correction.eps, 7);
    const classical = r.corrections!.methods.find((m) => m.method === 'barlow-rae-pope')!;
    expect(Number(line[col('eps_classical')])).toBeCloseTo(classical.eps!, 7);
    // The mini session's walls cannot say: no wall-signature ε, no residual.
    expect(line[col('eps_wall_signature')]).toBe('');
    expect(line[col('wall_fit_residual_cp')]).toBe('');
  });
});
