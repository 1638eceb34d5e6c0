// The Electron main process: the thin glue between Electron's APIs and the Electron-free modules beside
// it (files, recent list, menu template, window state, autosave, IPC checks, security policy).
//
// The renderer is dist-web (the same build the browser host serves), loaded from the app protocol
// spinyard://app/ (see security.ts for why not file://), or from SPINYARD_DEV_URL (http on loopback)
// during development.

import { app, BrowserWindow, dialog, ipcMain, Menu, protocol, screen, session, shell, type IpcMainEvent, type IpcMainInvokeEvent, type MenuItemConstructorOptions, type Session } from 'electron';
import * as fs from 'node:fs/promises';
import { existsSync, readFileSync } from 'node:fs';
import * as path from 'node:path';
import {
  EVENT_CHANNELS,
  INVOKE_CHANNELS,
  SEND_CHANNELS,
  withDocumentExtension,
  type HostDocument,
  type InvokeChannel,
  type SaveRequest,
  type SaveResult,
  type TextFileRequest,
} from '../../src/host/contract.ts';
import { newSessionId } from '../../src/host/drafts.ts';
import { documentArgs } from './args.ts';
import { atomicWriteFile } from './atomic-save.ts';
import { createAutosaveStore, type AutosaveStore } from './autosave-store.ts';
import { placeDocument, saveTargetWithoutDialog } from './documents.ts';
import { checkInvoke, checkSend, isTrustedSender, originOf, type SenderInfo } from './ipc-validate.ts';
import { buildMenuTemplate, type MenuAction, type MenuItemSpec } from './menu-template.ts';
import { readDocumentFile } from './read-document.ts';
import { createRecentStore } from './recent.ts';
import { listSamples, readSample } from './samples.ts';
import { textFileDialog, textFileTarget } from './text-file.ts';
import { createSheetPages, SHEET_ORIGIN, SHEET_PARTITION } from './sheet-page.ts';
import { removeTempsAtStart } from './temp-cleanup.ts';
import { APP_ENTRY, APP_ORIGIN, APP_SCHEME, CONTENT_SECURITY_POLICY, isAllowedDevUrl, isAllowedExternalLink, mimeTypeOf, resolveAppFile } from './security.ts';
import { cascadeFrom, clampWindowState, DEFAULT_WINDOW, MIN_HEIGHT, MIN_WIDTH, parseWindowState, type WindowState } from './window-state.ts';

const APP_NAME = 'Spinyard';
const FILTERS = [
  { name: 'Spinyard beamline', extensions: ['spinyard'] },
  { name: 'All files', extensions: ['*'] },
];

interface DocWindow {
  win: BrowserWindow;
  id: number;
  path?: string;
  title: string;
  dirty: boolean;
  replaceable: boolean;
  initial: HostDocument | null;
  draftKeys: Set<string>;
  closeAfterSave: boolean;
  forceClose: boolean;
}

const windows = new Map<number, DocWindow>();
let quitting = false;
let finished = false;
let autosaveStore: AutosaveStore | null = null;

const devUrl = process.env.SPINYARD_DEV_URL && isAllowedDevUrl(process.env.SPINYARD_DEV_URL) ? process.env.SPINYARD_DEV_URL : undefined;
const appOrigins = [devUrl ? (originOf(devUrl) ?? APP_ORIGIN) : APP_ORIGIN];
const appRoot = () => app.getAppPath();
const webRoot = () => path.join(appRoot(), 'dist-web');
const samplesDir = () => path.join(appRoot(), 'samples');

protocol.registerSchemesAsPrivileged([
  { scheme: APP_SCHEME, privileges: { standard: true, secure: true, supportFetchAPI: true, corsEnabled: true, codeCache: true } },
]);

if (!app.requestSingleInstanceLock()) {
  app.quit();
} else {
  void start();
}

