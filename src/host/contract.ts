// The one bridge contract between the renderer (src/app) and its shell: the Electron main process
// (electron/main, through electron/preload) or the browser host (src/host/browser.ts).
//
//   renderer ──invoke(CHANNELS.x, …args)──▶ preload ──ipcRenderer.invoke──▶ main: validate, act, reply
//   renderer ◀──CHANNELS.menuCommand / CHANNELS.pushDocument── main (events, no reply)
//
// Every channel name starts with "spinyard:". Every payload crossing the bridge is checked on arrival by
// the validators below (main checks requests, preload checks replies); nothing else crosses it.
// The contract only adds: a new channel or an optional field, never a renamed one.

/** The document format's file extension (docs/design.md, "Document format v1"). */
import { MAX_DOCUMENT_BYTES } from './document-text.ts';
export const DOCUMENT_EXTENSION = '.spinyard';
/**
 * Largest document text accepted across the bridge (a beamline document is a few kB): the size limit of a document
 * file, so that every file that opens can be saved again (a text of N UTF-8 bytes has at most N UTF-16 units).
 */
export const MAX_DOCUMENT_CHARS = MAX_DOCUMENT_BYTES;
/** Largest setup-sheet HTML accepted for printing or PDF export. */
export const MAX_SHEET_CHARS = 20_000_000;
/** Largest exported text file accepted (a ports table as CSV is a few kB per hundred leaves). */
export const MAX_TEXT_FILE_CHARS = 20_000_000;
/** Largest window title accepted. */
export const MAX_TITLE_CHARS = 300;
/** Recent documents kept (Electron and browser alike). */
export const RECENT_LIMIT = 10;
/** Prefix of every channel; the preload refuses any other. */
export const CHANNEL_PREFIX = 'spinyard:';

// ---------------------------------------------------------------------------------------------------
// Payload types

/** A document as the host hands it to the renderer. `path` is set only where the host has a real file
 *  (Electron); `name` is the file name shown to the user ("bench-b.spinyard"). */
export interface HostDocument {
  path?: string;
  name: string;
  text: string;
}

/** A save request. Without `path`, or with `saveAs`, the host asks where to save. Electron writes only to
 *  the path it opened or saved for that window, or to one the user picks in its dialog. */
export interface SaveRequest {
  path?: string;
  name: string;
  text: string;
  saveAs?: boolean;
}

/** Where a document went: the browser has no path (the file went to the downloads). */
export interface SaveResult {
  path?: string;
  name: string;
}

/** An exported text file (the ports table as CSV): `name` is the file name suggested to the user, its
 *  extension one of TEXT_FILE_TYPES. The host asks where to save it (Electron's save dialog) or downloads
 *  it (the browser). Never a document: the extension .spinyard is refused here. */
export interface TextFileRequest {
  name: string;
  text: string;
}

/** The extensions a text export may have, with their media types. */
export const TEXT_FILE_TYPES: Readonly<Record<string, string>> = {
  csv: 'text/csv',
  tsv: 'text/tab-separated-values',
  txt: 'text/plain',
};

/** A sample beamline of samples/*.spinyard. `title` is the document's title when known. */
export interface SampleInfo {
  name: string;
  title?: string;
}

/** Unsaved work kept by autosave. `session` is the host session that wrote it; `savedAt` ms since epoch. */
export interface AutosaveDraft {
  key: string;
  name: string;
  path?: string;
  text: string;
  savedAt: number;
  session: string;
}

/** An entry of the recent-documents list. Electron: `id` is the absolute path. Browser: `id` is the
 *  file name, and the host keeps the last opened or saved text so the entry can be reopened. */
export interface RecentDocument {
  id: string;
  name: string;
  path?: string;
  openedAt: number;
}

export type HostKind = 'electron' | 'browser';
export type HostPlatform = 'darwin' | 'win32' | 'linux' | 'other';

/**
 * The host as the renderer uses it (obtain it with `getHost()` from src/host/index.ts).
 *
 * Menus and the keyboard dispatch command ids (`HOST_COMMANDS`); the renderer registers a handler
 * for each id once, and calls the methods below from those handlers.
 */
