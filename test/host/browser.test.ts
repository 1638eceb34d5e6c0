import { describe, expect, it } from 'vitest';
import { createBrowserHost, indexedDbDraftStore, memoryDraftStore, platformFromUserAgent, type BrowserHostDeps, type StorageLike } from '../../src/host/browser.ts';

function fakeStorage(): StorageLike & { map: Map<string, string> } {
  const map = new Map<string, string>();
  return { map, getItem: (k) => map.get(k) ?? null, setItem: (k, v) => void map.set(k, v), removeItem: (k) => void map.delete(k) };
}

function setup(over: Partial<BrowserHostDeps> = {}) {
  const storage = over.storage ?? fakeStorage();
  const drafts = over.drafts ?? memoryDraftStore();
  const downloads: { name: string; text: string; mime: string }[] = [];
  const titles: string[] = [];
  let clock = over.now ? over.now() : 1_000_000;
  const unload: { before?: (e: { preventDefault(): void; returnValue?: unknown }) => void; hide?: () => void } = {};
  const deps: BrowserHostDeps = {
    storage,
    drafts,
    now: () => clock,
    platform: 'linux',
    baseUrl: 'http://127.0.0.1:5178/app/',
    download: (name, text, mime) => downloads.push({ name, text, mime }),
    setTitle: (t) => titles.push(t),
    lifecycle: { onBeforeUnload: (h) => (unload.before = h), onPageHide: (h) => (unload.hide = h) },
    heartbeatMs: 0,
    ...over,
  };
  const host = createBrowserHost(deps);
  return { host, storage, drafts, downloads, titles, unload, tick: (ms: number) => (clock += ms) };
}

const file = (name: string, text: string) => ({ name, size: text.length, text: async () => text });

