// Shared set-up of the browser-mode end-to-end tests: the renderer built with its own vite config
// into a private folder, browser mode (main/serve.ts) on a fresh database, and Debian's Chromium
// through playwright-core (never a downloaded browser). Under CI=true a missing Chromium is an
// error, never a skip.
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Browser, Page } from 'playwright-core';

export const CHROMIUM = '/usr/bin/chromium';
export const haveChromium = existsSync(CHROMIUM);
/** Whether the end-to-end tests run: always under CI=true (and fail there without Chromium). */
export const runBrowserTests = haveChromium || process.env.CI === 'true';
export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');

export interface BrowserModeApp {
  /** Private temporary folder, removed by close(). */
  tmp: string;
  browser: Browser;
  page: Page;
  server: { url: string; close(): Promise<void> };
  /** Page errors and console errors seen so far. */
  problems: string[];
  close(): Promise<void>;
}

/** Build the renderer, start browser mode and open one page on it. `demoFolder` (given the private
 *  temporary folder) names a session folder served as the demo session. */
export async function startBrowserModeApp(opts: { prefix: string; demoFolder?: (tmp: string) => string }): Promise<BrowserModeApp> {
  if (!haveChromium) throw new Error(`CI=true but ${CHROMIUM} is missing: the end-to-end test cannot run (apt-get install chromium).`);
  const tmp = mkdtempSync(path.join(tmpdir(), opts.prefix));
  let server: BrowserModeApp['server'] | null = null;
  let browser: Browser | null = null;
  try {
    const { build } = await import('vite');
    const rendererDir = path.join(tmp, 'renderer');
    await build({ configFile: path.join(repoRoot, 'renderer', 'vite.config.ts'), logLevel: 'warn', build: { outDir: rendererDir, emptyOutDir: true } });
    const demoFolder = opts.demoFolder?.(tmp);
    const { startBrowserServer } = await import('../../main/serve');
    server = await startBrowserServer({ dbFile: path.join(tmp, 'e2e.sqlite'), port: 0, rendererDir, ...(demoFolder ? { demoFolder } : {}) });
    const { chromium } = await import('playwright-core');
    browser = await chromium.launch({
      executablePath: CHROMIUM,
      args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
    });
  } catch (e) {
    await browser?.close().catch(() => undefined);
    await server?.close().catch(() => undefined);
    rmSync(tmp, { recursive: true, force: true });
    throw e;
  }
  const page = await browser.newPage({ viewport: { width: 1500, height: 950 } });
  const problems: string[] = [];
  page.on('pageerror', (e) => problems.push(`pageerror: ${e.message}`));
  page.on('console', (m) => { if (m.type() === 'error') problems.push(`console: ${m.text()}`); });
  await page.goto(server.url);
  const b = browser;
  const srv = server;
  return {
    tmp, browser: b, page, server: srv, problems,
    async close() {
      await b.close();
      await srv.close();
      rmSync(tmp, { recursive: true, force: true });
    },
  };
}
