// The bridge the preload exposes as window.spinyard, built over an ipcRenderer-like object so it is
// tested without Electron. It offers exactly the host contract (SpinyardBridge of src/host/contract.ts),
// refuses any channel outside the contract (all start with "spinyard:"), and checks main's replies and
// events before the page sees them.

import {
  EVENT_CHANNELS,
  EVENT_PAYLOAD,
  INVOKE_CHANNELS,
  INVOKE_REPLY,
  SEND_CHANNELS,
  isContractChannel,
  type EventChannel,
  type HostDocument,
  type HostPlatform,
  type InvokeChannel,
  type SendChannel,
  type SpinyardBridge,
} from '../../src/host/contract.ts';

/** The part of Electron's ipcRenderer the bridge uses. */
export interface IpcLike {
  invoke(channel: string, ...args: unknown[]): Promise<unknown>;
  send(channel: string, ...args: unknown[]): void;
  on(channel: string, listener: (event: unknown, ...args: unknown[]) => void): unknown;
  removeListener(channel: string, listener: (event: unknown, ...args: unknown[]) => void): unknown;
}

export function toHostPlatform(p: string): HostPlatform {
  return p === 'darwin' || p === 'win32' || p === 'linux' ? p : 'other';
}

/** The bridge over `ipc` for a process running on `platform` (process.platform). */
export function createBridge(ipc: IpcLike, platform: string): SpinyardBridge {
  const invoke = async <T>(channel: InvokeChannel, ...args: unknown[]): Promise<T> => {
    if (!isContractChannel(channel) || !(channel in INVOKE_REPLY)) throw new Error(`refused channel ${String(channel)}`);
    const reply = await ipc.invoke(channel, ...args);
    if (!INVOKE_REPLY[channel](reply)) throw new Error(`malformed reply on ${channel}`);
    return reply as T;
  };
  const send = (channel: SendChannel, ...args: unknown[]): void => {
    if (!isContractChannel(channel)) throw new Error(`refused channel ${String(channel)}`);
    ipc.send(channel, ...args);
  };
  const listen = <T>(channel: EventChannel, handler: (payload: T) => void): (() => void) => {
    if (!isContractChannel(channel) || !(channel in EVENT_PAYLOAD)) throw new Error(`refused channel ${String(channel)}`);
    if (typeof handler !== 'function') throw new TypeError('handler must be a function');
    const wrapped = (_e: unknown, payload: unknown) => {
      if (EVENT_PAYLOAD[channel](payload)) handler(payload as T);
    };
    ipc.on(channel, wrapped);
    return () => {
      ipc.removeListener(channel, wrapped);
    };
  };

  return {
    kind: 'electron',
    platform: toHostPlatform(platform),
    initialDocument: () => invoke(INVOKE_CHANNELS.initialDocument),
    openDocument: () => invoke(INVOKE_CHANNELS.openDocument),
    saveDocument: (req) => invoke(INVOKE_CHANNELS.saveDocument, req),
    newWindow: () => invoke(INVOKE_CHANNELS.newWindow),
    listSamples: () => invoke(INVOKE_CHANNELS.listSamples),
    readSample: (name) => invoke(INVOKE_CHANNELS.readSample, name),
    autosave: (key, text, name) => invoke(INVOKE_CHANNELS.autosave, ...(name === undefined ? [key, text] : [key, text, name])),
    loadAutosave: () => invoke(INVOKE_CHANNELS.loadAutosave),
    clearAutosave: (key) => invoke(INVOKE_CHANNELS.clearAutosave, key),
    recentDocuments: () => invoke(INVOKE_CHANNELS.recentDocuments),
    openRecent: (id) => invoke(INVOKE_CHANNELS.openRecent, id),
    setDirty: (dirty) => send(SEND_CHANNELS.setDirty, dirty === true),
    setTitle: (title) => send(SEND_CHANNELS.setTitle, String(title)),
    printSheet: (html) => invoke(INVOKE_CHANNELS.printSheet, html),
    exportPdf: (html, name) => invoke(INVOKE_CHANNELS.exportPdf, html, name),
    saveTextFile: (req) => invoke(INVOKE_CHANNELS.saveTextFile, req),
    onMenuCommand: (handler) => listen<string>(EVENT_CHANNELS.menuCommand, handler),
    onOpenDocument: (handler) => listen<HostDocument>(EVENT_CHANNELS.openDocument, handler),
  };
}