export interface Host {
  readonly kind: HostKind;
  /** The operating system, for shortcut labels (⌘ on darwin). */
  readonly platform: HostPlatform;
  /** The document this window was opened for (Electron: a file, a sample, or a recent document opened
   *  into a new window), or null: start a new document from the default line. */
  initialDocument(): Promise<HostDocument | null>;
  /** Ask the user for a .spinyard file. null: cancelled, or (Electron) the file was shown in another
   *  window, because this window holds a document of its own, or the file was open already. */
  openDocument(): Promise<HostDocument | null>;
  /** Save; null when the user cancelled the save dialog. Rejects with a message naming the file when
   *  the write failed (the file on disk is then unchanged). */
  saveDocument(req: SaveRequest): Promise<SaveResult | null>;
  /** Open a fresh document in a new window. false where the host has one window (the browser): the
   *  renderer then starts the new document in place. */
  newWindow(): Promise<boolean>;
  listSamples(): Promise<SampleInfo[]>;
  /** The text of samples/NAME (NAME as listed by listSamples). Rejects when it is missing. */
  readSample(name: string): Promise<HostDocument>;
  /** Keep unsaved work under `key` (one key per open document; see `isDraftKey`). */
  autosave(key: string, text: string, name?: string): Promise<void>;
  /** Drafts left by a session that did not close cleanly (a crash, a killed tab): offer to recover them,
   *  then call clearAutosave(draft.key) once the user recovered or discarded each. */
  loadAutosave(): Promise<AutosaveDraft[]>;
  clearAutosave(key: string): Promise<void>;
  recentDocuments(): Promise<RecentDocument[]>;
  /** Reopen a recent document. null: gone, or (Electron) shown in another window. */
  openRecent(id: string): Promise<HostDocument | null>;
  /** Tell the host the document has unsaved changes (close prompt, window's edited mark). */
  setDirty(dirty: boolean): void;
  setTitle(title: string): void;
  /** Print the setup sheet (a complete HTML document; scripts in it do not run). false: cancelled. */
  printSheet(html: string): Promise<boolean>;
  /** Write the setup sheet as PDF. Electron: a save dialog, then an atomic write. Browser: opens the
   *  print dialog (choose "Save as PDF") and resolves null. */
  exportPdf(html: string, name: string): Promise<SaveResult | null>;
  /** Save an exported text file (the ports table as CSV). Electron: a save dialog suggesting `req.name`
   *  beside the document, then an atomic write; null when the user cancelled. Browser: a download
   *  (the browser chooses where), resolving with the name. Rejects with a message naming the file when
   *  the write failed. */
  saveTextFile(req: TextFileRequest): Promise<SaveResult | null>;
  /** Receive menu command ids (`HOST_COMMANDS`). Returns the unsubscribe; aborting `signal` unsubscribes
   *  too. The browser host has no menus: the renderer's own keyboard handling is the only source there. */
  onMenuCommand(handler: (commandId: string) => void, signal?: AbortSignal): () => void;
  /** Receive a document the shell opens into this window (Electron: Open Recent, Samples menu, a file
   *  given to a second instance, while this window holds only the untouched new document). */
  onOpenDocument(handler: (doc: HostDocument) => void, signal?: AbortSignal): () => void;
}

/**
 * What the Electron preload exposes as `window.spinyard` (contextBridge). It is the Host without
 * AbortSignal parameters: objects are copied across the context bridge, so a signal would arrive dead.
 * src/host/index.ts adapts it to `Host`.
 */
export type SpinyardBridge = Omit<Host, 'onMenuCommand' | 'onOpenDocument'> & {
  onMenuCommand(handler: (commandId: string) => void): () => void;
  onOpenDocument(handler: (doc: HostDocument) => void): () => void;
};

// ---------------------------------------------------------------------------------------------------
// Channels

