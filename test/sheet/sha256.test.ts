/** SHA-256 of the sheet (the short content hash printed on every page), against published vectors. */
import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { sha256, sha256Hex, utf8Bytes } from '../../src/sheet/sha256.ts';

const hex = (b: Uint8Array) => [...b].map((x) => x.toString(16).padStart(2, '0')).join('');

describe('sha256Hex: the example vectors of FIPS 180-2 (Appendix B) and NIST', () => {
  it('"abc" (FIPS 180-2 B.1, one block)', () => {
    expect(sha256Hex('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });

  it('the 448-bit message (FIPS 180-2 B.2, two blocks)', () => {
    expect(sha256Hex('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq'))
      .toBe('248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1');
  });

  it('one million "a" (FIPS 180-2 B.3)', () => {
    expect(sha256Hex('a'.repeat(1_000_000))).toBe('cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0');
  });

  it('the empty string (NIST CSRC example values, SHA-256 of the empty message)', () => {
    expect(sha256Hex('')).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855');
  });

  it('the 896-bit message of the NIST examples (value checked here with GNU coreutils sha256sum)', () => {
    expect(sha256Hex('abcdefghbcdefghicdefghijdefghijkefghijklfghijklmghijklmnhijklmnoijklmnopjklmnopqklmnopqrlmnopqrsmnopqrstnopqrstu'))
      .toBe('cf5b16a778af8380036ce59e7b0492370b249b11e8f07a51afac45037afee9d1');
  });
});

describe('sha256Hex of text: the UTF-8 bytes of the string', () => {
  const TEXT = 'Stern–Gerlach µ 0.5 T ⟨m⟩ 😀'; // 2-, 3- and 4-byte sequences (a surrogate pair)

  it('encodes 1- to 4-byte characters as UTF-8 (the bytes printed by xxd)', () => {
    expect(hex(utf8Bytes(TEXT))).toBe(
      '537465726ee2809347' + '65726c61636820' + 'c2b5' + '20302e35205420' + 'e29fa8' + '6d' + 'e29fa9' + '20' + 'f09f9880');
    expect(utf8Bytes(TEXT)).toEqual(new TextEncoder().encode(TEXT));
  });

  it('hashes multi-byte text as GNU coreutils sha256sum hashes its UTF-8 bytes', () => {
    expect(sha256Hex(TEXT)).toBe('00357db80c0308bed80e24952ac7f5514bd2b5485d714299188724e359bd87a9');
  });

  it('a lone surrogate is written as U+FFFD, as TextEncoder writes it', () => {
    for (const s of ['a\ud800b', '\udc00', 'x\ud83d']) expect(utf8Bytes(s)).toEqual(new TextEncoder().encode(s));
  });

  it('agrees with node:crypto on every length across the padding boundaries and on mixed text', () => {
    const chars = ['a', 'é', '€', '𝄞', '\n', '"'];
    for (let n = 0; n < 140; n++) {
      let s = '';
      for (let i = 0; i < n; i++) s += chars[(i * 7 + n) % chars.length];
      expect(sha256Hex(s), `length ${n}`).toBe(createHash('sha256').update(s, 'utf8').digest('hex'));
    }
  });

  it('sha256 of bytes gives the 32-byte digest', () => {
    const d = sha256(new Uint8Array([0x61, 0x62, 0x63]));
    expect(d).toHaveLength(32);
    expect(hex(d)).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });
});
