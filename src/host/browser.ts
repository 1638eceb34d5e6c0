// The browser host: the Host contract for the renderer served by `npm run web` (and the e2e tests).
//   open     an <input type=file accept=".spinyard"> picker
//   save     a download (Blob + <a download>); the browser chooses where it goes (documents and text exports)
//   autosave IndexedDB (database "spinyard", store "drafts"), or memory where IndexedDB is unavailable
//   recent   localStorage: the list, plus the last opened or saved text of each entry so it reopens
//   samples  fetched from samples/index.json and samples/NAME beside the page (the web build copies them)
//   menus    none: the renderer's keyboard handling dispatches the commands (commandForKey helps)
// Everything that touches the page is injectable, so the logic is tested in Node with fakes.

import {
  DOCUMENT_EXTENSION,
  MAX_DOCUMENT_CHARS,
  RECENT_LIMIT,
  TEXT_FILE_TYPES,
  fileExtension,
  isAutosaveDraft,
  isDocumentName,
  isDraftKey,
  isSampleName,
  isSaveRequest,
  isTextFileRequest,
  parseSampleIndex,
  withDocumentExtension,
  type AutosaveDraft,
  type Host,
  type HostDocument,
  type HostPlatform,
  type RecentDocument,
  type SampleInfo,
  type SaveRequest,
  type SaveResult,
  type TextFileRequest,
} from './contract.ts';
import { isSessionMarker, newSessionId, sessionsToForget, triageDrafts, type SessionMarker } from './drafts.ts';
import { addRecent, parseRecentList } from './recent-list.ts';

/** The part of window.localStorage used here. */
export interface StorageLike {
  getItem(key: string): string | null;
  setItem(key: string, value: string): void;
  removeItem(key: string): void;
}

/** Where drafts live: IndexedDB in a browser, a Map elsewhere. */
export interface DraftStore {
  readonly kind: 'indexeddb' | 'memory';
  put(draft: AutosaveDraft): Promise<void>;
  all(): Promise<AutosaveDraft[]>;
  delete(key: string): Promise<void>;
}

/** A picked file as the host reads it. */
export interface PickedFile {
  name: string;
  size: number;
  text(): Promise<string>;
}

export interface BrowserHostDeps {
  storage?: StorageLike;
  drafts?: DraftStore;
  fetch?: (url: string) => Promise<{ ok: boolean; status: number; text(): Promise<string> }>;
  /** Base URL the samples folder is resolved against (default: document.baseURI). */
  baseUrl?: string;
  now?: () => number;
  platform?: HostPlatform;
  pickFile?: () => Promise<PickedFile | null>;
  download?: (name: string, text: string, mime: string) => void;
  print?: (html: string) => Promise<boolean>;
  setTitle?: (title: string) => void;
  /** Registers the unload hooks: beforeunload (prompt while dirty) and pagehide (session ended). */
  lifecycle?: {
    onBeforeUnload(handler: (e: { preventDefault(): void; returnValue?: unknown }) => void): void;
    onPageHide(handler: () => void): void;
  };
  /** Heartbeat of this session's marker; 0 disables it (tests). */
  heartbeatMs?: number;
  setInterval?: (fn: () => void, ms: number) => unknown;
}

const RECENT_KEY = 'spinyard.recent';
const RECENT_TEXT_PREFIX = 'spinyard.recent-text:';
const SESSIONS_KEY = 'spinyard.sessions';
/** Texts kept for reopening a recent document, at most this long each (a line is a few kB). */
const RECENT_TEXT_LIMIT = 512_000;
const HEARTBEAT_MS = 10_000;
/** A session silent for three heartbeats is taken as gone. */
const STALE_MS = 3 * HEARTBEAT_MS;

/** A DraftStore in memory: the fallback where IndexedDB is missing or refuses to open. */
export function memoryDraftStore(): DraftStore {
  const map = new Map<string, AutosaveDraft>();
  return {
    kind: 'memory',
    async put(d) {
      map.set(d.key, { ...d });
    },
    async all() {
      return [...map.values()].map((d) => ({ ...d }));
    },
    async delete(key) {
      map.delete(key);
    },
  };
}

