import { describe, expect, it } from 'vitest';
import type { HostDocument, SpinyardBridge } from '../../src/host/contract.ts';
import { getHost, hostFromBridge } from '../../src/host/index.ts';

function fakeBridge() {
  const menu = new Set<(id: string) => void>();
  const docs = new Set<(d: HostDocument) => void>();
  const calls: string[] = [];
  const bridge = {
    kind: 'electron',
    platform: 'linux',
    onMenuCommand: (h: (id: string) => void) => {
      menu.add(h);
      return () => void menu.delete(h);
    },
    onOpenDocument: (h: (d: HostDocument) => void) => {
      docs.add(h);
      return () => void docs.delete(h);
    },
    saveDocument: async (req: unknown) => {
      calls.push(`save ${JSON.stringify(req)}`);
      return { name: 'a.spinyard', path: '/a.spinyard' };
    },
    saveTextFile: async (req: unknown) => {
      calls.push(`text ${JSON.stringify(req)}`);
      return { name: 'a-ports.csv', path: '/a-ports.csv' };
    },
  } as unknown as SpinyardBridge;
  return { bridge, menu, docs, calls };
}

describe('hostFromBridge', () => {
  it('forwards calls to the bridge', async () => {
    const f = fakeBridge();
    const host = hostFromBridge(f.bridge);
    expect(host.kind).toBe('electron');
    expect(await host.saveDocument({ name: 'a.spinyard', text: 'x' })).toEqual({ name: 'a.spinyard', path: '/a.spinyard' });
    expect(await host.saveTextFile({ name: 'a-ports.csv', text: 'y' })).toEqual({ name: 'a-ports.csv', path: '/a-ports.csv' });
    expect(f.calls).toEqual(['save {"name":"a.spinyard","text":"x"}', 'text {"name":"a-ports.csv","text":"y"}']);
  });

  it('unsubscribes menu handlers when the signal aborts', () => {
    const f = fakeBridge();
    const host = hostFromBridge(f.bridge);
    const got: string[] = [];
    const ac = new AbortController();
    host.onMenuCommand((id) => got.push(id), ac.signal);
    for (const h of f.menu) h('file.save');
    ac.abort();
    expect(f.menu.size).toBe(0);
    expect(got).toEqual(['file.save']);
  });

  it('does not subscribe with an aborted signal, and the returned function unsubscribes', () => {
    const f = fakeBridge();
    const host = hostFromBridge(f.bridge);
    const ac = new AbortController();
    ac.abort();
    host.onOpenDocument(() => {}, ac.signal);
    expect(f.docs.size).toBe(0);
    const off = host.onOpenDocument(() => {});
    expect(f.docs.size).toBe(1);
    off();
    off();
    expect(f.docs.size).toBe(0);
  });
});

describe('getHost', () => {
  it('gives the browser host where no bridge is exposed (Node: no window)', () => {
    const host = getHost();
    expect(host.kind).toBe('browser');
    expect(getHost()).toBe(host);
  });
});
