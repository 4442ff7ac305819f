// End-to-end (issue 9 part 3): the built renderer in headless Chromium against browser mode
// (main/serve.ts) with the tiny invented Harrowgate demo day loaded as the demo session (tap C05
// leaks in every wind-off zero, so the reduction drops it automatically in every data run). In the
// Run inspector the engineer keeps the tap in one run, takes the keep back, then confirms it bad:
// each click is stored, audited and re-reduces the runs it concerns. Screenshots go to
// test-output/ (git-ignored).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { makeTinySession } from '../helpers/cliSession';
import { repoRoot, runBrowserTests, startBrowserModeApp, type BrowserModeApp } from '../helpers/browserMode';

const out = path.join(repoRoot, 'test-output');
const LEAK = 'C05';

describe.skipIf(!runBrowserTests)('settling automatic tap drops in headless Chromium (browser mode)', () => {
  let app: BrowserModeApp | null = null;
  let page: Page;
  let problems: string[] = [];

  beforeAll(async () => {
    mkdirSync(out, { recursive: true });
    app = await startBrowserModeApp({ prefix: 'rakeline-e2e-settle-', demoFolder: (tmp) => makeTinySession(path.join(tmp, 'hal-day')) });
    page = app.page;
    problems = app.problems;
  }, 120_000);

  afterAll(async () => {
    await app?.close();
  });

  it('keeps the leaking tap in one run, takes the keep back, then confirms it bad for the session', async () => {
    const shot = (name: string) => page.screenshot({ path: path.join(out, `${name}.png`), fullPage: false });
    try {
      await page.getByRole('dialog', { name: 'Who is reviewing?' }).waitFor();
      await page.getByLabel('Reviewer name').fill('T. Lindqvist');
      await page.getByRole('button', { name: 'Use this name' }).click();
      await page.getByRole('dialog').waitFor({ state: 'detached' });

      await page.getByRole('button', { name: 'Run inspector', exact: true }).click();
      const picker = page.getByLabel('Run to inspect');
      await picker.waitFor();
      const runs = await picker.locator('option').evaluateAll((os) => os.map((o) => (o as HTMLOptionElement).value));
      const run = runs[1];
      await picker.selectOption(run);
      await page.getByRole('heading', { name: `Run ${run}`, exact: true, level: 2 }).waitFor();

      // The automatic drop is listed with its reason, and can be kept in this run.
      const list = page.locator('.dropped-taps');
      const row = list.locator(`tr[data-tap="${LEAK}"]`);
      await row.waitFor();
      expect(await row.innerText()).toMatch(/automatically \(a suggestion\)\s+leak at wind-off/i);
      await page.getByLabel('Comment for overrides').fill('zero offset only; wind-on reading sound');
      await row.getByRole('button', { name: `Keep tap ${LEAK} in this run` }).click();
      const change = page.locator('.change-line');
      await expect.poll(() => change.innerText(), { timeout: 60_000 }).toMatch(new RegExp(`Tap ${LEAK} kept in this run against the automatic test.*0 other runs of the session re-reduced`));
      await expect.poll(() => row.innerText(), { timeout: 30_000 }).toMatch(/kept in this run by the engineer/);
      await shot('inspector-tap-kept');

      // Take it back: the test judges the tap again and drops it.
      await row.getByRole('button', { name: `Let the test judge tap ${LEAK} again` }).click();
      await expect.poll(() => row.innerText(), { timeout: 60_000 }).toMatch(/automatically \(a suggestion\)/);

      // Confirm: a session bad tap; every run is re-reduced and drops it by hand.
      await row.getByRole('button', { name: `Confirm tap ${LEAK} bad` }).click();
      await expect.poll(() => change.innerText(), { timeout: 60_000 }).toMatch(new RegExp(`Tap ${LEAK} confirmed bad.*\\d+ other runs of the session re-reduced`));
      await expect.poll(() => row.innerText(), { timeout: 30_000 }).toMatch(/by hand\s+marked bad by a reviewer/);
      await page.locator('table.taps tbody tr', { hasText: LEAK }).getByRole('button', { name: `Restore tap ${LEAK}` }).waitFor();
      await shot('inspector-tap-confirmed');

      // The day sheet's bad-tap list says who confirmed it and what the reduction had found.
      await page.getByRole('button', { name: 'Day sheet', exact: true }).click();
      const srcdoc = () => page.locator('iframe.sheet-frame').getAttribute('srcdoc').catch(() => null).then((h) => h ?? '');
      await expect.poll(srcdoc, { timeout: 30_000 }).toContain(`<b>${LEAK}</b>, marked bad by the engineer, confirming the reduction's automatic drop in run ${run} (leak at wind-off)`);
      expect(await srcdoc()).toMatch(/confirming the reduction's automatic drop[^<]*— T\. Lindqvist/);
      expect(problems, problems.join('\n')).toEqual([]);
    } catch (e) {
      await shot('failure-tap-settle').catch(() => undefined);
      if (problems.length) console.error(`[e2e] page problems:\n${problems.join('\n')}`);
      throw e;
    }
  }, 240_000);
});