function request<T>(r: IDBRequest<T>): Promise<T> {
  return new Promise((resolve, reject) => {
    r.onsuccess = () => resolve(r.result);
    r.onerror = () => reject(r.error ?? new Error('IndexedDB request failed'));
  });
}

/** A DraftStore in IndexedDB ("spinyard" / "drafts", keyed by draft key). It falls back to memory when
 *  the database cannot be opened (private windows, blocked storage), keeping autosave working for the tab. */
export function indexedDbDraftStore(factory: IDBFactory | undefined): DraftStore {
  const fallback = memoryDraftStore();
  let db: Promise<IDBDatabase | null> | null = null;
  const open = (): Promise<IDBDatabase | null> => {
    if (!factory) return Promise.resolve(null);
    db ??= new Promise<IDBDatabase | null>((resolve) => {
      let req: IDBOpenDBRequest;
      try {
        req = factory.open('spinyard', 1);
      } catch {
        resolve(null);
        return;
      }
      req.onupgradeneeded = () => {
        if (!req.result.objectStoreNames.contains('drafts')) req.result.createObjectStore('drafts', { keyPath: 'key' });
      };
      req.onsuccess = () => resolve(req.result);
      req.onerror = () => resolve(null);
      req.onblocked = () => resolve(null);
    });
    return db;
  };
  const store = async (mode: IDBTransactionMode): Promise<IDBObjectStore | null> => {
    const d = await open();
    return d ? d.transaction('drafts', mode).objectStore('drafts') : null;
  };
  return {
    get kind() {
      return factory ? 'indexeddb' : 'memory';
    },
    async put(draft) {
      const s = await store('readwrite');
      if (!s) return fallback.put(draft);
      await request(s.put(draft));
    },
    async all() {
      const s = await store('readonly');
      if (!s) return fallback.all();
      const rows: unknown[] = await request(s.getAll());
      return rows.filter(isAutosaveDraft);
    },
    async delete(key) {
      const s = await store('readwrite');
      if (!s) return fallback.delete(key);
      await request(s.delete(key));
    },
  };
}

/** The operating system from a user-agent string (for shortcut labels). */
export function platformFromUserAgent(ua: string): HostPlatform {
  if (/Mac OS X|Macintosh|iPhone|iPad/i.test(ua)) return 'darwin';
  if (/Windows/i.test(ua)) return 'win32';
  if (/Linux|X11|CrOS/i.test(ua)) return 'linux';
  return 'other';
}

function memoryStorage(): StorageLike {
  const m = new Map<string, string>();
  return {
    getItem: (k) => m.get(k) ?? null,
    setItem: (k, v) => void m.set(k, v),
    removeItem: (k) => void m.delete(k),
  };
}

function safeSet(storage: StorageLike, key: string, value: string): boolean {
  try {
    storage.setItem(key, value);
    return true;
  } catch {
    return false; // quota exceeded or storage disabled: the list is a convenience, not the document
  }
}

function readSessions(storage: StorageLike): SessionMarker[] {
  try {
    const v: unknown = JSON.parse(storage.getItem(SESSIONS_KEY) ?? '[]');
    return Array.isArray(v) ? v.filter(isSessionMarker) : [];
  } catch {
    return [];
  }
}

// ---------------------------------------------------------------------------------------------------
// Page defaults (used when no fake is injected)

function pagePickFile(): Promise<PickedFile | null> {
  return new Promise((resolve) => {
    const input = document.createElement('input');
    input.type = 'file';
    input.accept = DOCUMENT_EXTENSION;
    input.style.display = 'none';
    const done = (f: PickedFile | null) => {
      input.remove();
      resolve(f);
    };
    input.addEventListener('change', () => done(input.files?.[0] ?? null), { once: true });
    input.addEventListener('cancel', () => done(null), { once: true });
    document.body.append(input);
    input.click();
  });
}

