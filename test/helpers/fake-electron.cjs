// A stand-in for the `electron` module, preloaded with `node -r` so the bundled main process
// (dist/main/electron.cjs) can boot in plain Node for tests. It records what the app asks of
// Electron; test/handlers-electron.test.ts drives it through globalThis.__fakeElectron.
'use strict';
const Module = require('node:module');
const { EventEmitter } = require('node:events');
const path = require('node:path');

const root = process.env.FAKE_ELECTRON_ROOT;
const rec = {
  schemes: [], protocolHandlers: {}, ipc: {}, windows: [], menus: 0, permissionRequest: null, permissionCheck: null,
  beforeRequest: null, appListeners: {}, openDialogs: [], saveDialogs: [],
};
const app = new EventEmitter();
Object.assign(app, {
  isPackaged: false,
  name: 'Rakeline',
  getAppPath: () => root,
  getPath: (name) => path.join(root, 'user', name),
  whenReady: () => Promise.resolve(),
  requestSingleInstanceLock: () => true,
  quit: () => { rec.quit = true; },
  exit: (code) => { rec.exit = code; },
});

let nextWebContentsId = 1;
class WebContents extends EventEmitter {
  constructor() {
    super();
    this.id = nextWebContentsId++;
    this.sent = [];
    this.windowOpenHandler = null;
  }
  send(channel, data) { this.sent.push({ channel, data }); }
  setWindowOpenHandler(fn) { this.windowOpenHandler = fn; }
  async printToPDF(opts) { this.printed = opts; return Buffer.from('%PDF-1.7 fake'); }
}

class BrowserWindow extends EventEmitter {
  constructor(opts) {
    super();
    this.opts = opts;
    this.webContents = new WebContents();
    this.destroyed = false;
    rec.windows.push(this);
    app.emit('web-contents-created', {}, this.webContents);
  }
  static getAllWindows() { return rec.windows.filter((w) => !w.destroyed); }
  async loadURL(url) { this.url = url; }
  async loadFile(file) {
    // The request Electron would make, through the app's filter (file:// only for print windows).
    const url = require('node:url').pathToFileURL(file).href;
    this.fileCancelled = rec.beforeRequest ? await new Promise((r) => rec.beforeRequest({ url, webContentsId: this.webContents.id }, (res) => r(res.cancel))) : null;
    if (this.fileCancelled) throw new Error(`ERR_BLOCKED_BY_CLIENT (${url})`);
    this.file = file;
    this.fileText = require('node:fs').readFileSync(file, 'utf8');
  }
  show() { this.shown = true; }
  isDestroyed() { return this.destroyed; }
  destroy() { this.destroyed = true; }
  isMinimized() { return false; }
  restore() {}
  focus() {}
}

const fake = {
  app,
  BrowserWindow,
  protocol: {
    registerSchemesAsPrivileged: (list) => rec.schemes.push(...list),
    handle: (scheme, fn) => { rec.protocolHandlers[scheme] = fn; },
  },
  ipcMain: { handle: (name, fn) => { rec.ipc[name] = fn; } },
  dialog: {
    showOpenDialog: async (...a) => { rec.openDialogs.push(a); return { canceled: false, filePaths: [path.join(root, 'picked')] }; },
    showSaveDialog: async (...a) => { rec.saveDialogs.push(a); return { canceled: false, filePath: path.join(root, 'saved.pdf') }; },
    showErrorBox: (title, msg) => { rec.errorBox = `${title}: ${msg}`; },
  },
  session: {
    defaultSession: {
      setPermissionRequestHandler: (fn) => { rec.permissionRequest = fn; },
      setPermissionCheckHandler: (fn) => { rec.permissionCheck = fn; },
      webRequest: { onBeforeRequest: (fn) => { rec.beforeRequest = fn; } },
    },
  },
  Menu: {
    buildFromTemplate: (t) => ({ template: t }),
    setApplicationMenu: (m) => { rec.menus += 1; rec.menu = m; },
  },
};
globalThis.__fakeElectron = rec;

const load = Module._load;
Module._load = function (request, parent, isMain) {
  if (request === 'electron') return fake;
  return load.call(this, request, parent, isMain);
};
