import { describe, expect, it } from 'vitest';
import {
  CHANNEL_PREFIX,
  EVENT_CHANNELS,
  EVENT_PAYLOAD,
  HOST_COMMANDS,
  INVOKE_ARGS,
  INVOKE_CHANNELS,
  INVOKE_REPLY,
  MAX_DOCUMENT_CHARS,
  MAX_TEXT_FILE_CHARS,
  SEND_ARGS,
  SEND_CHANNELS,
  commandAccelerator,
  fileExtension,
  isAbsolutePath,
  isAutosaveDraft,
  isCommandId,
  isContractChannel,
  isDocumentName,
  isDraftKey,
  isHostDocument,
  isRecentDocument,
  isSampleName,
  isSaveRequest,
  isSaveResult,
  isSheetHtml,
  isTextFileName,
  isTextFileRequest,
  isWindowTitle,
  parseSampleIndex,
  withDocumentExtension,
} from '../../src/host/contract.ts';

describe('channels', () => {
  const all = [...Object.values(INVOKE_CHANNELS), ...Object.values(SEND_CHANNELS), ...Object.values(EVENT_CHANNELS)];
  it('all start with "spinyard:" and are distinct', () => {
    for (const c of all) expect(c.startsWith(CHANNEL_PREFIX)).toBe(true);
    expect(new Set(all).size).toBe(all.length);
  });
  it('isContractChannel accepts the listed channels only', () => {
    for (const c of all) expect(isContractChannel(c)).toBe(true);
    expect(isContractChannel('spinyard:unknown')).toBe(false);
    expect(isContractChannel('open-document')).toBe(false);
    expect(isContractChannel('ELECTRON_BROWSER_REQUIRE')).toBe(false);
    expect(isContractChannel(42)).toBe(false);
  });
  it('every invoke channel has an argument check and a reply check; every send and event channel a check', () => {
    for (const c of Object.values(INVOKE_CHANNELS)) {
      expect(typeof INVOKE_ARGS[c]).toBe('function');
      expect(typeof INVOKE_REPLY[c]).toBe('function');
    }
    for (const c of Object.values(SEND_CHANNELS)) expect(typeof SEND_ARGS[c]).toBe('function');
    for (const c of Object.values(EVENT_CHANNELS)) expect(typeof EVENT_PAYLOAD[c]).toBe('function');
  });
});

describe('isDocumentName', () => {
  it('accepts file names', () => {
    for (const n of ['bench-b.spinyard', 'Roll scan 60°.spinyard', 'a', 'untitled.spinyard']) expect(isDocumentName(n)).toBe(true);
  });
  it('refuses paths, control characters, dot names, empty and over-long names', () => {
    for (const n of ['', '.', '..', 'a/b.spinyard', 'a\\b.spinyard', 'x\u0000.spinyard', 'x\n', 'x'.repeat(256), 3, null]) {
      expect(isDocumentName(n)).toBe(false);
    }
  });
});

describe('isAbsolutePath', () => {
  it('accepts POSIX, drive and UNC paths', () => {
    expect(isAbsolutePath('/home/lab/bench.spinyard')).toBe(true);
    expect(isAbsolutePath('C:\\Lab\\bench.spinyard')).toBe(true);
    expect(isAbsolutePath('\\\\server\\share\\b.spinyard')).toBe(true);
  });
  it('refuses relative paths and control characters', () => {
    expect(isAbsolutePath('bench.spinyard')).toBe(false);
    expect(isAbsolutePath('../etc/passwd')).toBe(false);
    expect(isAbsolutePath('/tmp/a\u0000b')).toBe(false);
    expect(isAbsolutePath('')).toBe(false);
  });
});

describe('isSaveRequest', () => {
  const ok = { name: 'bench.spinyard', text: '{}' };
  it('accepts a request with and without path and saveAs', () => {
    expect(isSaveRequest(ok)).toBe(true);
    expect(isSaveRequest({ ...ok, path: '/lab/bench.spinyard', saveAs: true })).toBe(true);
  });
  it('refuses missing text, wrong types, relative paths, unknown keys and oversized text', () => {
    expect(isSaveRequest({ name: 'a.spinyard' })).toBe(false);
    expect(isSaveRequest({ ...ok, text: 5 })).toBe(false);
    expect(isSaveRequest({ ...ok, saveAs: 'yes' })).toBe(false);
    expect(isSaveRequest({ ...ok, path: 'relative.spinyard' })).toBe(false);
    expect(isSaveRequest({ ...ok, mode: 0o777 })).toBe(false);
    expect(isSaveRequest({ ...ok, name: '../x.spinyard' })).toBe(false);
    expect(isSaveRequest([ok])).toBe(false);
    expect(isSaveRequest(null)).toBe(false);
    expect(isSaveRequest({ ...ok, text: 'x'.repeat(MAX_DOCUMENT_CHARS + 1) })).toBe(false);
    // every document that opens (at most 20 MiB of UTF-8) can be saved again
    expect(MAX_DOCUMENT_CHARS).toBe(20 * 1024 * 1024);
    expect(isSaveRequest({ ...ok, text: 'x'.repeat(20 * 1024 * 1024) })).toBe(true);
  });
});

