import { describe, it, expect, vi } from 'vitest';
import { buildCommands, type AppApi, type AppCtx } from '../../src/app/app-commands.ts';
import { createRegistry } from '../../src/app/commands.ts';
import { HOST_COMMANDS } from '../../src/host/contract.ts';
import { historyPush, historyStart } from '../../src/app/history.ts';
import { newDocument } from '../../src/app/default-doc.ts';

function fakeApi(over: Partial<AppApi> = {}): AppApi {
  const doc = newDocument();
  const f = () => vi.fn();
  return {
    doc, history: historyStart(doc), selected: undefined, running: false, hasResult: true, samples: [],
    undo: f(), redo: f(), newDoc: f(), open: vi.fn(async () => {}), save: vi.fn(async () => {}), openSample: vi.fn(async () => {}),
    openRecent: vi.fn(async () => {}), toggleDark: f(), zoom: f(), palette: f(), dialog: f(), deleteSelected: f(), duplicateSelected: f(),
    moveSelected: f(), selectStep: f(), cancelRun: f(), exportCsv: f(), printSheet: vi.fn(async () => {}), focusPane: f(),
    ...over,
  };
}

function registry() {
  const r = createRegistry<AppCtx>();
  for (const c of buildCommands()) r.register(c);
  return r;
}

describe('buildCommands', () => {
  it('registers every menu command of the host contract under its id', () => {
    const ids = new Set(buildCommands().map((c) => c.id));
    for (const h of HOST_COMMANDS) expect(ids.has(h.id), h.id).toBe(true);
  });

  it('uses the host contract accelerators for the shared commands', () => {
    const r = registry();
    for (const h of HOST_COMMANDS) {
      if (h.accelerator && r.get(h.id)?.shortcut) expect(r.get(h.id)!.shortcut, h.id).toBe(h.accelerator);
    }
  });

  it('gives every command a keyboard path: a shortcut or the palette (Ctrl+K) that lists them all', () => {
    const r = registry();
    expect(r.get('edit.palette')!.shortcut).toBe('CmdOrCtrl+K');
    const keys = r.list().flatMap((c) => (c.shortcut ? [c.shortcut] : []));
    expect(new Set(keys).size).toBe(keys.length); // no shortcut bound twice
  });

  it('enables undo and redo from the history and element edits from the selection', () => {
    const r = registry();
    const doc = newDocument();
    const api = fakeApi();
    expect(r.isEnabled('edit.undo', { app: api })).toBe(false);
    const edited = fakeApi({ history: historyPush(historyStart(doc), { ...doc, title: 'x' }) });
    expect(r.run('edit.undo', { app: edited })).toBe(true);
    expect(edited.undo).toHaveBeenCalledOnce();
    expect(r.run('element.delete', { app: api })).toBe(false);
    expect(r.run('element.delete', { app: fakeApi({ selected: 'oven' }) })).toBe(false);
    const sel = fakeApi({ selected: 'M2' });
    expect(r.run('element.moveDownstream', { app: sel })).toBe(true);
    expect(sel.moveSelected).toHaveBeenCalledWith(0.005);
  });

  it('routes a key event to the same command as the menu', () => {
    const r = registry();
    const ev = { key: 's', ctrlKey: true, metaKey: false, shiftKey: false, altKey: false };
    expect(r.forKey(ev, 'linux')!.id).toBe('file.save');
    expect(r.forKey({ ...ev, ctrlKey: false, metaKey: true }, 'darwin')!.id).toBe('file.save');
    const api = fakeApi();
    r.run('file.save', { app: api });
    expect(api.save).toHaveBeenCalledWith(false);
  });

  it('prints the setup sheet (Ctrl+P) or exports it as a PDF', () => {
    const r = registry();
    const api = fakeApi();
    expect(r.run('file.print', { app: api })).toBe(true);
    expect(api.printSheet).toHaveBeenCalledWith(false);
    r.run('file.exportPdf', { app: api });
    expect(api.printSheet).toHaveBeenCalledWith(true);
    expect(r.get('file.print')!.shortcut).toBe('CmdOrCtrl+P');
  });
});