/** Renderer → main requests (ipcRenderer.invoke / ipcMain.handle). */
export const INVOKE_CHANNELS = {
  initialDocument: 'spinyard:initial-document',
  openDocument: 'spinyard:open-document',
  saveDocument: 'spinyard:save-document',
  newWindow: 'spinyard:new-window',
  listSamples: 'spinyard:list-samples',
  readSample: 'spinyard:read-sample',
  autosave: 'spinyard:autosave',
  loadAutosave: 'spinyard:load-autosave',
  clearAutosave: 'spinyard:clear-autosave',
  recentDocuments: 'spinyard:recent-documents',
  openRecent: 'spinyard:open-recent',
  printSheet: 'spinyard:print-sheet',
  exportPdf: 'spinyard:export-pdf',
  saveTextFile: 'spinyard:save-text-file',
} as const;

/** Renderer → main notifications (ipcRenderer.send / ipcMain.on), no reply. */
export const SEND_CHANNELS = {
  setDirty: 'spinyard:set-dirty',
  setTitle: 'spinyard:set-title',
} as const;

/** Main → renderer events (webContents.send / ipcRenderer.on). */
export const EVENT_CHANNELS = {
  menuCommand: 'spinyard:menu-command',
  openDocument: 'spinyard:push-document',
} as const;

export type InvokeName = keyof typeof INVOKE_CHANNELS;
export type InvokeChannel = (typeof INVOKE_CHANNELS)[InvokeName];
export type SendChannel = (typeof SEND_CHANNELS)[keyof typeof SEND_CHANNELS];
export type EventChannel = (typeof EVENT_CHANNELS)[keyof typeof EVENT_CHANNELS];

const ALL_CHANNELS: ReadonlySet<string> = new Set<string>([
  ...Object.values(INVOKE_CHANNELS),
  ...Object.values(SEND_CHANNELS),
  ...Object.values(EVENT_CHANNELS),
]);

/** True for a channel of this contract: "spinyard:" prefix and listed above. */
export function isContractChannel(channel: unknown): channel is InvokeChannel | SendChannel | EventChannel {
  return typeof channel === 'string' && channel.startsWith(CHANNEL_PREFIX) && ALL_CHANNELS.has(channel);
}

// ---------------------------------------------------------------------------------------------------
// Menu commands: the ids menus send and the renderer registers. Accelerators use Electron's syntax
// ("CmdOrCtrl" is ⌘ on darwin, Ctrl elsewhere); the browser renderer binds the same keys itself
// (see acceleratorMatches in src/host/accelerator.ts).

export interface HostCommand {
  id: string;
  label: string;
  accelerator?: string;
  /** Replaces `accelerator` on darwin. */
  macAccelerator?: string;
  /** Further keys for the same command (not shown in menus). */
  alternates?: string[];
}

export const HOST_COMMANDS: readonly HostCommand[] = [
  { id: 'file.new', label: 'New', accelerator: 'CmdOrCtrl+N' },
  { id: 'file.open', label: 'Open…', accelerator: 'CmdOrCtrl+O' },
  { id: 'file.save', label: 'Save', accelerator: 'CmdOrCtrl+S' },
  { id: 'file.saveAs', label: 'Save As…', accelerator: 'CmdOrCtrl+Shift+S' },
  { id: 'file.print', label: 'Print Setup Sheet…', accelerator: 'CmdOrCtrl+P' },
  { id: 'file.exportPdf', label: 'Export Setup Sheet as PDF…' },
  { id: 'file.close', label: 'Close', accelerator: 'CmdOrCtrl+W' },
  { id: 'edit.undo', label: 'Undo', accelerator: 'CmdOrCtrl+Z' },
  { id: 'edit.redo', label: 'Redo', accelerator: 'Ctrl+Y', macAccelerator: 'Cmd+Shift+Z', alternates: ['CmdOrCtrl+Shift+Z'] },
  { id: 'view.zoomIn', label: 'Zoom In', accelerator: 'CmdOrCtrl+=', alternates: ['CmdOrCtrl+Plus'] },
  { id: 'view.zoomOut', label: 'Zoom Out', accelerator: 'CmdOrCtrl+-' },
  { id: 'view.zoomReset', label: 'Actual Size', accelerator: 'CmdOrCtrl+0' },
  { id: 'view.toggleDark', label: 'Toggle Dark Theme', accelerator: 'CmdOrCtrl+Shift+D' },
  { id: 'view.scanPanel', label: 'Scan Panel…', accelerator: 'Alt+S' },
  { id: 'view.budgetPanel', label: 'Tolerance Budget Panel…', accelerator: 'Alt+B' },
  { id: 'view.fitPanel', label: 'Fit Panel…', accelerator: 'Alt+T' },
  { id: 'view.simulatePanel', label: 'Simulated Run Panel…', accelerator: 'Alt+M' },
  { id: 'help.about', label: 'About Spinyard' },
  { id: 'help.readme', label: 'README' },
];

