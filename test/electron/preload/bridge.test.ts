import { describe, expect, it } from 'vitest';
import { EVENT_CHANNELS, INVOKE_CHANNELS, SEND_CHANNELS, type Host } from '../../../src/host/contract.ts';
import { createBridge, type IpcLike } from '../../../electron/preload/bridge.ts';

function fakeIpc(reply: (channel: string, args: unknown[]) => unknown = () => null) {
  const invoked: [string, unknown[]][] = [];
  const sent: [string, unknown[]][] = [];
  const listeners = new Map<string, Set<(e: unknown, ...a: unknown[]) => void>>();
  const ipc: IpcLike = {
    invoke: async (channel, ...args) => {
      invoked.push([channel, args]);
      return reply(channel, args);
    },
    send: (channel, ...args) => void sent.push([channel, args]),
    on: (channel, l) => {
      if (!listeners.has(channel)) listeners.set(channel, new Set());
      listeners.get(channel)!.add(l);
    },
    removeListener: (channel, l) => void listeners.get(channel)?.delete(l),
  };
  const emit = (channel: string, payload: unknown) => listeners.get(channel)?.forEach((l) => l({}, payload));
  return { ipc, invoked, sent, listeners, emit };
}

// The Host members, listed by hand: the bridge must expose these and nothing else.
const HOST_KEYS: (keyof Host)[] = [
  'kind', 'platform', 'initialDocument', 'openDocument', 'saveDocument', 'newWindow', 'listSamples', 'readSample', 'autosave',
  'loadAutosave', 'clearAutosave', 'recentDocuments', 'openRecent', 'setDirty', 'setTitle', 'printSheet', 'exportPdf',
  'saveTextFile', 'onMenuCommand', 'onOpenDocument',
];

describe('createBridge', () => {
  it('exposes exactly the host contract', () => {
    const b = createBridge(fakeIpc().ipc, 'linux');
    expect(Object.keys(b).sort()).toEqual([...HOST_KEYS].sort());
    expect(b.kind).toBe('electron');
    expect(b.platform).toBe('linux');
    expect(createBridge(fakeIpc().ipc, 'freebsd').platform).toBe('other');
  });

  it('invokes the contract channels only', async () => {
    const f = fakeIpc((ch) => (ch === INVOKE_CHANNELS.saveDocument ? { name: 'a.spinyard', path: '/lab/a.spinyard' } : ch === INVOKE_CHANNELS.listSamples ? [] : null));
    const b = createBridge(f.ipc, 'linux');
    await b.saveDocument({ name: 'a.spinyard', text: '{}' });
    await b.listSamples();
    await b.autosave('k1', 'x');
    b.setDirty(true);
    b.setTitle('Bench B');
    for (const [ch] of [...f.invoked, ...f.sent]) expect(ch.startsWith('spinyard:')).toBe(true);
    expect(f.invoked[2]).toEqual([INVOKE_CHANNELS.autosave, ['k1', 'x']]);
    expect(f.sent).toEqual([
      [SEND_CHANNELS.setDirty, [true]],
      [SEND_CHANNELS.setTitle, ['Bench B']],
    ]);
  });

  it('saves a text export through its own channel and checks the reply', async () => {
    const f = fakeIpc((ch) => (ch === INVOKE_CHANNELS.saveTextFile ? { name: 'a-ports.csv', path: '/lab/a-ports.csv' } : null));
    const b = createBridge(f.ipc, 'linux');
    expect(await b.saveTextFile({ name: 'a-ports.csv', text: 'a,b\r\n' })).toEqual({ name: 'a-ports.csv', path: '/lab/a-ports.csv' });
    expect(f.invoked).toEqual([[INVOKE_CHANNELS.saveTextFile, [{ name: 'a-ports.csv', text: 'a,b\r\n' }]]]);
    const cancelled = createBridge(fakeIpc(() => null).ipc, 'linux');
    expect(await cancelled.saveTextFile({ name: 'a-ports.csv', text: '' })).toBeNull();
    const bad = createBridge(fakeIpc(() => ({ name: '../a.csv', path: 'relative' })).ipc, 'linux');
    await expect(bad.saveTextFile({ name: 'a-ports.csv', text: '' })).rejects.toThrow(/malformed reply on spinyard:save-text-file/);
  });

  it('rejects a malformed reply from main', async () => {
    const b = createBridge(fakeIpc(() => ({ name: '../x', text: 5 })).ipc, 'linux');
    await expect(b.openDocument()).rejects.toThrow(/malformed reply on spinyard:open-document/);
  });

  it('passes checked events on and drops malformed ones; unsubscribe removes the listener', () => {
    const f = fakeIpc();
    const b = createBridge(f.ipc, 'linux');
    const got: string[] = [];
    const off = b.onMenuCommand((id) => got.push(id));
    f.emit(EVENT_CHANNELS.menuCommand, 'file.save');
    f.emit(EVENT_CHANNELS.menuCommand, 'rm -rf');
    f.emit(EVENT_CHANNELS.menuCommand, { id: 'file.save' });
    expect(got).toEqual(['file.save']);
    off();
    expect(f.listeners.get(EVENT_CHANNELS.menuCommand)!.size).toBe(0);
  });

  it('refuses a non-function handler', () => {
    const b = createBridge(fakeIpc().ipc, 'linux');
    expect(() => b.onOpenDocument('x' as unknown as () => void)).toThrow(TypeError);
  });
});
