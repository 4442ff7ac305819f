// Electron main process: one window, the renderer served from our own privileged scheme
// (rakeline://app/, with the strict CSP as a response header), IPC → main/handlers.ts, the native
// menu, folder dialogs and the day sheet printed to PDF. All logic lives in handlers.ts; this file
// is glue. Security: contextIsolation + sandbox, no Node in the renderer, no remote content,
// navigation and new windows blocked, every permission request denied.
import { app, BrowserWindow, dialog, ipcMain, protocol, session, type WebContents } from 'electron';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Store } from './store';
import { setImportWorkerScript } from './importPool';
import {
  createHandlers, dispatch, disposeHandlers, ensureDemoSession, osActor, progressEmitter,
  type Emit, type Handlers, type Paper,
} from './handlers';
import { repairOnStart } from './repair';
import { isOurs, mainWindowPreferences, ORIGIN, printWindowPreferences, requestAllowed, SCHEME } from './windowOptions';
import { installMenu, type MenuCommand } from './menu';
import { MIME, SECURITY_HEADERS, resolveStatic } from './static';

const APP_URL = `${ORIGIN}/index.html`;
/** A development build (npm start from the sources): DevTools allowed. Never in a packaged app. */
const DEV = !app.isPackaged;
/** webContents ids of the print windows: the only ones allowed to load file:// URLs. */
const printWindows = new Set<number>();

protocol.registerSchemesAsPrivileged([
  { scheme: SCHEME, privileges: { standard: true, secure: true, supportFetchAPI: true, corsEnabled: true, stream: true, codeCache: true } },
]);

const rendererDir = path.join(__dirname, '..', 'renderer');
const preloadFile = path.join(__dirname, 'preload.cjs');
// Import worker threads run the bundled dist/main/importWorker.cjs (esbuild entry in scripts/build.mjs).
setImportWorkerScript(path.join(__dirname, 'importWorker.cjs').replace(/app\.asar([\\/])/, 'app.asar.unpacked$1'));
const demoFolder = app.isPackaged
  ? path.join(process.resourcesPath, 'demo-session')
  : path.join(app.getAppPath(), 'resources', 'demo', 'session');

let win: BrowserWindow | null = null;
let store: Store | null = null;
let handlers: Handlers | null = null;

function lockDown(contents: WebContents): void {
  contents.on('will-navigate', (e, url) => {
    if (!isOurs(url)) e.preventDefault();
  });
  contents.on('will-redirect', (e, url) => {
    if (!isOurs(url)) e.preventDefault();
  });
  contents.on('will-attach-webview', (e) => e.preventDefault());
  contents.setWindowOpenHandler(() => ({ action: 'deny' }));
}

async function serveAppFile(request: Request): Promise<Response> {
  const url = new URL(request.url);
  if (url.host !== 'app') return new Response('Not found.', { status: 404 });
  const file = await resolveStatic(rendererDir, url.pathname);
  if (!file) return new Response('Not found.', { status: 404, headers: SECURITY_HEADERS });
  const body = await readFile(file);
  return new Response(body, {
    status: 200,
    headers: { ...SECURITY_HEADERS, 'Content-Type': MIME[path.extname(file).toLowerCase()] ?? 'application/octet-stream' },
  });
}

async function pickFolder(purpose?: 'import' | 'watch'): Promise<string | null> {
  const opts: Electron.OpenDialogOptions = {
    title: purpose === 'watch' ? 'Choose the folder to watch for new runs' : 'Choose a session folder',
    properties: ['openDirectory'],
  };
  const r = win ? await dialog.showOpenDialog(win, opts) : await dialog.showOpenDialog(opts);
  return r.canceled || r.filePaths.length === 0 ? null : r.filePaths[0];
}

async function printPdf(html: string, paper: Paper, target?: string, suggestedName?: string): Promise<string | null> {
  let out = target;
  if (!out) {
    const opts: Electron.SaveDialogOptions = {
      title: 'Save the day sheet as PDF',
      defaultPath: path.join(app.getPath('documents'), suggestedName ?? 'day-sheet.pdf'),
      filters: [{ name: 'PDF', extensions: ['pdf'] }],
    };
    const r = win ? await dialog.showSaveDialog(win, opts) : await dialog.showSaveDialog(opts);
    if (r.canceled || !r.filePath) return null;
    out = r.filePath;
  }
  const dir = await mkdtemp(path.join(tmpdir(), 'rakeline-sheet-'));
  const htmlFile = path.join(dir, 'day-sheet.html');
  const printer = new BrowserWindow({ show: false, webPreferences: printWindowPreferences() });
  const printerId = printer.webContents.id;
  printWindows.add(printerId);
  try {
    await writeFile(htmlFile, html, 'utf8');
    await printer.loadFile(htmlFile);
    const pdf = await printer.webContents.printToPDF({ pageSize: paper, printBackground: true });
    await writeFile(out, pdf);
    return out;
  } finally {
    printWindows.delete(printerId);
    printer.destroy();
    await rm(dir, { recursive: true, force: true });
  }
}

