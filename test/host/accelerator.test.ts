import { describe, expect, it } from 'vitest';
import { acceleratorMatches, commandForKey, type KeyLike } from '../../src/host/accelerator.ts';

const key = (k: string, mods: Partial<KeyLike> = {}): KeyLike => ({ key: k, ctrlKey: false, metaKey: false, shiftKey: false, altKey: false, ...mods });

describe('acceleratorMatches', () => {
  it('reads CmdOrCtrl as Meta on darwin and Ctrl elsewhere', () => {
    expect(acceleratorMatches('CmdOrCtrl+S', key('s', { metaKey: true }), 'darwin')).toBe(true);
    expect(acceleratorMatches('CmdOrCtrl+S', key('s', { ctrlKey: true }), 'darwin')).toBe(false);
    expect(acceleratorMatches('CmdOrCtrl+S', key('s', { ctrlKey: true }), 'linux')).toBe(true);
  });
  it('requires the exact modifiers', () => {
    expect(acceleratorMatches('CmdOrCtrl+S', key('S', { ctrlKey: true, shiftKey: true }), 'win32')).toBe(false);
    expect(acceleratorMatches('CmdOrCtrl+Shift+S', key('S', { ctrlKey: true, shiftKey: true }), 'win32')).toBe(true);
  });
  it('matches the Plus and minus keys', () => {
    expect(acceleratorMatches('CmdOrCtrl+Plus', key('+', { ctrlKey: true, shiftKey: true }), 'linux')).toBe(true);
    expect(acceleratorMatches('CmdOrCtrl+-', key('-', { ctrlKey: true }), 'linux')).toBe(true);
  });
});

describe('commandForKey', () => {
  it('finds commands by their platform keys', () => {
    expect(commandForKey(key('z', { ctrlKey: true }), 'linux')).toBe('edit.undo');
    expect(commandForKey(key('y', { ctrlKey: true }), 'linux')).toBe('edit.redo');
    expect(commandForKey(key('Z', { ctrlKey: true, shiftKey: true }), 'linux')).toBe('edit.redo');
    expect(commandForKey(key('Z', { metaKey: true, shiftKey: true }), 'darwin')).toBe('edit.redo');
    expect(commandForKey(key('y', { metaKey: true }), 'darwin')).toBeUndefined();
    expect(commandForKey(key('n', { ctrlKey: true }), 'win32')).toBe('file.new');
    expect(commandForKey(key('q'), 'linux')).toBeUndefined();
  });
});

describe('named keys as the browser reports them', () => {
  // Electron's accelerator names (https://www.electronjs.org/docs/latest/api/accelerator, "Available key
  // codes") against KeyboardEvent.key values (UI Events KeyboardEvent key Values, W3C).
  it('maps Up, Down, Left and Right to the ArrowUp … ArrowRight keys', () => {
    expect(acceleratorMatches('Alt+Down', key('ArrowDown', { altKey: true }), 'linux')).toBe(true);
    expect(acceleratorMatches('Alt+Up', key('ArrowUp', { altKey: true }), 'linux')).toBe(true);
    expect(acceleratorMatches('Alt+Shift+Right', key('ArrowRight', { altKey: true, shiftKey: true }), 'win32')).toBe(true);
    expect(acceleratorMatches('Alt+Shift+Left', key('ArrowLeft', { altKey: true, shiftKey: true }), 'darwin')).toBe(true);
    expect(acceleratorMatches('Alt+Down', key('ArrowUp', { altKey: true }), 'linux')).toBe(false);
    expect(acceleratorMatches('Alt+Down', key('ArrowDown'), 'linux')).toBe(false);
    expect(acceleratorMatches('Alt+Shift+Right', key('ArrowRight', { altKey: true }), 'linux')).toBe(false);
  });
  it('maps the other named keys', () => {
    const pairs: [string, string][] = [
      ['Home', 'Home'], ['End', 'End'], ['PageUp', 'PageUp'], ['PageDown', 'PageDown'], ['Return', 'Enter'], ['Enter', 'Enter'],
      ['Tab', 'Tab'], ['Backspace', 'Backspace'], ['Delete', 'Delete'], ['Insert', 'Insert'], ['Space', ' '], ['Esc', 'Escape'], ['Escape', 'Escape'], ['F5', 'F5'],
    ];
    for (const [acc, k] of pairs) expect(acceleratorMatches(`Alt+${acc}`, key(k, { altKey: true }), 'linux'), acc).toBe(true);
    expect(acceleratorMatches('Alt+Home', key('End', { altKey: true }), 'linux')).toBe(false);
  });
  it('reads a letter or digit with Alt from the key position where Option changes the character (darwin)', () => {
    expect(acceleratorMatches('Alt+A', { ...key('å', { altKey: true }), code: 'KeyA' }, 'darwin')).toBe(true);
    expect(acceleratorMatches('Alt+1', { ...key('¡', { altKey: true }), code: 'Digit1' }, 'darwin')).toBe(true);
    expect(acceleratorMatches('Alt+R', { ...key('å', { altKey: true }), code: 'KeyA' }, 'darwin')).toBe(false);
    // without Alt the character decides (other keyboard layouts)
    expect(acceleratorMatches('CmdOrCtrl+Z', { ...key('z', { ctrlKey: true }), code: 'KeyY' }, 'linux')).toBe(true);
    expect(acceleratorMatches('CmdOrCtrl+Y', { ...key('z', { ctrlKey: true }), code: 'KeyY' }, 'linux')).toBe(false);
  });
});