describe('createBrowserHost', () => {
  it('is a browser host with one window', async () => {
    const { host } = setup();
    expect(host.kind).toBe('browser');
    expect(await host.newWindow()).toBe(false);
    expect(await host.initialDocument()).toBeNull();
  });

  it('opens a picked file and lists it as recent; a cancelled pick gives null', async () => {
    let next: ReturnType<typeof file> | null = file('bench-b.spinyard', '{"title":"B"}');
    const { host } = setup({ pickFile: async () => next });
    expect(await host.openDocument()).toEqual({ name: 'bench-b.spinyard', text: '{"title":"B"}' });
    expect((await host.recentDocuments()).map((r) => r.name)).toEqual(['bench-b.spinyard']);
    next = null;
    expect(await host.openDocument()).toBeNull();
  });

  it('refuses an oversized file with a message naming it', async () => {
    const { host } = setup({ pickFile: async () => ({ name: 'huge.spinyard', size: 50_000_000, text: async () => '' }) });
    await expect(host.openDocument()).rejects.toThrow(/huge\.spinyard/);
  });

  it('saves as a download with the .spinyard extension and reopens it from the recent list', async () => {
    const { host, downloads } = setup();
    expect(await host.saveDocument({ name: 'roll scan', text: '{"v":1}' })).toEqual({ name: 'roll scan.spinyard' });
    expect(downloads).toEqual([{ name: 'roll scan.spinyard', text: '{"v":1}', mime: 'application/json' }]);
    const [r] = await host.recentDocuments();
    expect(await host.openRecent(r.id)).toEqual({ name: 'roll scan.spinyard', text: '{"v":1}' });
    expect(await host.openRecent('never-seen.spinyard')).toBeNull();
  });

  it('refuses a malformed save request', async () => {
    const { host, downloads } = setup();
    await expect(host.saveDocument({ name: '', text: 'x' })).rejects.toThrow(/malformed/);
    expect(downloads).toEqual([]);
  });

  it('saves a text export (the ports table as CSV) as a download of its own type, not as a recent document', async () => {
    const { host, downloads } = setup();
    const csv = 'path,target,yield\r\nM1:+1/2,D1,0.5\r\n';
    expect(await host.saveTextFile({ name: 'bench-c-ports.csv', text: csv })).toEqual({ name: 'bench-c-ports.csv' });
    expect(await host.saveTextFile({ name: 'notes.TXT', text: 'x' })).toEqual({ name: 'notes.TXT' });
    expect(downloads).toEqual([
      { name: 'bench-c-ports.csv', text: csv, mime: 'text/csv' },
      { name: 'notes.TXT', text: 'x', mime: 'text/plain' },
    ]);
    expect(await host.recentDocuments()).toEqual([]);
  });

  it('refuses a text export named like a document, without a known extension or without text, naming the file', async () => {
    const { host, downloads } = setup();
    await expect(host.saveTextFile({ name: 'bench-c.spinyard', text: 'x' })).rejects.toThrow(/"bench-c\.spinyard".*\.csv/);
    await expect(host.saveTextFile({ name: 'ports', text: 'x' })).rejects.toThrow(/"ports"/);
    await expect(host.saveTextFile({ name: 'a/b.csv', text: 'x' })).rejects.toThrow(/"a\/b\.csv"/);
    await expect(host.saveTextFile({ name: 'a.csv' } as never)).rejects.toThrow(/"a\.csv"/);
    expect(downloads).toEqual([]);
  });

  it('keeps at most 10 recent documents and drops the texts of those it forgets', async () => {
    const storage = fakeStorage();
    const { host } = setup({ storage });
    for (let i = 0; i < 12; i++) await host.saveDocument({ name: `f${i}.spinyard`, text: `t${i}` });
    const list = await host.recentDocuments();
    expect(list).toHaveLength(10);
    expect(list[0].name).toBe('f11.spinyard');
    expect([...storage.map.keys()].filter((k) => k.startsWith('spinyard.recent-text:'))).toHaveLength(10);
  });

  it('survives a storage that refuses writes (quota)', async () => {
    const storage = fakeStorage();
    storage.setItem = () => {
      throw new Error('QuotaExceededError');
    };
    const { host } = setup({ storage });
    expect(await host.saveDocument({ name: 'a.spinyard', text: 'x' })).toEqual({ name: 'a.spinyard' });
  });

  it('lists samples from samples/index.json and reads one, relative to the page', async () => {
    const urls: string[] = [];
    const { host } = setup({
      fetch: async (url) => {
        urls.push(url);
        if (url.endsWith('index.json')) return { ok: true, status: 200, text: async () => '{"samples":[{"name":"bench-a.spinyard","title":"Bench A"}]}' };
        return { ok: true, status: 200, text: async () => '{"title":"Bench A"}' };
      },
    });
    expect(await host.listSamples()).toEqual([{ name: 'bench-a.spinyard', title: 'Bench A' }]);
    expect(await host.readSample('bench-a.spinyard')).toEqual({ name: 'bench-a.spinyard', text: '{"title":"Bench A"}' });
    expect(urls).toEqual(['http://127.0.0.1:5178/app/samples/index.json', 'http://127.0.0.1:5178/app/samples/bench-a.spinyard']);
  });

  it('refuses sample names that leave the folder, and reports a missing sample or a bad index', async () => {
    const { host } = setup({ fetch: async () => ({ ok: false, status: 404, text: async () => '' }) });
    await expect(host.readSample('../secret.spinyard')).rejects.toThrow(/not a sample name/);
    await expect(host.readSample('gone.spinyard')).rejects.toThrow(/gone\.spinyard.*404/);
    const bad = setup({ fetch: async () => ({ ok: true, status: 200, text: async () => '{"files":[]}' }) }).host;
    await expect(bad.listSamples()).rejects.toThrow(/not a sample index/);
  });

  it('sets the page title and prompts on unload only while dirty', () => {
    const { host, titles, unload } = setup();
    host.setTitle('Bench B — Spinyard');
    expect(titles).toEqual(['Bench B — Spinyard']);
    let prevented = 0;
    const ev = { preventDefault: () => void prevented++, returnValue: undefined as unknown };
    unload.before!(ev);
    expect(prevented).toBe(0);
    host.setDirty(true);
    unload.before!(ev);
    expect(prevented).toBe(1);
  });

  it('menu sources are no-ops that return an unsubscribe', () => {
    const { host } = setup();
    const off = host.onMenuCommand(() => {});
    expect(typeof off).toBe('function');
    off();
  });
});

