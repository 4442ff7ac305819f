// The desktop windows' options and the rule for which requests they may make, kept apart from
// Electron (no `electron` import) so that a test can read them: main/electron.ts builds its windows
// and its request filter from these, nothing else.
//  - The main window: context isolation, sandbox, no Node, web security on, no webviews; DevTools
//    only in a development build (never in a packaged one).
//  - The print window (day sheet → PDF) loads one local HTML file with JavaScript off.
//  - Requests: our own scheme, data: and blob: for every window; file:// only for the print window;
//    devtools:// only in a development build. Nothing remote.

export const SCHEME = 'rakeline';
export const ORIGIN = `${SCHEME}://app`;

export function isOurs(url: string): boolean {
  return url === ORIGIN || url.startsWith(`${ORIGIN}/`);
}

export interface WebPrefs {
  preload?: string;
  contextIsolation: true;
  sandbox: true;
  nodeIntegration: false;
  nodeIntegrationInWorker: false;
  webSecurity: true;
  allowRunningInsecureContent: false;
  webviewTag: false;
  spellcheck: false;
  devTools: boolean;
  javascript?: boolean;
}

/** What every window has: isolated, sandboxed, no Node, web security on, no webviews. */
const LOCKED = {
  contextIsolation: true,
  sandbox: true,
  nodeIntegration: false,
  nodeIntegrationInWorker: false,
  webSecurity: true,
  allowRunningInsecureContent: false,
  webviewTag: false,
  spellcheck: false,
} as const;

/** webPreferences of the main window; `dev`: a development build (not app.isPackaged). */
export function mainWindowPreferences(preload: string, dev: boolean): WebPrefs {
  return { preload, ...LOCKED, devTools: dev };
}

/** webPreferences of the hidden window that prints the day sheet: no script, no DevTools. */
export function printWindowPreferences(): WebPrefs {
  return { javascript: false, ...LOCKED, devTools: false };
}

/** Whether a request may go out: `fromPrintWindow` when the print window makes it. */
export function requestAllowed(url: string, opts: { fromPrintWindow: boolean; dev: boolean }): boolean {
  if (isOurs(url) || url.startsWith('data:') || url.startsWith('blob:')) return true;
  if (url.startsWith('file://')) return opts.fromPrintWindow;
  if (url.startsWith('devtools://')) return opts.dev;
  return false;
}
