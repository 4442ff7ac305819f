// The Electron glue (main/electron.ts + main/preload.ts), bundled exactly as scripts/build.mjs
// bundles it, booted in a plain Node child process against a recording stand-in for the electron
// module (test/helpers/fake-electron.cjs): the window's security settings, blocked navigation and
// pop-ups, denied permissions, no remote requests, the app protocol with its CSP, IPC → dispatch
// (foreign frames refused), the demo import on first run, and printing the day sheet to PDF.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { writeSessionFolder } from '../main/logwriter';
import { CONTENT_SECURITY_POLICY } from '../main/static';
import { miniRuns, miniSetup } from './helpers/mini-session';

const repo = path.resolve(__dirname, '..');
let dir: string;
// eslint-disable-next-line @typescript-eslint/no-explicit-any
let out: any;

const driver = `
const rec = globalThis.__fakeElectron;
require(process.env.BUNDLE);
const ours = { senderFrame: { url: 'rakeline://app/index.html' } };
(async () => {
  for (let i = 0; i < 1500 && rec.windows.length === 0 && !rec.errorBox; i++) await new Promise((r) => setTimeout(r, 20));
  const out = { errorBox: rec.errorBox ?? null, schemes: rec.schemes };
  const win = rec.windows[0];
  out.webPreferences = win.opts.webPreferences;
  out.url = win.url;
  const wc = win.webContents;
  const nav = (url) => { let prevented = false; wc.emit('will-navigate', { preventDefault() { prevented = true; } }, url); return prevented; };
  out.nav = { evil: nav('https://evil.example/'), ours: nav('rakeline://app/index.html#runs'), file: nav('file:///etc/passwd'), lookalike: nav('rakeline://app.evil/') };
  out.open = wc.windowOpenHandler({ url: 'https://evil.example/' });
  let granted = null;
  rec.permissionRequest(wc, 'media', (g) => { granted = g; });
  out.permission = granted;
  out.permissionCheck = rec.permissionCheck(wc, 'notifications');
  const br = (url, webContentsId) => new Promise((r) => rec.beforeRequest({ url, webContentsId }, (res) => r(res.cancel)));
  out.cancel = {
    remote: await br('https://cdn.example/x.js'), ours: await br('rakeline://app/assets/a.js'),
    fileFromMain: await br('file:///etc/passwd', wc.id), fileFromNone: await br('file:///etc/passwd'),
  };
  const h = rec.protocolHandlers.rakeline;
  const idx = await h(new Request('rakeline://app/index.html'));
  out.index = { status: idx.status, csp: idx.headers.get('content-security-policy'), type: idx.headers.get('content-type'), body: await idx.text() };
  const trav = await h(new Request('rakeline://app/assets/..%2f..%2f..%2fsecret.txt'));
  out.traversal = { status: trav.status, body: await trav.text() };
  const other = await h(new Request('rakeline://elsewhere/index.html'));
  out.otherHost = other.status;
  const call = rec.ipc['rakeline:call'];
  out.info = await call(ours, 'app.info', {});
  out.foreign = await call({ senderFrame: { url: 'https://evil.example/' } }, 'app.info', {});
  out.invalid = await call(ours, 'sessions.get', { sessionId: 'x' });
  out.pick = await call(ours, 'dialog.pickFolder', { purpose: 'watch' });
  const sid = out.info.result.demoSessionId;
  out.audit = await call(ours, 'audit.list', { sessionId: sid });
  out.pdf = await call(ours, 'daysheet.pdf', { sessionId: sid, paper: 'Letter' });
  const printer = rec.windows[1];
  out.printer = printer && { fileCancelled: printer.fileCancelled, webPreferences: printer.opts.webPreferences, printed: printer.webContents.printed, destroyed: printer.destroyed, html: (printer.fileText || '').slice(0, 200) };
  out.menus = rec.menus;
  out.menuLabels = rec.menu.template.map((m) => m.label || m.role);
  process.stdout.write('\\n@@' + JSON.stringify(out));
  process.exit(0);
})().catch((e) => { console.error(e); process.exit(3); });
`;

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), 'rakeline-electron-'));
  const build = (await import(pathToFileURL(path.join(repo, 'scripts', 'build.mjs')).href)) as {
    buildMain(o: { quiet?: boolean; outdir?: string }): Promise<void>;
  };
  await build.buildMain({ quiet: true, outdir: path.join(dir, 'main') });
  mkdirSync(path.join(dir, 'renderer'), { recursive: true });
  writeFileSync(path.join(dir, 'renderer', 'index.html'), '<!doctype html><title>Rakeline test</title>');
  writeFileSync(path.join(dir, 'secret.txt'), 'TOP-SECRET');
  const setup = miniSetup();
  const mini = miniRuns(setup, { dataRuns: 3 });
  writeSessionFolder(path.join(dir, 'resources', 'demo', 'session'), setup, mini.index, mini.runs);
  writeFileSync(path.join(dir, 'driver.cjs'), driver);
  const r = spawnSync(process.execPath, ['-r', path.join(repo, 'test', 'helpers', 'fake-electron.cjs'), path.join(dir, 'driver.cjs')], {
    env: { ...process.env, NODE_PATH: path.join(repo, 'node_modules'), FAKE_ELECTRON_ROOT: dir, BUNDLE: path.join(dir, 'main', 'electron.cjs'), RAKELINE_SQLITE_BINDING: '' },
    encoding: 'utf8',
    timeout: 120_000,
  });
  const at = r.stdout.lastIndexOf('\n@@');
  if (r.status !== 0 || at < 0) throw new Error(`the Electron main did not boot (exit ${r.status}):\n${r.stderr}\n${r.stdout}`);
  out = JSON.parse(r.stdout.slice(at + 3));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('Electron main process glue', () => {
  it('boots without an error box and opens our own page', () => {
    expect(out.errorBox).toBeNull();
    expect(out.url).toBe('rakeline://app/index.html');
    expect(out.schemes[0]).toMatchObject({ scheme: 'rakeline', privileges: { standard: true, secure: true } });
  });

  it('opens the window isolated and sandboxed, with the preload', () => {
    expect(out.webPreferences).toMatchObject({
      contextIsolation: true, sandbox: true, nodeIntegration: false, webSecurity: true, webviewTag: false,
    });
    expect(out.webPreferences.preload).toBe(path.join(dir, 'main', 'preload.cjs'));
    expect(existsSync(out.webPreferences.preload)).toBe(true);
  });

  it('blocks navigation away from the app, new windows, permissions and remote requests', () => {
    expect(out.nav).toEqual({ evil: true, ours: false, file: true, lookalike: true });
    expect(out.open).toEqual({ action: 'deny' });
    expect(out.permission).toBe(false);
    expect(out.permissionCheck).toBe(false);
    // file:// only for the print window (its load below went through), never for the main window
    expect(out.cancel).toEqual({ remote: true, ours: false, fileFromMain: true, fileFromNone: true });
  });

  it('serves the renderer on its scheme with the CSP header, and nothing outside it', () => {
    expect(out.index.status).toBe(200);
    expect(out.index.csp).toBe(CONTENT_SECURITY_POLICY);
    expect(out.index.type).toMatch(/^text\/html/);
    expect(out.index.body).toContain('Rakeline test');
    expect(out.traversal.status).toBe(404);
    expect(out.traversal.body).not.toContain('TOP-SECRET');
    expect(out.otherHost).toBe(404);
  });

  it('answers IPC through dispatch, validating payloads and refusing other frames', () => {
    expect(out.info.result.mode).toBe('electron');
    expect(out.info.result.dbFile).toBe(path.join(dir, 'user', 'userData', 'rakeline.sqlite'));
    expect(out.foreign.error.message).toMatch(/Rakeline window only/);
    expect(out.invalid.error.kind).toBe('validation');
    expect(out.invalid.error.message).toContain('sessionId');
    expect(out.pick.result).toEqual({ folder: path.join(dir, 'picked'), supported: true });
  });

  it('imports the bundled demo session on first run, audited under the OS user', () => {
    expect(typeof out.info.result.demoSessionId).toBe('number');
    const actors = new Set(out.audit.result.map((a: { actor: string }) => a.actor));
    expect(actors.has('browser')).toBe(false);
    expect(actors.size).toBeGreaterThan(0);
  });

  it('prints the day sheet to PDF in a hidden script-less window, asking where to save', () => {
    expect(out.pdf.result).toEqual({ path: path.join(dir, 'saved.pdf'), supported: true });
    expect(readFileSync(path.join(dir, 'saved.pdf'), 'utf8')).toMatch(/^%PDF/);
    expect(out.printer.webPreferences).toMatchObject({ javascript: false, sandbox: true, contextIsolation: true, nodeIntegration: false, devTools: false });
    expect(out.printer.fileCancelled).toBe(false);
    expect(out.printer.printed).toEqual({ pageSize: 'Letter', printBackground: true });
    expect(out.printer.destroyed).toBe(true);
    expect(out.printer.html).toMatch(/^<!doctype html>/i);
  });

  it('installs the native menu', () => {
    expect(out.menus).toBeGreaterThan(0);
    expect(out.menuLabels).toEqual(expect.arrayContaining(['File', 'editMenu', 'View', 'windowMenu']));
  });
});
