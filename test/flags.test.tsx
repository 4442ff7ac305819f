// @vitest-environment happy-dom
// The one flag vocabulary (app/flags.ts): every code carries all its words, and the screens, the
// command line, the day sheet, the exports and the live log all show the same words for it.
// Wording checks only: no physics is checked here.
import { afterEach, describe, expect, it } from 'vitest';
import {
  FLAG_CODES, FLAGS, SEVERITY, flagLine, flagWords, makeFlag, severityLegend, worstSeverity,
  type FlagCode, type FlagEntry,
} from '../app/flags';
import type { Flag } from '../app/types';
import { FlagBadge, FlagReasons } from '../renderer/components/FlagBadge';
import { runsTable } from '../main/cli';
import { daySheetHtml } from '../main/daysheet';
import { exportResultsCsv } from '../main/export';
import { watchMessage } from '../main/handlers';
import { fixtureRuns, fixtureSession, fixtureSetup, fixtureSummary } from './helpers/sheetFixture';
import { mount } from './renderer-fixtures';

let cleanup: (() => Promise<void>) | null = null;
afterEach(async () => {
  await cleanup?.();
  cleanup = null;
});

const entryOf = (c: FlagCode) => FLAGS[c] as FlagEntry<unknown>;
const example = (c: FlagCode): Flag => makeFlag(c, entryOf(c).example as never);

