// Electron preload (sandboxed): exposes exactly { call, on } as window.rakeline, nothing else.
// call answers with the envelope { result } | { error } (errors thrown across the context bridge
// lose their fields); renderer/bridge.ts turns it into the typed RakelineApi.
import { contextBridge, ipcRenderer, type IpcRendererEvent } from 'electron';

const EVENTS = new Set(['progress', 'watch.run', 'menu']);

contextBridge.exposeInMainWorld('rakeline', {
  call(channel: string, payload: unknown): Promise<unknown> {
    return ipcRenderer.invoke('rakeline:call', String(channel), payload);
  },
  on(event: string, listener: (data: unknown) => void): () => void {
    const name = String(event);
    if (!EVENTS.has(name) || typeof listener !== 'function') return () => undefined;
    const wrapped = (_e: IpcRendererEvent, data: unknown) => listener(data);
    ipcRenderer.on(`rakeline:event:${name}`, wrapped);
    return () => {
      ipcRenderer.removeListener(`rakeline:event:${name}`, wrapped);
    };
  },
});