async function start(): Promise<void> {
  const pendingFiles: string[] = documentArgs(process.argv, process.cwd(), app.isPackaged);
  app.on('open-file', (e, file) => {
    e.preventDefault();
    if (app.isReady()) void openPath(file, focusedRecord()?.id);
    else pendingFiles.push(file);
  });
  app.on('second-instance', (_e, argv, cwd) => {
    const files = documentArgs(argv, cwd, app.isPackaged);
    if (files.length === 0) {
      const rec = focusedRecord() ?? [...windows.values()][0];
      if (rec) focus(rec.win);
      else createWindow(null);
      return;
    }
    for (const f of files) void openPath(f, focusedRecord()?.id);
  });

  await app.whenReady();
  const userData = app.getPath('userData');
  const autosave = createAutosaveStore(userData, { session: newSessionId(Date.now()) });
  autosaveStore = autosave;
  const recent = createRecentStore(userData);
  await autosave.start().catch((e) => console.error('autosave: cannot start', e));

  lockDownSession();
  protocol.handle(APP_SCHEME, serveAppFile);
  registerIpc(autosave, recent);
  await refreshMenu(recent);

  app.on('before-quit', () => {
    quitting = true;
  });
  app.on('will-quit', (e) => {
    if (finished) return;
    e.preventDefault();
    void autosave
      .finish()
      .catch(() => {})
      .finally(() => {
        finished = true;
        app.quit();
      });
  });
  app.on('window-all-closed', () => {
    if (process.platform !== 'darwin' || quitting) app.quit();
  });
  app.on('activate', () => {
    if (windows.size === 0) createWindow(null);
  });
  app.on('web-contents-created', (_e, wc) => {
    wc.on('will-attach-webview', (ev) => ev.preventDefault());
  });

  if (pendingFiles.length === 0) createWindow(null);
  for (const f of pendingFiles) await openPath(f, undefined);

  // Temporary files of saves interrupted in an earlier run (temp-cleanup.ts): after the first window,
  // so that a slow or missing drive of a recent document never delays the start.
  void recent
    .load()
    .then((list) => removeTempsAtStart({ appFolders: [userData, autosave.dir], documents: list.flatMap((r) => (r.path ? [r.path] : [])) }))
    .catch((e) => console.error('cleanup of temporary files failed', e));

  async function openPath(file: string, from: number | undefined): Promise<HostDocument | null> {
    const placement = placeDocument(describeWindows(), file, from, process.platform);
    if (placement.kind === 'focus') {
      focus(windows.get(placement.id)!.win);
      return null;
    }
    const doc = await readDocumentFile(file);
    await recent.add(file, Date.now()).catch(() => {});
    await refreshMenu(recent);
    if (placement.kind === 'here') {
      const rec = windows.get(placement.id)!;
      rec.path = file;
      rec.replaceable = false;
      setRepresented(rec);
      return doc;
    }
    createWindow(doc);
    return null;
  }

  /** Delivers a document without a path (a sample) to `from` when it may take it, else to a new window. */
  function deliver(doc: HostDocument, from: number | undefined): void {
    const placement = placeDocument(describeWindows(), undefined, from, process.platform);
    if (placement.kind === 'here') {
      const rec = windows.get(placement.id)!;
      rec.replaceable = false;
      rec.win.webContents.send(EVENT_CHANNELS.openDocument, doc);
      focus(rec.win);
    } else createWindow(doc);
  }

  async function runAction(action: MenuAction): Promise<void> {
    const from = focusedRecord();
    try {
      if (action.kind === 'openSample') deliver(await readSample(samplesDir(), action.name), from?.id);
      else if (action.kind === 'clearRecent') {
        await recent.clear();
        await refreshMenu(recent);
      } else if (action.kind === 'openRecent') {
        const doc = await openPath(action.id, from?.id);
        if (doc && from) from.win.webContents.send(EVENT_CHANNELS.openDocument, doc);
      }
    } catch (e) {
      if (action.kind === 'openRecent') {
        await recent.remove(action.id).catch(() => {});
        await refreshMenu(recent);
      }
      dialog.showErrorBox('Spinyard', (e as Error).message);
    }
  }

  function sendCommand(id: string): void {
    const rec = focusedRecord();
    if (id === 'file.close') {
      rec?.win.close();
      return;
    }
    if (id === 'help.readme') {
      const readme = path.join(appRoot(), 'README.md');
      if (existsSync(readme)) void shell.openPath(readme);
      else dialog.showErrorBox('Spinyard', `The README is not part of this installation (${readme}).`);
      return;
    }
    if (!rec) {
      // No window (darwin keeps the app running): New and Open still work.
      if (id === 'file.new') createWindow(null);
      if (id === 'file.open') void openWithDialog(undefined).catch((e) => dialog.showErrorBox('Spinyard', (e as Error).message));
      return;
    }
    rec.win.webContents.send(EVENT_CHANNELS.menuCommand, id);
  }

  async function openWithDialog(rec: DocWindow | undefined): Promise<HostDocument | null> {
    const opts = { title: 'Open beamline', properties: ['openFile' as const], filters: FILTERS };
    const res = rec ? await dialog.showOpenDialog(rec.win, opts) : await dialog.showOpenDialog(opts);
    if (res.canceled || res.filePaths.length === 0) return null;
    return openPath(res.filePaths[0], rec?.id);
  }

  async function refreshMenu(store: typeof recent): Promise<void> {
    const template = buildMenuTemplate({
      platform: process.platform,
      appName: APP_NAME,
      recent: await store.load(),
      samples: await listSamples(samplesDir()),
      devTools: !app.isPackaged,
    });
    Menu.setApplicationMenu(Menu.buildFromTemplate(template.map(toElectronItem)));
    if (process.platform === 'darwin') {
      app.clearRecentDocuments();
      for (const r of await store.load()) if (r.path) app.addRecentDocument(r.path);
    }
  }

  function toElectronItem(spec: MenuItemSpec): MenuItemConstructorOptions {
    const item: MenuItemConstructorOptions = {};
    if (spec.type === 'separator') return { type: 'separator' };
    if (spec.label !== undefined) item.label = spec.label;
    if (spec.accelerator !== undefined) item.accelerator = spec.accelerator;
    if (spec.visible !== undefined) {
      item.visible = spec.visible;
      if (!spec.visible) item.acceleratorWorksWhenHidden = true;
    }
    if (spec.enabled !== undefined) item.enabled = spec.enabled;
    if (spec.role !== undefined) item.role = spec.role;
    if (spec.submenu) item.submenu = spec.submenu.map(toElectronItem);
    const command = spec.command;
    const action = spec.action;
    if (command) item.click = () => sendCommand(command);
    else if (action) item.click = () => void runAction(action);
    return item;
  }

  function registerIpc(store: typeof autosave, recentStore: typeof recent): void {
    const handle = <A extends unknown[]>(channel: InvokeChannel, fn: (rec: DocWindow, ...args: A) => unknown) => {
      ipcMain.handle(channel, async (event: IpcMainInvokeEvent, ...args: unknown[]) => {
        const rec = trustedRecord(event);
        if (!rec) throw new Error('refused: not a window of this app');
        const checked = checkInvoke(channel, args);
        if (!checked.ok) throw new Error(checked.error);
        return fn(rec, ...(args as A));
      });
    };
    const on = <A extends unknown[]>(channel: string, fn: (rec: DocWindow, ...args: A) => void) => {
      ipcMain.on(channel, (event: IpcMainEvent, ...args: unknown[]) => {
        const rec = trustedRecord(event);
        if (!rec || !checkSend(channel, args).ok) return;
        fn(rec, ...(args as A));
      });
    };

    handle(INVOKE_CHANNELS.initialDocument, (rec) => rec.initial);
    handle(INVOKE_CHANNELS.openDocument, (rec) => openWithDialog(rec));
    handle(INVOKE_CHANNELS.saveDocument, async (rec, req: SaveRequest) => {
      const result = await saveFromWindow(rec, req).catch((e) => {
        rec.closeAfterSave = false;
        throw e;
      });
      if (!result) {
        rec.closeAfterSave = false;
        return null;
      }
      await recentStore.add(result.path!, Date.now()).catch(() => {});
      await refreshMenu(recentStore);
      if (rec.closeAfterSave) {
        rec.forceClose = true;
        setImmediate(() => rec.win.close());
      }
      return result;
    });
    handle(INVOKE_CHANNELS.newWindow, () => {
      createWindow(null);
      return true;
    });
    handle(INVOKE_CHANNELS.listSamples, () => listSamples(samplesDir()));
    handle(INVOKE_CHANNELS.readSample, (_rec, name: string) => readSample(samplesDir(), name));
    handle(INVOKE_CHANNELS.autosave, async (rec, key: string, text: string, name?: string) => {
      rec.draftKeys.add(key);
      await store.save(key, text, name ?? (rec.path ? path.basename(rec.path) : 'untitled.spinyard'), rec.path);
    });
    handle(INVOKE_CHANNELS.loadAutosave, () => store.recoverable());
    handle(INVOKE_CHANNELS.clearAutosave, async (rec, key: string) => {
      rec.draftKeys.delete(key);
      await store.remove(key);
    });
    handle(INVOKE_CHANNELS.recentDocuments, () => recentStore.load());
    handle(INVOKE_CHANNELS.openRecent, async (rec, id: string) => {
      const list = await recentStore.load();
      const entry = list.find((r) => r.id === id);
      if (!entry?.path) return null; // only paths the app itself put in the list
      try {
        return await openPath(entry.path, rec.id);
      } catch (e) {
        await recentStore.remove(id).catch(() => {});
        await refreshMenu(recentStore);
        throw e;
      }
    });
    handle(INVOKE_CHANNELS.printSheet, (rec, html: string) => printHtml(rec, html));
    handle(INVOKE_CHANNELS.exportPdf, (rec, html: string, name: string) => exportPdf(rec, html, name));
    handle(INVOKE_CHANNELS.saveTextFile, (rec, req: TextFileRequest) => saveTextFile(rec, req));

    on(SEND_CHANNELS.setDirty, (rec, dirty: boolean) => {
      rec.dirty = dirty;
      if (dirty) rec.replaceable = false;
      rec.win.setDocumentEdited(dirty);
    });
    on(SEND_CHANNELS.setTitle, (rec, title: string) => {
      rec.title = title;
      rec.win.setTitle(title);
    });
  }

  async function saveFromWindow(rec: DocWindow, req: SaveRequest): Promise<SaveResult | null> {
    let target = saveTargetWithoutDialog(rec.path, req.path, req.saveAs === true, process.platform);
    if (!target) {
      const res = await dialog.showSaveDialog(rec.win, {
        title: req.saveAs ? 'Save beamline as' : 'Save beamline',
        // A path the renderer names (a recovered draft's file) is only a suggestion in the dialog.
        defaultPath: rec.path ?? req.path ?? path.join(app.getPath('documents'), withDocumentExtension(req.name)),
        filters: FILTERS,
        properties: ['showOverwriteConfirmation', 'createDirectory'],
      });
      if (res.canceled || !res.filePath) return null;
      target = path.extname(res.filePath) === '' ? withDocumentExtension(res.filePath) : res.filePath;
      const other = placeDocument(describeWindows().filter((w) => w.id !== rec.id), target, undefined, process.platform);
      if (other.kind === 'focus') throw new Error(`${target} is open in another window; close it there first.`);
    }
    await atomicWriteFile(target, req.text);
    rec.path = target;
    rec.dirty = false;
    rec.replaceable = false;
    rec.win.setDocumentEdited(false);
    setRepresented(rec);
    return { path: target, name: path.basename(target) };
  }

  /** Loads sheet HTML into a hidden window of the sheet session (sheet-page.ts: served from memory under
   *  SHEET_CSP) with JavaScript off (the sheet is static HTML and SVG). */
  async function sheetWindow(html: string): Promise<{ win: BrowserWindow; done: () => Promise<void> }> {
    const url = sheetPages.add(html);
    const win = new BrowserWindow({
      show: false,
      webPreferences: { session: sheetSession(), javascript: false, sandbox: true, contextIsolation: true, nodeIntegration: false, webSecurity: true, devTools: false },
    });
    win.webContents.on('will-navigate', (e) => e.preventDefault());
    win.webContents.on('will-redirect', (e) => e.preventDefault());
    win.webContents.setWindowOpenHandler(() => ({ action: 'deny' }));
    const done = async () => {
      if (!win.isDestroyed()) win.destroy();
      sheetPages.remove(url);
    };
    try {
      await win.loadURL(url);
    } catch (e) {
      await done();
      throw e;
    }
    return { win, done };
  }

  async function printHtml(_rec: DocWindow, html: string): Promise<boolean> {
    const { win, done } = await sheetWindow(html);
    try {
      return await new Promise<boolean>((resolve) => win.webContents.print({ silent: false, printBackground: true }, (ok) => resolve(ok)));
    } finally {
      await done();
    }
  }

  async function exportPdf(rec: DocWindow, html: string, name: string): Promise<SaveResult | null> {
    const base = name.replace(/\.spinyard$/i, '');
    const res = await dialog.showSaveDialog(rec.win, {
      title: 'Export setup sheet as PDF',
      defaultPath: path.join(rec.path ? path.dirname(rec.path) : app.getPath('documents'), `${base}.pdf`),
      filters: [{ name: 'PDF', extensions: ['pdf'] }],
      properties: ['showOverwriteConfirmation', 'createDirectory'],
    });
    if (res.canceled || !res.filePath) return null;
    const target = path.extname(res.filePath) === '' ? `${res.filePath}.pdf` : res.filePath;
    const { win, done } = await sheetWindow(html);
    try {
      const pdf = await win.webContents.printToPDF({ printBackground: true, pageSize: 'A4' });
      await atomicWriteFile(target, pdf);
      return { path: target, name: path.basename(target) };
    } finally {
      await done();
    }
  }

  /** A text export (the ports table as CSV): the save dialog (text-file.ts), then an atomic write. */
  async function saveTextFile(rec: DocWindow, req: TextFileRequest): Promise<SaveResult | null> {
    const res = await dialog.showSaveDialog(rec.win, textFileDialog(req.name, rec.path, app.getPath('documents')));
    if (res.canceled || !res.filePath) return null;
    const target = textFileTarget(res.filePath, req.name);
    await atomicWriteFile(target, req.text);
    return { path: target, name: path.basename(target) };
  }
}