describe('flag vocabulary table', () => {
  it('every code has a label, a short label, a severity with its word, glyph and colour, and a reason template', () => {
    expect(FLAG_CODES.length).toBeGreaterThanOrEqual(9);
    for (const code of FLAG_CODES) {
      const e = entryOf(code);
      const w = flagWords(code);
      expect(w.label.trim().length, code).toBeGreaterThan(3);
      expect(w.short.trim().length, code).toBeGreaterThan(3);
      expect(w.short.length, `${code}: the short label is not longer than the label`).toBeLessThanOrEqual(w.label.length);
      expect(['reject', 'warn']).toContain(e.severity);
      expect(w.word).toBe(SEVERITY[e.severity].word);
      expect(w.glyph).toBe(SEVERITY[e.severity].glyph);
      expect(w.colour).toMatch(/^#[0-9A-Fa-f]{6}$/);
      expect(w.tint).toMatch(/^#[0-9A-Fa-f]{6}$/);
      // The template makes a sentence with the example's numbers in it, nothing undefined or NaN.
      const f = example(code);
      expect(f.code).toBe(code);
      expect(f.severity).toBe(e.severity);
      expect(f.reason, code).toMatch(/^[A-Z].*\.$/s);
      expect(f.reason, code).not.toMatch(/undefined|NaN|\[object/);
      // The code itself is not the words (no "lift-mismatch" shown as the label).
      expect(w.label).not.toBe(code);
    }
  });

  it('no two codes share a label or a short label', () => {
    const labels = FLAG_CODES.map((c) => flagWords(c).label.toLowerCase());
    const shorts = FLAG_CODES.map((c) => flagWords(c).short.toLowerCase());
    expect(new Set(labels).size).toBe(labels.length);
    expect(new Set(shorts).size).toBe(shorts.length);
  });

  it('two severities, each with its own word, glyph and colour; the old REJECT/CHECK words are gone', () => {
    expect(SEVERITY.reject.word).toBe('hold');
    expect(SEVERITY.warn.word).toBe('check');
    expect(SEVERITY.reject.glyph).not.toBe(SEVERITY.warn.glyph);
    expect(SEVERITY.reject.colour).not.toBe(SEVERITY.warn.colour);
    expect(SEVERITY.reject.rank).toBeGreaterThan(SEVERITY.warn.rank);
    expect(severityLegend()).toContain('hold');
    expect(severityLegend()).toContain('check');
    expect(worstSeverity([example('unsteady'), example('lift-mismatch')])).toBe('reject');
    expect(worstSeverity([example('unsteady')])).toBe('warn');
    expect(worstSeverity([])).toBeNull();
  });

  it('a code the table does not know (a newer core) still shows, by its code, with the stored severity', () => {
    const w = flagWords('vortex-shedding', 'reject');
    expect(w.label).toBe('vortex-shedding');
    expect(w.word).toBe('hold');
  });

  it('the lift template keeps the published wording of the cross-check numbers', () => {
    const f = makeFlag('lift-mismatch', { clPressure: 1.162, clMomentum: 0.981, tol: 0.055 });
    expect(f.reason).toBe('Lift methods disagree: surface pressures give cl = 1.1620, wall momentum gives 0.9810, uncorrected as the cross-check compares them (difference 0.1810, tolerance 0.0550).');
    // With the corrected pair, quoted as the coefficient table shows them (4 decimals).
    const g = makeFlag('lift-mismatch', { clPressure: 1.162, clMomentum: 0.981, tol: 0.055, corrected: { clPressure: 1.1161, clMomentum: 0.94226 } });
    expect(g.reason).toMatch(/; corrected: 1\.1161 and 0\.9423\.$/);
    expect(f.severity).toBe('reject');
  });
});

describe('every view uses the table\u2019s words', () => {
  it('screen badge (short label), screen reason list (label), CLI table, day sheet, CSV export and live log', async () => {
    for (const code of FLAG_CODES) {
      const flag = example(code);
      const w = flagWords(code);

      // Screen: the badge shows the short label and the severity word; the reason list the label.
      const m = await mount(<div><FlagBadge flag={flag} /><FlagReasons flags={[flag]} /></div>);
      const badge = m.container.querySelector('.badge')!;
      expect(badge.querySelector('.badge-text')!.textContent, code).toBe(w.short);
      expect(badge.textContent).toContain(w.word);
      expect(badge.querySelector('.badge-glyph')!.textContent).toBe(w.glyph);
      const li = m.container.querySelector('.flag-reason')!;
      expect(li.querySelector('.badge-text')!.textContent).toBe(w.label);
      expect(li.querySelector('.flag-sev')!.textContent).toBe(`${w.word}:`);
      expect(li.textContent).toContain(flag.reason);
      await m.unmount();

      // CLI: the run table's flags column.
      const runs = fixtureRuns();
      runs[2] = { ...runs[2], result: { ...runs[2].result!, flags: [flag] } };
      const cliLine = runsTable(runs).split('\n').find((l) => /^\s+3 data/.test(l))!;
      expect(cliLine, code).toContain(`${w.word}: ${w.short}`);

      // Day sheet: the run table's status cell and the flagged-run list.
      const html = daySheetHtml({
        session: fixtureSession(), setup: fixtureSetup(), runs, summary: fixtureSummary(runs), paper: 'A4', generatedAt: '2026-11-18T18:00:00Z',
      });
      const doc = new DOMParser().parseFromString(html, 'text/html');
      const row3 = [...doc.querySelectorAll('table.runs tbody tr')].find((tr) => /3$/.test(tr.querySelector('td')!.textContent!.trim()))!;
      expect(row3.querySelector('.status')!.textContent, code).toContain(`${w.word}: ${w.short}`);
      const listed = doc.querySelector('ol.flagged, ul.common')!.textContent!;
      expect(listed.toLowerCase()).toContain(w.label.toLowerCase());
      expect(listed).toContain(w.word);

      // CSV export: the flags cell says the severity word and the label (with the reason).
      const csv = exportResultsCsv(runs, fixtureSetup());
      const csvRow = csv.split('\r\n').find((l) => l.startsWith('3,'))!;
      expect(csvRow.toLowerCase(), code).toContain(w.label.toLowerCase());
      expect(csvRow).toContain(`${w.word}: `);

      // Live log.
      const live = watchMessage(runs[2], 0);
      expect(live.toLowerCase(), code).toContain(w.label.toLowerCase());
      expect(live).toContain(`${w.word}: `);
      expect(flagLine(flag, 'reason').toLowerCase()).toContain(w.label.toLowerCase());
    }
  });
});