describe('isHostDocument / isSaveResult', () => {
  it('accept well-formed values and refuse extra keys', () => {
    expect(isHostDocument({ name: 'a.spinyard', text: '' })).toBe(true);
    expect(isHostDocument({ name: 'a.spinyard', text: '', path: '/a.spinyard' })).toBe(true);
    expect(isHostDocument({ name: 'a.spinyard', text: '', extra: 1 })).toBe(false);
    expect(isSaveResult({ name: 'a.spinyard' })).toBe(true);
    expect(isSaveResult({ name: 'a.spinyard', path: 'a.spinyard' })).toBe(false);
  });
});

describe('isSampleName', () => {
  it('accepts plain .spinyard file names', () => {
    expect(isSampleName('bench-b_roll.v2.spinyard')).toBe(true);
  });
  it('refuses folders, traversal, other extensions and hidden files', () => {
    for (const n of ['../secret.spinyard', 'a/b.spinyard', 'a..b.spinyard', '.hidden.spinyard', 'b.json', 'b.spinyard.bak', '']) {
      expect(isSampleName(n)).toBe(false);
    }
  });
});

describe('parseSampleIndex', () => {
  it('reads the {samples:[{name,title}]} index', () => {
    expect(parseSampleIndex({ samples: [{ name: 'a.spinyard', title: 'Bench A' }, { name: 'b.spinyard' }] })).toEqual([
      { name: 'a.spinyard', title: 'Bench A' },
      { name: 'b.spinyard' },
    ]);
  });
  it('reads a bare list of names', () => {
    expect(parseSampleIndex(['a.spinyard'])).toEqual([{ name: 'a.spinyard' }]);
  });
  it('refuses an index with a bad entry', () => {
    expect(parseSampleIndex({ samples: [{ name: '../a.spinyard' }] })).toBeNull();
    expect(parseSampleIndex({ samples: [{ name: 'a.spinyard', url: 'http://x' }] })).toBeNull();
    expect(parseSampleIndex({})).toBeNull();
    expect(parseSampleIndex('a.spinyard')).toBeNull();
  });
});

describe('isDraftKey / isAutosaveDraft', () => {
  it('keys are 1–64 safe characters (they become file names)', () => {
    expect(isDraftKey('3f2c9a1e-5b6d-4c1e-9f00-112233445566')).toBe(true);
    expect(isDraftKey('')).toBe(false);
    expect(isDraftKey('a'.repeat(65))).toBe(false);
    expect(isDraftKey('../x')).toBe(false);
    expect(isDraftKey('a.b')).toBe(false);
  });
  it('drafts need every field', () => {
    const d = { key: 'k1', name: 'a.spinyard', text: '{}', savedAt: 1, session: 's1' };
    expect(isAutosaveDraft(d)).toBe(true);
    expect(isAutosaveDraft({ ...d, savedAt: Number.NaN })).toBe(false);
    expect(isAutosaveDraft({ ...d, session: undefined })).toBe(false);
  });
});

describe('isRecentDocument, isWindowTitle, isSheetHtml, isCommandId', () => {
  it('check their payloads', () => {
    expect(isRecentDocument({ id: '/a.spinyard', name: 'a.spinyard', path: '/a.spinyard', openedAt: 5 })).toBe(true);
    expect(isRecentDocument({ id: '/a.spinyard', name: 'a.spinyard', openedAt: '5' })).toBe(false);
    expect(isWindowTitle('Bench B — Spinyard')).toBe(true);
    expect(isWindowTitle('a\nb')).toBe(false);
    expect(isSheetHtml('<html></html>')).toBe(true);
    expect(isSheetHtml('')).toBe(false);
    expect(isCommandId('file.save')).toBe(true);
    expect(isCommandId('file.format-disk')).toBe(false);
  });
});

