import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { CONTENT_SECURITY_POLICY, CONTENT_SECURITY_POLICY_META } from '../../src/host/csp.ts';

const directives = (csp: string) => new Map(csp.split(';').map((d) => d.trim().split(/\s+/)).map(([k, ...v]) => [k, v]));

describe('CONTENT_SECURITY_POLICY', () => {
  const d = directives(CONTENT_SECURITY_POLICY);
  it('allows scripts from the app only and never eval (WebAssembly compilation only)', () => {
    expect(d.get('script-src')).toEqual(["'self'", "'wasm-unsafe-eval'"]);
    for (const v of d.values()) expect(v).not.toContain("'unsafe-eval'");
    expect(d.get('default-src')).toEqual(["'self'"]);
  });
  it('keeps the directives the shell and the web build rely on', () => {
    expect(d.get('style-src')).toEqual(["'self'", "'unsafe-inline'"]);
    expect(d.get('img-src')).toEqual(["'self'", 'data:', 'blob:']);
    expect(d.get('worker-src')).toEqual(["'self'", 'blob:']);
    expect(d.get('connect-src')).toEqual(["'self'"]);
    expect(d.get('object-src')).toEqual(["'none'"]);
    expect(d.get('base-uri')).toEqual(["'none'"]);
    expect(d.get('frame-ancestors')).toEqual(["'none'"]);
  });
  it('the meta form leaves out frame-ancestors only', () => {
    const m = directives(CONTENT_SECURITY_POLICY_META);
    expect(m.has('frame-ancestors')).toBe(false);
    expect(m.size).toBe(d.size - 1);
  });
});

describe('the renderer page', () => {
  it('index.html carries the shared policy in its meta tag', () => {
    const html = readFileSync('index.html', 'utf8');
    const m = /http-equiv="Content-Security-Policy"\s+content="([^"]*)"/.exec(html);
    expect(m?.[1]).toBe(CONTENT_SECURITY_POLICY_META);
  });
});