// ---------------------------------------------------------------------------------------------------

function describeWindows() {
  return [...windows.values()].map((w) => ({ id: w.id, path: w.path, dirty: w.dirty, replaceable: w.replaceable }));
}

function focusedRecord(): DocWindow | undefined {
  const w = BrowserWindow.getFocusedWindow();
  return w ? [...windows.values()].find((r) => r.win === w) : undefined;
}

function focus(win: BrowserWindow): void {
  if (win.isMinimized()) win.restore();
  win.show();
  win.focus();
}

function setRepresented(rec: DocWindow): void {
  if (process.platform === 'darwin' && rec.path) rec.win.setRepresentedFilename(rec.path);
}

function senderInfo(event: IpcMainEvent | IpcMainInvokeEvent): SenderInfo {
  const frame = event.senderFrame;
  return { webContentsId: event.sender.id, frameUrl: frame ? frame.url : null, isMainFrame: frame ? frame.parent === null : false };
}

function trustedRecord(event: IpcMainEvent | IpcMainInvokeEvent): DocWindow | undefined {
  const own = new Set(windows.keys());
  return isTrustedSender(senderInfo(event), own, appOrigins) ? windows.get(event.sender.id) : undefined;
}

function lockDownSession(ses: Session = session.defaultSession): void {
  ses.setPermissionRequestHandler((_wc, _permission, callback) => callback(false));
  ses.setPermissionCheckHandler(() => false);
  ses.setDevicePermissionHandler(() => false);
  ses.on('will-download', (e) => e.preventDefault());
}