describe('browser autosave recovery', () => {
  it('does not offer this tab its own drafts', async () => {
    const { host } = setup();
    await host.autosave('doc1', '{"a":1}', 'bench.spinyard');
    expect(await host.loadAutosave()).toEqual([]);
  });

  it('offers the drafts of a tab that closed while dirty, until cleared', async () => {
    const storage = fakeStorage();
    const drafts = memoryDraftStore();
    const first = setup({ storage, drafts });
    await first.host.autosave('doc1', '{"a":1}', 'bench.spinyard');
    first.host.setDirty(true);
    first.unload.hide!(); // tab closed with unsaved work

    const second = setup({ storage, drafts });
    const offered = await second.host.loadAutosave();
    expect(offered.map((d) => [d.key, d.name, d.text])).toEqual([['doc1', 'bench.spinyard', '{"a":1}']]);
    await second.host.clearAutosave('doc1');
    expect(await second.host.loadAutosave()).toEqual([]);
  });

  it('offers the drafts of a crashed tab only once its heartbeat is stale', async () => {
    const storage = fakeStorage();
    const drafts = memoryDraftStore();
    let clock = 5_000_000;
    const crashed = setup({ storage, drafts, now: () => clock });
    await crashed.host.autosave('doc9', 'x');
    // No pagehide: the tab died. Another tab looks 5 s later, then 60 s later.
    clock += 5_000;
    const early = setup({ storage, drafts, now: () => clock });
    expect(await early.host.loadAutosave()).toEqual([]);
    clock += 60_000;
    const late = setup({ storage, drafts, now: () => clock });
    expect((await late.host.loadAutosave()).map((d) => d.key)).toEqual(['doc9']);
  });

  it('does not offer drafts of a tab that closed clean', async () => {
    const storage = fakeStorage();
    const drafts = memoryDraftStore();
    const first = setup({ storage, drafts });
    await first.host.autosave('doc1', 'x');
    first.unload.hide!(); // not dirty
    expect(await setup({ storage, drafts }).host.loadAutosave()).toEqual([]);
  });

  it('refuses a bad autosave key', async () => {
    const { host } = setup();
    await expect(host.autosave('../x', 'x')).rejects.toThrow(/Autosave key/);
  });
});

describe('draft stores', () => {
  it('indexedDbDraftStore without IndexedDB keeps drafts in memory', async () => {
    const s = indexedDbDraftStore(undefined);
    expect(s.kind).toBe('memory');
    await s.put({ key: 'k', name: 'a.spinyard', text: 't', savedAt: 1, session: 's' });
    expect((await s.all()).map((d) => d.key)).toEqual(['k']);
    await s.delete('k');
    expect(await s.all()).toEqual([]);
  });
  it('indexedDbDraftStore falls back to memory when opening throws', async () => {
    const factory = { open: () => { throw new Error('SecurityError'); } } as unknown as IDBFactory;
    const s = indexedDbDraftStore(factory);
    await s.put({ key: 'k', name: 'a.spinyard', text: 't', savedAt: 1, session: 's' });
    expect((await s.all()).map((d) => d.key)).toEqual(['k']);
  });
});

describe('platformFromUserAgent', () => {
  it('reads the operating system', () => {
    expect(platformFromUserAgent('Mozilla/5.0 (Macintosh; Intel Mac OS X 14_0)')).toBe('darwin');
    expect(platformFromUserAgent('Mozilla/5.0 (Windows NT 10.0; Win64; x64)')).toBe('win32');
    expect(platformFromUserAgent('Mozilla/5.0 (X11; Linux x86_64)')).toBe('linux');
    expect(platformFromUserAgent('Something')).toBe('other');
  });
});
