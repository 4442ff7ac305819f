// End-to-end: the built renderer in headless Chromium against browser mode (main/serve.ts) on a
// fresh database. Import the demo day through the file input, review the flagged post-stall run,
// override a tap, look at the polars and print the day sheet to PDF. Screenshots and the PDF go to
// test-output/ (git-ignored) for a human to look at.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cpSync, existsSync, mkdirSync, readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { flagShort } from '../../app/flags';
import { CHROMIUM, repoRoot, runBrowserTests, startBrowserModeApp, type BrowserModeApp } from '../helpers/browserMode';

const root = repoRoot;
const out = path.join(root, 'test-output');

if (!runBrowserTests) {
  console.warn(`[e2e] ${CHROMIUM} not found: skipping the end-to-end test (install the chromium package to run it).`);
}

function listFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((n) => {
    const p = path.join(dir, n);
    return statSync(p).isDirectory() ? listFiles(p) : [p];
  });
}

describe.skipIf(!runBrowserTests)('Rakeline in headless Chromium (browser mode)', () => {
  let app: BrowserModeApp | null = null;
  let tmp = '';
  let browser: Browser | null = null;
  let page: Page;
  let problems: string[] = [];
  let demoDir = '';

  beforeAll(async () => {
    mkdirSync(out, { recursive: true });
    // The renderer, built into a private folder, and browser mode on a fresh database
    // (test/helpers/browserMode.ts).
    app = await startBrowserModeApp({ prefix: 'rakeline-e2e-' });
    ({ tmp, browser, page, problems } = app);

    // The demo session: RAKELINE_E2E_SESSION (another session folder to try), else the
    // committed demo folder, else the demo generator into a temp folder.
    demoDir = process.env.RAKELINE_E2E_SESSION ?? path.join(root, 'resources', 'demo', 'session');
    if (!existsSync(path.join(demoDir, 'setup.json'))) {
      demoDir = path.join(tmp, 'demo-session');
      const { demoSession } = await import('../../resources/demo/scenario');
      const { writeSessionFolder } = await import('../../main/logwriter');
      const d = demoSession();
      writeSessionFolder(demoDir, d.setup, d.index, d.runs());
    }
  }, 120_000);

  afterAll(async () => {
    await app?.close();
  });

  /** Run a flow with screenshots; on failure a screenshot and the page's problems. */
  async function guarded(failureShot: string, run: (shot: (name: string) => Promise<unknown>) => Promise<void>): Promise<void> {
    const shot = (name: string) => page.screenshot({ path: path.join(out, `${name}.png`), fullPage: false });
    try {
      await run(shot);
    } catch (e) {
      await shot(failureShot).catch(() => undefined);
      if (problems.length) console.error(`[e2e] page problems:\n${problems.join('\n')}`);
      throw e;
    }
  }

  it('imports the demo day, reviews the stall run, overrides a tap, shows polars and prints the day sheet', () => guarded('failure', flow), 150_000);

  it('a saved setting marks the runs stale; "Re-reduce stale runs" clears the marks; ←/→ step through the inspector', async () => {
    const shot = (name: string) => page.screenshot({ path: path.join(out, `${name}.png`), fullPage: false });
    try {
      await staleFlow(shot);
    } catch (e) {
      await shot('failure-stale').catch(() => undefined);
      throw e;
    }
  }, 150_000);

  async function staleFlow(shot: (name: string) => Promise<unknown>): Promise<void> {
    // After the first test every result is current (its tap override re-reduced the whole session).
    await page.getByRole('button', { name: 'Day log', exact: true }).click();
    const count = page.getByTestId('stale-count');
    await expect.poll(() => count.innerText(), { timeout: 30_000 }).toBe('0');
    const grid = page.getByRole('grid');
    const dataRows = await grid.locator('tbody tr').filter({ has: page.locator('td:nth-child(2)', { hasText: /^data$/ }) }).count();

    // Change a check limit and save it.
    await page.getByRole('button', { name: 'Session settings', exact: true }).click();
    const limit = page.getByLabel('Unsteadiness limit');
    await limit.fill(String(Number(await limit.inputValue()) + 0.5));
    await page.getByRole('button', { name: /^Save/ }).click();
    const offer = page.getByRole('button', { name: /^Re-reduce stale runs \(\d+\)$/ });
    await expect.poll(async () => (await offer.count()) ? offer.innerText() : '', { timeout: 30_000 }).not.toMatch(/\(0\)/);

    // The Day log marks every reduced run stale, with the reason in the side panel.
    await page.getByRole('button', { name: 'Day log', exact: true }).click();
    await expect.poll(() => count.innerText(), { timeout: 30_000 }).not.toBe('0');
    const n = Number(await count.innerText());
    expect(n).toBeGreaterThan(20);
    expect(await grid.locator('tbody tr', { has: page.locator('.badge-stale') }).count()).toBe(n);
    expect(n).toBeLessThanOrEqual(dataRows);
    const first = grid.locator('tbody tr', { has: page.locator('.badge-stale') }).first();
    await first.click();
    expect(await page.locator('.side-panel .stale-reasons').innerText()).toMatch(/unsteadyThreshold was [\d.]+, now [\d.]+/);
    await shot('daylog-stale');

    // The inspector says so too; ←/→ step to the next and previous run.
    await page.locator('.side-panel').getByRole('button', { name: /Open in Run inspector/ }).click();
    await page.locator('.inspector-slot .stale-reasons').waitFor();
    const picker = page.getByLabel('Run to inspect');
    const runA = await picker.inputValue();
    await page.keyboard.press('ArrowRight');
    await expect.poll(() => picker.inputValue()).not.toBe(runA);
    const runB = await picker.inputValue();
    expect(Number(runB)).toBeGreaterThan(Number(runA));
    await page.keyboard.press('PageUp');
    await expect.poll(() => picker.inputValue()).toBe(runA);
    await shot('inspector-stale');

    // One action re-reduces the stale runs, with a progress bar; the marks go.
    await page.getByRole('button', { name: 'Day log', exact: true }).click();
    await page.getByRole('button', { name: `Re-reduce stale runs (${n})` }).click();
    await expect.poll(() => count.innerText(), { timeout: 60_000 }).toBe('0');
    expect(await page.locator('.badge-stale').count()).toBe(0);
    expect(await page.getByRole('button', { name: 'Re-reduce stale runs (0)' }).isDisabled()).toBe(true);
    await shot('daylog-after-stale');
    expect(problems, problems.join('\n')).toEqual([]);
  }

  async function flow(shot: (name: string) => Promise<unknown>): Promise<void> {

    // Browser mode asks once for the reviewer's name; then the window opens on Intake (fresh database).
    await page.getByRole('dialog', { name: 'Who is reviewing?' }).waitFor();
    await page.getByLabel('Reviewer name').fill('M. Okonkwo');
    await page.getByRole('button', { name: 'Use this name' }).click();
    await page.getByRole('dialog').waitFor({ state: 'detached' });
    await page.getByRole('heading', { name: 'Intake' }).waitFor();
    expect(await page.locator('.caution').innerText()).toContain('qualified engineer');

    // Import through the file input, all the folder's files (flat: names without the runs/ folder).
    const files = listFiles(demoDir);
    await page.getByTestId('files-input').setInputFiles(files);
    const bar = page.getByRole('progressbar', { name: 'Import progress' });
    await bar.waitFor();
    await page.waitForFunction(
      () => document.querySelector('[role="progressbar"][aria-label="Import progress"]')?.getAttribute('aria-valuenow') === '100'
        || document.querySelector('.errors') !== null,
      null, { timeout: 90_000 },
    );
    const importErrors = page.locator('.errors');
    if (await importErrors.count()) throw new Error(`The import failed: ${await importErrors.innerText()}`);
    expect(await page.locator('.done-line').innerText()).toMatch(/runs imported/);
    await shot('intake');

    // Day log with the run table.
    await page.getByRole('button', { name: 'Open the Day log' }).click();
    const grid = page.getByRole('grid');
    await grid.waitFor();
    const rows = grid.locator('tbody tr');
    expect(await rows.count()).toBeGreaterThan(20);
    await expect.poll(() => page.locator('[data-flag="lift-mismatch"]').count()).toBeGreaterThan(0);

    // The flagged lift-mismatch run at the top of the α range (post-stall): find it by its badge text.
    const stallRow = rows.filter({ has: page.locator('.badge', { hasText: flagShort('lift-mismatch') }) }).first();
    const runNo = Number(await stallRow.getAttribute('data-run'));
    expect(runNo).toBeGreaterThan(0);
    await stallRow.click();
    await page.locator('.side-panel').getByText('Lift methods disagree').first().waitFor();
    await shot('daylog');
    // Keyboard: ↓ then ↑ comes back to the same run, Enter opens it.
    await grid.focus();
    await page.keyboard.press('ArrowDown');
    await page.keyboard.press('ArrowUp');
    expect(await grid.locator('tr[aria-selected="true"]').getAttribute('data-run')).toBe(String(runNo));
    await page.keyboard.press('Enter');
    await page.getByRole('heading', { name: `Run ${runNo}`, exact: true, level: 2 }).waitFor();
    const reason = page.locator('.flags-box .flag-reason', { has: page.locator('[data-flag="lift-mismatch"]') });
    await reason.waitFor();
    const reasonText = await reason.innerText();
    expect(reasonText).toMatch(/surface pressures give cl = [−-]?\d/);
    expect(reasonText).toMatch(/wall momentum gives/);
    await shot('inspector');

    // Mark a tap bad from the tap list (an upper-surface tap near the leading edge carries a lot of
    // suction, so cl must move): the worker re-reduces and the change is shown, then stored.
    const tapRow = page.locator('table.taps tbody tr', { hasText: '● upper' }).filter({ hasText: 'good' }).nth(2);
    const tapId = (await tapRow.locator('td').first().innerText()).trim();
    await tapRow.getByRole('button', { name: `Mark bad tap ${tapId}` }).click();
    const change = page.locator('.change-line');
    await change.waitFor();
    await expect.poll(() => change.innerText(), { timeout: 30_000 }).toContain('stored');
    const text = await page.locator('.change-text').innerText();
    const m = /cl ([−-]?[\d.]+) → ([−-]?[\d.]+)/.exec(text);
    expect(m, text).not.toBeNull();
    expect(m![1]).not.toBe(m![2]);
    await page.locator('table.taps tbody tr', { hasText: tapId }).getByRole('button', { name: `Restore tap ${tapId}` }).waitFor();
    await shot('inspector-after-override');

    // Polars with the session statistics written out.
    await page.getByRole('button', { name: 'Polars', exact: true }).click();
    await page.getByText('lift-curve slope').waitFor();
    expect(await page.locator('.stats-box').innerText()).toMatch(/c\s*l,max/i);
    await page.waitForTimeout(300); // let chart.js lay out its canvases for the screenshot
    await shot('polars');

    // Session settings: a bad value is refused in words.
    await page.getByRole('button', { name: 'Session settings', exact: true }).click();
    const draws = page.getByLabel('Monte Carlo draws');
    await draws.fill('12.5');
    await page.getByText('Enter a whole number.').waitFor();
    expect(await page.getByRole('button', { name: /^Save/ }).isDisabled()).toBe(true);
    await shot('settings');
    await page.getByRole('button', { name: 'Undo edits' }).click();

    // Day sheet: shown in a sandboxed frame; printed to PDF from its HTML.
    await page.getByRole('button', { name: 'Day sheet', exact: true }).click();
    const frame = page.locator('iframe.sheet-frame');
    await frame.waitFor();
    expect(await frame.getAttribute('sandbox')).toBe('');
    await page.frameLocator('iframe.sheet-frame').locator('h1').waitFor();
    const html = await frame.getAttribute('srcdoc');
    expect(html).toContain('<html');
    await shot('daysheet');

    const sheet = await browser!.newPage();
    await sheet.setContent(html!, { waitUntil: 'load' });
    const pdfPath = path.join(out, 'daysheet.pdf');
    await sheet.pdf({ path: pdfPath, format: 'A4', printBackground: true });
    await sheet.close();
    const pdfText = execFileSync('pdftotext', ['-layout', pdfPath, '-'], { encoding: 'utf8' });
    expect(pdfText).toMatch(/Runs/);
    expect(pdfText).toMatch(/Flagged runs/);
    expect(pdfText).toContain(String(runNo));
    expect(pdfText).toMatch(/Lift methods disagree/);
    execFileSync('pdftoppm', ['-png', '-r', '60', '-f', '1', '-l', '1', pdfPath, path.join(out, 'daysheet-pdf')]);
    expect(readdirSync(out).some((n) => n.startsWith('daysheet-pdf') && n.endsWith('.png'))).toBe(true);

    expect(problems, problems.join('\n')).toEqual([]);
  }

  it('overlays runs of two sessions, saves a plot as SVG and PNG, and prints run 11 rejected with its flag on A4 and Letter',
    () => guarded('failure-2', sideBySideAndSheet), 240_000);

  async function sideBySideAndSheet(shot: (name: string) => Promise<unknown>): Promise<void> {
    // A second day: the demo folder again with another date and title (a new setup, so a new session).
    const day2 = path.join(tmp, 'day-2');
    cpSync(demoDir, day2, { recursive: true });
    const setupFile = path.join(day2, 'setup.json');
    const setup = JSON.parse(readFileSync(setupFile, 'utf8'));
    setup.session.date = '2026-11-19';
    setup.session.title = `${setup.session.title}, repeat day`;
    writeFileSync(setupFile, JSON.stringify(setup, null, 2));
    await page.getByRole('button', { name: 'Intake', exact: true }).click();
    await page.getByTestId('files-input').setInputFiles(listFiles(day2));
    await page.waitForFunction(
      () => /runs imported/.test(document.querySelector('.done-line')?.textContent ?? '') && document.querySelector('[role="progressbar"][aria-label="Import progress"]')?.getAttribute('aria-valuenow') === '100'
        || document.querySelector('.errors') !== null,
      null, { timeout: 120_000 },
    );
    if (await page.locator('.errors').count()) throw new Error(`The second import failed: ${await page.locator('.errors').innerText()}`);
    await expect.poll(() => page.locator('.sessions li').count(), { timeout: 30_000 }).toBe(2);

    // Side by side: run 9 of each day on one Cp plot.
    await page.getByRole('button', { name: 'Side by side', exact: true }).click();
    const pickFrom = page.getByLabel('Session to pick runs from');
    const options = await pickFrom.locator('option').allInnerTexts();
    expect(options.length).toBe(2);
    for (const label of options) {
      await pickFrom.selectOption({ label });
      await page.getByLabel('Lowest corrected α').fill('−0.5');
      await page.getByLabel('Highest corrected α').fill('0.5');
      const list = page.getByRole('table', { name: 'Runs matching the filters' });
      // α within ±0.5°: run 9 on the up-sweep and run 46 on the way down
      await expect.poll(async () => (await list.locator('tbody tr').evaluateAll((trs) => trs.map((t) => t.getAttribute('data-run')))).join(','), { timeout: 20_000 }).toBe('9,46');
      await list.getByRole('button', { name: /^Add run 9 of / }).click();
    }
    const picked = page.getByRole('list', { name: 'Runs on the plots' }).locator('li');
    await expect.poll(() => picked.count()).toBe(2);
    expect((await picked.allInnerTexts()).map((t) => t.replace(/\s+/g, ' ')).join(' | ')).toMatch(/^2026-11-18 .*run 9.*\| 2026-11-19 .*run 9/);
    // the flag filter: a hold flag only lists runs on hold (the demo's run 11 has one)
    await page.getByLabel('Lowest corrected α').fill('');
    await page.getByLabel('Highest corrected α').fill('');
    await page.getByLabel('Filter by flag').selectOption('wake-not-captured');
    const list = page.getByRole('table', { name: 'Runs matching the filters' });
    await expect.poll(() => list.locator('tbody tr').count()).toBeGreaterThan(0);
    for (const t of await list.locator('tbody tr').allInnerTexts()) expect(t).toContain('wake not captured');
    await page.waitForTimeout(300); // chart.js lays out its canvas
    await shot('side-by-side');

    // Save the Cp overlay as SVG and as PNG (browser mode: downloads).
    const [svgDl] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Save Cp side by side as SVG' }).click()]);
    expect(svgDl.suggestedFilename()).toBe('cp-side-by-side.svg');
    const svgPath = path.join(out, 'cp-side-by-side.svg');
    await svgDl.saveAs(svgPath);
    const svg = readFileSync(svgPath, 'utf8');
    expect(svg).toMatch(/^<\?xml[^>]*>\s*<svg xmlns="http:\/\/www\.w3\.org\/2000\/svg"/);
    expect(svg).toContain('2026-11-18');
    expect(svg).toContain('2026-11-19');
    expect(svg).toContain('x/c');
    expect((svg.match(/<circle /g) ?? []).length).toBeGreaterThan(10); // tap markers of the first run
    const [pngDl] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Save Cp side by side as PNG' }).click()]);
    expect(pngDl.suggestedFilename()).toBe('cp-side-by-side.png');
    const pngPath = path.join(out, 'cp-side-by-side.png');
    await pngDl.saveAs(pngPath);
    const png = readFileSync(pngPath);
    expect([...png.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
    expect(png.readUInt32BE(16)).toBe(1280); // IHDR width: the 640-px plot drawn at twice its size
    expect(png.length).toBeGreaterThan(20_000);

    // Reject run 11 of the first day in the Day log.
    const day1 = page.locator('.sessions li button', { hasText: '2026-11-18' });
    await day1.click();
    await page.getByRole('grid').waitFor();
    await page.locator('tr[data-run="11"]').click();
    const review = page.getByRole('region', { name: 'Review of run 11' });
    await review.getByLabel('Comment').fill('wake off the rake; traverse the rake and repeat');
    await review.getByRole('button', { name: '✖ Reject' }).click();
    await review.getByText('rejected', { exact: false }).first().waitFor();

    // The day sheet, printed on A4 and Letter.
    await page.getByRole('button', { name: 'Day sheet', exact: true }).click();
    const sessionTitle = (await day1.locator('.session-name').innerText()).trim();
    // run 9 carries only the day-long leaking-tap flag, so its Cp plot is there only when picked
    const srcdoc = () => page.locator('iframe.sheet-frame').getAttribute('srcdoc').catch(() => null).then((h) => h ?? '');
    await expect.poll(srcdoc, { timeout: 30_000 }).toContain('<h2>Cp distributions</h2>');
    expect(await srcdoc()).not.toContain('<title>Run 9: α');
    await page.getByLabel('Cp plots also of runs').fill('9');
    await expect.poll(srcdoc, { timeout: 30_000 }).toContain('<title>Run 9: α');
    for (const paper of ['A4', 'Letter'] as const) {
      await page.getByRole('radio', { name: paper }).check();
      await expect.poll(async () => (await page.locator('iframe.sheet-frame').getAttribute('srcdoc').catch(() => null)) ?? '', { timeout: 30_000 })
        .toContain(paper === 'A4' ? 'size: A4' : 'size: letter');
      const html = (await page.locator('iframe.sheet-frame').getAttribute('srcdoc'))!;
      const sheet = await browser!.newPage();
      await sheet.setContent(html, { waitUntil: 'load' });
      const pdfPath = path.join(out, `daysheet-${paper}.pdf`);
      await sheet.pdf({ path: pdfPath, preferCSSPageSize: true, printBackground: true });
      await sheet.close();
      const info = execFileSync('pdfinfo', [pdfPath], { encoding: 'utf8' });
      const pages = Number(/Pages:\s+(\d+)/.exec(info)![1]);
      expect(pages).toBeGreaterThanOrEqual(3);
      expect(pages).toBeLessThanOrEqual(8);
      expect(info).toMatch(paper === 'A4' ? /Page size:\s+59[45](\.\d+)? x 84[12]/ : /Page size:\s+612 x 792/);
      for (let i = 1; i <= pages; i++) {
        const text = execFileSync('pdftotext', ['-f', String(i), '-l', String(i), '-layout', pdfPath, '-'], { encoding: 'utf8' });
        const head = text.split('\n').find((l) => l.trim())!.replace(/\s+/g, ' ');
        expect(head, `running header of page ${i}`).toContain(`Test-day summary · ${sessionTitle.slice(0, 30)}`);
        expect(head).toContain('· model HAL-S4412 · 2026-11-18');
        expect(head).toContain(`page ${i} of ${pages}`);
      }
      const all = execFileSync('pdftotext', ['-layout', pdfPath, '-'], { encoding: 'utf8' });
      expect(all).not.toMatch(/\d{2}:\d{2}:\d{2}\.\d{3}/); // no milliseconds
      expect(all).not.toMatch(/\d{4}-\d{2}-\d{2}T\d{2}:\d{2}/); // no ISO stamps
      expect(all).not.toContain(tmp);
      expect(all).not.toContain(tmpdir());
      expect(all).not.toContain(root);
      expect(all).not.toMatch(/\bbrowser\b(?! mode)/);
      const flat = all.replace(/\s+/g, ' ');
      // run 11: its flag and the verdict, side by side
      const r11 = /Run 11 \(α[^)]*\)[^]*?(?=\d+\. Run \d|Bad taps)/.exec(flat)?.[0] ?? '';
      expect(r11, 'run 11 in the flagged list').toMatch(/hold/);
      expect(r11.toLowerCase()).toContain('wake not captured');
      expect(r11).toContain('Reviewer M. Okonkwo rejected this run: wake off the rake; traverse the rake and repeat');
      expect(flat).not.toContain('Run 11 (no flags)');
      expect(flat).toMatch(/Run 9: α 0\.01° corr\./); // the picked run's Cp plot
      // balanced pages: the last page is not a short, nearly empty one (main/daysheet.ts tail rule)
      const bbox = execFileSync('pdftotext', ['-bbox', pdfPath, '-'], { encoding: 'utf8', maxBuffer: 1e8 });
      const lastPage = [...bbox.matchAll(/<page width="[\d.]+" height="([\d.]+)">([^]*?)<\/page>/g)].at(-1)!;
      const pageH = Number(lastPage[1]);
      const lowest = Math.max(...[...lastPage[2].matchAll(/yMax="([\d.]+)"/g)].map((y) => Number(y[1])).filter((y) => y < pageH - (13 / 25.4) * 72));
      expect(lowest / pageH, `last page of ${pages} on ${paper}`).toBeGreaterThanOrEqual(0.35);
      execFileSync('pdftoppm', ['-png', '-r', '60', pdfPath, path.join(out, `daysheet-${paper}`)]);
      expect(readdirSync(out).filter((n) => n.startsWith(`daysheet-${paper}-`) && n.endsWith('.png')).length).toBe(pages);
    }

    expect(problems, problems.join('\n')).toEqual([]);
  }

  it('at 1024 px wide every screen keeps its flags column in view, and nothing spills past the window', () => guarded('failure-1024', narrow), 120_000);

  async function narrow(shot: (name: string) => Promise<unknown>): Promise<void> {
    const W = 1024;
    await page.setViewportSize({ width: W, height: 768 });
    /** The element's box lies inside the window and inside every scrolling box around it. */
    const inView = async (loc: ReturnType<Page['locator']>, what: string) => {
      await loc.waitFor();
      const box = await loc.boundingBox();
      expect(box, what).not.toBeNull();
      expect(box!.x, `${what}: left edge`).toBeGreaterThanOrEqual(0);
      expect(box!.x + box!.width, `${what}: right edge`).toBeLessThanOrEqual(W);
      const clippedBy = await loc.evaluate((el) => {
        const b = el.getBoundingClientRect();
        for (let p = el.parentElement; p; p = p.parentElement) {
          if (!/(auto|scroll|hidden|clip)/.test(getComputedStyle(p).overflowX)) continue;
          const r = p.getBoundingClientRect();
          if (b.right > r.right + 1 || b.left < r.left - 1) return `${p.tagName.toLowerCase()}.${p.className}`;
        }
        return '';
      });
      expect(clippedBy, `${what} is cut off by its scrolling box`).toBe('');
    };
    const noSpill = async (what: string) => {
      const w = await page.evaluate(() => document.scrollingElement!.scrollWidth);
      expect(w, `${what}: the page is wider than the window`).toBeLessThanOrEqual(W);
    };
    try {
      await page.locator('.sessions li button', { hasText: '2026-11-18' }).click();
      await page.getByRole('button', { name: 'Day log', exact: true }).click();
      const grid = page.getByRole('grid');
      await grid.waitFor();
      const flagCell = grid.locator('tbody tr[data-run="11"] td', { has: page.locator('[data-flag="wake-not-captured"]') });
      await inView(flagCell, 'Day log: the flags cell of run 11');
      await inView(grid.locator('thead th', { hasText: 'Flags' }), 'Day log: the Flags header');
      await noSpill('Day log');
      await shot('narrow-daylog');

      await page.locator('tr[data-run="11"]').click();
      await page.locator('.side-panel').getByRole('button', { name: /Open in Run inspector/ }).click();
      await inView(page.locator('.flags-box .flag-reason').first(), 'Run inspector: the first flag');
      await noSpill('Run inspector');
      await shot('narrow-inspector');

      await page.getByRole('button', { name: 'Polars', exact: true }).click();
      // run 11 is rejected by now (left out of the polars): the first flagged point's cell
      const pointsFlag = page.getByRole('region', { name: 'Polar points' }).locator('tbody td.flags-col', { hasText: 'check:' }).first();
      await pointsFlag.scrollIntoViewIfNeeded();
      await inView(pointsFlag, 'Polars: the first flags and reasons cell');
      await inView(page.getByRole('region', { name: 'Polar points' }).locator('thead th.flags-col'), 'Polars: the flags header');
      await noSpill('Polars');
      await shot('narrow-polars');

      await page.getByRole('button', { name: 'Side by side', exact: true }).click();
      const list = page.getByRole('table', { name: 'Runs matching the filters' });
      await inView(list.locator('thead th', { hasText: 'flags' }), 'Side by side: the flags header');
      await inView(list.locator('tbody tr').first().locator('td').nth(4), 'Side by side: the first flags cell');
      await inView(list.getByRole('button', { name: /^Add run/ }).first(), 'Side by side: the first add button');
      await noSpill('Side by side');
      await shot('narrow-side-by-side');

      await page.getByRole('button', { name: 'Session settings', exact: true }).click();
      await inView(page.getByRole('button', { name: /^Save/ }), 'Settings: the Save button');
      await noSpill('Session settings');
      await shot('narrow-settings');

      await page.getByRole('button', { name: 'Intake', exact: true }).click();
      await page.getByRole('heading', { name: 'Intake' }).waitFor();
      await noSpill('Intake');
      await shot('narrow-intake');

      await page.getByRole('button', { name: 'Day sheet', exact: true }).click();
      await inView(page.getByRole('button', { name: /^Print/ }), 'Day sheet: the Print button');
      await inView(page.locator('iframe.sheet-frame'), 'Day sheet: the sheet');
      await noSpill('Day sheet');
      await shot('narrow-daysheet');
    } finally {
      await page.setViewportSize({ width: 1500, height: 950 });
    }
    expect(problems, problems.join('\n')).toEqual([]);
  }
});
