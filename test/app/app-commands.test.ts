import { describe, it, expect, vi } from 'vitest';
import { buildCommands, inspectorChoices, type AppApi, type AppCtx } from '../../src/app/app-commands.ts';
import type { InspectorEdit } from '../../src/app/inspector-edit.ts';
import { createRegistry } from '../../src/app/commands.ts';
import { HOST_COMMANDS } from '../../src/host/contract.ts';
import { historyPush, historyStart, historyUndo } from '../../src/app/history.ts';
import { commandLabel } from '../../src/app/commands.ts';
import { newDocument } from '../../src/app/default-doc.ts';

function fakeApi(over: Partial<AppApi> = {}): AppApi {
  const doc = newDocument();
  const f = () => vi.fn();
  return {
    doc, history: historyStart(doc), selected: undefined, running: false, hasResult: true, samples: [],
    speciesNames: ['Ag', 'Rb-87'], hyperfine: false, edit: f(),
    undo: f(), redo: f(), newDoc: f(), open: vi.fn(async () => {}), save: vi.fn(async () => true), openSample: vi.fn(async () => {}),
    openRecent: vi.fn(async () => {}), toggleDark: f(), zoom: f(), palette: f(), dialog: f(), deleteSelected: f(), duplicateSelected: f(),
    moveSelected: f(), selectStep: f(), cancelRun: f(), close: f(), exportCsv: f(), printSheet: vi.fn(async () => {}), focusPane: f(),
    panels: { scan: false, budget: false, fit: false, simulate: false }, togglePanel: f(), planEdit: f(),
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

  it('finds every shortcut from the key event a browser sends for it', () => {
    // KeyboardEvent.key values of the UI Events spec (W3C, "UI Events KeyboardEvent key Values"), written
    // out here for each key name the menus use; letters arrive lower case without Shift, upper case with it
    const keyValue: Record<string, string> = { Down: 'ArrowDown', Up: 'ArrowUp', Left: 'ArrowLeft', Right: 'ArrowRight', Delete: 'Delete', Escape: 'Escape' };
    const r = registry();
    let checked = 0;
    for (const c of buildCommands()) {
      if (!c.shortcut) continue;
      const parts = c.shortcut.split(/\+(?!$)/);
      const k = parts.pop()!;
      const shift = parts.includes('Shift');
      const key = keyValue[k] ?? (/^[A-Z]$/.test(k) ? (shift ? k : k.toLowerCase()) : k);
      const ev = { key, ctrlKey: parts.includes('CmdOrCtrl') || parts.includes('Ctrl'), metaKey: false, shiftKey: shift, altKey: parts.includes('Alt') };
      expect(r.forKey(ev, 'linux')?.id, `${c.shortcut} sent as ${JSON.stringify(ev)}`).toBe(c.id);
      checked++;
    }
    expect(checked).toBeGreaterThanOrEqual(20);
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

  it('runs an inspector edit as the command inspector.edit, which needs its edit', () => {
    const r = registry();
    const api = fakeApi();
    const e: InspectorEdit = { kind: 'quantity', path: 'elements[1].axis.roll', text: '35 deg', spec: { type: 'quantity', key: 'axis.roll', label: 'axis roll', dim: 'angle' } };
    expect(r.run('inspector.edit', { app: api })).toBe(false);
    expect(api.edit).not.toHaveBeenCalled();
    expect(r.run('inspector.edit', { app: api }, e)).toBe(true);
    expect(api.edit).toHaveBeenCalledWith(e);
    expect(r.get('inspector.edit')!.shortcut).toBeUndefined();
  });

  it('names in Undo and Redo the edit they take back or make again', () => {
    const r = registry();
    const doc = newDocument();
    const a = { ...doc, title: 'a' };
    const undoable = fakeApi({ history: historyPush(historyStart(doc), a, { label: 'M2 axis.roll = 35 deg' }) });
    expect(commandLabel(r.get('edit.undo')!, { app: undoable })).toBe('Undo M2 axis.roll = 35 deg');
    expect(commandLabel(r.get('edit.redo')!, { app: undoable })).toBe('Redo');
    const redoable = fakeApi({ history: historyUndo(undoable.history) });
    expect(commandLabel(r.get('edit.redo')!, { app: redoable })).toBe('Redo M2 axis.roll = 35 deg');
    expect(commandLabel(r.get('edit.undo')!, { app: redoable })).toBe('Undo');
    expect(r.entries({ app: undoable }).find((x) => x.id === 'edit.undo')!.label).toBe('Undo M2 axis.roll = 35 deg');
  });

  it('offers the inspector\'s choices in the palette: species, velocity distribution and the selection\'s choices', () => {
    const r = registry();
    const api = fakeApi({ selected: 'M2', hyperfine: true });
    const entries = r.entries({ app: api }).filter((x) => x.id === 'inspector.edit');
    const labels = entries.map((x) => x.label);
    expect(labels).toEqual(expect.arrayContaining(['Set Species: Ag', 'Set Species: Rb-87', 'Set Velocity Distribution: effusive', 'Set M2 ports group: mJ', 'Set M2 entry: sudden']));
    expect(labels).not.toContain('Set Species: bare spin'); // the new document's species already
    expect(labels).not.toContain('Set Velocity Distribution: fixed');
    expect(labels).not.toContain('Set M2 ports group: (default)');
    const pick = entries.find((x) => x.label === 'Set Species: Rb-87')!;
    expect(r.run(pick.id, { app: api }, pick.arg)).toBe(true);
    expect(api.edit).toHaveBeenCalledWith({ kind: 'species', value: 'Rb-87' });
    const group = entries.find((x) => x.label === 'Set M2 ports group: each')!;
    expect(group.arg).toEqual({ kind: 'value', path: 'elements[1].group', value: 'each' });
    expect(new Set(r.entries({ app: api }).map((x) => x.key)).size).toBe(r.entries({ app: api }).length);
  });

  it('offers a switch of the selected element as on or off, and no element choices without a selection', () => {
    const doc = newDocument();
    const withC = { ...doc, elements: [...doc.elements, { id: 'C1', kind: 'recombiner', axis: { roll: '0 deg' }, open: ['+1/2'], coherent: true, to: 'stop' }] } as never;
    expect(inspectorChoices({ doc: withC, selected: 'C1', speciesNames: [], hyperfine: false }).map((c) => c.label)).toContain('Set C1 coherent: off');
    expect(inspectorChoices({ doc, selected: undefined, speciesNames: [], hyperfine: false }).every((c) => !/^Set [A-Z]\d/.test(c.label))).toBe(true);
  });
});

