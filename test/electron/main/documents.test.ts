import { describe, expect, it } from 'vitest';
import { placeDocument, saveTargetWithoutDialog, type WindowDocState } from '../../../electron/main/documents.ts';

const w = (id: number, over: Partial<WindowDocState> = {}): WindowDocState => ({ id, dirty: false, replaceable: false, ...over });

describe('placeDocument', () => {
  it('focuses the window that already shows the file', () => {
    expect(placeDocument([w(1, { path: '/lab/a.spinyard' }), w(2, { replaceable: true })], '/lab/a.spinyard', 2, 'linux')).toEqual({ kind: 'focus', id: 1 });
    expect(placeDocument([w(1, { path: '/Lab/A.spinyard' })], '/lab/a.spinyard', undefined, 'darwin')).toEqual({ kind: 'focus', id: 1 });
  });
  it('opens into the asking window while it holds its untouched new document', () => {
    expect(placeDocument([w(1, { replaceable: true })], '/lab/a.spinyard', 1, 'linux')).toEqual({ kind: 'here', id: 1 });
  });
  it('opens a new window when the asking window has a document of its own or edits', () => {
    expect(placeDocument([w(1, { path: '/lab/b.spinyard' })], '/lab/a.spinyard', 1, 'linux')).toEqual({ kind: 'new' });
    expect(placeDocument([w(1, { replaceable: true, dirty: true })], '/lab/a.spinyard', 1, 'linux')).toEqual({ kind: 'new' });
    expect(placeDocument([w(1, { replaceable: true })], '/lab/a.spinyard', undefined, 'linux')).toEqual({ kind: 'new' });
  });
});

describe('saveTargetWithoutDialog', () => {
  it('saves to the window’s own file without asking', () => {
    expect(saveTargetWithoutDialog('/lab/a.spinyard', undefined, false, 'linux')).toBe('/lab/a.spinyard');
    expect(saveTargetWithoutDialog('/lab/a.spinyard', '/lab/a.spinyard', false, 'linux')).toBe('/lab/a.spinyard');
  });
  it('asks for Save As, untitled documents, and any other path the renderer names', () => {
    expect(saveTargetWithoutDialog('/lab/a.spinyard', undefined, true, 'linux')).toBeNull();
    expect(saveTargetWithoutDialog(undefined, '/lab/a.spinyard', false, 'linux')).toBeNull();
    expect(saveTargetWithoutDialog('/lab/a.spinyard', '/home/lab/.bashrc', false, 'linux')).toBeNull();
  });
});
