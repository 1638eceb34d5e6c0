import { describe, expect, it } from 'vitest';
import { INVOKE_CHANNELS, SEND_CHANNELS } from '../../../src/host/contract.ts';
import { checkInvoke, checkSend, isTrustedSender, originOf } from '../../../electron/main/ipc-validate.ts';

const own = new Set([3, 7]);
const origins = ['spinyard://app'];

describe('isTrustedSender', () => {
  it('accepts the main frame of an app window showing the app', () => {
    expect(isTrustedSender({ webContentsId: 3, frameUrl: 'spinyard://app/index.html', isMainFrame: true }, own, origins)).toBe(true);
  });
  it('ignores a webContents the app did not create', () => {
    expect(isTrustedSender({ webContentsId: 4, frameUrl: 'spinyard://app/index.html', isMainFrame: true }, own, origins)).toBe(false);
  });
  it('ignores sub-frames, gone frames and foreign pages', () => {
    expect(isTrustedSender({ webContentsId: 3, frameUrl: 'spinyard://app/index.html', isMainFrame: false }, own, origins)).toBe(false);
    expect(isTrustedSender({ webContentsId: 3, frameUrl: null, isMainFrame: true }, own, origins)).toBe(false);
    expect(isTrustedSender({ webContentsId: 3, frameUrl: 'https://example.org/', isMainFrame: true }, own, origins)).toBe(false);
    expect(isTrustedSender({ webContentsId: 3, frameUrl: 'file:///tmp/x.html', isMainFrame: true }, own, origins)).toBe(false);
    expect(isTrustedSender({ webContentsId: 3, frameUrl: 'spinyard://evil/index.html', isMainFrame: true }, own, origins)).toBe(false);
  });
  it('accepts the dev server origin when that is the app origin', () => {
    expect(isTrustedSender({ webContentsId: 7, frameUrl: 'http://127.0.0.1:5173/', isMainFrame: true }, own, ['http://127.0.0.1:5173'])).toBe(true);
    expect(isTrustedSender({ webContentsId: 7, frameUrl: 'http://127.0.0.1:5174/', isMainFrame: true }, own, ['http://127.0.0.1:5173'])).toBe(false);
  });
});

describe('originOf', () => {
  it('gives scheme and host', () => {
    expect(originOf('spinyard://app/a/b.html?x')).toBe('spinyard://app');
    expect(originOf('not a url')).toBeNull();
  });
});

describe('checkInvoke', () => {
  it('accepts well-formed payloads', () => {
    expect(checkInvoke(INVOKE_CHANNELS.saveDocument, [{ name: 'a.spinyard', text: '{}' }])).toEqual({ ok: true });
    expect(checkInvoke(INVOKE_CHANNELS.openDocument, [])).toEqual({ ok: true });
  });
  it('rejects bad payloads, naming the channel', () => {
    const bad: [string, unknown[]][] = [
      [INVOKE_CHANNELS.saveDocument, [{ name: 'a.spinyard' }]],
      [INVOKE_CHANNELS.saveDocument, [{ name: 'a.spinyard', text: '{}', path: '../../etc/passwd' }]],
      [INVOKE_CHANNELS.saveDocument, []],
      [INVOKE_CHANNELS.readSample, ['../package.json']],
      [INVOKE_CHANNELS.autosave, ['../k', 'x']],
      [INVOKE_CHANNELS.clearAutosave, [5]],
      [INVOKE_CHANNELS.openRecent, ['a\u0000b']],
      [INVOKE_CHANNELS.printSheet, ['']],
      [INVOKE_CHANNELS.openDocument, [{ path: '/etc/passwd' }]],
    ];
    for (const [ch, args] of bad) {
      const r = checkInvoke(ch, args);
      expect(r.ok, `${ch} ${JSON.stringify(args)}`).toBe(false);
      if (!r.ok) expect(r.error).toContain(ch);
    }
  });
  it('rejects channels outside the contract', () => {
    expect(checkInvoke('spinyard:format-disk', [])).toMatchObject({ ok: false });
    expect(checkInvoke(SEND_CHANNELS.setDirty, [true])).toMatchObject({ ok: false });
  });
});

describe('checkSend', () => {
  it('checks the one-way messages', () => {
    expect(checkSend(SEND_CHANNELS.setDirty, [false])).toEqual({ ok: true });
    expect(checkSend(SEND_CHANNELS.setDirty, [1])).toMatchObject({ ok: false });
    expect(checkSend(SEND_CHANNELS.setTitle, ['Bench B'])).toEqual({ ok: true });
    expect(checkSend(SEND_CHANNELS.setTitle, ['x'.repeat(301)])).toMatchObject({ ok: false });
    expect(checkSend(INVOKE_CHANNELS.openDocument, [])).toMatchObject({ ok: false });
  });
});