const COMMAND_IDS: ReadonlySet<string> = new Set(HOST_COMMANDS.map((c) => c.id));

/** The accelerator of a command on a platform, or undefined. */
export function commandAccelerator(id: string, platform: HostPlatform): string | undefined {
  const c = HOST_COMMANDS.find((x) => x.id === id);
  if (!c) return undefined;
  return platform === 'darwin' && c.macAccelerator ? c.macAccelerator : c.accelerator;
}

// ---------------------------------------------------------------------------------------------------
// Validators: each answers whether an unknown value is a well-formed payload. They check shape, types,
// sizes and forbidden characters; they never coerce.

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function onlyKeys(v: Record<string, unknown>, allowed: readonly string[]): boolean {
  return Object.keys(v).every((k) => allowed.includes(k));
}

function isOptional<T>(v: unknown, check: (x: unknown) => x is T): v is T | undefined {
  return v === undefined || check(v);
}

// C0 controls, DEL and the path separators are refused in names.
// eslint-disable-next-line no-control-regex
const NAME_FORBIDDEN = /[\u0000-\u001f\u007f/\\]/;
// eslint-disable-next-line no-control-regex
const CONTROL = /[\u0000-\u001f\u007f]/;

/** A file name shown to the user: 1–255 characters, no path separators or control characters,
 *  not "." or "..". */
export function isDocumentName(v: unknown): v is string {
  return typeof v === 'string' && v.length >= 1 && v.length <= 255 && !NAME_FORBIDDEN.test(v) && v !== '.' && v !== '..';
}

/** An absolute file path (POSIX "/…" or Windows "C:\…" / "\\server\…"), no control characters. */
export function isAbsolutePath(v: unknown): v is string {
  if (typeof v !== 'string' || v.length === 0 || v.length > 4096 || CONTROL.test(v)) return false;
  return v.startsWith('/') || /^[A-Za-z]:[\\/]/.test(v) || v.startsWith('\\\\');
}

export function isDocumentText(v: unknown): v is string {
  return typeof v === 'string' && v.length <= MAX_DOCUMENT_CHARS;
}

export function isHostDocument(v: unknown): v is HostDocument {
  return (
    isRecord(v) &&
    onlyKeys(v, ['path', 'name', 'text']) &&
    isOptional(v.path, isAbsolutePath) &&
    isDocumentName(v.name) &&
    isDocumentText(v.text)
  );
}

export function isSaveRequest(v: unknown): v is SaveRequest {
  return (
    isRecord(v) &&
    onlyKeys(v, ['path', 'name', 'text', 'saveAs']) &&
    isOptional(v.path, isAbsolutePath) &&
    isDocumentName(v.name) &&
    isDocumentText(v.text) &&
    (v.saveAs === undefined || typeof v.saveAs === 'boolean')
  );
}

/** The extension of a file name, lower case, without the dot ("" when it has none). */
export function fileExtension(name: string): string {
  const i = name.lastIndexOf('.');
  return i > 0 ? name.slice(i + 1).toLowerCase() : '';
}

/** A text export's file name: a document name whose extension is one of TEXT_FILE_TYPES. */
export function isTextFileName(v: unknown): v is string {
  return isDocumentName(v) && Object.prototype.hasOwnProperty.call(TEXT_FILE_TYPES, fileExtension(v));
}