// The print windows' session (sheet-page.ts): in memory, locked down, serving only the sheets waiting to
// be printed; any other request is cancelled before it leaves (the page's policy forbids them anyway).
const sheetPages = createSheetPages();
let sheetSessionMade: Session | null = null;

function sheetSession(): Session {
  if (sheetSessionMade) return sheetSessionMade;
  const ses = session.fromPartition(SHEET_PARTITION);
  lockDownSession(ses);
  ses.webRequest.onBeforeRequest((details, callback) => callback({ cancel: !details.url.startsWith(`${SHEET_ORIGIN}/`) }));
  ses.protocol.handle(APP_SCHEME, (request) => {
    const r = sheetPages.respond(request.url);
    return new Response(r.body, { status: r.status, headers: r.headers });
  });
  sheetSessionMade = ses;
  return ses;
}

async function serveAppFile(request: Request): Promise<Response> {
  const file = resolveAppFile(webRoot(), request.url);
  if (!file) return new Response('not found', { status: 404 });
  try {
    const body = await fs.readFile(file);
    return new Response(new Uint8Array(body), {
      status: 200,
      headers: { 'content-type': mimeTypeOf(file), 'content-security-policy': CONTENT_SECURITY_POLICY, 'x-content-type-options': 'nosniff' },
    });
  } catch {
    return new Response('not found', { status: 404 });
  }
}

