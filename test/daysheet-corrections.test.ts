// The day sheet names each run's wall-correction method (issue 11), from the full results it is
// given; the note under the run table says so, and the session fact names the setting.
import { describe, expect, it } from 'vitest';
import { Window } from 'happy-dom';
import { daySheetHtml } from '../main/daysheet';
import { DEFAULT_SETTINGS, type RunResult } from '../app/types';
import { fixtureRuns, fixtureSession, fixtureSetup, fixtureSummary } from './helpers/sheetFixture';

/** Just enough of a result for the sheet's method note and intervals (invented values). */
function result(run: number, applied: 'wall-signature' | 'maskell' | 'barlow-rae-pope'): RunResult {
  return {
    run,
    correction: { method: applied, sigma: 0.0159, epsSb: 0.004, epsWb: 0.001, eps: 0.005 },
    corrections: { requested: 'auto', applied, reason: 'test', methods: [], signature: null, teCp: 0.1, maskellDrag: { cd: 0.01, source: 'pressure' } },
    uncertainty: {},
  } as unknown as RunResult;
}

describe('day sheet: wall-correction method per run', () => {
  it('prints the method in each reduced run\'s status cell', () => {
    const runs = fixtureRuns();
    const data = runs.filter((r) => r.kind === 'data' && r.result);
    const methods = ['wall-signature', 'maskell', 'barlow-rae-pope'] as const;
    const results = data.map((r, i) => result(r.run, methods[i % 3]));
    const html = daySheetHtml({
      session: fixtureSession(), setup: fixtureSetup(), runs, summary: fixtureSummary(runs), paper: 'A4',
      generatedAt: 'now', results, settings: { ...DEFAULT_SETTINGS },
    });
    const win = new Window();
    win.document.write(html);
    const doc = win.document;
    const words = { 'wall-signature': 'corrected: wall signature', maskell: 'corrected: Maskell', 'barlow-rae-pope': 'corrected: classical (BRP)' };
    data.forEach((r, i) => {
      const tr = [...doc.querySelectorAll('table.runs tbody tr')].find((x) => x.querySelector('td')!.textContent!.replace(/\D/g, '') === String(r.run))!;
      expect(tr.querySelector('td.status')!.textContent).toContain(words[methods[i % 3]]);
    });
    expect(html).toContain("the status column names each run's method");
    expect(doc.querySelector('dl.facts')!.textContent).toMatch(/chosen per run \(wall signature where the walls can say, Maskell past stall, classical otherwise/);
  });
});
