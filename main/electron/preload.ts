/**
 * The preload: puts the bridge, and only the bridge, on `window.rateline` through
 * contextBridge. The page gets two functions, never ipcRenderer itself. Runs sandboxed,
 * so it is bundled into one file (dist/electron/preload.cjs) with nothing but electron.
 *
 * Events that arrive before the page subscribes (the catch-up sent at load) are held
 * and handed to the first subscriber, capped so a page that never subscribes cannot
 * make the preload grow without end.
 */
import { contextBridge, ipcRenderer, type IpcRendererEvent } from 'electron';
import { CHANNELS } from '../bridge/channels';

const MAX_HELD_EVENTS = 2000;
const held: unknown[] = [];
const listeners = new Set<(event: unknown) => void>();

ipcRenderer.on(CHANNELS.event, (_e: IpcRendererEvent, event: unknown) => {
  if (listeners.size === 0) {
    if (held.length < MAX_HELD_EVENTS) held.push(event);
    return;
  }
  for (const l of listeners) l(event);
});

contextBridge.exposeInMainWorld('rateline', {
  request: (request: unknown): Promise<unknown> => ipcRenderer.invoke(CHANNELS.request, request),
  onEvent: (listener: (event: unknown) => void): (() => void) => {
    if (typeof listener !== 'function') throw new TypeError('onEvent needs a function');
    listeners.add(listener);
    if (listeners.size === 1) for (const e of held.splice(0)) listener(e);
    return () => { listeners.delete(listener); };
  },
});