// Window size and position, remembered across runs (window-state.json in userData).
const stateFile = () => path.join(app.getPath('userData'), 'window-state.json');
let rememberedState: WindowState | null = null;

function initialBounds(): WindowState {
  const displays = [screen.getPrimaryDisplay(), ...screen.getAllDisplays().filter((d) => d.id !== screen.getPrimaryDisplay().id)].map((d) => d.workArea);
  const last = BrowserWindow.getFocusedWindow() ?? [...windows.values()].at(-1)?.win;
  if (last) {
    const b = last.getBounds();
    const display = screen.getDisplayMatching(b).workArea;
    return clampWindowState({ ...cascadeFrom(b, display), maximized: false }, displays);
  }
  if (!rememberedState) {
    try {
      // Read once at the first window; the file is small and written at every close.
      rememberedState = parseWindowState(JSON.parse(readFileSync(stateFile(), 'utf8')));
    } catch {
      rememberedState = { ...DEFAULT_WINDOW };
    }
  }
  return clampWindowState(rememberedState, displays);
}

function rememberBounds(win: BrowserWindow): void {
  const b = win.getNormalBounds();
  rememberedState = { x: b.x, y: b.y, width: b.width, height: b.height, maximized: win.isMaximized() };
  void atomicWriteFile(stateFile(), JSON.stringify(rememberedState), { backup: false }).catch(() => {});
}

