import { describe, it, expect, vi } from 'vitest';
import { commandLabel, createRegistry, filterCommands, shortcutLabel, type Command } from '../../src/app/commands.ts';

interface Ctx { log: string[]; canUndo: boolean }
const key = (k: string, mods: Partial<{ ctrl: boolean; shift: boolean; alt: boolean; meta: boolean }> = {}) => ({
  key: k, ctrlKey: !!mods.ctrl, shiftKey: !!mods.shift, altKey: !!mods.alt, metaKey: !!mods.meta,
});

function registry() {
  const r = createRegistry<Ctx>();
  const cmds: Command<Ctx>[] = [
    { id: 'edit.undo', label: 'Undo', menu: 'Edit', shortcut: 'CmdOrCtrl+Z', enabled: (c) => c.canUndo, perform: (c) => void c.log.push('undo') },
    { id: 'edit.redo', label: 'Redo', menu: 'Edit', shortcut: 'Ctrl+Y', alternates: ['Ctrl+Shift+Z'], perform: (c) => void c.log.push('redo') },
    { id: 'file.saveAs', label: 'Save As…', menu: 'File', shortcut: 'CmdOrCtrl+Shift+S', perform: (c) => void c.log.push('saveAs') },
    { id: 'element.delete', label: 'Delete Element', menu: 'Element', shortcut: 'Delete', perform: (c) => void c.log.push('delete') },
  ];
  for (const c of cmds) r.register(c);
  return r;
}

describe('createRegistry', () => {
  it('runs an enabled command by id and refuses a disabled or unknown one', () => {
    const r = registry();
    const ctx: Ctx = { log: [], canUndo: false };
    expect(r.run('edit.undo', ctx)).toBe(false);
    expect(r.run('no.such', ctx)).toBe(false);
    ctx.canUndo = true;
    expect(r.run('edit.undo', ctx)).toBe(true);
    expect(ctx.log).toEqual(['undo']);
  });

  it('refuses a second command with the same id', () => {
    const r = registry();
    expect(() => r.register({ id: 'edit.undo', label: 'x', menu: 'Edit', perform: () => {} })).toThrow(/twice/);
  });

  it('finds commands by their shortcut, alternates included, per platform', () => {
    const r = registry();
    expect(r.forKey(key('z', { ctrl: true }), 'linux')?.id).toBe('edit.undo');
    expect(r.forKey(key('z', { meta: true }), 'darwin')?.id).toBe('edit.undo');
    expect(r.forKey(key('z', { meta: true }), 'linux')).toBeUndefined();
    expect(r.forKey(key('Z', { ctrl: true, shift: true }), 'linux')?.id).toBe('edit.redo');
    expect(r.forKey(key('S', { ctrl: true, shift: true }), 'win32')?.id).toBe('file.saveAs');
    expect(r.forKey(key('s', { ctrl: true }), 'linux')).toBeUndefined();
    expect(r.forKey(key('Delete'), 'linux')?.id).toBe('element.delete');
  });

  it('reports a failing command to onError instead of throwing', () => {
    const onError = vi.fn();
    const r = createRegistry<Ctx>(onError);
    r.register({ id: 'x.fail', label: 'Fail', menu: 'Edit', perform: () => { throw new Error('boom'); } });
    expect(r.run('x.fail', { log: [], canUndo: false })).toBe(true);
    expect(onError).toHaveBeenCalledWith('x.fail', expect.any(Error));
  });

  it('removes a dynamic group by prefix', () => {
    const r = registry();
    r.register({ id: 'samples.open.a.spinyard', label: 'A', menu: 'Samples', perform: () => {} });
    r.register({ id: 'samples.open.b.spinyard', label: 'B', menu: 'Samples', perform: () => {} });
    r.unregisterPrefix('samples.open.');
    expect(r.list().map((c) => c.id)).not.toContain('samples.open.a.spinyard');
    expect(r.list()).toHaveLength(4);
  });
});

describe('commands with an argument', () => {
  interface ACtx { log: string[] }
  const withArg = () => {
    const r = createRegistry<ACtx>();
    r.register({ id: 'file.save', label: 'Save', menu: 'File', shortcut: 'CmdOrCtrl+S', perform: (c) => void c.log.push('save') });
    r.register({
      id: 'inspector.edit', label: 'Edit', menu: 'Element', takesArg: true, shortcut: 'CmdOrCtrl+E',
      choices: () => [{ label: 'Set Species: Ag', arg: 'Ag' }, { label: 'Set Species: Rb-87', arg: 'Rb-87' }],
      perform: (c, a) => void c.log.push(`edit ${String(a)}`),
    });
    return r;
  };
  it('run only with their argument, and pass it', () => {
    const r = withArg();
    const ctx: ACtx = { log: [] };
    expect(r.run('inspector.edit', ctx)).toBe(false);
    expect(r.run('inspector.edit', ctx, 'K-39')).toBe(true);
    expect(r.run('file.save', ctx, 'ignored')).toBe(true);
    expect(ctx.log).toEqual(['edit K-39', 'save']);
  });
  it('are not pressed by a key; the palette lists their choices, each with its argument', () => {
    const r = withArg();
    expect(r.forKey(key('e', { ctrl: true }), 'linux')).toBeUndefined();
    expect(r.entries({ log: [] })).toEqual([
      { key: 'file.save', id: 'file.save', label: 'Save', menu: 'File', shortcut: 'CmdOrCtrl+S' },
      { key: 'inspector.edit#0', id: 'inspector.edit', label: 'Set Species: Ag', menu: 'Element', arg: 'Ag' },
      { key: 'inspector.edit#1', id: 'inspector.edit', label: 'Set Species: Rb-87', menu: 'Element', arg: 'Rb-87' },
    ]);
    expect(filterCommands(r.entries({ log: [] }), 'species rb').map((e) => e.key)).toEqual(['inspector.edit#1']);
  });
  it('a label may read from the context (describe), else the fixed label', () => {
    const cmd = { id: 'edit.undo', label: 'Undo', menu: 'Edit' as const, describe: (c: { last: string }) => (c.last ? `Undo ${c.last}` : undefined), perform: () => {} };
    expect(commandLabel(cmd, { last: 'M2 gap = 5 cm' })).toBe('Undo M2 gap = 5 cm');
    expect(commandLabel(cmd, { last: '' })).toBe('Undo');
  });
});

describe('filterCommands', () => {
  it('keeps commands whose menu, label or id hold every word, label prefixes first', () => {
    const r = registry();
    expect(filterCommands(r.list(), 'save').map((c) => c.id)).toEqual(['file.saveAs']);
    expect(filterCommands(r.list(), 'edit re').map((c) => c.id)).toEqual(['edit.redo']);
    expect(filterCommands(r.list(), '')).toHaveLength(4);
  });
});

describe('shortcutLabel', () => {
  it('writes Ctrl on Linux/Windows and symbols on macOS', () => {
    expect(shortcutLabel('CmdOrCtrl+Shift+S', 'linux')).toBe('Ctrl+Shift+S');
    expect(shortcutLabel('CmdOrCtrl+Shift+S', 'darwin')).toBe('⌘⇧S');
  });
});
