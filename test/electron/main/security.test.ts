import * as path from 'node:path';
import { describe, expect, it } from 'vitest';
import { APP_ENTRY, CONTENT_SECURITY_POLICY, EXTERNAL_LINKS, isAllowedDevUrl, isAllowedExternalLink, mimeTypeOf, resolveAppFile } from '../../../electron/main/security.ts';
import { CONTENT_SECURITY_POLICY as SHARED } from '../../../src/host/csp.ts';

const root = path.resolve('/opt/spinyard/dist-web');

describe('resolveAppFile', () => {
  it('maps app URLs to files under dist-web', () => {
    expect(resolveAppFile(root, APP_ENTRY)).toBe(path.join(root, 'index.html'));
    expect(resolveAppFile(root, 'spinyard://app/assets/main-1a2b.js')).toBe(path.join(root, 'assets', 'main-1a2b.js'));
    expect(resolveAppFile(root, 'spinyard://app/')).toBe(path.join(root, 'index.html'));
    expect(resolveAppFile(root, 'spinyard://app/samples/bench%20b.spinyard')).toBe(path.join(root, 'samples', 'bench b.spinyard'));
  });
  it('never names a file outside dist-web', () => {
    // URL parsing folds a leading "/.." into the root, so these may name a dist-web file, never one outside.
    for (const url of ['spinyard://app/../package.json', 'spinyard://app/%2e%2e/package.json', 'spinyard://app/assets/%2e%2e/%2e%2e/%2e%2e/secret']) {
      const f = resolveAppFile(root, url);
      expect(f === null || f.startsWith(root + path.sep), `${url} → ${f}`).toBe(true);
    }
  });
  it('refuses encoded separators, NUL, other hosts and schemes', () => {
    for (const url of [
      'spinyard://app/a%2f..%2f..%2fsecret',
      'spinyard://app/a%5c..%5csecret',
      'spinyard://app/a%00.js',
      'spinyard://other/index.html',
      'file:///etc/passwd',
      'https://app/index.html',
      'not a url',
    ]) {
      expect(resolveAppFile(root, url), url).toBeNull();
    }
  });
});

describe('policy helpers', () => {
  it('shares the CSP with the web build', () => {
    expect(CONTENT_SECURITY_POLICY).toBe(SHARED);
  });
  it('accepts dev servers on loopback http only', () => {
    expect(isAllowedDevUrl('http://127.0.0.1:5173/')).toBe(true);
    expect(isAllowedDevUrl('http://localhost:5173/')).toBe(true);
    expect(isAllowedDevUrl('http://192.168.1.4:5173/')).toBe(false);
    expect(isAllowedDevUrl('https://127.0.0.1/')).toBe(false);
    expect(isAllowedDevUrl('file:///tmp/index.html')).toBe(false);
  });
  it('hands the system no link the renderer names: the allow-list is empty, as the renderer opens none', () => {
    expect(EXTERNAL_LINKS).toEqual([]);
    for (const url of ['https://physics.nist.gov/cuu/Constants/', 'mailto:lab@example.org', 'file:///etc/passwd', 'javascript:alert(1)', 'http://example.org', 'https://127.0.0.1/']) {
      expect(isAllowedExternalLink(url), url).toBe(false);
    }
  });
  it('allows exactly the listed https links, nothing near them', () => {
    const list = ['https://docs.example.org/spinyard/guide.html'];
    expect(isAllowedExternalLink('https://docs.example.org/spinyard/guide.html', list)).toBe(true);
    expect(isAllowedExternalLink('HTTPS://DOCS.example.org/spinyard/guide.html', list)).toBe(true); // the same URL
    for (const url of [
      'https://docs.example.org/spinyard/guide.html?x=1',
      'https://docs.example.org/spinyard/guide.html#top',
      'https://docs.example.org/spinyard/',
      'https://docs.example.org/spinyard/guide.html/../../evil',
      'https://docs.example.org:8443/spinyard/guide.html',
      'https://user@docs.example.org/spinyard/guide.html',
      'https://docs.example.org.evil.test/spinyard/guide.html',
      'http://docs.example.org/spinyard/guide.html',
    ]) {
      expect(isAllowedExternalLink(url, list), url).toBe(false);
    }
    expect(isAllowedExternalLink('http://docs.example.org/a', ['http://docs.example.org/a'])).toBe(false); // https only
  });
  it('serves scripts and documents with their types', () => {
    expect(mimeTypeOf('/x/a.js')).toMatch(/^text\/javascript/);
    expect(mimeTypeOf('/x/index.html')).toMatch(/^text\/html/);
    expect(mimeTypeOf('/x/b.spinyard')).toMatch(/^application\/json/);
    expect(mimeTypeOf('/x/blob.bin')).toBe('application/octet-stream');
  });
});
