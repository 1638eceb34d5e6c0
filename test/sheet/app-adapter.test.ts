/** The app's setup sheet (src/app/core-adapter.ts): the file name and the hash of the text Save writes. */
import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { documentText, readDocument, setupSheetHtml } from '../../src/app/core-adapter.ts';
import { runSample } from './helpers.ts';

const sha = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex');

function topLeft(html: string): string {
  const m = /@top-left \{ content: ("(?:[^"\\]|\\.)*");/.exec(html);
  expect(m).not.toBeNull();
  return m![1].slice(1, -1).replace(/\\([0-9a-fA-F]{1,6}) ?/g, (_, h) => String.fromCodePoint(parseInt(h, 16)));
}

describe('setupSheetHtml (the app)', () => {
  const { text } = runSample('bench-h-rb87-mj-then-eigenstate');
  const r = readDocument(text);
  if (!r.ok) throw new Error('samples/bench-h must read');

  it('prints the file name and the hash of the document text as Save would write it', () => {
    const html = setupSheetHtml(r.doc, r.line, 'bench-h-rb87-mj-then-eigenstate.spinyard');
    expect(topLeft(html)).toBe(`bench-h-rb87-mj-then-eigenstate.spinyard · sha256 ${sha(documentText(r.doc)).slice(0, 12)}`);
    // the sample is stored as Save writes it, so the sheet's hash is the hash of the file on disk
    expect(documentText(r.doc)).toBe(text);
    expect(topLeft(html)).toContain(sha(text).slice(0, 12));
  });

  it('an edit changes the hash; a document without a name prints as "untitled"', () => {
    const edited = { ...r.doc, title: `${r.doc.title} (edited)` };
    const html = setupSheetHtml(edited, r.line);
    expect(topLeft(html)).toBe(`untitled · sha256 ${sha(documentText(edited)).slice(0, 12)}`);
    expect(topLeft(html)).not.toContain(sha(text).slice(0, 12));
  });
});
