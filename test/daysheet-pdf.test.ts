// The day sheet printed to PDF by headless Chromium (Debian's /usr/bin/chromium through
// playwright-core), on A4 and Letter, for the invented Harrowgate demo day (52 runs, run 11
// rejected, run 9 picked for a Cp plot) and a tiny day (8 runs): the last page is not a short,
// nearly empty one (its lowest text line at 35 % of the page or lower, pdftotext -bbox), and no
// section heading is left alone at the foot of a page. The sheet's own rules, no source.
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { Store } from '../main/store';
import { importSessionFolder } from '../main/import';
import { reduceStoredSession } from '../main/reduceService';
import { storedDaySheet } from '../main/daysheetData';
import { PAGE_BODY_PT, rowHeightPt, tailRows } from '../main/daysheet';
import { cleanupTempDirs, tempDir } from './helpers/store-fixtures';
import { makeTinySession, REPO } from './helpers/cliSession';

const CHROMIUM = '/usr/bin/chromium';
const have = existsSync(CHROMIUM) && (() => {
  try {
    execFileSync('pdftotext', ['-v'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
})();
if (!have) console.warn('[daysheet-pdf] chromium or poppler-utils missing: the PDF checks are skipped');

/** Per page: the lowest text line's yMax over the page height (the foot line in the bottom
 *  margin left out), and the page's text lines with their y, from pdftotext -bbox-layout. */
function pagesOf(pdf: string): { fill: number; lines: { y: number; text: string }[] }[] {
  const xml = execFileSync('pdftotext', ['-bbox-layout', pdf, '-'], { encoding: 'utf8', maxBuffer: 1e8 });
  return [...xml.matchAll(/<page width="[\d.]+" height="([\d.]+)">([^]*?)<\/page>/g)].map((m) => {
    const h = Number(m[1]);
    const bottom = h - (13 / 25.4) * 72; // the @page bottom margin holds the foot line
    const lines = [...m[2].matchAll(/<line xMin="[\d.]+" yMin="[\d.]+" xMax="[\d.]+" yMax="([\d.]+)">([^]*?)<\/line>/g)]
      .map((l) => ({ y: Number(l[1]), text: [...l[2].matchAll(/>([^<]*)<\/word>/g)].map((w) => w[1]).join(' ') }))
      .filter((l) => l.y < bottom);
    return { fill: Math.max(0, ...lines.map((l) => l.y)) / h, lines };
  });
}

describe('the balancing rule (no browser)', () => {
  it('tailRows keeps enough rows from the end to fill the share asked for, all of a short table', () => {
    expect(tailRows([10, 10, 10, 10, 10], 25)).toBe(3);
    expect(tailRows([10, 10, 10, 10, 10], 30)).toBe(3);
    expect(tailRows([10, 10], 100)).toBe(2);
    expect(tailRows([], 100)).toBe(0);
    // a row whose status wraps is taller than one on a line; intervals add a line
    expect(rowHeightPt('<b>hold:</b> wake not captured; <b>check:</b> leaking tap; corrected: wall signature', true))
      .toBeGreaterThan(rowHeightPt('no flags', true));
    expect(rowHeightPt('no flags', true)).toBeGreaterThan(rowHeightPt('no flags', false));
    expect(PAGE_BODY_PT.A4).toBeGreaterThan(PAGE_BODY_PT.Letter);
  });
});

describe.skipIf(!have)('the day sheet in print (Chromium, A4 and Letter)', () => {
  let browser: Browser;
  let store: Store;
  let dir: string;

  beforeAll(async () => {
    dir = tempDir('sheet-pdf-');
    store = Store.open(join(dir, 'sheet.sqlite'));
    await importSessionFolder(store, join(REPO, 'resources', 'demo', 'session'), { actor: 'M. Okonkwo' });
    store.setReview(1, 11, 'rejected', 'wake off the rake; traverse the rake and repeat', 'M. Okonkwo');
    await importSessionFolder(store, makeTinySession(join(dir, 'tiny')), { actor: 'M. Okonkwo' });
    for (const s of store.listSessions()) reduceStoredSession(store, s.id, { actor: 'M. Okonkwo' });
    const { chromium } = await import('playwright-core');
    browser = await chromium.launch({ executablePath: CHROMIUM, args: ['--no-sandbox', '--disable-gpu'] });
  }, 240_000);
  afterAll(async () => {
    await browser?.close();
    store?.close();
    cleanupTempDirs();
  });

  const cases = [
    { name: 'demo day, run 11 rejected, run 9 picked', session: 1, cpRuns: [9] },
    { name: 'tiny day', session: 2, cpRuns: undefined },
  ];
  for (const c of cases) {
    for (const paper of ['A4', 'Letter'] as const) {
      it(`${c.name}, ${paper}: the last page holds a fair share; no heading alone at a page foot`, async () => {
        const html = storedDaySheet(store, c.session, { paper, timeZone: 'Europe/Berlin', ...(c.cpRuns ? { cpRuns: c.cpRuns } : {}) });
        const page = await browser.newPage();
        await page.setContent(html, { waitUntil: 'load' });
        const pdf = join(dir, `sheet-${c.session}-${paper}.pdf`);
        await page.pdf({ path: pdf, preferCSSPageSize: true, printBackground: true });
        await page.close();
        const pages = pagesOf(pdf);
        const fills = pages.map((p) => `${Math.round(p.fill * 100)} %`).join(', ');
        console.log(`[daysheet-pdf] ${c.name}, ${paper}: ${pages.length} page(s), lowest text line per page at ${fills}`);
        expect(pages.length).toBeGreaterThanOrEqual(c.session === 1 ? 3 : 1);
        if (pages.length > 1) expect(pages.at(-1)!.fill, `last page of ${pages.length}: ${fills}`).toBeGreaterThanOrEqual(0.35);
        // a section heading is never the last line of a page
        const headings = ['Polars', 'Session statistics', 'Review and sign-off', 'Session-level findings', 'Flagged runs and their reasons',
          'Bad taps', 'Settings in force', 'Cp distributions', 'Runs'];
        pages.forEach((p, i) => {
          const last = p.lines.reduce((a, b) => (b.y > a.y ? b : a), { y: 0, text: '' });
          expect(headings, `page ${i + 1} ends on the heading "${last.text}"`).not.toContain(last.text.trim());
        });
        // the Cp heading shares its page with the first Cp plot
        const cpPage = pages.find((p) => p.lines.some((l) => l.text.trim() === 'Cp distributions'));
        expect(cpPage).toBeDefined();
        if (html.includes('<title>Run ')) expect(cpPage!.lines.some((l) => /^Run \d+: α/.test(l.text.trim()))).toBe(true);
      }, 60_000);
    }
  }
});