function createWindow(initial: HostDocument | null): BrowserWindow {
  const bounds = initialBounds();
  const win = new BrowserWindow({
    ...(bounds.x !== undefined && bounds.y !== undefined ? { x: bounds.x, y: bounds.y } : {}),
    width: bounds.width,
    height: bounds.height,
    minWidth: MIN_WIDTH,
    minHeight: MIN_HEIGHT,
    show: false,
    title: APP_NAME,
    backgroundColor: '#f4f4f0',
    webPreferences: {
      preload: path.join(__dirname, 'preload.cjs'),
      contextIsolation: true,
      sandbox: true,
      nodeIntegration: false,
      nodeIntegrationInWorker: false,
      webSecurity: true,
      allowRunningInsecureContent: false,
      webviewTag: false,
      spellcheck: false,
      devTools: !app.isPackaged,
    },
  });
  const rec: DocWindow = {
    win,
    id: win.webContents.id,
    path: initial?.path,
    title: initial?.name ?? APP_NAME,
    dirty: false,
    replaceable: initial === null,
    initial,
    draftKeys: new Set(),
    closeAfterSave: false,
    forceClose: false,
  };
  windows.set(rec.id, rec);
  setRepresented(rec);
  if (bounds.maximized) win.maximize();

  const wc = win.webContents;
  wc.on('will-navigate', (e) => e.preventDefault());
  wc.on('will-redirect', (e) => e.preventDefault());
  wc.setWindowOpenHandler(({ url }) => {
    // Only the project's own documentation links (security.ts, EXTERNAL_LINKS); everything else is refused.
    if (isAllowedExternalLink(url)) void shell.openExternal(url);
    return { action: 'deny' };
  });
  win.once('ready-to-show', () => win.show());

  win.on('close', (e) => {
    rememberBounds(win);
    if (!rec.dirty || rec.forceClose) return;
    e.preventDefault();
    const name = rec.path ? path.basename(rec.path) : rec.title;
    const choice = dialog.showMessageBoxSync(win, {
      type: 'warning',
      buttons: ['Save', "Don't Save", 'Cancel'],
      defaultId: 0,
      cancelId: 2,
      noLink: true,
      message: `Save the changes to ${name} before closing?`,
      detail: 'Changes not saved are lost when the window closes.',
    });
    if (choice === 0) {
      rec.closeAfterSave = true;
      wc.send(EVENT_CHANNELS.menuCommand, 'file.save');
    } else if (choice === 1) {
      rec.forceClose = true;
      setImmediate(() => win.close());
    } else {
      quitting = false;
    }
  });
  win.on('closed', () => {
    windows.delete(rec.id);
    // The user saved or discarded this document: its drafts are no longer needed.
    for (const key of rec.draftKeys) void autosaveStore?.remove(key);
    if (quitting) app.quit(); // go on asking the other windows
  });

  const url = devUrl ?? APP_ENTRY;
  void win.loadURL(url).catch((e) => console.error(`cannot load ${url}`, e));
  return win;
}