export function isTextFileRequest(v: unknown): v is TextFileRequest {
  return (
    isRecord(v) &&
    onlyKeys(v, ['name', 'text']) &&
    isTextFileName(v.name) &&
    typeof v.text === 'string' &&
    v.text.length <= MAX_TEXT_FILE_CHARS
  );
}

export function isSaveResult(v: unknown): v is SaveResult {
  return isRecord(v) && onlyKeys(v, ['path', 'name']) && isOptional(v.path, isAbsolutePath) && isDocumentName(v.name);
}

/** A sample file name: letters, digits, ".", "_", "-", ending in ".spinyard"; no folders. */
export function isSampleName(v: unknown): v is string {
  return typeof v === 'string' && v.length <= 128 && /^[A-Za-z0-9][A-Za-z0-9._-]*\.spinyard$/.test(v) && !v.includes('..');
}

export function isSampleInfo(v: unknown): v is SampleInfo {
  return (
    isRecord(v) &&
    onlyKeys(v, ['name', 'title']) &&
    isSampleName(v.name) &&
    (v.title === undefined || (typeof v.title === 'string' && v.title.length <= MAX_TITLE_CHARS))
  );
}

/**
 * The browser's sample list, served as samples/index.json beside the sample files (the web build
 * writes it from samples/*.spinyard):
 *
 *     { "samples": [ { "name": "bench-b-roll.spinyard", "title": "Bench B, roll scan" } ] }
 *
 * A bare array of names (["bench-b-roll.spinyard"]) is accepted too. Returns the list, or null when
 * the value is not such an index.
 */
export function parseSampleIndex(v: unknown): SampleInfo[] | null {
  if (Array.isArray(v)) return v.every(isSampleName) ? v.map((name) => ({ name })) : null;
  if (isRecord(v) && Array.isArray(v.samples)) {
    return v.samples.every(isSampleInfo) ? v.samples.map((s) => ({ ...s })) : null;
  }
  return null;
}

/** An autosave key: 1–64 of letters, digits, "_" and "-" (it becomes a file name in Electron). */
export function isDraftKey(v: unknown): v is string {
  return typeof v === 'string' && /^[A-Za-z0-9_-]{1,64}$/.test(v);
}

export function isAutosaveDraft(v: unknown): v is AutosaveDraft {
  return (
    isRecord(v) &&
    onlyKeys(v, ['key', 'name', 'path', 'text', 'savedAt', 'session']) &&
    isDraftKey(v.key) &&
    isDocumentName(v.name) &&
    isOptional(v.path, isAbsolutePath) &&
    isDocumentText(v.text) &&
    typeof v.savedAt === 'number' &&
    Number.isFinite(v.savedAt) &&
    isDraftKey(v.session)
  );
}

export function isRecentDocument(v: unknown): v is RecentDocument {
  return (
    isRecord(v) &&
    onlyKeys(v, ['id', 'name', 'path', 'openedAt']) &&
    typeof v.id === 'string' &&
    v.id.length >= 1 &&
    v.id.length <= 4096 &&
    !CONTROL.test(v.id) &&
    isDocumentName(v.name) &&
    isOptional(v.path, isAbsolutePath) &&
    typeof v.openedAt === 'number' &&
    Number.isFinite(v.openedAt)
  );
}

export function isRecentId(v: unknown): v is string {
  return typeof v === 'string' && v.length >= 1 && v.length <= 4096 && !CONTROL.test(v);
}

export function isWindowTitle(v: unknown): v is string {
  return typeof v === 'string' && v.length <= MAX_TITLE_CHARS && !CONTROL.test(v);
}

export function isSheetHtml(v: unknown): v is string {
  return typeof v === 'string' && v.length >= 1 && v.length <= MAX_SHEET_CHARS;
}

export function isCommandId(v: unknown): v is string {
  return typeof v === 'string' && COMMAND_IDS.has(v);
}

// ---------------------------------------------------------------------------------------------------
// Argument lists per channel: what main checks before it acts, and what the preload checks in replies.

type ArgsCheck = (args: readonly unknown[]) => boolean;