function pageDownload(name: string, text: string, mime: string): void {
  const url = URL.createObjectURL(new Blob([text], { type: mime }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  a.rel = 'noopener';
  a.style.display = 'none';
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 30_000);
}

/** Prints an HTML document in a hidden iframe; sandboxed without scripts, so the sheet's own scripts
 *  never run. The browser does not say whether the user cancelled: resolves true once the dialog closed. */
function pagePrint(html: string): Promise<boolean> {
  return new Promise((resolve) => {
    const frame = document.createElement('iframe');
    frame.setAttribute('sandbox', 'allow-same-origin allow-modals');
    frame.setAttribute('aria-hidden', 'true');
    frame.style.cssText = 'position:fixed;width:0;height:0;border:0;left:-10000px';
    frame.addEventListener(
      'load',
      () => {
        frame.contentWindow?.focus();
        frame.contentWindow?.print();
        setTimeout(() => frame.remove(), 1000);
        resolve(true);
      },
      { once: true },
    );
    frame.srcdoc = html;
    document.body.append(frame);
  });
}

// ---------------------------------------------------------------------------------------------------

/** The browser Host. Dependencies default to the page's (document, localStorage, indexedDB, fetch). */
export function createBrowserHost(deps: BrowserHostDeps = {}): Host {
  const hasWindow = typeof window !== 'undefined';
  const storage = deps.storage ?? (hasWindow ? safeLocalStorage() : undefined) ?? memoryStorage();
  const drafts = deps.drafts ?? indexedDbDraftStore(typeof indexedDB !== 'undefined' ? indexedDB : undefined);
  const now = deps.now ?? (() => Date.now());
  const doFetch = deps.fetch ?? ((url: string) => fetch(url));
  const baseUrl = deps.baseUrl ?? (typeof document !== 'undefined' ? document.baseURI : 'http://127.0.0.1/');
  const platform = deps.platform ?? (typeof navigator !== 'undefined' ? platformFromUserAgent(navigator.userAgent) : 'other');
  const pickFile = deps.pickFile ?? pagePickFile;
  const download = deps.download ?? pageDownload;
  const print = deps.print ?? pagePrint;
  const setPageTitle = deps.setTitle ?? ((t: string) => void (document.title = t));

  const session = newSessionId(now());
  let dirty = false;

  const writeMarker = (patch: Partial<SessionMarker>) => {
    const all = readSessions(storage);
    const mine = all.find((s) => s.id === session) ?? { id: session, startedAt: now(), lastSeen: now(), clean: false };
    const next = { ...mine, lastSeen: now(), ...patch };
    safeSet(storage, SESSIONS_KEY, JSON.stringify([...all.filter((s) => s.id !== session), next]));
  };
  writeMarker({});

  const lifecycle =
    deps.lifecycle ??
    (hasWindow
      ? {
          onBeforeUnload: (h: (e: BeforeUnloadEvent) => void) => window.addEventListener('beforeunload', h),
          onPageHide: (h: () => void) => window.addEventListener('pagehide', h),
        }
      : undefined);
  lifecycle?.onBeforeUnload((e) => {
    if (!dirty) return;
    e.preventDefault();
    e.returnValue = ''; // older Chromium needs it to show the prompt
  });
  // The page is gone: the session is over (lastSeen 0), clean when nothing was left unsaved.
  lifecycle?.onPageHide(() => writeMarker({ clean: !dirty, lastSeen: 0 }));
  const heartbeat = deps.heartbeatMs ?? (hasWindow ? HEARTBEAT_MS : 0);
  if (heartbeat > 0) (deps.setInterval ?? setInterval)(() => writeMarker({}), heartbeat);

  const recentList = (): RecentDocument[] => parseRecentList(storage.getItem(RECENT_KEY), platform);
  const remember = (name: string, text: string) => {
    const before = recentList();
    const next = addRecent(before, { id: name, name, openedAt: now() }, platform, RECENT_LIMIT);
    safeSet(storage, RECENT_KEY, JSON.stringify(next));
    for (const gone of before.filter((e) => !next.some((n) => n.id === e.id))) storage.removeItem(RECENT_TEXT_PREFIX + gone.id);
    if (text.length <= RECENT_TEXT_LIMIT) safeSet(storage, RECENT_TEXT_PREFIX + name, text);
    else storage.removeItem(RECENT_TEXT_PREFIX + name);
  };

  const sampleUrl = (name: string) => new URL(`samples/${encodeURIComponent(name)}`, baseUrl).toString();

  return {
    kind: 'browser',
    platform,
    async initialDocument() {
      return null;
    },
    async openDocument() {
      const file = await pickFile();
      if (!file) return null;
      if (!isDocumentName(file.name)) throw new Error(`Cannot open "${file.name}": not a usable file name.`);
      if (file.size > MAX_DOCUMENT_CHARS) throw new Error(`Cannot open ${file.name}: ${file.size} bytes is too large for a beamline document.`);
      const text = await file.text();
      remember(file.name, text);
      return { name: file.name, text };
    },
    async saveDocument(req: SaveRequest): Promise<SaveResult | null> {
      if (!isSaveRequest(req)) throw new Error('Cannot save: the save request is malformed (name and text are required).');
      const name = withDocumentExtension(req.name);
      download(name, req.text, 'application/json');
      remember(name, req.text);
      return { name };
    },
    async newWindow() {
      return false;
    },
    async listSamples(): Promise<SampleInfo[]> {
      const url = new URL('samples/index.json', baseUrl).toString();
      const res = await doFetch(url);
      if (!res.ok) throw new Error(`Cannot list the samples: ${url} answered ${res.status}.`);
      let data: unknown;
      try {
        data = JSON.parse(await res.text());
      } catch {
        throw new Error(`Cannot list the samples: ${url} is not JSON.`);
      }
      const list = parseSampleIndex(data);
      if (!list) throw new Error(`Cannot list the samples: ${url} is not a sample index ({"samples":[{"name":"….spinyard"}]}).`);
      return list;
    },
    async readSample(name: string): Promise<HostDocument> {
      if (!isSampleName(name)) throw new Error(`"${name}" is not a sample name (NAME.spinyard, no folders).`);
      const res = await doFetch(sampleUrl(name));
      if (!res.ok) throw new Error(`Cannot read sample ${name}: the server answered ${res.status}.`);
      return { name, text: await res.text() };
    },
    async autosave(key: string, text: string, name?: string) {
      if (!isDraftKey(key)) throw new Error(`Autosave key "${key}" is not 1–64 letters, digits, "_" or "-".`);
      await drafts.put({ key, name: name && isDocumentName(name) ? name : `untitled${DOCUMENT_EXTENSION}`, text, savedAt: now(), session });
    },
    async loadAutosave() {
      const sessions = readSessions(storage);
      const all = await drafts.all();
      const opts = { currentSession: session, now: now(), staleMs: STALE_MS };
      const forget = new Set(sessionsToForget(sessions, all, opts));
      if (forget.size > 0) safeSet(storage, SESSIONS_KEY, JSON.stringify(sessions.filter((s) => !forget.has(s.id))));
      return triageDrafts(all, sessions, opts).recoverable;
    },
    async clearAutosave(key: string) {
      if (!isDraftKey(key)) return;
      await drafts.delete(key);
    },
    async recentDocuments() {
      return recentList();
    },
    async openRecent(id: string) {
      const entry = recentList().find((e) => e.id === id);
      const text = entry ? storage.getItem(RECENT_TEXT_PREFIX + entry.id) : null;
      if (!entry || text === null) return null;
      remember(entry.name, text);
      return { name: entry.name, text };
    },
    setDirty(d: boolean) {
      dirty = d === true;
    },
    setTitle(title: string) {
      setPageTitle(String(title));
    },
    printSheet(html: string) {
      return print(html);
    },
    async exportPdf(html: string) {
      await print(html);
      return null;
    },
    async saveTextFile(req: TextFileRequest): Promise<SaveResult | null> {
      if (!isTextFileRequest(req)) {
        const name = (req as { name?: unknown } | null)?.name;
        throw new Error(`Cannot save ${typeof name === 'string' ? `"${name}"` : 'the file'}: a text export needs a file name ending in ${Object.keys(TEXT_FILE_TYPES).map((x) => `.${x}`).join(', ')} and its text.`);
      }
      download(req.name, req.text, TEXT_FILE_TYPES[fileExtension(req.name)]);
      return { name: req.name };
    },
    onMenuCommand(_handler, _signal) {
      return () => {};
    },
    onOpenDocument(_handler, _signal) {
      return () => {};
    },
  };
}

function safeLocalStorage(): StorageLike | undefined {
  try {
    return window.localStorage ?? undefined;
  } catch {
    return undefined; // storage blocked by the browser's settings
  }
}
