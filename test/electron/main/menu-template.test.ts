import { describe, expect, it } from 'vitest';
import { buildMenuTemplate, flattenMenu, type MenuItemSpec } from '../../../electron/main/menu-template.ts';

const build = (platform: string, extra: Partial<Parameters<typeof buildMenuTemplate>[0]> = {}) =>
  buildMenuTemplate({ platform, appName: 'Spinyard', recent: [], samples: [], ...extra });
const byCommand = (items: MenuItemSpec[], id: string) => flattenMenu(items).filter((i) => i.command === id);
const accel = (items: MenuItemSpec[], id: string) => byCommand(items, id).find((i) => i.visible !== false)?.accelerator;
const top = (items: MenuItemSpec[]) => items.map((i) => i.label);

describe('buildMenuTemplate', () => {
  it('uses CmdOrCtrl accelerators for File on every platform', () => {
    for (const p of ['linux', 'win32', 'darwin']) {
      const t = build(p);
      expect(accel(t, 'file.new')).toBe('CmdOrCtrl+N');
      expect(accel(t, 'file.open')).toBe('CmdOrCtrl+O');
      expect(accel(t, 'file.save')).toBe('CmdOrCtrl+S');
      expect(accel(t, 'file.saveAs')).toBe('CmdOrCtrl+Shift+S');
      expect(accel(t, 'file.close')).toBe('CmdOrCtrl+W');
      expect(accel(t, 'edit.undo')).toBe('CmdOrCtrl+Z');
      expect(accel(t, 'view.zoomIn')).toBe('CmdOrCtrl+=');
      expect(accel(t, 'view.zoomOut')).toBe('CmdOrCtrl+-');
      expect(accel(t, 'view.zoomReset')).toBe('CmdOrCtrl+0');
    }
  });

  it('binds Redo to Ctrl+Y with a hidden Shift+Ctrl+Z on Windows and Linux', () => {
    for (const p of ['linux', 'win32']) {
      const redo = byCommand(build(p), 'edit.redo');
      expect(redo.map((r) => [r.accelerator, r.visible ?? true])).toEqual([
        ['Ctrl+Y', true],
        ['CmdOrCtrl+Shift+Z', false],
      ]);
    }
  });

  it('binds Redo to Cmd+Shift+Z on darwin, once', () => {
    const redo = byCommand(build('darwin'), 'edit.redo');
    expect(redo.map((r) => r.accelerator)).toEqual(['Cmd+Shift+Z']);
  });

  it('has the app menu first on darwin only, and About under Help elsewhere', () => {
    expect(top(build('darwin'))).toEqual(['Spinyard', 'File', 'Edit', 'View', 'Samples', 'Window', 'Help']);
    expect(top(build('linux'))).toEqual(['&File', '&Edit', '&View', '&Samples', '&Help']);
    const mac = build('darwin');
    expect(mac[0].submenu!.some((i) => i.command === 'help.about')).toBe(true);
    expect(mac[0].submenu!.some((i) => i.role === 'quit')).toBe(true);
    const help = build('win32').find((i) => i.label === '&Help')!;
    expect(help.submenu!.map((i) => i.command).filter(Boolean)).toEqual(['help.about', 'help.readme']);
    expect(flattenMenu(build('win32')).some((i) => i.role === 'quit')).toBe(true);
  });

  it('lists recent documents with a Clear item, or a disabled placeholder', () => {
    const empty = flattenMenu(build('linux')).find((i) => i.label === 'Open Recent')!;
    expect(empty.submenu).toEqual([{ label: 'No Recent Documents', enabled: false }]);
    const t = build('linux', { recent: [{ id: '/lab/a.spinyard', name: 'a.spinyard', path: '/lab/a.spinyard', openedAt: 1 }] });
    const sub = flattenMenu(t).find((i) => i.label === 'Open Recent')!.submenu!;
    expect(sub[0]).toEqual({ label: '/lab/a.spinyard', action: { kind: 'openRecent', id: '/lab/a.spinyard' } });
    expect(sub.at(-1)!.action).toEqual({ kind: 'clearRecent' });
  });

  it('lists samples by title and name', () => {
    const t = build('linux', { samples: [{ name: 'bench-b.spinyard', title: 'Bench B, roll scan' }] });
    const samples = t.find((i) => i.label === '&Samples')!.submenu!;
    expect(samples).toEqual([{ label: 'Bench B, roll scan (bench-b.spinyard)', action: { kind: 'openSample', name: 'bench-b.spinyard' } }]);
  });

  it('has the clipboard roles in Edit and the dark-theme toggle in View', () => {
    const roles = flattenMenu(build('linux')).map((i) => i.role).filter(Boolean);
    for (const r of ['cut', 'copy', 'paste', 'selectAll']) expect(roles).toContain(r);
    expect(accel(build('linux'), 'view.toggleDark')).toBe('CmdOrCtrl+Shift+D');
    expect(accel(build('linux'), 'view.scanPanel')).toBe('Alt+S');
    expect(accel(build('darwin'), 'view.budgetPanel')).toBe('Alt+B');
    expect(roles).not.toContain('toggleDevTools');
    expect(flattenMenu(build('linux', { devTools: true })).some((i) => i.role === 'toggleDevTools')).toBe(true);
  });

  it('gives no two visible items the same accelerator', () => {
    for (const p of ['linux', 'win32', 'darwin']) {
      const keys = flattenMenu(build(p)).map((i) => i.accelerator).filter((a): a is string => a !== undefined);
      expect(new Set(keys).size).toBe(keys.length);
    }
  });
});