const none: ArgsCheck = (a) => a.length === 0;
const one =
  (check: (x: unknown) => boolean): ArgsCheck =>
  (a) =>
    a.length === 1 && check(a[0]);

/** Checks of the argument list of each invoke channel. */
export const INVOKE_ARGS: Record<InvokeChannel, ArgsCheck> = {
  [INVOKE_CHANNELS.initialDocument]: none,
  [INVOKE_CHANNELS.openDocument]: none,
  [INVOKE_CHANNELS.saveDocument]: one(isSaveRequest),
  [INVOKE_CHANNELS.newWindow]: none,
  [INVOKE_CHANNELS.listSamples]: none,
  [INVOKE_CHANNELS.readSample]: one(isSampleName),
  [INVOKE_CHANNELS.autosave]: (a) =>
    (a.length === 2 || a.length === 3) && isDraftKey(a[0]) && isDocumentText(a[1]) && (a[2] === undefined || isDocumentName(a[2])),
  [INVOKE_CHANNELS.loadAutosave]: none,
  [INVOKE_CHANNELS.clearAutosave]: one(isDraftKey),
  [INVOKE_CHANNELS.recentDocuments]: none,
  [INVOKE_CHANNELS.openRecent]: one(isRecentId),
  [INVOKE_CHANNELS.printSheet]: one(isSheetHtml),
  [INVOKE_CHANNELS.exportPdf]: (a) => a.length === 2 && isSheetHtml(a[0]) && isDocumentName(a[1]),
  [INVOKE_CHANNELS.saveTextFile]: one(isTextFileRequest),
};

/** Checks of the argument list of each send channel. */
export const SEND_ARGS: Record<SendChannel, ArgsCheck> = {
  [SEND_CHANNELS.setDirty]: one((x) => typeof x === 'boolean'),
  [SEND_CHANNELS.setTitle]: one(isWindowTitle),
};

const nullOr =
  (check: (x: unknown) => boolean) =>
  (x: unknown): boolean =>
    x === null || check(x);
const listOf =
  (check: (x: unknown) => boolean) =>
  (x: unknown): boolean =>
    Array.isArray(x) && x.every(check);

/** Checks of the reply of each invoke channel. */
export const INVOKE_REPLY: Record<InvokeChannel, (x: unknown) => boolean> = {
  [INVOKE_CHANNELS.initialDocument]: nullOr(isHostDocument),
  [INVOKE_CHANNELS.openDocument]: nullOr(isHostDocument),
  [INVOKE_CHANNELS.saveDocument]: nullOr(isSaveResult),
  [INVOKE_CHANNELS.newWindow]: (x) => typeof x === 'boolean',
  [INVOKE_CHANNELS.listSamples]: listOf(isSampleInfo),
  [INVOKE_CHANNELS.readSample]: isHostDocument,
  [INVOKE_CHANNELS.autosave]: (x) => x === undefined || x === null,
  [INVOKE_CHANNELS.loadAutosave]: listOf(isAutosaveDraft),
  [INVOKE_CHANNELS.clearAutosave]: (x) => x === undefined || x === null,
  [INVOKE_CHANNELS.recentDocuments]: listOf(isRecentDocument),
  [INVOKE_CHANNELS.openRecent]: nullOr(isHostDocument),
  [INVOKE_CHANNELS.printSheet]: (x) => typeof x === 'boolean',
  [INVOKE_CHANNELS.exportPdf]: nullOr(isSaveResult),
  [INVOKE_CHANNELS.saveTextFile]: nullOr(isSaveResult),
};

/** Checks of the payload of each event channel. */
export const EVENT_PAYLOAD: Record<EventChannel, (x: unknown) => boolean> = {
  [EVENT_CHANNELS.menuCommand]: isCommandId,
  [EVENT_CHANNELS.openDocument]: isHostDocument,
};

/** The file name for a document name: keeps it when it ends in .spinyard, else appends the extension. */
export function withDocumentExtension(name: string): string {
  return name.toLowerCase().endsWith(DOCUMENT_EXTENSION) ? name : `${name}${DOCUMENT_EXTENSION}`;
}
