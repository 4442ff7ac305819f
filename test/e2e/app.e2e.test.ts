// End-to-end: the built renderer in headless Chromium against browser mode (main/serve.ts) on a
// fresh database. Import the demo day through the file input, review the flagged post-stall run,
// override a tap, look at the polars and print the day sheet to PDF. Screenshots and the PDF go to
// test-output/ (git-ignored) for a human to look at.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Browser, Page } from 'playwright-core';
import { flagShort } from '../../app/flags';

const CHROMIUM = '/usr/bin/chromium';
const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
const out = path.join(root, 'test-output');
const haveChromium = existsSync(CHROMIUM);

if (!haveChromium && process.env.CI !== 'true') {
  console.warn(`[e2e] ${CHROMIUM} not found: skipping the end-to-end test (install the chromium package to run it).`);
}

function listFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((n) => {
    const p = path.join(dir, n);
    return statSync(p).isDirectory() ? listFiles(p) : [p];
  });
}

describe.skipIf(!haveChromium && process.env.CI !== 'true')('Rakeline in headless Chromium (browser mode)', () => {
  let tmp = '';
  let browser: Browser | null = null;
  let server: { url: string; close(): Promise<void> } | null = null;
  let page: Page;
  let demoDir = '';

  beforeAll(async () => {
    if (!haveChromium) throw new Error(`CI=true but ${CHROMIUM} is missing: the end-to-end test cannot run (apt-get install chromium).`);
    tmp = mkdtempSync(path.join(tmpdir(), 'rakeline-e2e-'));
    mkdirSync(out, { recursive: true });

    // 1. The renderer, built with its own vite config into a private folder.
    const { build } = await import('vite');
    const rendererDir = path.join(tmp, 'renderer');
    await build({ configFile: path.join(root, 'renderer', 'vite.config.ts'), logLevel: 'warn', build: { outDir: rendererDir, emptyOutDir: true } });

    // 2. The demo session: RAKELINE_E2E_SESSION (another session folder to try), else the
    //    committed demo folder, else the demo generator into a temp folder.
    demoDir = process.env.RAKELINE_E2E_SESSION ?? path.join(root, 'resources', 'demo', 'session');
    if (!existsSync(path.join(demoDir, 'setup.json'))) {
      demoDir = path.join(tmp, 'demo-session');
      const { demoSession } = await import('../../resources/demo/scenario');
      const { writeSessionFolder } = await import('../../main/logwriter');
      const d = demoSession();
      writeSessionFolder(demoDir, d.setup, d.index, d.runs());
    }

    // 3. Browser mode on a fresh database.
    const { startBrowserServer } = await import('../../main/serve');
    server = await startBrowserServer({ dbFile: path.join(tmp, 'e2e.sqlite'), port: 0, rendererDir });

    const { chromium } = await import('playwright-core');
    browser = await chromium.launch({
      executablePath: CHROMIUM,
      args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
    });
    page = await browser.newPage({ viewport: { width: 1500, height: 950 } });
    const problems: string[] = [];
    page.on('pageerror', (e) => problems.push(`pageerror: ${e.message}`));
    page.on('console', (m) => { if (m.type() === 'error') problems.push(`console: ${m.text()}`); });
    (page as unknown as { problems: string[] }).problems = problems;
    await page.goto(server.url);
  }, 120_000);

  afterAll(async () => {
    await browser?.close();
    await server?.close();
    if (tmp) rmSync(tmp, { recursive: true, force: true });
  });

  it('imports the demo day, reviews the stall run, overrides a tap, shows polars and prints the day sheet', async () => {
    const shot = (name: string) => page.screenshot({ path: path.join(out, `${name}.png`), fullPage: false });
    try {
      await flow(shot);
    } catch (e) {
      await shot('failure').catch(() => undefined);
      const problems = (page as unknown as { problems: string[] }).problems;
      if (problems.length) console.error(`[e2e] page problems:\n${problems.join('\n')}`);
      throw e;
    }
  }, 150_000);

  async function flow(shot: (name: string) => Promise<unknown>): Promise<void> {

    // Fresh database: the window opens on Intake.
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

    const problems = (page as unknown as { problems: string[] }).problems;
    expect(problems, problems.join('\n')).toEqual([]);
  }
});
