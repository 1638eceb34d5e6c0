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
