// Issue 12, failure 10: the packaging config and the window options, read without Electron.
// - electron-builder.yml flips the fuses (run-as-node off, NODE_OPTIONS off, inspect off, asar
//   integrity on, the app only from app.asar) — electron-builder's `electronFuses` option.
// - DevTools only in a development build: the window's webPreferences and the View menu.
// - file:// only for the print window; devtools:// only in development; nothing remote.
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { mainWindowPreferences, printWindowPreferences, requestAllowed } from '../main/windowOptions';

// electron-builder's own YAML reader (js-yaml, installed with it).
const { load } = createRequire(import.meta.url)('js-yaml') as { load: (text: string) => unknown };

describe('packaging config (electron-builder.yml)', () => {
  const cfg = load(readFileSync(new URL('../electron-builder.yml', import.meta.url), 'utf8')) as Record<string, unknown>;
  it('sets the fuses', () => {
    expect(cfg.asar).toBe(true);
    expect(cfg.electronFuses).toMatchObject({
      runAsNode: false,
      enableNodeOptionsEnvironmentVariable: false,
      enableNodeCliInspectArguments: false,
      enableEmbeddedAsarIntegrityValidation: true,
      onlyLoadAppFromAsar: true,
      grantFileProtocolExtraPrivileges: false,
    });
  });
});

describe('window options', () => {
  it('main window: isolated, sandboxed, no Node; DevTools only in development', () => {
    const packaged = mainWindowPreferences('/x/preload.cjs', false);
    expect(packaged).toMatchObject({ contextIsolation: true, sandbox: true, nodeIntegration: false, nodeIntegrationInWorker: false, webSecurity: true, webviewTag: false, devTools: false });
    expect(mainWindowPreferences('/x/preload.cjs', true).devTools).toBe(true);
    expect(printWindowPreferences()).toMatchObject({ javascript: false, sandbox: true, devTools: false, nodeIntegration: false });
  });

  it('requests: file:// for the print window only, devtools:// in development only, nothing remote', () => {
    const main = { fromPrintWindow: false, dev: false };
    const print = { fromPrintWindow: true, dev: false };
    expect(requestAllowed('rakeline://app/index.html', main)).toBe(true);
    expect(requestAllowed('rakeline://app.evil/x', main)).toBe(false);
    expect(requestAllowed('file:///etc/passwd', main)).toBe(false);
    expect(requestAllowed('file:///tmp/rakeline-sheet-1/day-sheet.html', print)).toBe(true);
    expect(requestAllowed('devtools://devtools/bundled/inspector.html', main)).toBe(false);
    expect(requestAllowed('devtools://devtools/bundled/inspector.html', { fromPrintWindow: false, dev: true })).toBe(true);
    expect(requestAllowed('https://cdn.example/x.js', print)).toBe(false);
    expect(requestAllowed('data:image/png;base64,AAAA', main)).toBe(true);
  });
});
