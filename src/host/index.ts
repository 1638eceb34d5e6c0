// The renderer's entry to its host: getHost() gives the Electron bridge when the preload exposed one,
// else the browser host.

import './global.d.ts';
import { createBrowserHost } from './browser.ts';
import type { Host, HostDocument, SpinyardBridge } from './contract.ts';

export * from './contract.ts';
export { commandForKey, acceleratorMatches } from './accelerator.ts';

/** Subscribes through `subscribe` and unsubscribes when `signal` aborts (or at once if it already has). */
function withSignal<T>(subscribe: (h: (x: T) => void) => () => void, handler: (x: T) => void, signal?: AbortSignal): () => void {
  if (signal?.aborted) return () => {};
  const off = subscribe(handler);
  let done = false;
  const stop = () => {
    if (done) return;
    done = true;
    signal?.removeEventListener('abort', stop);
    off();
  };
  signal?.addEventListener('abort', stop, { once: true });
  return stop;
}

/** The Host over the preload's bridge: the same methods, with AbortSignal support added on this side of
 *  the context bridge (a signal does not survive being copied across it). */
export function hostFromBridge(bridge: SpinyardBridge): Host {
  return {
    kind: bridge.kind,
    platform: bridge.platform,
    initialDocument: () => bridge.initialDocument(),
    openDocument: () => bridge.openDocument(),
    saveDocument: (req) => bridge.saveDocument(req),
    newWindow: () => bridge.newWindow(),
    listSamples: () => bridge.listSamples(),
    readSample: (name) => bridge.readSample(name),
    autosave: (key, text, name) => bridge.autosave(key, text, name),
    loadAutosave: () => bridge.loadAutosave(),
    clearAutosave: (key) => bridge.clearAutosave(key),
    recentDocuments: () => bridge.recentDocuments(),
    openRecent: (id) => bridge.openRecent(id),
    setDirty: (dirty) => bridge.setDirty(dirty),
    setTitle: (title) => bridge.setTitle(title),
    printSheet: (html) => bridge.printSheet(html),
    exportPdf: (html, name) => bridge.exportPdf(html, name),
    saveTextFile: (req) => bridge.saveTextFile(req),
    onMenuCommand: (handler, signal) => withSignal<string>((h) => bridge.onMenuCommand(h), handler, signal),
    onOpenDocument: (handler, signal) => withSignal<HostDocument>((h) => bridge.onOpenDocument(h), handler, signal),
  };
}

let cached: Host | undefined;

/** The host of this page: Electron's bridge when present, else the browser host (created once). */
export function getHost(): Host {
  if (cached) return cached;
  const bridge = typeof window !== 'undefined' ? window.spinyard : undefined;
  cached = bridge ? hostFromBridge(bridge) : createBrowserHost();
  return cached;
}
