// The native menu. Every Rakeline item only sends a 'menu' event to the renderer, which does the
// work through the contract like any button would; Edit/View/Window use Electron's roles.
import { Menu, type MenuItemConstructorOptions } from 'electron';
import type { Events, SessionRowLike } from './contract';

export type MenuCommand = Events['menu']['command'];

export interface MenuState {
  send: (command: MenuCommand, arg?: string) => void;
  recent: SessionRowLike[];
  watching: boolean;
  watchFolder: string | null;
  isMac: boolean;
  appName: string;
  /** A development build: the View menu offers DevTools (never in a packaged app). */
  devTools?: boolean;
}

/** The menu template (no Electron calls: testable with a mocked electron module). */
export function menuTemplate(s: MenuState): MenuItemConstructorOptions[] {
  const recent = [...s.recent]
    .sort((a, b) => b.importedAt.localeCompare(a.importedAt))
    .slice(0, 10)
    .map((r): MenuItemConstructorOptions => ({
      label: `${r.title} — ${r.date}`,
      click: () => s.send('open-recent', String(r.id)),
    }));
  const file: MenuItemConstructorOptions = {
    label: 'File',
    submenu: [
      { label: 'Open Session Folder…', accelerator: 'CmdOrCtrl+O', click: () => s.send('open-folder') },
      { label: 'Recent Sessions', submenu: recent.length ? recent : [{ label: 'No sessions yet', enabled: false }] },
      { label: 'Import Runs…', accelerator: 'CmdOrCtrl+I', click: () => s.send('import') },
      { type: 'separator' },
      {
        label: s.watching && s.watchFolder ? `Watch Folder (${s.watchFolder})` : 'Watch Folder',
        type: 'checkbox',
        checked: s.watching,
        accelerator: 'CmdOrCtrl+Shift+W',
        click: () => s.send('toggle-watch'),
      },
      { type: 'separator' },
      { label: 'Print Day Sheet…', accelerator: 'CmdOrCtrl+P', click: () => s.send('print-sheet') },
      { label: 'Export Results as CSV…', accelerator: 'CmdOrCtrl+E', click: () => s.send('export-csv') },
      { label: 'Export Results as JSON…', accelerator: 'CmdOrCtrl+Shift+E', click: () => s.send('export-json') },
      { type: 'separator' },
      s.isMac ? { role: 'close' } : { role: 'quit' },
    ],
  };
  const template: MenuItemConstructorOptions[] = [];
  if (s.isMac) {
    template.push({
      label: s.appName,
      submenu: [
        { role: 'about' }, { type: 'separator' }, { role: 'hide' }, { role: 'hideOthers' }, { role: 'unhide' },
        { type: 'separator' }, { role: 'quit' },
      ],
    });
  }
  template.push(
    file,
    { role: 'editMenu' },
    {
      label: 'View',
      submenu: [
        { role: 'reload' }, ...(s.devTools ? [{ role: 'toggleDevTools' } as const] : []), { type: 'separator' },
        { role: 'resetZoom' }, { role: 'zoomIn' }, { role: 'zoomOut' }, { type: 'separator' }, { role: 'togglefullscreen' },
      ],
    },
    { role: 'windowMenu' },
  );
  return template;
}

/** Build and install the application menu. Call again when the recent list or watch state changes. */
export function installMenu(s: MenuState): void {
  Menu.setApplicationMenu(Menu.buildFromTemplate(menuTemplate(s)));
}
