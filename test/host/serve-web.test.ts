// The browser host's server (scripts/serve-web.mjs): the renderer's Content-Security-Policy as a header
// on every response, and only requests addressed to 127.0.0.1:PORT or localhost:PORT answered (a page
// of another site that a DNS name rebound to 127.0.0.1 gets 421 and nothing of the app).
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { request } from 'node:http';
import { connect } from 'node:net';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CONTENT_SECURITY_POLICY } from '../../src/host/csp.ts';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
let web: string;
let server: ChildProcess;
let port: number;

beforeAll(async () => {
  web = mkdtempSync(path.join(tmpdir(), 'spinyard-web-'));
  writeFileSync(path.join(web, 'index.html'), '<!doctype html><title>Spinyard</title>');
  mkdirSync(path.join(web, 'assets'));
  writeFileSync(path.join(web, 'assets', 'main.js'), 'export {};');
  server = spawn(process.execPath, [path.join(ROOT, 'scripts', 'serve-web.mjs')], {
    cwd: ROOT,
    env: { ...process.env, PORT: '0', SPINYARD_WEB_DIR: path.relative(ROOT, web) },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  port = await new Promise<number>((resolve, reject) => {
    let out = '';
    server.stdout!.setEncoding('utf8').on('data', (d: string) => {
      out += d;
      const m = /http:\/\/127\.0\.0\.1:(\d+)\//.exec(out);
      if (m) resolve(Number(m[1]));
    });
    server.once('exit', (code) => reject(new Error(`serve-web exited (${code}): ${out}`)));
  });
});

afterAll(() => {
  server?.kill();
  rmSync(web, { recursive: true, force: true });
});

/** GET `pathname` with the Host header `host` (left out when null). */
function get(pathname: string, host: string | null): Promise<{ status: number; headers: Record<string, string | string[] | undefined>; body: string }> {
  return new Promise((resolve, reject) => {
    const headers: Record<string, string> = host === null ? {} : { Host: host };
    const req = request({ host: '127.0.0.1', port, path: pathname, headers, setHost: host !== null }, (res) => {
      let body = '';
      res.setEncoding('utf8').on('data', (d: string) => (body += d));
      res.on('end', () => resolve({ status: res.statusCode!, headers: res.headers, body }));
    });
    req.on('error', reject);
    req.end();
  });
}

describe('serve-web', () => {
  it('answers 127.0.0.1:PORT and localhost:PORT with the renderer\'s policy', async () => {
    for (const host of [`127.0.0.1:${port}`, `localhost:${port}`, `LOCALHOST:${port}`]) {
      const r = await get('/', host);
      expect(r.status, host).toBe(200);
      expect(r.body).toContain('<title>Spinyard</title>');
      expect(r.headers['content-security-policy']).toBe(CONTENT_SECURITY_POLICY);
      expect(r.headers['x-content-type-options']).toBe('nosniff');
    }
    const js = await get('/assets/main.js', `127.0.0.1:${port}`);
    expect(js.status).toBe(200);
    expect(js.headers['content-type']).toMatch(/^text\/javascript/);
    expect(js.headers['content-security-policy']).toBe(CONTENT_SECURITY_POLICY);
  });

  it('sends the policy with a refusal too', async () => {
    const r = await get('/missing.js', `127.0.0.1:${port}`);
    expect(r.status).toBe(404);
    expect(r.headers['content-security-policy']).toBe(CONTENT_SECURITY_POLICY);
  });

  it('refuses any other Host with 421 and a short text, serving nothing', async () => {
    for (const host of ['evil.example', `evil.example:${port}`, '127.0.0.1', 'localhost', `127.0.0.1:${port + 1}`, `localhost:${port}.evil.example`, `127.0.0.2:${port}`, `[::1]:${port}`, `0x7f000001:${port}`]) {
      const r = await get('/', host);
      expect(r.status, host).toBe(421);
      expect(r.body).toMatch(/^misdirected request: this server answers 127\.0\.0\.1:\d+ and localhost:\d+ only\n$/);
      expect(r.body).not.toContain('Spinyard');
      expect(r.headers['content-security-policy']).toBe(CONTENT_SECURITY_POLICY);
    }
  });

  it('refuses a request without a Host header (HTTP/1.0) or with an empty one', async () => {
    const raw = (text: string) =>
      new Promise<string>((resolve, reject) => {
        const s = connect(port, '127.0.0.1', () => s.write(text));
        let data = '';
        s.setEncoding('utf8').on('data', (d: string) => {
          data += d;
          if (data.includes('\r\n\r\n')) s.end();
        });
        s.on('close', () => resolve(data));
        s.on('error', reject);
      });
    for (const text of ['GET / HTTP/1.0\r\n\r\n', 'GET / HTTP/1.1\r\nHost: \r\nConnection: close\r\n\r\n']) {
      const reply = await raw(text);
      expect(reply, JSON.stringify(text)).toMatch(/^HTTP\/1\.[01] (421|400) /);
      expect(reply).not.toContain('<title>');
    }
  });
});
