// @vitest-environment happy-dom
// The inspector's wall-correction comparison (renderer/components/CorrectionCompare.tsx): every
// method side by side with the numbers the result stores, the method applied and why, and the
// methods that could not be applied with their reason in words.
import { afterEach, describe, expect, it } from 'vitest';
import { CorrectionCompare } from '../renderer/components/CorrectionCompare';
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