describe('isTextFileName / isTextFileRequest', () => {
  it('accept an export with a text extension and its text', () => {
    expect(isTextFileName('bench-c-ports.csv')).toBe(true);
    expect(isTextFileName('Ports.CSV')).toBe(true);
    expect(isTextFileName('levels.tsv')).toBe(true);
    expect(isTextFileRequest({ name: 'a.csv', text: '' })).toBe(true);
    expect(fileExtension('a.b.CSV')).toBe('csv');
    expect(fileExtension('.csv')).toBe('');
  });
  it('refuse documents, other or missing extensions, paths, extra keys and oversized text', () => {
    for (const name of ['a.spinyard', 'a.html', 'a', '.csv', 'x/a.csv', '..\\a.csv', 'a.csv\u0000']) expect(isTextFileName(name), name).toBe(false);
    expect(isTextFileRequest({ name: 'a.csv' })).toBe(false);
    expect(isTextFileRequest({ name: 'a.csv', text: 5 })).toBe(false);
    expect(isTextFileRequest({ name: 'a.csv', text: '', path: '/tmp/a.csv' })).toBe(false);
    expect(isTextFileRequest({ name: 'a.csv', text: 'x'.repeat(MAX_TEXT_FILE_CHARS + 1) })).toBe(false);
    expect(isTextFileRequest(null)).toBe(false);
  });
});

describe('INVOKE_ARGS', () => {
  it('refuses extra or missing arguments', () => {
    expect(INVOKE_ARGS[INVOKE_CHANNELS.openDocument]([])).toBe(true);
    expect(INVOKE_ARGS[INVOKE_CHANNELS.openDocument](['/etc/passwd'])).toBe(false);
    expect(INVOKE_ARGS[INVOKE_CHANNELS.readSample](['a.spinyard'])).toBe(true);
    expect(INVOKE_ARGS[INVOKE_CHANNELS.readSample]([])).toBe(false);
    expect(INVOKE_ARGS[INVOKE_CHANNELS.autosave](['k', '{}'])).toBe(true);
    expect(INVOKE_ARGS[INVOKE_CHANNELS.autosave](['k', '{}', 'a.spinyard'])).toBe(true);
    expect(INVOKE_ARGS[INVOKE_CHANNELS.autosave](['k', '{}', 'a/b'])).toBe(false);
    expect(INVOKE_ARGS[INVOKE_CHANNELS.autosave](['k'])).toBe(false);
    expect(INVOKE_ARGS[INVOKE_CHANNELS.exportPdf](['<p>', 'sheet.pdf'])).toBe(true);
    expect(INVOKE_ARGS[INVOKE_CHANNELS.exportPdf](['<p>'])).toBe(false);
    expect(INVOKE_ARGS[INVOKE_CHANNELS.saveTextFile]([{ name: 'a-ports.csv', text: 'a,b\r\n' }])).toBe(true);
    expect(INVOKE_ARGS[INVOKE_CHANNELS.saveTextFile]([{ name: 'a-ports.csv', text: 'x' }, 'y'])).toBe(false);
    expect(INVOKE_ARGS[INVOKE_CHANNELS.saveTextFile]([])).toBe(false);
    expect(SEND_ARGS[SEND_CHANNELS.setDirty]([true])).toBe(true);
    expect(SEND_ARGS[SEND_CHANNELS.setDirty](['true'])).toBe(false);
  });
});

describe('HOST_COMMANDS', () => {
  it('has distinct ids including the ones menus send', () => {
    const ids = HOST_COMMANDS.map((c) => c.id);
    expect(new Set(ids).size).toBe(ids.length);
    for (const id of ['file.new', 'file.open', 'file.save', 'file.saveAs', 'edit.undo', 'edit.redo', 'view.toggleDark', 'view.zoomIn', 'help.about']) {
      expect(ids).toContain(id);
    }
  });
  it('gives redo Ctrl+Y off darwin and Cmd+Shift+Z on darwin', () => {
    expect(commandAccelerator('edit.redo', 'linux')).toBe('Ctrl+Y');
    expect(commandAccelerator('edit.redo', 'win32')).toBe('Ctrl+Y');
    expect(commandAccelerator('edit.redo', 'darwin')).toBe('Cmd+Shift+Z');
    expect(commandAccelerator('file.save', 'darwin')).toBe('CmdOrCtrl+S');
    expect(commandAccelerator('nope', 'linux')).toBeUndefined();
  });
});

describe('withDocumentExtension', () => {
  it('appends .spinyard only when missing', () => {
    expect(withDocumentExtension('bench')).toBe('bench.spinyard');
    expect(withDocumentExtension('bench.SPINYARD')).toBe('bench.SPINYARD');
  });
});
