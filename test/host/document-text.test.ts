// One size limit and one UTF-8 rule for the shell and the command line: src/host/document-text.ts (the
// shell's, which may import only src/host) against src/beamline's DEFAULT_MAX_BYTES and the command
// line's reader (src/cli/readFile.ts), which may not import src/host.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { DEFAULT_MAX_BYTES } from '../../src/beamline/text.ts';
import { readBeamlineFile } from '../../src/cli/readFile.ts';
import { MAX_DOCUMENT_BYTES, decodeUtf8Strict, documentSizeProblem } from '../../src/host/document-text.ts';

const dir = mkdtempSync(join(tmpdir(), 'spinyard-text-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const bytes = (...b: number[]) => Uint8Array.from(b);
const utf8 = (s: string) => new TextEncoder().encode(s);

// Valid and invalid UTF-8 (RFC 3629 §3-4; the Unicode Standard, Table 3-7 "Well-Formed UTF-8 Byte Sequences").
const SAMPLES: [string, Uint8Array][] = [
  ['ASCII', utf8('{"title": "Bench A"}')],
  ['two-, three- and four-byte characters', utf8('{"title": "μ-metal, 5 Å, ⟨F,m⟩ 🧲"}')],
  ['a byte order mark', bytes(0xef, 0xbb, 0xbf, 0x7b, 0x7d)],
  ['empty', bytes()],
  ['a lone continuation byte', bytes(0x7b, 0x80, 0x7d)],
  ['an overlong "/"', bytes(0xc0, 0xaf)],
  ['an overlong NUL in three bytes', bytes(0xe0, 0x80, 0x80)],
  ['a UTF-16 surrogate (U+D800)', bytes(0xed, 0xa0, 0x80)],
  ['a code point above U+10FFFF', bytes(0xf4, 0x90, 0x80, 0x80)],
  ['the byte 0xFF', bytes(0x41, 0xff)],
  ['a sequence cut at the end', bytes(0x41, 0xe2, 0x82)],
  ['Latin-1 text', bytes(0x7b, 0x22, 0xb5, 0x22, 0x7d)],
];

describe('the shared document limit', () => {
  it('is the command line\'s (src/beamline DEFAULT_MAX_BYTES), 20 MiB', () => {
    expect(MAX_DOCUMENT_BYTES).toBe(DEFAULT_MAX_BYTES);
    expect(MAX_DOCUMENT_BYTES).toBe(20 * 1024 * 1024);
  });

  it('words a size over it as the command line does', () => {
    expect(documentSizeProblem(MAX_DOCUMENT_BYTES)).toBeUndefined();
    const f = join(dir, 'big.spinyard');
    writeFileSync(f, 'x'.repeat(2 * 1024 * 1024));
    const cli = readBeamlineFile(f, 1024 * 1024);
    expect(!cli.ok && cli.message).toBe(`${f}: ${documentSizeProblem(2 * 1024 * 1024, 1024 * 1024)}`);
    expect(documentSizeProblem(MAX_DOCUMENT_BYTES + 1)).toBe('the file is 20.0 MB, over the 20.0 MB limit for a beamline document; it was not read');
  });
});

describe('decodeUtf8Strict', () => {
  it('decodes UTF-8 and refuses anything else', () => {
    expect(decodeUtf8Strict(utf8('μ-metal 🧲'))).toBe('μ-metal 🧲');
    expect(decodeUtf8Strict(bytes(0x41, 0xff))).toBeNull();
    expect(decodeUtf8Strict(bytes(0xef, 0xbb, 0xbf, 0x41))).toBe('A'); // the byte order mark is not text
  });

  for (const [what, b] of SAMPLES) {
    it(`agrees with the command line on ${what}`, () => {
      const f = join(dir, `${what.replace(/\W+/g, '-')}.spinyard`);
      writeFileSync(f, b);
      const cli = readBeamlineFile(f);
      const shell = decodeUtf8Strict(b);
      expect(shell === null ? { ok: false } : { ok: true, text: shell }).toEqual(cli.ok ? cli : { ok: false });
    });
  }
});