/** Save an exported plot where the user says (a real save dialog); null when cancelled. */
async function saveFile(suggestedName: string, kind: 'svg' | 'png', bytes: Buffer): Promise<string | null> {
  const opts: Electron.SaveDialogOptions = {
    title: kind === 'svg' ? 'Save the plot as SVG' : 'Save the plot as PNG',
    defaultPath: path.join(app.getPath('documents'), suggestedName),
    filters: [kind === 'svg' ? { name: 'SVG image', extensions: ['svg'] } : { name: 'PNG image', extensions: ['png'] }],
  };
  const r = win ? await dialog.showSaveDialog(win, opts) : await dialog.showSaveDialog(opts);
  if (r.canceled || !r.filePath) return null;
  await writeFile(r.filePath, bytes);
  return r.filePath;
}

const emit: Emit = (event, data) => {
  if (win && !win.isDestroyed()) win.webContents.send(`${SCHEME}:event:${event}`, data);
};

async function refreshMenu(): Promise<void> {
  if (!store || !handlers) return;
  const status = await handlers['watch.status']({});
  installMenu({
    send: (command: MenuCommand, arg?: string) => emit('menu', arg === undefined ? { command } : { command, arg }),
    recent: store.listSessions(),
    watching: status.watching,
    watchFolder: status.folder,
    isMac: process.platform === 'darwin',
    appName: app.name,
    devTools: DEV,
  });
}

function createWindow(): void {
  win = new BrowserWindow({
    width: 1440,
    height: 920,
    minWidth: 960,
    minHeight: 600,
    show: false,
    title: 'Rakeline',
    backgroundColor: '#f4f6f8',
    webPreferences: mainWindowPreferences(preloadFile, DEV),
  });
  win.once('ready-to-show', () => win?.show());
  win.on('closed', () => {
    win = null;
  });
  void win.loadURL(APP_URL);
}

async function boot(): Promise<void> {
  await app.whenReady();
  const ses = session.defaultSession;
  ses.setPermissionRequestHandler((_wc, _permission, callback) => callback(false));
  ses.setPermissionCheckHandler(() => false);
  ses.webRequest.onBeforeRequest((details, callback) => {
    // No remote content: our scheme everywhere, file:// for the print window only, devtools://
    // in a development build only (main/windowOptions.ts).
    const fromPrintWindow = details.webContentsId !== undefined && printWindows.has(details.webContentsId);
    callback({ cancel: !requestAllowed(details.url, { fromPrintWindow, dev: DEV }) });
  });
  protocol.handle(SCHEME, serveAppFile);

  store = Store.open(path.join(app.getPath('userData'), 'rakeline.sqlite'));
  const actor = osActor();
  let demoSessionId: number | null = null;
  try {
    demoSessionId = await ensureDemoSession(store, demoFolder, { actor, onProgress: progressEmitter(emit, 'demo') });
  } catch (e) {
    console.error('rakeline: could not import the demo session:', e);
  }
  await repairOnStart(store, actor);
  handlers = createHandlers({
    store, mode: 'electron', emit, demoSessionId, actor, pickFolder, printPdf, saveFile,
    onChange: () => void refreshMenu(),
  });

  ipcMain.handle(`${SCHEME}:call`, (event, channel: unknown, payload: unknown) => {
    const from = event.senderFrame?.url ?? '';
    if (!isOurs(from) || !handlers) {
      return { error: { kind: 'validation', message: 'Calls are accepted from the Rakeline window only.' } };
    }
    return dispatch(handlers, String(channel), payload);
  });

  await refreshMenu();
  createWindow();
  app.on('activate', () => {
    if (BrowserWindow.getAllWindows().length === 0) createWindow();
  });
}

if (!app.requestSingleInstanceLock()) {
  app.quit();
} else {
  app.on('second-instance', () => {
    if (win) {
      if (win.isMinimized()) win.restore();
      win.focus();
    }
  });
  app.on('web-contents-created', (_e, contents) => lockDown(contents));
  app.on('window-all-closed', () => {
    if (process.platform !== 'darwin') app.quit();
  });
  let quitting = false;
  app.on('before-quit', (e) => {
    if (quitting || !handlers) return;
    e.preventDefault();
    quitting = true;
    void disposeHandlers(handlers).finally(() => {
      store?.close();
      store = null;
      handlers = null;
      app.quit();
    });
  });
  boot().catch((e: unknown) => {
    dialog.showErrorBox('Rakeline could not start', e instanceof Error ? e.message : String(e));
    app.exit(1);
  });
}
